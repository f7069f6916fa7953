//! Pure streaming of a top-hat and of a smooth symmetric profile (physics-detail §4.4).
//!
//! Static gas, uniform v_a, streaming only (v_st = v_a down the gradient), energy equation
//! ∂t ε + ∂x F = −H with F = sgn(−∂x ε) v_a h where ∂x ε ≠ 0, H = v_a |∂x P_c|, and a flat,
//! decoupled plateau (|F| < v_a h, H = 0) around the maximum (Sharma, Colella & Martin 2010,
//! SIAM J. Sci. Comput. 32, 3564, for the regularised problem). γ_c general (4/3 default).
//!
//! * Coupled wings translate rigidly at v_a: ∂t ε + v_a ∂x ε = 0 there (h = γ_c ε, P = (γ_c−1)ε).
//! * Plateau of half-width x_p: energy balance x_p dε_p/dt = −F(x_p) = −γ_c v_a ε_p.
//!
//! Top-hat (ε = ε0 for |x| < L): x_front = L + v_a t, ε_p = ε0 (1 + v_a t/L)^{−γ_c}.
//! Smooth profile ε0 f(|x|), f(0) = 1, f decreasing on (0, ∞): with z the initial-profile
//! coordinate of the matching point, ε_p = ε0 f(z), x_p = z + v_a t, the plateau ODE is linear
//! in t(z) and integrates exactly (derivation in docs/references.md):
//!
//! x_p(z) = f(z)^{−1/γ_c} ∫_0^z f(s)^{1/γ_c} ds,   t(z) = (x_p(z) − z)/v_a,
//!
//! i.e. the adiabatic invariant ε_p^{1/γ_c} x_p = ε0^{1/γ_c} ∫_0^z f^{1/γ_c} ds. For a Gaussian
//! f = e^{−z²/(2w²)}: x_p = √β D(z/√β), β = 2γ_c w², D(q) = e^{q²} ∫_0^q e^{−u²} du.
//! Units: any consistent set.

use super::quad::GaussLegendre;
use super::{adiabatic, finite, non_negative, positive, RefError};

/// Top-hat state at time t.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TopHat {
    /// Front position x_front = L + v_a t [length] (fronts at ±x_front).
    pub front: f64,
    /// Plateau energy density ε_p = ε0 (1 + v_a t/L)^{−γ_c} [energy/length³].
    pub plateau: f64,
}

/// Streaming top-hat of half-width `l` > 0, value `eps0` > 0, Alfvén speed `v_a` > 0, t ≥ 0.
pub fn streaming_top_hat(
    t: f64,
    eps0: f64,
    l: f64,
    v_a: f64,
    gamma_c: f64,
) -> Result<TopHat, RefError> {
    non_negative("t", t)?;
    positive("eps0", eps0)?;
    positive("l", l)?;
    positive("v_a", v_a)?;
    adiabatic("gamma_c", gamma_c)?;
    let front = l + v_a * t;
    Ok(TopHat {
        front,
        plateau: eps0 * (l / front).powf(gamma_c),
    })
}

impl TopHat {
    /// ε(x): plateau inside |x| < front, zero outside.
    pub fn value(&self, x: f64) -> f64 {
        if x.abs() < self.front {
            self.plateau
        } else {
            0.0
        }
    }
}

/// Flat-top state of the smooth-profile construction.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FlatTopState {
    /// Time t [time].
    pub t: f64,
    /// Plateau half-width x_p [length].
    pub x_p: f64,
    /// Plateau value ε_p [energy/length³].
    pub eps_p: f64,
    /// Initial-profile coordinate z = x_p − v_a t of the matching point [length].
    pub z: f64,
}

/// Flat-top construction for a smooth symmetric profile ε(x, 0) = ε0 f(|x|).
pub struct FlatTop<F: Fn(f64) -> f64> {
    shape: F,
    eps0: f64,
    v_a: f64,
    gamma_c: f64,
    scale: f64,
    rule: GaussLegendre,
}

impl<F: Fn(f64) -> f64> FlatTop<F> {
    /// `shape` f with f(0) = 1, decreasing and positive on (0, ∞); `scale` > 0 a length on which f
    /// varies (quadrature panels are ≤ scale/20); `eps0`, `v_a` > 0; `gamma_c` > 1.
    pub fn new(shape: F, scale: f64, eps0: f64, v_a: f64, gamma_c: f64) -> Result<Self, RefError> {
        positive("scale", scale)?;
        positive("eps0", eps0)?;
        positive("v_a", v_a)?;
        adiabatic("gamma_c", gamma_c)?;
        let f0 = shape(0.0);
        if (f0 - 1.0).abs() > 1e-12 {
            return Err(RefError::InvalidParameter {
                key: "shape(0)",
                value: f0,
                allowed: "1 (normalised profile)",
            });
        }
        Ok(Self {
            shape,
            eps0,
            v_a,
            gamma_c,
            scale,
            rule: GaussLegendre::new(24),
        })
    }

