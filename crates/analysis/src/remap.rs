//! Transfer of OTHER's values onto the reference grid.
//!
//! Two families, chosen by what OTHER's values mean:
//!
//! * **Point samples → linear interpolation** ([`RemapMethod::Linear`]) at the reference cell
//!   centres (or sample points). Piecewise-linear interpolation between neighbouring samples is
//!   monotone (the result lies between the two neighbouring samples: no new extrema), exact
//!   for linear functions, and second-order accurate for smooth data (common practice). No
//!   extrapolation: reference points outside `[first sample, last sample]` are uncovered.
//! * **Cell averages → conservative overlap averaging**. OTHER is reconstructed inside each of
//!   its cells and the reconstruction is integrated exactly over each reference cell:
//!   `ū_ref,i = (1/|I_i|) Σ_k ∫_{I_i ∩ J_k} u_k(x) dx`. With
//!   [`RemapMethod::Conservative`] the reconstruction is piecewise constant (the classic
//!   overlap-weighted average): exact for piecewise-constant data, never creates new extrema,
//!   and on nested grids (every reference cell a union of OTHER cells, e.g. OTHER refined by
//!   an integer factor) it gives the exact cell averages of any function whose OTHER averages
//!   are exact. On non-nested grids it is only first-order accurate for smooth data; then
//!   [`RemapMethod::ConservativeLinear`] (unlimited centred slopes
//!   `(u_{k+1}-u_{k-1})/(x_{k+1}-x_{k-1})`, one-sided at the ends) is exact for linear
//!   functions and second-order for smooth data, but may overshoot at discontinuities.
//!   Both conserve the integral: `Σ ū_ref,i |I_i| = ∫ u_other` over a fully covered range.
//!   OTHER cells without edges must lie on a uniform grid (see [`Profile::cell_edges`]).
//!   A reference cell is covered only when it lies entirely inside OTHER's edge range.
//!
//! Coverage is judged with a slack of [`COVERAGE_SLACK`] times OTHER's extent so that
//! round-off in exported coordinates does not uncover the end cells.

use crate::error::{AnalysisError, Result};
use crate::profile::{Field, Profile, Sampling};
use serde::{Deserialize, Serialize};

/// Relative slack (fraction of OTHER's extent) allowed when deciding coverage.
pub const COVERAGE_SLACK: f64 = 1e-9;

/// How OTHER is transferred onto the reference grid.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RemapMethod {
    /// Linear interpolation of point samples at the reference coordinates.
    Linear,
    /// Conservative overlap averaging with a piecewise-constant reconstruction.
    Conservative,
    /// Conservative overlap averaging with an unlimited piecewise-linear reconstruction.
    ConservativeLinear,
}

impl RemapMethod {
    /// The default for a given OTHER: [`RemapMethod::Linear`] for point samples,
    /// [`RemapMethod::Conservative`] for cell averages.
    pub fn default_for(other: &Profile) -> Self {
        match other.sampling() {
            Sampling::PointSample => RemapMethod::Linear,
            Sampling::CellAverage => RemapMethod::Conservative,
        }
    }

    /// Parses `linear`, `conservative` or `conservative_linear`.
    pub fn parse(value: &str) -> Result<Self> {
        match value.trim().to_ascii_lowercase().replace('-', "_").as_str() {
            "linear" => Ok(RemapMethod::Linear),
            "conservative" => Ok(RemapMethod::Conservative),
            "conservative_linear" => Ok(RemapMethod::ConservativeLinear),
            _ => Err(AnalysisError::InvalidOption {
                key: "remap".into(),
                value: value.into(),
                allowed: "`linear`, `conservative` or `conservative_linear`".into(),
            }),
        }
    }

    /// Name as spelled in options and reports.
    pub fn name(self) -> &'static str {
        match self {
            RemapMethod::Linear => "linear",
            RemapMethod::Conservative => "conservative",
            RemapMethod::ConservativeLinear => "conservative_linear",
        }
    }
}

/// What to do with reference cells that OTHER does not cover.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Coverage {
    /// Any uncovered reference cell is an error naming the uncovered range (default).
    #[default]
    Strict,
    /// Compare only the reference cells that OTHER covers.
    Overlap,
}

