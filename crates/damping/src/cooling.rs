//! Optically thin radiative cooling (physics-detail §5).
//!
//! Net gas energy source L = n_H Γ_heat − 𝒫(n) Λ(T) [erg cm⁻³ s⁻¹], with the density prefactor
//! 𝒫 = n_H² (default) or n_e n_H ([`DensityPrefactor`]). Isochoric updates: the thermal energy
//! is e_th = n_tot k_B T/(γ − 1), so dT/dt = (γ − 1)(n_H Γ − 𝒫 Λ(T))/(n_tot k_B).
//!
//! * [`TownsendCooler`]: exact integration of pure cooling for a piecewise power-law Λ(T)
//!   (Townsend 2009, ApJS 181, 391).
//! * [`Ki02Cooler`]: Koyama & Inutsuka (2002, ApJ 564, L97) cooling + heating, backward Euler
//!   solved by a bracketed, safeguarded Newton iteration that cannot step past equilibrium.

// `!(x > 0.0)` is used on purpose: NaN inputs must take the early-return branch.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use crate::constants::K_BOLTZMANN;
use crate::error::{check_non_negative, check_positive, DampingError};

/// Density prefactor of the cooling term.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum DensityPrefactor {
    /// 𝒫 = n_H² (default, physics-detail §5).
    #[default]
    HydrogenSquared,
    /// 𝒫 = n_e n_H with a fixed n_e/n_H (the normalisation used by Townsend 2009).
    ElectronHydrogen {
        /// n_e/n_H (e.g. 1.2 for fully ionised gas with n_He/n_H = 0.1).
        electrons_per_h: f64,
    },
}

impl DensityPrefactor {
    /// 𝒫(n_H) [cm⁻⁶].
    #[inline]
    pub fn value(&self, n_h: f64) -> f64 {
        match *self {
            DensityPrefactor::HydrogenSquared => n_h * n_h,
            DensityPrefactor::ElectronHydrogen { electrons_per_h } => electrons_per_h * n_h * n_h,
        }
    }

    /// Checks the parameter.
    pub fn validate(&self) -> Result<(), DampingError> {
        match *self {
            DensityPrefactor::HydrogenSquared => Ok(()),
            DensityPrefactor::ElectronHydrogen { electrons_per_h } => {
                check_positive("electrons_per_h", electrons_per_h)
            }
        }
    }
}

/// Result of one cooling step of one cell.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CoolingStep {
    /// Temperature after the step [K].
    pub temperature: f64,
    /// Thermal energy removed from the gas per volume [erg cm⁻³]: radiated minus heating
    /// (negative when heating wins). Book it in the energy ledger.
    pub energy_loss: f64,
}

/// A per-cell isochoric cooling integrator.
pub trait CoolingIntegrator {
    /// Advances temperature `temperature` [K] over `dt` [s] at fixed hydrogen density `n_h`
    /// [cm⁻³], total particle density `n_total` [cm⁻³] and adiabatic index `gamma`.
    fn step(&self, temperature: f64, n_h: f64, n_total: f64, gamma: f64, dt: f64) -> CoolingStep;

    /// Net cooling rate 𝒫Λ(T) − n_H Γ [erg cm⁻³ s⁻¹] (positive = net loss).
    fn net_cooling_rate(&self, temperature: f64, n_h: f64) -> f64;

    /// Cooling time t = e_th/|net rate| = n_tot k_B T/((γ−1)|𝒫Λ − n_HΓ|) [s] (+∞ if zero).
    fn cooling_time(&self, temperature: f64, n_h: f64, n_total: f64, gamma: f64) -> f64 {
        let rate = self.net_cooling_rate(temperature, n_h).abs();
        let e = n_total * K_BOLTZMANN * temperature.max(0.0) / (gamma - 1.0);
        if rate > 0.0 {
            e / rate
        } else {
            f64::INFINITY
        }
    }

    /// Optional time-step limiter Δt ≤ C_cool t_cool [s] (physics-detail §5.3, §7).
    fn max_dt(&self, courant: f64, temperature: f64, n_h: f64, n_total: f64, gamma: f64) -> f64 {
        courant * self.cooling_time(temperature, n_h, n_total, gamma)
    }
}

