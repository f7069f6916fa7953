//! Convergence orders from error series, and self-convergence (Richardson) studies.
//!
//! With errors `e_i` at resolutions `N_i` (cells), the observed order between successive
//! resolutions is `p_i = ln(e_i / e_{i+1}) / ln(N_{i+1} / N_i)`, and the order over the series
//! is the least-squares slope of `ln e` against `ln N`, negated (common practice).
//!
//! Without an analytic solution the differences between successive resolutions play the
//! role of errors (self-convergence): `d_i = ‖u_{N_i} − R u_{N_{i+1}}‖` on grid `N_i`, where
//! `R` restricts the finer solution to the coarser grid by cell averaging (the conservative
//! remap, exact restriction on nested grids). With a constant refinement ratio `r`, the
//! observed order from three resolutions is `p = ln(d_1/d_2)/ln r`, i.e.
//! `p = log2(|u_1 − u_2| / |u_2 − u_4|)` for `r = 2`, and the error of the finest solution is
//! estimated by Richardson extrapolation as `d_last / (r^p − 1)` (common practice; see
//! P. J. Roache 1998, *Verification and Validation in Computational Science and Engineering*,
//! Hermosa Publishers — citation from memory).

use crate::compare::{norms, Norm};
use crate::error::{AnalysisError, Result};
use crate::profile::Profile;
use crate::remap::{remap, Coverage, RemapMethod};
use serde::{Deserialize, Serialize};

/// Where the errors of a series come from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ConvergenceKind {
    /// Errors against an exact or reference solution.
    Analytic,
    /// Differences between successive resolutions.
    SelfConvergence,
}

/// One resolution of a series.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ConvergenceRow {
    /// Number of cells.
    pub n: usize,
    /// Error (analytic) or difference to the next finer resolution (self-convergence).
    pub error: f64,
    /// Observed order between the previous row and this one (`None` on the first row, or
    /// when an error is zero).
    pub order: Option<f64>,
}

/// A convergence series with its observed orders.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConvergenceSeries {
    /// What is measured, e.g. `density (l1)`.
    pub label: String,
    /// Analytic errors or self-convergence differences.
    pub kind: ConvergenceKind,
    /// One row per resolution (self-convergence: per pair, labelled by the coarser `N`).
    pub rows: Vec<ConvergenceRow>,
    /// Least-squares order over the series (`None` when an error is zero).
    pub fitted_order: Option<f64>,
    /// Expected order, if a check was requested.
    pub expected_order: Option<f64>,
    /// Allowed shortfall: the check passes when `fitted_order >= expected − tolerance`.
    pub order_tolerance: Option<f64>,
    /// Result of the check, if requested (`false` when the fitted order is undefined).
    pub pass: Option<bool>,
    /// Self-convergence: Richardson estimate of the finest solution's error, `d_last/(r^p−1)`.
    pub richardson_error_estimate: Option<f64>,
}

/// Observed order between `(n0, e0)` and `(n1, e1)`; `None` if an error is not positive.
pub fn pairwise_order(n0: usize, e0: f64, n1: usize, e1: f64) -> Option<f64> {
    (e0 > 0.0 && e1 > 0.0 && n1 != n0).then(|| (e0 / e1).ln() / (n1 as f64 / n0 as f64).ln())
}

/// Least-squares order `−d ln e / d ln N` over `points`; `None` with fewer than two points or
/// a non-positive error.
pub fn fitted_order(points: &[(usize, f64)]) -> Option<f64> {
    if points.len() < 2 || points.iter().any(|&(_, e)| e <= 0.0 || !e.is_finite()) {
        return None;
    }
    let m = points.len() as f64;
    let xs: Vec<f64> = points.iter().map(|&(n, _)| (n as f64).ln()).collect();
    let ys: Vec<f64> = points.iter().map(|&(_, e)| e.ln()).collect();
    let (xm, ym) = (xs.iter().sum::<f64>() / m, ys.iter().sum::<f64>() / m);
    let sxy: f64 = xs.iter().zip(&ys).map(|(x, y)| (x - xm) * (y - ym)).sum();
    let sxx: f64 = xs.iter().map(|x| (x - xm) * (x - xm)).sum();
    (sxx > 0.0).then(|| -sxy / sxx)
}