impl Coverage {
    /// Parses `strict` or `overlap`.
    pub fn parse(value: &str) -> Result<Self> {
        match value.trim().to_ascii_lowercase().as_str() {
            "strict" => Ok(Coverage::Strict),
            "overlap" => Ok(Coverage::Overlap),
            _ => Err(AnalysisError::InvalidOption {
                key: "coverage".into(),
                value: value.into(),
                allowed: "`strict` (every reference cell must be covered) or `overlap` \
                          (compare only where both profiles have data)"
                    .into(),
            }),
        }
    }
}

/// Linear interpolation of `(xs, ys)` (strictly increasing `xs`) at each target.
///
/// Returns `None` for targets outside `[xs[0], xs[n-1]]` beyond the [`COVERAGE_SLACK`]; targets
/// within the slack are clamped to the end values. A single sample covers only its own
/// coordinate. Lengths of `xs` and `ys` must match (extra values are ignored).
pub fn interpolate_linear(xs: &[f64], ys: &[f64], targets: &[f64]) -> Vec<Option<f64>> {
    let n = xs.len().min(ys.len());
    if n == 0 {
        return vec![None; targets.len()];
    }
    let (lo, hi) = (xs[0], xs[n - 1]);
    let slack = COVERAGE_SLACK * (hi - lo);
    targets
        .iter()
        .map(|&t| {
            if t < lo - slack || t > hi + slack {
                return None;
            }
            if n == 1 {
                return Some(ys[0]);
            }
            let t = t.clamp(lo, hi);
            // First index with xs[j] >= t, kept in 1..n so that [j-1, j] is an interval.
            let j = xs[..n].partition_point(|&x| x < t).clamp(1, n - 1);
            let (x0, x1, y0, y1) = (xs[j - 1], xs[j], ys[j - 1], ys[j]);
            if t == x1 {
                return Some(y1);
            }
            if t == x0 {
                return Some(y0);
            }
            let w = (t - x0) / (x1 - x0);
            Some(y0 + w * (y1 - y0))
        })
        .collect()
}

/// Piecewise reconstruction used by [`remap_conservative`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Reconstruction {
    /// Constant in each source cell.
    Constant,
    /// Linear with unlimited centred slopes (one-sided in the end cells).
    Linear,
}

/// Conservative remap of source cell averages `src_values` on cells `src_edges` (length
/// `values + 1`, strictly increasing) onto destination cells `dst_edges`.
///
/// Returns the average over each destination cell of the reconstruction, or `None` for a
/// destination cell not entirely inside the source range (with [`COVERAGE_SLACK`]). A
/// destination cell identical to a source cell receives that cell's value exactly.
pub fn remap_conservative(
    src_edges: &[f64],
    src_values: &[f64],
    dst_edges: &[f64],
    reconstruction: Reconstruction,
) -> Vec<Option<f64>> {
    let m = src_values.len().min(src_edges.len().saturating_sub(1));
    let nd = dst_edges.len().saturating_sub(1);
    if m == 0 {
        return vec![None; nd];
    }
    let se = &src_edges[..=m];
    let sv = &src_values[..m];
    let mid: Vec<f64> = se.windows(2).map(|w| 0.5 * (w[0] + w[1])).collect();
    let slopes: Vec<f64> = match reconstruction {
        Reconstruction::Constant => vec![0.0; m],
        Reconstruction::Linear => (0..m)
            .map(|k| {
                if m == 1 {
                    0.0
                } else {
                    let (a, b) = (k.saturating_sub(1), (k + 1).min(m - 1));
                    (sv[b] - sv[a]) / (mid[b] - mid[a])
                }
            })
            .collect(),
    };
    let (lo, hi) = (se[0], se[m]);
    let slack = COVERAGE_SLACK * (hi - lo);
    let mut out = Vec::with_capacity(nd);
    let mut k0 = 0usize;
    for w in dst_edges.windows(2) {
        let (a, b) = (w[0], w[1]);
        if a < lo - slack || b > hi + slack || b <= a {
            out.push(None);
            continue;
        }
        let (a, b) = (a.max(lo), b.min(hi));
        // First source cell whose upper edge is above a.
        while k0 + 1 < m && se[k0 + 1] <= a {
            k0 += 1;
        }
        let mut sum = 0.0;
        let mut count = 0usize;
        let mut single = 0.0;
        let mut k = k0;
        while k < m && se[k] < b {
            let (l, h) = (a.max(se[k]), b.min(se[k + 1]));
            if h > l {
                let value = sv[k] + slopes[k] * (0.5 * (l + h) - mid[k]);
                sum += (h - l) * value;
                single = value;
                count += 1;
            }
            k += 1;
        }
        out.push(Some(if count == 1 { single } else { sum / (b - a) }));
    }
    out
}