/// Koyama & Inutsuka (2002) cooling function and heating rate (from memory, physics-detail
/// §5.1): Γ = 2e-26 erg s⁻¹ per H,
/// Λ(T) = Γ [a₁ exp(−T₁/(T + T₀)) + a₂ √T exp(−T₂/T)] [erg cm³ s⁻¹].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ki02 {
    /// Heating rate Γ per H nucleus [erg s⁻¹] (default 2e-26).
    pub heating: f64,
    /// a₁ [cm³] (default 1e7).
    pub a1: f64,
    /// T₁ [K] (default 1.184e5).
    pub t1: f64,
    /// T₀ [K] (default 1000).
    pub t0: f64,
    /// a₂ [cm³ K^{-1/2}] (default 1.4e-2).
    pub a2: f64,
    /// T₂ [K] (default 92).
    pub t2: f64,
}

impl Default for Ki02 {
    fn default() -> Self {
        Self {
            heating: 2.0e-26,
            a1: 1.0e7,
            t1: 1.184e5,
            t0: 1000.0,
            a2: 1.4e-2,
            t2: 92.0,
        }
    }
}

impl Ki02 {
    /// Λ(T) [erg cm³ s⁻¹]; 0 for T ≤ 0.
    #[inline]
    pub fn lambda(&self, t: f64) -> f64 {
        if t <= 0.0 {
            return 0.0;
        }
        self.heating
            * (self.a1 * (-self.t1 / (t + self.t0)).exp()
                + self.a2 * t.sqrt() * (-self.t2 / t).exp())
    }

    /// dΛ/dT [erg cm³ s⁻¹ K⁻¹] (≥ 0 for non-negative coefficients).
    #[inline]
    pub fn dlambda_dt(&self, t: f64) -> f64 {
        if t <= 0.0 {
            return 0.0;
        }
        let d = t + self.t0;
        let e1 = self.a1 * (-self.t1 / d).exp() * self.t1 / (d * d);
        let s = t.sqrt();
        let e2 = self.a2 * (-self.t2 / t).exp() * (0.5 / s + s * self.t2 / (t * t));
        self.heating * (e1 + e2)
    }

    /// Isochoric equilibrium temperature [K] where 𝒫Λ(T) = n_H Γ, found by bisection in ln T on
    /// [1e-3, 1e12] K. Unique because Λ is increasing. `None` if not bracketed.
    pub fn equilibrium_temperature(&self, n_h: f64, prefactor: DensityPrefactor) -> Option<f64> {
        let p = prefactor.value(n_h);
        let g = |t: f64| p * self.lambda(t) - n_h * self.heating;
        let (mut lo, mut hi) = (1.0e-3_f64, 1.0e12_f64);
        if g(lo) > 0.0 || g(hi) < 0.0 {
            return None;
        }
        for _ in 0..300 {
            let mid = (lo * hi).sqrt();
            if g(mid) > 0.0 {
                hi = mid;
            } else {
                lo = mid;
            }
            if hi - lo <= 1e-15 * hi {
                break;
            }
        }
        Some(0.5 * (lo + hi))
    }

    /// Checks the coefficients (all ≥ 0, which makes Λ(T) non-decreasing).
    pub fn validate(&self) -> Result<(), DampingError> {
        check_non_negative("ki02.heating", self.heating)?;
        check_non_negative("ki02.a1", self.a1)?;
        check_non_negative("ki02.t1", self.t1)?;
        check_non_negative("ki02.t0", self.t0)?;
        check_non_negative("ki02.a2", self.a2)?;
        check_non_negative("ki02.t2", self.t2)
    }
}

/// Koyama & Inutsuka (2002) cooling + heating, integrated by backward Euler per sub-step.
///
/// The residual f(T') = T' − T + Δt (γ−1)(𝒫Λ(T') − n_HΓ)/(n_tot k_B) is strictly increasing in
/// T' (Λ non-decreasing), so its root is unique and lies between T and the explicit-Euler value,
/// and also between T and the equilibrium temperature: the update never overshoots equilibrium.
/// The root is found by Newton's method safeguarded by bisection inside that bracket.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ki02Cooler {
    /// The cooling/heating functions.
    pub model: Ki02,
    /// Density prefactor of the cooling term (default n_H²).
    pub prefactor: DensityPrefactor,
    /// Temperature floor [K] (default 10 K, physics-detail §5.2).
    pub t_floor: f64,
    /// Number of equal backward-Euler sub-steps per call (default 1).
    pub substeps: u32,
}

