//! Steady streaming bottleneck (Skilling 1971, ApJ 170, 265; Wiener, Oh & Zweibel 2017,
//! MNRAS 467, 646; physics-detail §4.2).
//!
//! Steady planar pure streaming (v_st = v_a) of CRs injected at the left boundary with fixed
//! P_c = P_0 and streaming towards +x, through a prescribed gas profile with velocity
//! v(x) and Alfvén speed v_a(x), transport speed w = v + v_a > 0. Where the CRs are coupled
//! (∂x P_c < 0) the steady energy equation ∂x[w h] = w ∂x P_c gives P_c w^{γ_c} = const; where
//! they decouple P_c is flat and the flux is below w h. The unique profile satisfying
//! "P_c non-increasing, lab flux Φ = (vh + F) ≤ w h with equality where coupled, Φ constant
//! where flat" is (derived in docs/references.md)
//!
//! P_c(x) = P_0 [M(x_0)/M(x)]^{γ_c},   M(x) = min_{x' ≥ x} w(x'),   Φ(x) = M(x) h(x),
//!
//! M the downstream running minimum of w. For a single dip (one cloud) this is the printed
//! rule: P_c flat up to the w minimum, then P_c ∝ w^{−γ_c}; with several dips a flat stretch
//! also appears upstream of every later minimum that is lower than the w reached before it.
//! Heating by streaming H = v_a |∂x P_c|; steady energy budget Φ_in − Φ_out = ∫H dx − ∫v ∂x P_c dx;
//! CR force on the gas per area = P_c(x_0) − P_c(x_N).
//!
//! Units: any consistent set (cgs: x [cm], speeds [cm s⁻¹], P_c [erg cm⁻³], Φ [erg cm⁻² s⁻¹]).
//!
//! This module is used by the driver (`sluice check` prints the predicted plateau, the slab
//! diagnostics compare with it) and re-exported by `sluice-verify`'s reference library.

/// Bad input of the steady-state solver: the argument, the value and what is allowed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SteadyError {
    /// An input is outside the range the steady solution is defined for.
    #[error("invalid parameter `{key}` = {value}: allowed {allowed}")]
    InvalidParameter {
        /// Name of the argument.
        key: &'static str,
        /// The value given.
        value: f64,
        /// What is allowed.
        allowed: &'static str,
    },
}

fn check(
    key: &'static str,
    value: f64,
    ok: bool,
    allowed: &'static str,
) -> Result<f64, SteadyError> {
    if ok {
        Ok(value)
    } else {
        Err(SteadyError::InvalidParameter {
            key,
            value,
            allowed,
        })
    }
}

fn positive(key: &'static str, v: f64) -> Result<f64, SteadyError> {
    check(key, v, v.is_finite() && v > 0.0, "finite and > 0")
}

fn finite(key: &'static str, v: f64) -> Result<f64, SteadyError> {
    check(key, v, v.is_finite(), "finite")
}

fn adiabatic(key: &'static str, v: f64) -> Result<f64, SteadyError> {
    check(key, v, v.is_finite() && v > 1.0, "finite and > 1")
}

/// Steady bottleneck profile on the given nodes.
#[derive(Debug, Clone, PartialEq)]
pub struct BottleneckProfile {
    /// Node positions (ascending) [length].
    pub x: Vec<f64>,
    /// Transport speed w = v + v_a [length/time].
    pub w: Vec<f64>,
    /// Downstream running minimum M(x) of w [length/time].
    pub w_min_downstream: Vec<f64>,
    /// CR pressure P_c [pressure].
    pub pc: Vec<f64>,
    /// Lab-frame CR energy flux Φ = v h + F = M h [energy/(area time)].
    pub flux: Vec<f64>,
    /// True where the CRs are coupled (w = M, P_c w^{γ_c} locally constant).
    pub coupled: Vec<bool>,
    /// Streaming heating per area ∫ v_a |∂x P_c| dx (trapezoid in P_c on the nodes; second order).
    pub heating_per_area: f64,
    /// Work per area done on the gas, −∫ v ∂x P_c dx (same quadrature).
    pub work_per_area: f64,
    /// CR force on the gas per area, P_c(first) − P_c(last) [pressure].
    pub force_per_area: f64,
}