/// Builds a series from `(N, error)` pairs: at least two, `N` strictly increasing and `>= 1`,
/// errors finite and `>= 0`.
pub fn convergence_series(
    label: impl Into<String>,
    points: &[(usize, f64)],
) -> Result<ConvergenceSeries> {
    let label = label.into();
    let err = |message: String| AnalysisError::Convergence {
        label: label.clone(),
        message,
    };
    if points.len() < 2 {
        return Err(err(format!(
            "{} resolution(s): an order needs at least 2",
            points.len()
        )));
    }
    for (i, &(n, e)) in points.iter().enumerate() {
        if n == 0 {
            return Err(err("N = 0: resolutions must be at least 1 cell".into()));
        }
        if !(e.is_finite() && e >= 0.0) {
            return Err(err(format!(
                "error {e} at N = {n}: errors must be finite and >= 0"
            )));
        }
        if i > 0 && n <= points[i - 1].0 {
            return Err(err(format!(
                "N = {n} follows N = {}: resolutions must be strictly increasing",
                points[i - 1].0
            )));
        }
    }
    let rows = points
        .iter()
        .enumerate()
        .map(|(i, &(n, e))| ConvergenceRow {
            n,
            error: e,
            order: (i > 0)
                .then(|| pairwise_order(points[i - 1].0, points[i - 1].1, n, e))
                .flatten(),
        })
        .collect();
    Ok(ConvergenceSeries {
        label,
        kind: ConvergenceKind::Analytic,
        rows,
        fitted_order: fitted_order(points),
        expected_order: None,
        order_tolerance: None,
        pass: None,
        richardson_error_estimate: None,
    })
}

impl ConvergenceSeries {
    /// Adds a check: pass when the fitted order is at least `expected − tolerance`.
    pub fn with_expected_order(mut self, expected: f64, tolerance: f64) -> Self {
        self.expected_order = Some(expected);
        self.order_tolerance = Some(tolerance);
        self.pass = Some(self.fitted_order.is_some_and(|p| p >= expected - tolerance));
        self
    }
}

/// Self-convergence of `field` measured in `norm` over `profiles` (at least three, ordered
/// from coarse to fine with one constant refinement ratio `r = N_{i+1}/N_i`, same domain).
///
/// The finer profile of each pair is restricted onto the coarser grid with the conservative
/// remap for cell averages (linear interpolation for point samples), with strict coverage;
/// the difference is measured with the coarser grid's weights.
pub fn self_convergence(
    profiles: &[Profile],
    field: &str,
    norm: Norm,
) -> Result<ConvergenceSeries> {
    let label = format!("{field} ({}, self-convergence)", norm.name());
    let err = |message: String| AnalysisError::Convergence {
        label: label.clone(),
        message,
    };
    if profiles.len() < 3 {
        return Err(err(format!(
            "{} resolution(s): a self-convergence order needs at least 3",
            profiles.len()
        )));
    }
    let ns: Vec<usize> = profiles.iter().map(Profile::len).collect();
    for w in ns.windows(2) {
        if w[1] <= w[0] {
            return Err(err(format!(
                "N = {} follows N = {}: order the profiles from coarse to fine",
                w[1], w[0]
            )));
        }
    }
    let r = ns[1] as f64 / ns[0] as f64;
    for w in ns.windows(2) {
        let ri = w[1] as f64 / w[0] as f64;
        if ((ri - r) / r).abs() > 1e-9 {
            return Err(err(format!(
                "refinement ratio {ri} from N = {} to N = {} differs from the first ratio {r}: \
                 Richardson orders need a constant ratio",
                w[0], w[1]
            )));
        }
    }
    let mut points = Vec::with_capacity(profiles.len() - 1);
    for pair in profiles.windows(2) {
        let (coarse, fine) = (&pair[0], &pair[1]);
        let method = RemapMethod::default_for(fine);
        let mapped = remap(coarse, fine, &[field], method, Coverage::Strict)?;
        let u = coarse.require_field(field)?;
        let diff: Vec<f64> = mapped.fields[0]
            .values
            .iter()
            .zip(u)
            .map(|(f, c)| f - c)
            .collect();
        points.push((coarse.len(), norms(&diff, &coarse.weights()?).get(norm)));
    }
    let mut series = convergence_series(label, &points)?;
    series.kind = ConvergenceKind::SelfConvergence;
    if let (Some(p), Some(&(_, d_last))) = (series.rows.last().and_then(|r| r.order), points.last())
    {
        let denom = r.powf(p) - 1.0;
        if denom > 0.0 {
            series.richardson_error_estimate = Some(d_last / denom);
        }
    }
    Ok(series)
}