impl Default for Ki02Cooler {
    fn default() -> Self {
        Self {
            model: Ki02::default(),
            prefactor: DensityPrefactor::default(),
            t_floor: 10.0,
            substeps: 1,
        }
    }
}

impl Ki02Cooler {
    /// Checks the parameters.
    pub fn validate(&self) -> Result<(), DampingError> {
        self.model.validate()?;
        self.prefactor.validate()?;
        check_positive("cooling.t_floor", self.t_floor)?;
        if self.substeps == 0 {
            return Err(DampingError::InvalidParameter {
                name: "cooling.substeps",
                value: 0.0,
                allowed: "an integer ≥ 1",
            });
        }
        Ok(())
    }

    /// One backward-Euler step; `kfac` = (γ−1)/(n_tot k_B).
    fn backward_euler(&self, t0: f64, n_h: f64, kfac: f64, dt: f64) -> f64 {
        let p = self.prefactor.value(n_h);
        let heat = n_h * self.model.heating;
        let c = dt * kfac;
        let g = |t: f64| c * (p * self.model.lambda(t) - heat);
        let f = |t: f64| t - t0 + g(t);
        let g0 = g(t0);
        if g0 == 0.0 || !g0.is_finite() {
            return t0;
        }
        let (mut lo, mut hi) = if g0 > 0.0 {
            let mut lo = t0 - g0;
            if lo <= self.t_floor {
                lo = self.t_floor;
                if f(lo) >= 0.0 {
                    return self.t_floor;
                }
            }
            (lo, t0)
        } else {
            (t0, t0 - g0)
        };
        // Newton from the end nearer the equilibrium side, safeguarded by the bracket.
        let mut x = if g0 > 0.0 { lo } else { hi };
        for _ in 0..200 {
            let fx = f(x);
            if fx == 0.0 {
                return x;
            }
            if fx < 0.0 {
                lo = x;
            } else {
                hi = x;
            }
            // Newton in u = ln T (f is close to exponential in T at large Δt).
            let dfx = 1.0 + c * p * self.model.dlambda_dt(x);
            let newton = x * (-fx / (dfx * x)).exp();
            let next = if newton > lo && newton < hi && newton.is_finite() {
                newton
            } else if lo > 0.0 {
                (lo * hi).sqrt()
            } else {
                0.5 * (lo + hi)
            };
            if (next - x).abs() <= 1e-14 * x.abs() || hi - lo <= 1e-14 * hi {
                return next.clamp(lo, hi);
            }
            x = next;
        }
        x
    }
}

impl CoolingIntegrator for Ki02Cooler {
    fn step(&self, temperature: f64, n_h: f64, n_total: f64, gamma: f64, dt: f64) -> CoolingStep {
        let t_in = temperature;
        if !(dt > 0.0) || !(temperature.is_finite()) || !(n_total > 0.0) {
            return CoolingStep {
                temperature,
                energy_loss: 0.0,
            };
        }
        let kfac = (gamma - 1.0) / (n_total * K_BOLTZMANN);
        let sub = dt / f64::from(self.substeps.max(1));
        let mut t = temperature;
        for _ in 0..self.substeps.max(1) {
            t = self.backward_euler(t, n_h, kfac, sub);
        }
        CoolingStep {
            temperature: t,
            energy_loss: (t_in - t) / kfac,
        }
    }

    fn net_cooling_rate(&self, temperature: f64, n_h: f64) -> f64 {
        self.prefactor.value(n_h) * self.model.lambda(temperature) - n_h * self.model.heating
    }
}

/// One segment of a piecewise power-law cooling function: Λ = Λ_k (T/T_k)^{α_k} for
/// T_k ≤ T < T_{k+1}.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PowerLawSegment {
    /// Lower edge T_k [K].
    pub t_min: f64,
    /// Λ_k = Λ(T_k) on this segment [erg cm³ s⁻¹].
    pub lambda_min: f64,
    /// Slope α_k = d ln Λ / d ln T.
    pub slope: f64,
}