    /// State when the plateau edge has reached initial coordinate z > 0 (closed form in z).
    pub fn at_matching_point(&self, z: f64) -> Result<FlatTopState, RefError> {
        non_negative("z", z)?;
        let fz = (self.shape)(z);
        positive("shape(z)", fz)?;
        if z == 0.0 {
            return Ok(FlatTopState {
                t: 0.0,
                x_p: 0.0,
                eps_p: self.eps0,
                z,
            });
        }
        let panels = (20.0 * z / self.scale).ceil().max(1.0) as usize;
        let g = 1.0 / self.gamma_c;
        let integral = self
            .rule
            .integrate_panels(0.0, z, panels, |s| (self.shape)(s).powf(g));
        let x_p = integral / fz.powf(g);
        Ok(FlatTopState {
            t: (x_p - z) / self.v_a,
            x_p,
            eps_p: self.eps0 * fz,
            z,
        })
    }

    /// State at time t ≥ 0 (t(z) is increasing: bisection in z).
    pub fn at_time(&self, t: f64) -> Result<FlatTopState, RefError> {
        non_negative("t", t)?;
        if t == 0.0 {
            return self.at_matching_point(0.0);
        }
        let (mut lo, mut hi) = (0.0, self.scale);
        while self.at_matching_point(hi)?.t < t {
            lo = hi;
            hi *= 2.0;
            if hi > 1e6 * self.scale {
                return Err(RefError::NoConvergence {
                    what: "flat-top matching point bracket",
                });
            }
        }
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if self.at_matching_point(mid)?.t < t {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo <= 1e-15 * hi {
                break;
            }
        }
        self.at_matching_point(0.5 * (lo + hi))
    }

    /// ε(x, t): the plateau for |x| ≤ x_p, the rigidly translated wing ε0 f(|x| − v_a t) outside.
    pub fn value(&self, x: f64, t: f64) -> Result<f64, RefError> {
        finite("x", x)?;
        let s = self.at_time(t)?;
        Ok(if x.abs() <= s.x_p {
            s.eps_p
        } else {
            self.eps0 * (self.shape)(x.abs() - self.v_a * t)
        })
    }
}

/// D(q) = e^{q²} ∫_0^q e^{−u²} du = Σ_{n≥0} 2^n q^{2n+1}/(2n+1)!! (positive series), 0 ≤ q ≤ 25.
pub fn scaled_erf_integral(q: f64) -> Result<f64, RefError> {
    if !(q.is_finite() && (0.0..=25.0).contains(&q)) {
        return Err(RefError::InvalidParameter {
            key: "q",
            value: q,
            allowed: "0 <= q <= 25",
        });
    }
    let mut term = q;
    let mut sum = q;
    let mut n = 0.0;
    while term > 1e-17 * sum {
        term *= 2.0 * q * q / (2.0 * n + 3.0);
        sum += term;
        n += 1.0;
    }
    Ok(sum)
}

/// Closed-form flat top of a Gaussian ε0 e^{−x²/(2w²)} at matching coordinate z:
/// returns (t, x_p, ε_p/ε0). Requires z/√(2γ_c w²) ≤ 25.
pub fn gaussian_flat_top(
    z: f64,
    width: f64,
    v_a: f64,
    gamma_c: f64,
) -> Result<(f64, f64, f64), RefError> {
    non_negative("z", z)?;
    positive("width", width)?;
    positive("v_a", v_a)?;
    adiabatic("gamma_c", gamma_c)?;
    let beta = 2.0 * gamma_c * width * width;
    let x_p = beta.sqrt() * scaled_erf_integral(z / beta.sqrt())?;
    Ok(((x_p - z) / v_a, x_p, (-z * z / (2.0 * width * width)).exp()))
}

#[cfg(test)]
mod tests {
    use super::*;

    const GC: f64 = 4.0 / 3.0;

    #[test]
    fn top_hat_formula_and_energy() {
        let (eps0, l, v_a) = (2.0, 0.5, 0.3);
        let s = streaming_top_hat(1.0, eps0, l, v_a, GC).unwrap();
        assert!((s.front - 0.8).abs() < 1e-15);
        assert!((s.plateau - eps0 * (1.0f64 + 0.6).powf(-GC)).abs() < 1e-15);
        assert_eq!(s.value(0.79), s.plateau);
        assert_eq!(s.value(0.81), 0.0);
        // dE/dt = −2 v_a (γ_c − 1) ε_p: heating v_a ΔP_c at the two fronts
        let e = |t: f64| {
            let s = streaming_top_hat(t, eps0, l, v_a, GC).unwrap();
            2.0 * s.front * s.plateau
        };
        let h = 1e-5;
        let dedt = (e(1.0 + h) - e(1.0 - h)) / (2.0 * h);
        assert!((dedt + 2.0 * v_a * (GC - 1.0) * s.plateau).abs() < 1e-8);
    }