/// Bottleneck profile from Alfvén speed and gas velocity samples (`v` may be empty = static).
/// `x` strictly ascending, `v_a` > 0, w = v + v_a > 0 everywhere, `pc0` > 0, `gamma_c` > 1.
pub fn bottleneck_from_speeds(
    x: &[f64],
    v_a: &[f64],
    v: &[f64],
    pc0: f64,
    gamma_c: f64,
) -> Result<BottleneckProfile, SteadyError> {
    let n = x.len();
    if n < 2 {
        return Err(SteadyError::InvalidParameter {
            key: "x.len()",
            value: n as f64,
            allowed: ">= 2 nodes",
        });
    }
    if v_a.len() != n {
        return Err(SteadyError::InvalidParameter {
            key: "v_a.len()",
            value: v_a.len() as f64,
            allowed: "equal to x.len()",
        });
    }
    if !(v.is_empty() || v.len() == n) {
        return Err(SteadyError::InvalidParameter {
            key: "v.len()",
            value: v.len() as f64,
            allowed: "0 (static gas) or x.len()",
        });
    }
    positive("pc0", pc0)?;
    adiabatic("gamma_c", gamma_c)?;
    for pair in x.windows(2) {
        finite("x", pair[0])?;
        finite("x", pair[1])?;
        if pair[1] <= pair[0] {
            return Err(SteadyError::InvalidParameter {
                key: "x",
                value: pair[1],
                allowed: "strictly ascending node positions",
            });
        }
    }
    let vel = |i: usize| if v.is_empty() { 0.0 } else { v[i] };
    let mut w = Vec::with_capacity(n);
    for (i, &va) in v_a.iter().enumerate() {
        positive("v_a", va)?;
        let wi = finite("v", vel(i))? + va;
        positive("v + v_a", wi)?;
        w.push(wi);
    }
    let mut m = w.clone();
    for i in (0..n - 1).rev() {
        m[i] = m[i].min(m[i + 1]);
    }
    let m0 = m[0];
    let pc: Vec<f64> = m.iter().map(|&mi| pc0 * (m0 / mi).powf(gamma_c)).collect();
    let enthalpy = gamma_c / (gamma_c - 1.0);
    let flux: Vec<f64> = m
        .iter()
        .zip(&pc)
        .map(|(&mi, &p)| enthalpy * mi * p)
        .collect();
    let coupled: Vec<bool> = w.iter().zip(&m).map(|(a, b)| a == b).collect();
    let mut heating = 0.0;
    let mut work = 0.0;
    for i in 0..n - 1 {
        let dp = pc[i + 1] - pc[i];
        heating += -0.5 * (v_a[i] + v_a[i + 1]) * dp;
        work += -0.5 * (vel(i) + vel(i + 1)) * dp;
    }
    Ok(BottleneckProfile {
        x: x.to_vec(),
        w,
        w_min_downstream: m,
        force_per_area: pc[0] - pc[n - 1],
        pc,
        flux,
        coupled,
        heating_per_area: heating,
        work_per_area: work,
    })
}

/// Bottleneck profile for static gas, uniform field |B| [gauss] and density samples ρ
/// [g cm⁻³] (cgs: v_a = |B|/√(4πρ)).
pub fn bottleneck_static(
    x: &[f64],
    rho: &[f64],
    b: f64,
    pc0: f64,
    gamma_c: f64,
) -> Result<BottleneckProfile, SteadyError> {
    positive("B", b.abs())?;
    let mut v_a = Vec::with_capacity(rho.len());
    for &r in rho {
        positive("rho", r)?;
        v_a.push(b.abs() / (4.0 * std::f64::consts::PI * r).sqrt());
    }
    bottleneck_from_speeds(x, &v_a, &[], pc0, gamma_c)
}

/// Steady profile for CRs entering through the left boundary with a given lab-frame energy
/// flux `flux_in` (> 0) instead of a given pressure: the flux through the whole profile is
/// limited by the bottleneck, Φ_0 = γ_c/(γ_c − 1) M(x_0) P_0, so
/// P_0 = (γ_c − 1) Φ_0 / (γ_c min_x w) (same arguments and units as
/// [`bottleneck_from_speeds`]).
pub fn bottleneck_from_flux(
    x: &[f64],
    v_a: &[f64],
    v: &[f64],
    flux_in: f64,
    gamma_c: f64,
) -> Result<BottleneckProfile, SteadyError> {
    positive("flux_in", flux_in)?;
    adiabatic("gamma_c", gamma_c)?;
    if !(v.is_empty() || v.len() == v_a.len()) {
        return Err(SteadyError::InvalidParameter {
            key: "v.len()",
            value: v.len() as f64,
            allowed: "0 (static gas) or v_a.len()",
        });
    }
    let vel = |i: usize| if v.is_empty() { 0.0 } else { v[i] };
    let mut w_min = f64::INFINITY;
    for (i, &va) in v_a.iter().enumerate() {
        w_min = w_min.min(va + vel(i));
    }
    positive("min(v + v_a)", w_min)?;
    let pc0 = (gamma_c - 1.0) * flux_in / (gamma_c * w_min);
    bottleneck_from_speeds(x, v_a, v, pc0, gamma_c)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Injected flux: the plateau is set by the bottleneck, P_0 = (γ_c − 1) Φ / (γ_c v_a,min)
    /// (steady streaming energy flux Φ = γ_c/(γ_c − 1) v_a P_c at the Alfvén-speed minimum;
    /// Wiener, Oh & Zweibel 2017, MNRAS 467, 646, §2), and the flux at the inlet is Φ.
    #[test]
    fn flux_sets_the_plateau_through_the_minimum() {
        let x: Vec<f64> = (0..101).map(|i| i as f64 * 0.01).collect();
        let va: Vec<f64> = x
            .iter()
            .map(|&x| 1.0 - 0.75 * (-((x - 0.5) / 0.1).powi(2)).exp())
            .collect();
        let p = bottleneck_from_flux(&x, &va, &[], 2.0, 4.0 / 3.0).unwrap();
        let want = (1.0 / 3.0) * 2.0 / ((4.0 / 3.0) * 0.25);
        assert!((p.pc[0] - want).abs() < 1e-14 * want, "{}", p.pc[0]);
        assert!((p.flux[0] - 2.0).abs() < 1e-14);
        assert!(bottleneck_from_flux(&x, &va, &[0.0; 3], 2.0, 4.0 / 3.0).is_err());
        assert!(bottleneck_from_flux(&x, &va, &[], -1.0, 4.0 / 3.0).is_err());
    }
}