/// Piecewise power-law Λ(T): zero below the first edge, the last segment extends to +∞.
/// Discontinuities at the edges are allowed.
#[derive(Debug, Clone, PartialEq)]
pub struct PowerLawTable {
    segments: Vec<PowerLawSegment>,
}

impl PowerLawTable {
    /// From rows (T_min [K], coefficient C, slope α) meaning Λ = C T^α on [T_min, next T_min).
    pub fn from_coefficients(rows: &[(f64, f64, f64)]) -> Result<Self, DampingError> {
        let segs = rows
            .iter()
            .map(|&(t, c, a)| PowerLawSegment {
                t_min: t,
                lambda_min: c * t.powf(a),
                slope: a,
            })
            .collect::<Vec<_>>();
        for (i, &(_, c, a)) in rows.iter().enumerate() {
            if !(c.is_finite() && c > 0.0) {
                return Err(DampingError::InvalidTable {
                    name: "coefficient",
                    index: i,
                    value: c,
                    allowed: "a finite number > 0",
                });
            }
            if !a.is_finite() {
                return Err(DampingError::InvalidTable {
                    name: "slope",
                    index: i,
                    value: a,
                    allowed: "finite",
                });
            }
        }
        Self::from_segments(segs)
    }

    /// From tabulated points (T_i, Λ_i), interpolated linearly in log–log; above the last point
    /// the last interval's power law continues; below the first point Λ = 0.
    pub fn from_points(temperatures: &[f64], lambdas: &[f64]) -> Result<Self, DampingError> {
        if temperatures.len() != lambdas.len() || temperatures.len() < 2 {
            return Err(DampingError::TableShape {
                reason: format!(
                    "need ≥ 2 points and equal column lengths (temperature: {}, lambda: {})",
                    temperatures.len(),
                    lambdas.len()
                ),
            });
        }
        for (i, &l) in lambdas.iter().enumerate() {
            if !(l.is_finite() && l > 0.0) {
                return Err(DampingError::InvalidTable {
                    name: "lambda",
                    index: i,
                    value: l,
                    allowed: "a finite number > 0",
                });
            }
        }
        check_table_temperatures(temperatures)?;
        let n = temperatures.len();
        let mut segs = Vec::with_capacity(n - 1);
        for i in 0..n - 1 {
            let slope =
                (lambdas[i + 1] / lambdas[i]).ln() / (temperatures[i + 1] / temperatures[i]).ln();
            segs.push(PowerLawSegment {
                t_min: temperatures[i],
                lambda_min: lambdas[i],
                slope,
            });
        }
        Self::from_segments(segs)
    }

    /// From segments directly (edges strictly increasing, Λ_k > 0, slopes finite).
    pub fn from_segments(segments: Vec<PowerLawSegment>) -> Result<Self, DampingError> {
        if segments.is_empty() {
            return Err(DampingError::TableShape {
                reason: "no segments".into(),
            });
        }
        let temps: Vec<f64> = segments.iter().map(|s| s.t_min).collect();
        check_table_temperatures(&temps)?;
        for (i, s) in segments.iter().enumerate() {
            if !(s.lambda_min.is_finite() && s.lambda_min > 0.0) {
                return Err(DampingError::InvalidTable {
                    name: "lambda",
                    index: i,
                    value: s.lambda_min,
                    allowed: "a finite number > 0",
                });
            }
            if !s.slope.is_finite() {
                return Err(DampingError::InvalidTable {
                    name: "slope",
                    index: i,
                    value: s.slope,
                    allowed: "finite",
                });
            }
        }
        Ok(Self { segments })
    }

    /// Piecewise power-law fit for 1e4–1e8 K solar-abundance CIE gas after Rosen & Bregman
    /// (1995, ApJ 440, 634) (from memory, physics-detail §5.2), valid from 300 K upward.
    pub fn rosen_bregman_1995() -> Self {
        Self::from_coefficients(&[
            (300.0, 2.2380e-32, 2.0),
            (2000.0, 1.0012e-30, 1.5),
            (8000.0, 4.6240e-36, 2.867),
            (1.0e5, 1.7800e-18, -0.65),
            (4.0e7, 3.2217e-27, 0.5),
        ])
        .expect("built-in table is valid")
    }

