//! Public-API checks of `sluice_verify::reference` that combine modules.

use sluice_verify::reference::quad::GaussLegendre;
use sluice_verify::reference::riemann::{two_fluid_riemann, TwoFluidState};
use sluice_verify::reference::telegraph::telegraph_green;

/// Fourier transform of the telegraph Green's function, fronts included, against the exact
/// mode solution of ε_tt + 2aε_t + c_w²k²ε = 0 with ε(0) = 1, ε_t(0) = 0:
/// Ĝ(k,t) = e^{−at}[cosh λt + (a/λ) sinh λt], λ = √(a² − c_w²k²) (cos/sin when imaginary).
#[test]
fn telegraph_green_fourier_transform() {
    let rule = GaussLegendre::new(16);
    for (kappa, c_r, t) in [(1.0, 3.0, 0.5), (0.5, 2.0, 1.5), (1.0, 10.0, 0.2)] {
        let c_w = c_r / 3f64.sqrt();
        let a = c_r * c_r / (6.0 * kappa);
        for k in [0.5, 2.0, 7.0] {
            let g0 = telegraph_green(0.0, t, kappa, c_r).unwrap();
            let l = g0.front_position;
            let smooth = rule.integrate_panels(-l, l, 400, |x| {
                telegraph_green(x, t, kappa, c_r).unwrap().smooth * (k * x).cos()
            });
            let numeric = smooth + 2.0 * g0.front_weight * (k * l).cos();
            let d = a * a - c_w * c_w * k * k;
            let exact = if d >= 0.0 {
                let lam = d.sqrt();
                (-a * t).exp() * ((lam * t).cosh() + a / lam * (lam * t).sinh())
            } else {
                let om = (-d).sqrt();
                (-a * t).exp() * ((om * t).cos() + a / om * (om * t).sin())
            };
            assert!(
                (numeric - exact).abs() < 1e-10,
                "κ={kappa} c_r={c_r} t={t} k={k}: {numeric} vs {exact}"
            );
        }
    }
}

/// Sampling through the convenience entry point: undisturbed states far away, Sod values.
#[test]
fn riemann_convenience_sampling() {
    let l = TwoFluidState {
        rho: 1.0,
        u: 0.0,
        pg: 1.0,
        pc: 0.0,
    };
    let r = TwoFluidState {
        rho: 0.125,
        u: 0.0,
        pg: 0.1,
        pc: 0.0,
    };
    let far_left = two_fluid_riemann(l, r, 1.4, 4.0 / 3.0, 0.0, 0.2, 0.5).unwrap();
    assert_eq!(far_left, l);
    let far_right = two_fluid_riemann(l, r, 1.4, 4.0 / 3.0, 1.0, 0.2, 0.5).unwrap();
    assert_eq!(far_right, r);
    // just right of the contact (u* t = 0.18549 from x0): star pressure of Toro 2009 Test 1
    let s = two_fluid_riemann(l, r, 1.4, 4.0 / 3.0, 0.5 + 0.19, 0.2, 0.5).unwrap();
    assert!((s.pg - 0.30313).abs() < 5e-6 && (s.u - 0.92745).abs() < 5e-6);
    assert!(two_fluid_riemann(l, r, 1.4, 4.0 / 3.0, 0.5, 0.0, 0.5).is_err());
}