    #[test]
    fn gaussian_closed_form_matches_quadrature() {
        let w = 0.1;
        let ft = FlatTop::new(|z: f64| (-z * z / (2.0 * w * w)).exp(), w, 1.0, 0.5, GC).unwrap();
        for z in [0.01, 0.05, 0.1, 0.2, 0.4] {
            let a = ft.at_matching_point(z).unwrap();
            let (t, x_p, e) = gaussian_flat_top(z, w, 0.5, GC).unwrap();
            assert!(
                (a.x_p - x_p).abs() < 1e-13 * x_p,
                "z={z}: {} vs {x_p}",
                a.x_p
            );
            assert!((a.t - t).abs() < 1e-12 * t.max(1e-3));
            assert!((a.eps_p - e).abs() < 1e-15);
        }
        // D(q) against direct quadrature of its definition
        let rule = GaussLegendre::new(24);
        for q in [0.1, 1.0, 3.0, 6.0] {
            let d = q * q;
            let direct = rule.integrate_panels(0.0, q, 50, |u| (d - u * u).exp());
            assert!((scaled_erf_integral(q).unwrap() - direct).abs() < 1e-13 * direct);
        }
    }

    /// ODE x_p dε_p/dt = −γ_c v_a ε_p and energy budget dE/dt = −2 v_a (γ_c−1) ε_p, by finite
    /// differences along the exact parametric solution, for two shapes.
    #[test]
    fn plateau_ode_and_energy_budget() {
        let v_a = 0.7;
        let w = 0.2;
        let gauss = |z: f64| (-z * z / (2.0 * w * w)).exp();
        let sech2 = |z: f64| 1.0 / (z / w).cosh().powi(2);
        let rule = GaussLegendre::new(24);
        for (k, shape) in [&gauss as &dyn Fn(f64) -> f64, &sech2]
            .into_iter()
            .enumerate()
        {
            let ft = FlatTop::new(shape, w, 3.0, v_a, GC).unwrap();
            for z in [0.05, 0.2, 0.5] {
                let h = 1e-5;
                let (a, m, b) = (
                    ft.at_matching_point(z - h).unwrap(),
                    ft.at_matching_point(z).unwrap(),
                    ft.at_matching_point(z + h).unwrap(),
                );
                let dt = b.t - a.t;
                let deps = (b.eps_p - a.eps_p) / dt;
                let res = m.x_p * deps + GC * v_a * m.eps_p;
                assert!(
                    res.abs() < 1e-6 * GC * v_a * m.eps_p,
                    "shape {k} z={z}: {res}"
                );
                let energy = |s: &FlatTopState| {
                    let tail = rule.integrate_panels(s.z, s.z + 40.0 * w, 400, shape);
                    2.0 * (s.x_p * s.eps_p + 3.0 * tail)
                };
                let dedt = (energy(&b) - energy(&a)) / dt;
                let expect = -2.0 * v_a * (GC - 1.0) * m.eps_p;
                assert!(
                    (dedt - expect).abs() < 1e-6 * expect.abs(),
                    "shape {k} z={z}: {dedt} vs {expect}"
                );
                // x_p ≥ z and plateau ≥ the wing just outside (flat top is the maximum)
                assert!(m.x_p >= m.z && m.t > 0.0);
            }
            let s = ft.at_time(0.3).unwrap();
            assert!((s.t - 0.3).abs() < 1e-12);
            let inside = ft.value(0.999 * s.x_p, 0.3).unwrap();
            let outside = ft.value(1.001 * s.x_p, 0.3).unwrap();
            assert_eq!(inside, s.eps_p);
            assert!(outside < inside && (inside - outside) < 1e-2 * inside);
        }
    }

    /// A steep super-Gaussian approaches the top-hat result.
    #[test]
    fn steep_profile_approaches_top_hat() {
        let l = 1.0;
        let ft = FlatTop::new(|z: f64| (-(z / l).powi(200)).exp(), 0.002, 1.0, 1.0, GC).unwrap();
        let s = ft.at_time(1.0).unwrap();
        let th = streaming_top_hat(1.0, 1.0, l, 1.0, GC).unwrap();
        assert!(
            (s.eps_p - th.plateau).abs() < 0.01 * th.plateau,
            "{} vs {}",
            s.eps_p,
            th.plateau
        );
        assert!((s.x_p - th.front).abs() < 0.01 * th.front);
    }

    #[test]
    fn bad_input() {
        assert!(streaming_top_hat(-1.0, 1.0, 1.0, 1.0, GC)
            .unwrap_err()
            .to_string()
            .contains("`t`"));
        assert!(FlatTop::new(|_z: f64| 2.0, 1.0, 1.0, 1.0, GC).is_err());
        assert!(scaled_erf_integral(30.0).is_err());
    }
}