    /// The segments.
    pub fn segments(&self) -> &[PowerLawSegment] {
        &self.segments
    }

    /// Index of the segment containing T, `None` below the first edge.
    pub fn segment_index(&self, t: f64) -> Option<usize> {
        if !(t >= self.segments[0].t_min) {
            return None;
        }
        Some(self.segments.partition_point(|s| s.t_min <= t) - 1)
    }

    /// Λ(T) [erg cm³ s⁻¹] (0 below the first edge).
    pub fn lambda(&self, t: f64) -> f64 {
        match self.segment_index(t) {
            None => 0.0,
            Some(k) => {
                let s = &self.segments[k];
                s.lambda_min * (t / s.t_min).powf(s.slope)
            }
        }
    }
}

fn check_table_temperatures(t: &[f64]) -> Result<(), DampingError> {
    for (i, &x) in t.iter().enumerate() {
        if !(x.is_finite() && x > 0.0) {
            return Err(DampingError::InvalidTable {
                name: "temperature",
                index: i,
                value: x,
                allowed: "a finite number > 0",
            });
        }
        if i > 0 && x <= t[i - 1] {
            return Err(DampingError::InvalidTable {
                name: "temperature",
                index: i,
                value: x,
                allowed: "strictly increasing temperatures",
            });
        }
    }
    Ok(())
}

/// |1 − α| below which a segment is treated as α = 1.
const UNIT_SLOPE_EPS: f64 = 1.0e-12;

/// φ(u, α) = (u^{1−α} − 1)/(1 − α) (ln u for α = 1), computed without cancellation.
#[inline]
fn phi(u: f64, alpha: f64) -> f64 {
    let b = 1.0 - alpha;
    if b.abs() < UNIT_SLOPE_EPS {
        u.ln()
    } else {
        (b * u.ln()).exp_m1() / b
    }
}

/// Exact integrator of pure radiative cooling for a piecewise power-law Λ(T)
/// (Townsend 2009, ApJS 181, 391, his §2.2–2.3 and Eqs. for Y and Y⁻¹; physics-detail §5.3).
///
/// Townsend's temporal evolution function Y(T) = (Λ_N/T_N) ∫_T^{T_N} dT'/Λ(T') is tabulated once
/// at the segment edges (Y_k, downward from Y_N = 0 at the reference T_N = lower edge of the last
/// segment). A step adds ΔY = (Λ_N/T_N)(γ−1)𝒫Δt/(n_tot k_B), independent of T, and inverts Y.
/// The inversion is done relative to the current temperature inside its segment and relative to
/// the segment edges beyond it (Y_k − Y_{k+1} precomputed), which is the same formula rearranged
/// so that no large Y values are subtracted (round-off stays at the level of a few ulp).
#[derive(Debug, Clone, PartialEq)]
pub struct TownsendCooler {
    t_k: Vec<f64>,
    lambda_k: Vec<f64>,
    alpha_k: Vec<f64>,
    /// A_k = (Λ_N/Λ_k)(T_k/T_N).
    a_k: Vec<f64>,
    /// Y_k − Y_{k+1} (cost of crossing segment k in Y units); last entry +∞.
    cross_k: Vec<f64>,
    /// Y_k = Y(T_k).
    y_k: Vec<f64>,
    t_ref: f64,
    lambda_ref: f64,
    prefactor: DensityPrefactor,
    t_low: f64,
    table: PowerLawTable,
}

