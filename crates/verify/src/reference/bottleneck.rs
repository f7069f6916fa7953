//! Steady streaming bottleneck (Skilling 1971, ApJ 170, 265; Wiener, Oh & Zweibel 2017,
//! MNRAS 467, 646; physics-detail §4.2).
//!
//! The solver itself lives in `sluice_cosmic_rays::steady` (so that the driver can print the
//! predicted plateau in `sluice check`); this module re-exports it with the reference
//! library's error type and keeps the cloud profile of the physics-detail §4.2 set-up. The
//! construction (P_c = P_0 [M(x_0)/M(x)]^{γ_c}, M the downstream running minimum of
//! w = v + v_a) is documented there and derived in docs/references.md.
//!
//! Units: any consistent set (cgs: x [cm], speeds [cm s⁻¹], P_c [erg cm⁻³], Φ [erg cm⁻² s⁻¹]).

use super::RefError;
pub use sluice_cosmic_rays::steady::BottleneckProfile;
use sluice_cosmic_rays::steady::{self, SteadyError};

fn map(e: SteadyError) -> RefError {
    match e {
        SteadyError::InvalidParameter {
            key,
            value,
            allowed,
        } => RefError::InvalidParameter {
            key,
            value,
            allowed,
        },
    }
}

/// Bottleneck profile from Alfvén speed and gas velocity samples (`v` may be empty = static).
/// `x` strictly ascending, `v_a` > 0, w = v + v_a > 0 everywhere, `pc0` > 0, `gamma_c` > 1.
pub fn bottleneck_from_speeds(
    x: &[f64],
    v_a: &[f64],
    v: &[f64],
    pc0: f64,
    gamma_c: f64,
) -> Result<BottleneckProfile, RefError> {
    steady::bottleneck_from_speeds(x, v_a, v, pc0, gamma_c).map_err(map)
}

/// Bottleneck profile for static gas, uniform field |B| [gauss] and density samples ρ
/// [g cm⁻³] (cgs: v_a = |B|/√(4πρ)).
pub fn bottleneck_static(
    x: &[f64],
    rho: &[f64],
    b: f64,
    pc0: f64,
    gamma_c: f64,
) -> Result<BottleneckProfile, RefError> {
    steady::bottleneck_static(x, rho, b, pc0, gamma_c).map_err(map)
}