/// OTHER's fields transferred onto the covered reference cells.
#[derive(Debug, Clone, PartialEq)]
pub struct Remapped {
    /// Method used.
    pub method: RemapMethod,
    /// Indices of the reference cells that received values (all of them in strict coverage).
    pub covered: Vec<usize>,
    /// One entry per requested field, values aligned with `covered`.
    pub fields: Vec<Field>,
}

fn describe_runs(
    mask: &[bool],
    lo_of: impl Fn(usize) -> f64,
    hi_of: impl Fn(usize) -> f64,
) -> String {
    let mut parts = Vec::new();
    let mut i = 0;
    while i < mask.len() {
        if mask[i] {
            i += 1;
            continue;
        }
        let start = i;
        while i < mask.len() && !mask[i] {
            i += 1;
        }
        let count = i - start;
        parts.push(format!(
            "[{}, {}] ({} reference {})",
            lo_of(start),
            hi_of(i - 1),
            count,
            if count == 1 { "cell" } else { "cells" }
        ));
    }
    parts.join(" and ")
}

/// Transfers the named `fields` of `other` onto the grid of `reference` with `method`.
///
/// With [`Coverage::Strict`] any uncovered reference cell is an
/// [`AnalysisError::Uncovered`] naming the uncovered ranges; with [`Coverage::Overlap`] only
/// covered cells are returned, and no covered cell at all is [`AnalysisError::NoOverlap`].
pub fn remap(
    reference: &Profile,
    other: &Profile,
    fields: &[&str],
    method: RemapMethod,
    coverage: Coverage,
) -> Result<Remapped> {
    let mut values: Vec<(&str, Vec<Option<f64>>)> = Vec::with_capacity(fields.len());
    let (ref_lo_of, ref_hi_of, other_range): (Vec<f64>, Vec<f64>, (f64, f64));
    match method {
        RemapMethod::Linear => {
            let x = other.centres();
            if x.len() < 2 {
                return Err(AnalysisError::Profile {
                    file: other.source().into(),
                    message: "linear interpolation needs at least 2 samples, found 1".into(),
                });
            }
            for name in fields {
                let y = other.require_field(name)?;
                values.push((name, interpolate_linear(x, y, reference.centres())));
            }
            ref_lo_of = reference.centres().to_vec();
            ref_hi_of = ref_lo_of.clone();
            other_range = (x[0], x[x.len() - 1]);
        }
        RemapMethod::Conservative | RemapMethod::ConservativeLinear => {
            let se = other.cell_edges()?;
            let de = reference.cell_edges()?;
            let rec = if method == RemapMethod::Conservative {
                Reconstruction::Constant
            } else {
                Reconstruction::Linear
            };
            for name in fields {
                let y = other.require_field(name)?;
                values.push((name, remap_conservative(&se, y, &de, rec)));
            }
            ref_lo_of = de[..de.len() - 1].to_vec();
            ref_hi_of = de[1..].to_vec();
            other_range = (se[0], se[se.len() - 1]);
        }
    }
    // Coverage depends only on the geometry: probe with a constant field when no field given.
    let mask: Vec<bool> = match values.first() {
        Some((_, v)) => v.iter().map(Option::is_some).collect(),
        None => {
            let probe = match method {
                RemapMethod::Linear => {
                    let ones = vec![1.0; other.len()];
                    interpolate_linear(other.centres(), &ones, reference.centres())
                }
                _ => remap_conservative(
                    &other.cell_edges()?,
                    &vec![1.0; other.len()],
                    &reference.cell_edges()?,
                    Reconstruction::Constant,
                ),
            };
            probe.iter().map(Option::is_some).collect()
        }
    };
    let n = reference.len();
    let (rlo, rhi) = (ref_lo_of[0], ref_hi_of[n - 1]);
    let covered: Vec<usize> = (0..n).filter(|&i| mask[i]).collect();
    if covered.is_empty() {
        return Err(AnalysisError::NoOverlap {
            other: other.source().into(),
            reference: reference.source().into(),
            other_lo: other_range.0,
            other_hi: other_range.1,
            reference_lo: rlo,
            reference_hi: rhi,
        });
    }
    if coverage == Coverage::Strict && covered.len() < n {
        return Err(AnalysisError::Uncovered {
            other: other.source().into(),
            reference: reference.source().into(),
            other_lo: other_range.0,
            other_hi: other_range.1,
            reference_lo: rlo,
            reference_hi: rhi,
            uncovered: describe_runs(&mask, |i| ref_lo_of[i], |i| ref_hi_of[i]),
        });
    }
    let fields = values
        .into_iter()
        .map(|(name, v)| Field {
            name: name.to_string(),
            values: v.into_iter().flatten().collect(),
        })
        .collect();
    Ok(Remapped {
        method,
        covered,
        fields,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Exact cell averages of f(x) = a + b x on the given edges.
    fn linear_averages(edges: &[f64], a: f64, b: f64) -> Vec<f64> {
        edges
            .windows(2)
            .map(|w| a + b * 0.5 * (w[0] + w[1]))
            .collect()
    }

    /// A non-uniform grid on [0, 1]: edges x_i = (i/n) + 0.3 (i/n)(1 - i/n) (monotone).
    fn stretched_edges(n: usize) -> Vec<f64> {
        (0..=n)
            .map(|i| {
                let s = i as f64 / n as f64;
                s + 0.3 * s * (1.0 - s)
            })
            .collect()
    }

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol * (1.0 + b.abs())
    }

    #[test]
    fn linear_interpolation_is_exact_for_linear_functions_and_monotone() {
        let xs = [0.0, 0.3, 0.5, 1.0];
        let ys: Vec<f64> = xs.iter().map(|x| 2.0 - 3.0 * x).collect();
        let t = [0.0, 0.1, 0.3, 0.45, 0.99, 1.0];
        for (v, x) in interpolate_linear(&xs, &ys, &t).iter().zip(t) {
            assert!(close(v.unwrap(), 2.0 - 3.0 * x, 1e-15), "{v:?} at {x}");
        }
        // Monotone: a step gives values within [0, 1], never outside.
        let ys = [0.0, 0.0, 1.0, 1.0];
        let t: Vec<f64> = (0..=100).map(|i| i as f64 / 100.0).collect();
        let v = interpolate_linear(&xs, &ys, &t);
        assert!(v.iter().all(|v| (0.0..=1.0).contains(&v.unwrap())));
        assert!(v.windows(2).all(|w| w[1].unwrap() >= w[0].unwrap()));
        // No extrapolation.
        let v = interpolate_linear(&xs, &ys, &[-0.01, 1.01, 1.0 + 1e-12]);
        assert_eq!(v, vec![None, None, Some(1.0)]);
    }

    #[test]
    fn conservative_remap_of_linear_function_averages() {
        let (a, b) = (1.5, -4.0);
        // Nested coarsening 96 -> 32 (factor 3): the piecewise-constant remap is exact.
        let src = Profile::uniform("s", Sampling::CellAverage, 0.0, 1.0, 96).unwrap();
        let dst = Profile::uniform("d", Sampling::CellAverage, 0.0, 1.0, 32).unwrap();
        let se = src.cell_edges().unwrap();
        let de = dst.cell_edges().unwrap();
        let sv = linear_averages(&se, a, b);
        let exact = linear_averages(&de, a, b);
        for (v, e) in remap_conservative(&se, &sv, &de, Reconstruction::Constant)
            .iter()
            .zip(&exact)
        {
            assert!(close(v.unwrap(), *e, 1e-13), "{v:?} vs {e}");
        }
        // Non-nested, non-uniform grids: the piecewise-linear reconstruction is exact.
        let se = stretched_edges(37);
        let de: Vec<f64> = (0..=23).map(|i| i as f64 / 23.0).collect();
        let sv = linear_averages(&se, a, b);
        let exact = linear_averages(&de, a, b);
        for (v, e) in remap_conservative(&se, &sv, &de, Reconstruction::Linear)
            .iter()
            .zip(&exact)
        {
            assert!(close(v.unwrap(), *e, 1e-13), "{v:?} vs {e}");
        }
        // ... while the piecewise-constant one is not (the test can fail).
        let worst = remap_conservative(&se, &sv, &de, Reconstruction::Constant)
            .iter()
            .zip(&exact)
            .map(|(v, e)| (v.unwrap() - e).abs())
            .fold(0.0, f64::max);
        assert!(worst > 1e-3, "{worst}");
    }

    #[test]
    fn conservative_remap_is_exact_for_piecewise_constant_data() {
        // OTHER is constant on 5 unequal cells; each reference cell average is the exact
        // integral of that step function divided by the cell width (computed by hand).
        let se = [0.0, 0.2, 0.5, 0.6, 0.9, 1.0];
        let sv = [1.0, 2.0, 3.0, 4.0, 5.0];
        let de = [0.0, 0.25, 0.5, 0.75, 1.0];
        let exact = [
            (0.2 * 1.0 + 0.05 * 2.0) / 0.25,
            2.0,
            (0.1 * 3.0 + 0.15 * 4.0) / 0.25,
            (0.15 * 4.0 + 0.1 * 5.0) / 0.25,
        ];
        let got = remap_conservative(&se, &sv, &de, Reconstruction::Constant);
        for (v, e) in got.iter().zip(exact) {
            assert!(close(v.unwrap(), e, 1e-14), "{v:?} vs {e}");
        }
    }

    #[test]
    fn remap_onto_itself_is_the_identity() {
        let e = stretched_edges(41);
        let v: Vec<f64> = (0..41)
            .map(|i| ((i * 7919) % 13) as f64 * 0.37 - 1.0)
            .collect();
        for rec in [Reconstruction::Constant, Reconstruction::Linear] {
            let got: Vec<f64> = remap_conservative(&e, &v, &e, rec)
                .into_iter()
                .map(Option::unwrap)
                .collect();
            assert_eq!(got, v);
        }
        let x: Vec<f64> = e[..41].to_vec();
        let got: Vec<f64> = interpolate_linear(&x, &v, &x)
            .into_iter()
            .map(Option::unwrap)
            .collect();
        assert_eq!(got, v);
    }

    #[test]
    fn conservative_remap_conserves_mass() {
        // Mass Σ u_k |J_k| is a conservation law: equal to round-off on the same interval.
        let se = stretched_edges(53);
        let sv: Vec<f64> = se
            .windows(2)
            .map(|w| (7.0 * w[0]).sin() + if w[0] > 0.4 { 2.0 } else { 0.0 })
            .collect();
        let mass_src: f64 = sv
            .iter()
            .zip(se.windows(2))
            .map(|(v, w)| v * (w[1] - w[0]))
            .sum();
        let de: Vec<f64> = (0..=31).map(|i| i as f64 / 31.0).collect();
        for rec in [Reconstruction::Constant, Reconstruction::Linear] {
            let dv = remap_conservative(&se, &sv, &de, rec);
            let mass: f64 = dv
                .iter()
                .zip(de.windows(2))
                .map(|(v, w)| v.unwrap() * (w[1] - w[0]))
                .sum();
            assert!(
                (mass - mass_src).abs() < 1e-14 * mass_src.abs().max(1.0),
                "{mass} {mass_src}"
            );
        }
    }

    #[test]
    fn strict_coverage_names_the_uncovered_range_and_overlap_restricts() {
        let reference = Profile::uniform("ref.h5", Sampling::CellAverage, 0.0, 1.0, 4)
            .unwrap()
            .with_field("rho", vec![1.0; 4])
            .unwrap();
        let other = Profile::uniform("other.csv", Sampling::CellAverage, 0.25, 1.0, 6)
            .unwrap()
            .with_field("rho", vec![2.0; 6])
            .unwrap();
        let e = remap(
            &reference,
            &other,
            &["rho"],
            RemapMethod::Conservative,
            Coverage::Strict,
        )
        .unwrap_err()
        .to_string();
        assert_eq!(
            e,
            "other.csv covers x in [0.25, 1] but the reference ref.h5 spans [0, 1]; uncovered: \
             [0, 0.25] (1 reference cell); extend the export, or restrict the comparison to the \
             overlap (coverage = overlap)"
        );
        let r = remap(
            &reference,
            &other,
            &["rho"],
            RemapMethod::Conservative,
            Coverage::Overlap,
        )
        .unwrap();
        assert_eq!(r.covered, vec![1, 2, 3]);
        assert_eq!(r.fields[0].values, vec![2.0; 3]);
        // Point samples: reference centres outside the sample range are uncovered.
        let pts = Profile::new("pts", Sampling::PointSample, vec![0.2, 0.5, 0.7], None)
            .unwrap()
            .with_field("rho", vec![1.0, 2.0, 3.0])
            .unwrap();
        let r = remap(
            &reference,
            &pts,
            &["rho"],
            RemapMethod::Linear,
            Coverage::Overlap,
        )
        .unwrap();
        assert_eq!(r.covered, vec![1, 2]);
        assert!(close(
            r.fields[0].values[0],
            1.0 + (0.375 - 0.2) / 0.3,
            1e-15
        ));
        let e = remap(
            &reference,
            &pts,
            &["rho"],
            RemapMethod::Linear,
            Coverage::Strict,
        )
        .unwrap_err()
        .to_string();
        assert!(
            e.contains("uncovered: [0.125, 0.125] (1 reference cell) and [0.875, 0.875]"),
            "{e}"
        );
        // Disjoint.
        let far = Profile::uniform("far", Sampling::CellAverage, 2.0, 3.0, 2)
            .unwrap()
            .with_field("rho", vec![1.0; 2])
            .unwrap();
        let e = remap(
            &reference,
            &far,
            &["rho"],
            RemapMethod::Conservative,
            Coverage::Overlap,
        )
        .unwrap_err();
        assert!(matches!(e, AnalysisError::NoOverlap { .. }), "{e}");
        // Missing field.
        let e = remap(
            &reference,
            &other,
            &["p"],
            RemapMethod::Conservative,
            Coverage::Overlap,
        )
        .unwrap_err()
        .to_string();
        assert_eq!(e, "other.csv: no field `p`; available fields: rho");
    }

    #[test]
    fn round_off_in_exported_edges_does_not_uncover_end_cells() {
        let reference = Profile::uniform("r", Sampling::CellAverage, 0.0, 1.0, 8).unwrap();
        let other = Profile::new(
            "o",
            Sampling::CellAverage,
            vec![0.25, 0.75],
            Some(vec![1e-12, 0.5, 1.0 - 1e-12]),
        )
        .unwrap()
        .with_field("rho", vec![1.0, 3.0])
        .unwrap();
        let r = remap(
            &reference,
            &other,
            &["rho"],
            RemapMethod::Conservative,
            Coverage::Strict,
        )
        .unwrap();
        assert_eq!(
            r.fields[0].values,
            vec![1.0, 1.0, 1.0, 1.0, 3.0, 3.0, 3.0, 3.0]
        );
    }

    #[test]
    fn single_cell_and_parse() {
        let one = Profile::new("one", Sampling::PointSample, vec![0.5], None)
            .unwrap()
            .with_field("rho", vec![1.0])
            .unwrap();
        let e = remap(&one, &one, &["rho"], RemapMethod::Linear, Coverage::Strict)
            .unwrap_err()
            .to_string();
        assert!(e.contains("at least 2 samples"), "{e}");
        let cell = Profile::new("c", Sampling::CellAverage, vec![0.5], Some(vec![0.0, 1.0]))
            .unwrap()
            .with_field("rho", vec![4.0])
            .unwrap();
        let r = remap(
            &cell,
            &cell,
            &["rho"],
            RemapMethod::ConservativeLinear,
            Coverage::Strict,
        )
        .unwrap();
        assert_eq!(r.fields[0].values, vec![4.0]);
        assert_eq!(
            RemapMethod::parse("Conservative-Linear").unwrap(),
            RemapMethod::ConservativeLinear
        );
        assert!(RemapMethod::parse("cubic")
            .unwrap_err()
            .to_string()
            .contains("`linear`"));
        assert!(Coverage::parse("some")
            .unwrap_err()
            .to_string()
            .contains("`overlap`"));
    }
}