impl TownsendCooler {
    /// Builds the integrator for `table` with temperature floor `t_floor` [K] (the effective
    /// lower limit is max(t_floor, first table edge); cooling stops there).
    pub fn new(
        table: &PowerLawTable,
        t_floor: f64,
        prefactor: DensityPrefactor,
    ) -> Result<Self, DampingError> {
        check_positive("cooling.t_floor", t_floor)?;
        prefactor.validate()?;
        let segs = table.segments();
        let t_low = t_floor.max(segs[0].t_min);
        let first = table.segment_index(t_low).expect("t_low ≥ first edge");
        let mut t_k = Vec::new();
        let mut lambda_k = Vec::new();
        let mut alpha_k = Vec::new();
        for (i, s) in segs.iter().enumerate().skip(first) {
            if i == first {
                t_k.push(t_low);
                lambda_k.push(s.lambda_min * (t_low / s.t_min).powf(s.slope));
            } else {
                t_k.push(s.t_min);
                lambda_k.push(s.lambda_min);
            }
            alpha_k.push(s.slope);
        }
        let n = t_k.len();
        let t_ref = t_k[n - 1];
        let lambda_ref = lambda_k[n - 1];
        let a_k: Vec<f64> = (0..n)
            .map(|k| (lambda_ref / lambda_k[k]) * (t_k[k] / t_ref))
            .collect();
        let mut cross_k = vec![f64::INFINITY; n];
        let mut y_k = vec![0.0; n];
        for k in (0..n - 1).rev() {
            cross_k[k] = a_k[k] * phi(t_k[k + 1] / t_k[k], alpha_k[k]);
            y_k[k] = y_k[k + 1] + cross_k[k];
        }
        Ok(Self {
            t_k,
            lambda_k,
            alpha_k,
            a_k,
            cross_k,
            y_k,
            t_ref,
            lambda_ref,
            prefactor,
            t_low,
            table: table.clone(),
        })
    }

    /// Effective lowest temperature [K] (floor or first table edge).
    pub fn t_low(&self) -> f64 {
        self.t_low
    }

    /// Λ(T) of the underlying table [erg cm³ s⁻¹] (0 below the floor).
    pub fn lambda(&self, t: f64) -> f64 {
        if t < self.t_low {
            0.0
        } else {
            self.table.lambda(t)
        }
    }

    fn segment(&self, t: f64) -> usize {
        self.t_k.partition_point(|&x| x <= t).saturating_sub(1)
    }

    /// Townsend's temporal evolution function Y(T) (dimensionless, decreasing in T; Y = 0 at
    /// the lower edge of the last segment, negative above). Clamped at Y(t_low) below.
    pub fn temporal_evolution(&self, t: f64) -> f64 {
        if !(t > self.t_low) {
            return self.y_k[0];
        }
        let k = self.segment(t);
        self.y_k[k] - self.a_k[k] * phi(t / self.t_k[k], self.alpha_k[k])
    }

    /// ΔY per unit time at fixed density: (Λ_N/T_N)(γ−1)𝒫/(n_tot k_B) [s⁻¹].
    #[inline]
    pub fn evolution_rate(&self, n_h: f64, n_total: f64, gamma: f64) -> f64 {
        (self.lambda_ref / self.t_ref) * (gamma - 1.0) * self.prefactor.value(n_h)
            / (n_total * K_BOLTZMANN)
    }

    /// Exact temperature after Δt of pure cooling, as a bare number [K].
    #[inline]
    pub fn advance(&self, temperature: f64, n_h: f64, n_total: f64, gamma: f64, dt: f64) -> f64 {
        if !(temperature > self.t_low) || !(dt > 0.0) || !(n_total > 0.0) {
            return temperature;
        }
        let mut r = self.evolution_rate(n_h, n_total, gamma) * dt;
        if !(r > 0.0) {
            return temperature;
        }
        if !r.is_finite() {
            return self.t_low;
        }
        let mut k = self.segment(temperature);
        // Partial segment containing the start temperature.
        let c = self.a_k[k] * phi(temperature / self.t_k[k], self.alpha_k[k]);
        if r < c {
            return self.invert(k, temperature, r);
        }
        r -= c;
        // Whole segments below, using the precomputed Y_k − Y_{k+1}.
        loop {
            if k == 0 {
                return self.t_low;
            }
            k -= 1;
            if r < self.cross_k[k] {
                return self.invert(k, self.t_k[k + 1], r);
            }
            r -= self.cross_k[k];
        }
    }

    /// Temperature reached from `t_start` inside segment k after ΔY = r (r < cost to T_k).
    #[inline]
    fn invert(&self, k: usize, t_start: f64, r: f64) -> f64 {
        let alpha = self.alpha_k[k];
        let s = r / self.a_k[k];
        let b = 1.0 - alpha;
        let t_new = if b.abs() < UNIT_SLOPE_EPS {
            t_start * (-s).exp()
        } else {
            // T' = T [1 + (α−1) s (T/T_k)^{α−1}]^{1/(1−α)}
            let x = -b * s * (-b * (t_start / self.t_k[k]).ln()).exp();
            t_start * (x.ln_1p() / b).exp()
        };
        t_new.clamp(self.t_k[k], t_start)
    }
}