/// Gaussian cloud density ρ_h + (ρ_c − ρ_h) exp[−(x − x_c)²/(2w²)] (physics-detail §4.2 setup).
pub fn gaussian_cloud(x: f64, rho_h: f64, chi: f64, x_c: f64, width: f64) -> f64 {
    rho_h * (1.0 + (chi - 1.0) * (-(x - x_c).powi(2) / (2.0 * width * width)).exp())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn grid(n: usize, a: f64, b: f64) -> Vec<f64> {
        (0..n)
            .map(|i| a + (b - a) * i as f64 / (n - 1) as f64)
            .collect()
    }

    /// χ = 100 Gaussian cloud: flat upstream, P_c v_a^{4/3} constant downstream,
    /// far downstream P_c/P_0 = χ^{−2/3} = 0.0464 (physics-detail §4.2).
    #[test]
    fn chi_100_cloud() {
        let x = grid(2001, 0.0, 1.0);
        let rho: Vec<f64> = x
            .iter()
            .map(|&x| gaussian_cloud(x, 1.0, 100.0, 0.5, 0.04))
            .collect();
        let b = (4.0 * std::f64::consts::PI).sqrt(); // v_a = 1 in the hot gas
        let p = bottleneck_static(&x, &rho, b, 1.0, 4.0 / 3.0).unwrap();
        let last = *p.pc.last().unwrap();
        assert!((last - 0.0464).abs() < 5e-5, "{last}");
        assert!((last - 100f64.powf(-2.0 / 3.0)).abs() < 1e-12);
        let ic = 1000; // x = 0.5, the v_a minimum
        for i in 0..=ic {
            assert_eq!(p.pc[i], 1.0);
            assert!(i == ic || !p.coupled[i]);
        }
        let va_c = p.w[ic];
        for i in ic..x.len() {
            assert!(p.coupled[i]);
            assert!((p.pc[i] - (p.w[i] / va_c).powf(-4.0 / 3.0)).abs() < 1e-14);
        }
        // force on the slab = pressure drop; flux in = v_a,min h_0 (the bottleneck)
        assert!((p.force_per_area - (1.0 - last)).abs() < 1e-15);
        assert!((p.flux[0] - 4.0 * va_c).abs() < 1e-14);
    }

    /// Steady energy budget Φ_in − Φ_out = heating + work, second-order convergent quadrature.
    #[test]
    fn energy_budget_converges() {
        let budget = |n: usize, moving: bool| {
            let x = grid(n, 0.0, 1.0);
            let va: Vec<f64> = x
                .iter()
                .map(|&x| 1.0 / gaussian_cloud(x, 1.0, 30.0, 0.45, 0.05).sqrt())
                .collect();
            let v: Vec<f64> = if moving {
                x.iter().map(|&x| 0.3 + 0.2 * x).collect()
            } else {
                vec![]
            };
            let p = bottleneck_from_speeds(&x, &va, &v, 2.0, 4.0 / 3.0).unwrap();
            (p.flux[0] - p.flux[n - 1]) - (p.heating_per_area + p.work_per_area)
        };
        for moving in [false, true] {
            let e1 = budget(401, moving).abs();
            let e2 = budget(801, moving).abs();
            let e3 = budget(1601, moving).abs();
            assert!(e3 < 1e-5, "{e3}");
            let order = (e2 / e3).log2();
            assert!(
                order > 1.8 && (e1 / e2).log2() > 1.8,
                "order {order} ({e1}, {e2}, {e3})"
            );
        }
    }

    /// Two clouds (the deeper one first, then a shallower one): the defining steady-state
    /// conditions hold and a flat stretch appears upstream of the second minimum.
    #[test]
    fn two_dips_satisfy_steady_conditions() {
        let x = grid(3001, 0.0, 1.0);
        let va: Vec<f64> = x
            .iter()
            .map(|&x| {
                1.0 / (gaussian_cloud(x, 1.0, 100.0, 0.3, 0.03)
                    + gaussian_cloud(x, 1.0, 4.0, 0.7, 0.03)
                    - 1.0)
                    .sqrt()
            })
            .collect();
        let p = bottleneck_from_speeds(&x, &va, &[], 1.0, 4.0 / 3.0).unwrap();
        let h = |i: usize| 4.0 * p.pc[i];
        for i in 0..x.len() {
            assert!(p.flux[i] <= p.w[i] * h(i) * (1.0 + 1e-15));
            if i + 1 < x.len() {
                assert!(p.pc[i + 1] <= p.pc[i]);
                if p.pc[i + 1] < p.pc[i] {
                    // strictly falling ⇒ coupled (the coupled→flat switch falls between two
                    // nodes, so at least one end is coupled); P_c w^{4/3} constant if both are
                    assert!(p.coupled[i] || p.coupled[i + 1]);
                    if p.coupled[i] && p.coupled[i + 1] {
                        let a = p.pc[i] * p.w[i].powf(4.0 / 3.0);
                        let b = p.pc[i + 1] * p.w[i + 1].powf(4.0 / 3.0);
                        assert!((a - b).abs() < 1e-13 * a);
                    }
                } else {
                    assert!((p.flux[i + 1] - p.flux[i]).abs() < 1e-14 * p.flux[i]);
                }
            }
        }
        // second minimum at x = 0.7: v_a,min,2 = 1/2; P_c there = (v_a,min,1/v_a,min,2)^{4/3}
        let i2 = 2100;
        assert!((p.pc[i2] - (0.1f64 / 0.5).powf(4.0 / 3.0)).abs() < 1e-12);
        assert!(!p.coupled[i2 - 100] && (p.pc[i2 - 100] - p.pc[i2]).abs() < 1e-15);
        assert!((p.pc.last().unwrap() - 0.1f64.powf(4.0 / 3.0)).abs() < 1e-10);
    }

    #[test]
    fn bad_input() {
        let x = [0.0, 1.0, 0.5];
        let e = bottleneck_from_speeds(&x, &[1.0; 3], &[], 1.0, 4.0 / 3.0).unwrap_err();
        assert!(e.to_string().contains("ascending"));
        assert!(bottleneck_from_speeds(&[0.0, 1.0], &[1.0, -1.0], &[], 1.0, 4.0 / 3.0).is_err());
        assert!(
            bottleneck_from_speeds(&[0.0, 1.0], &[1.0, 1.0], &[-2.0, 0.0], 1.0, 4.0 / 3.0).is_err()
        );
        assert!(bottleneck_static(&[0.0, 1.0], &[1.0, 1.0], 0.0, 1.0, 4.0 / 3.0).is_err());
    }
}