impl CoolingIntegrator for TownsendCooler {
    fn step(&self, temperature: f64, n_h: f64, n_total: f64, gamma: f64, dt: f64) -> CoolingStep {
        let t = self.advance(temperature, n_h, n_total, gamma, dt);
        let loss = if t == temperature {
            0.0
        } else {
            n_total * K_BOLTZMANN * (temperature - t) / (gamma - 1.0)
        };
        CoolingStep {
            temperature: t,
            energy_loss: loss,
        }
    }

    fn net_cooling_rate(&self, temperature: f64, n_h: f64) -> f64 {
        self.prefactor.value(n_h) * self.lambda(temperature)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ki02_lambda_monotone_and_derivative_consistent() {
        let m = Ki02::default();
        let mut t = 1.0;
        let mut last = 0.0;
        while t < 1e9 {
            let l = m.lambda(t);
            assert!(l >= last);
            last = l;
            let h = t * 1e-6;
            let fd = (m.lambda(t + h) - m.lambda(t - h)) / (2.0 * h);
            let d = m.dlambda_dt(t);
            assert!(
                (fd - d).abs() <= 1e-5 * d.abs() + 1e-300,
                "T={t} fd={fd} d={d}"
            );
            t *= 1.3;
        }
        assert_eq!(m.lambda(0.0), 0.0);
        assert_eq!(m.lambda(-1.0), 0.0);
    }

    #[test]
    fn ki02_never_overshoots_equilibrium() {
        let c = Ki02Cooler::default();
        for n in [0.1, 1.0, 10.0] {
            let teq = c.model.equilibrium_temperature(n, c.prefactor).unwrap();
            let ntot = 1.1 * n;
            for t0 in [20.0, 0.5 * teq, 2.0 * teq, 1e4, 1e6] {
                let tc = c.cooling_time(t0, n, ntot, 5.0 / 3.0);
                let mut last = t0;
                for f in [1e-3, 1e-1, 1.0, 10.0, 1e3, 1e8, 1e12, 1e16] {
                    let s = c.step(t0, n, ntot, 5.0 / 3.0, f * tc);
                    let t = s.temperature;
                    if t0 > teq {
                        assert!(
                            t >= teq * (1.0 - 1e-12) && t <= last,
                            "n={n} t0={t0} f={f} t={t}"
                        );
                    } else {
                        assert!(
                            t <= teq * (1.0 + 1e-12) && t >= last,
                            "n={n} t0={t0} f={f} t={t}"
                        );
                    }
                    last = t;
                }
                assert!(
                    (last / teq - 1.0).abs() < 1e-6,
                    "n={n} t0={t0} last={last} teq={teq}"
                );
            }
        }
    }

    #[test]
    fn ki02_energy_loss_matches_temperature_change() {
        let c = Ki02Cooler::default();
        let (n, ntot, g) = (1.0, 1.1, 5.0 / 3.0);
        let s = c.step(8000.0, n, ntot, g, 1e13);
        let de = ntot * K_BOLTZMANN * (8000.0 - s.temperature) / (g - 1.0);
        assert!((s.energy_loss / de - 1.0).abs() < 1e-9);
        assert!(s.energy_loss > 0.0);
        let s = c.step(100.0, n, ntot, g, 1e13);
        assert!(s.energy_loss < 0.0, "heating below equilibrium");
    }

    #[test]
    fn ki02_floor_and_degenerate_inputs() {
        let c = Ki02Cooler {
            t_floor: 5000.0,
            ..Default::default()
        };
        // n = 10: equilibrium 160 K is below the floor: a long step stops at the floor.
        let s = c.step(8000.0, 10.0, 11.0, 5.0 / 3.0, 1e20);
        assert_eq!(s.temperature, 5000.0);
        let d = Ki02Cooler::default();
        for (t, n, dt) in [
            (0.0, 1.0, 1e10),
            (1e-300, 1.0, 1e10),
            (1e9, 1e-10, 1e20),
            (100.0, 0.0, 1.0),
        ] {
            let s = d.step(t, n, 1.1 * n + 1e-300, 5.0 / 3.0, dt);
            assert!(
                s.temperature.is_finite() && s.energy_loss.is_finite(),
                "{t} {n} {dt} {s:?}"
            );
        }
        assert_eq!(d.step(100.0, 1.0, 1.1, 5.0 / 3.0, 0.0).temperature, 100.0);
        assert!(Ki02Cooler {
            substeps: 0,
            ..Default::default()
        }
        .validate()
        .is_err());
        assert!(Ki02Cooler {
            t_floor: 0.0,
            ..Default::default()
        }
        .validate()
        .is_err());
        let bad = Ki02Cooler {
            model: Ki02 {
                a2: -1.0,
                ..Default::default()
            },
            ..Default::default()
        };
        assert!(bad
            .validate()
            .unwrap_err()
            .to_string()
            .contains("ki02.a2 = -1"));
    }

    #[test]
    fn table_validation_errors() {
        let e = PowerLawTable::from_points(&[1e4, 1e4], &[1.0, 2.0]).unwrap_err();
        assert!(e.to_string().contains("temperature[1]"), "{e}");
        let e = PowerLawTable::from_points(&[1e4, 1e5], &[1.0, -2.0]).unwrap_err();
        assert!(e.to_string().contains("lambda[1] = -2"), "{e}");
        assert!(PowerLawTable::from_points(&[1e4], &[1.0]).is_err());
        assert!(PowerLawTable::from_coefficients(&[(1e4, 0.0, 1.0)]).is_err());
        assert!(PowerLawTable::from_coefficients(&[(1e4, 1.0, f64::NAN)]).is_err());
        let t = PowerLawTable::rosen_bregman_1995();
        assert!(TownsendCooler::new(&t, -1.0, DensityPrefactor::default()).is_err());
        let p = DensityPrefactor::ElectronHydrogen {
            electrons_per_h: 0.0,
        };
        assert!(TownsendCooler::new(&t, 1e4, p)
            .unwrap_err()
            .to_string()
            .contains("electrons_per_h"));
    }

    #[test]
    fn rosen_bregman_values_and_continuity() {
        // physics-detail §5.2 [computed]: Λ(1e6) = 2.24e-22, Λ(1e7) = 5.02e-23, Λ(1e8) = 3.22e-23;
        // continuity at the breaks ≤ 0.1 %.
        let t = PowerLawTable::rosen_bregman_1995();
        assert!((t.lambda(1e6) / 2.24e-22 - 1.0).abs() < 3e-3);
        assert!((t.lambda(1e7) / 5.02e-23 - 1.0).abs() < 1e-3);
        assert!((t.lambda(1e8) / 3.22e-23 - 1.0).abs() < 1e-3);
        for s in t.segments().iter().skip(1) {
            let below = t.lambda(s.t_min * (1.0 - 1e-12));
            assert!((below / s.lambda_min - 1.0).abs() < 1e-3);
        }
        assert_eq!(t.lambda(299.0), 0.0);
    }

    #[test]
    fn townsend_monotone_no_nan_and_floor() {
        let t = PowerLawTable::rosen_bregman_1995();
        let c = TownsendCooler::new(&t, 1e4, DensityPrefactor::default()).unwrap();
        let mut last = 1e9;
        for i in 0..90 {
            let dt = 1e6 * 1.5f64.powi(i);
            let s = c.step(1e9, 1e-2, 2.3e-2, 5.0 / 3.0, dt);
            assert!(s.temperature <= last && s.temperature >= 1e4);
            last = s.temperature;
        }
        assert_eq!(last, 1e4);
        for (temp, n, dt) in [
            (1e4, 1.0, 1e10),
            (0.0, 1.0, 1.0),
            (1e12, 1e3, 1e30),
            (2e4, 1e-30, 1e-30),
        ] {
            let s = c.step(temp, n, 2.3 * n, 5.0 / 3.0, dt);
            assert!(s.temperature.is_finite() && s.energy_loss.is_finite());
            assert!(s.temperature >= temp.min(1e4));
        }
        // Y is decreasing in T.
        let mut y = f64::INFINITY;
        let mut temp = 1e4 * 1.01;
        while temp < 1e9 {
            let v = c.temporal_evolution(temp);
            assert!(v < y);
            y = v;
            temp *= 1.2;
        }
    }
}
