//! Fixed-κ CR diffusion with a reduced speed of light: the telegraph equation
//! (physics-detail §2.4, §4.3).
//!
//! With static gas, u_A = 0 and fixed κ, the two-moment equations (C1), (C2) reduce to
//! ∂t ε + ∂x F = 0, (1/c_r²) ∂t F + (1/3) ∂x ε = −F/(3κ), i.e.
//! ε_tt + 2a ε_t = c_w² ε_xx with c_w = c_r/√3, a = c_r²/(6κ).
//! Green's function for ε(x,0) = δ(x), F(x,0) = 0 (so ε_t(x,0) = 0)
//! (Morse & Feshbach 1953, *Methods of Theoretical Physics*, §7.4; derived again in
//! docs/references.md):
//!
//! G(x,t) = (e^{−at}/2)[δ(x − c_w t) + δ(x + c_w t)]
//!        + (a e^{−at}/(2c_w)) [I0(aξ) + (t/ξ) I1(aξ)] H(c_w t − |x|),  ξ = √(t² − x²/c_w²).
//!
//! Units: any consistent set (x in length, t in time, κ in length²/time, c_r in length/time).

use super::bessel::{i0e, i1e_over_x};
use super::quad::GaussLegendre;
use super::{non_negative, positive, RefError};

/// Telegraph Green's function at (x, t): smooth part plus the two travelling delta fronts.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TelegraphGreen {
    /// Smooth (absolutely continuous) part of G at x [1/length]; zero outside |x| < c_w t.
    pub smooth: f64,
    /// Weight of each of the two delta fronts, e^{−at}/2 (dimensionless).
    pub front_weight: f64,
    /// Front position c_w t = c_r t/√3 [length]; fronts at ±front_position.
    pub front_position: f64,
}

/// Telegraph Green's function G(x, t) for ε(0) = δ(x), F(0) = 0 (see module docs).
///
/// `kappa` > 0 [length²/time], `c_r` > 0 [length/time], `t` ≥ 0. Valid for all x, t; at
/// t = 0 the whole unit mass is in the (coincident) fronts.
pub fn telegraph_green(x: f64, t: f64, kappa: f64, c_r: f64) -> Result<TelegraphGreen, RefError> {
    super::finite("x", x)?;
    non_negative("t", t)?;
    positive("kappa", kappa)?;
    positive("c_r", c_r)?;
    Ok(green_unchecked(x, t, kappa, c_r))
}

fn green_unchecked(x: f64, t: f64, kappa: f64, c_r: f64) -> TelegraphGreen {
    let c_w = c_r / 3f64.sqrt();
    let a = c_r * c_r / (6.0 * kappa);
    let front_position = c_w * t;
    let front_weight = 0.5 * (-a * t).exp();
    TelegraphGreen {
        smooth: smooth_part(x, t, a, c_w),
        front_weight,
        front_position,
    }
}

/// Smooth part, written with scaled Bessel functions:
/// e^{−at} I0(aξ) = i0e(aξ) e^{−a(t−ξ)},  e^{−at} (t/ξ) I1(aξ) = a t · [i1e(aξ)/(aξ)] e^{−a(t−ξ)}.
fn smooth_part(x: f64, t: f64, a: f64, c_w: f64) -> f64 {
    let r = x.abs() / c_w;
    if r >= t || t <= 0.0 {
        return 0.0;
    }
    // t − ξ computed without cancellation: (t² − r²)/(t + ξ) subtracted from t.
    let xi = ((t - r) * (t + r)).sqrt();
    let t_minus_xi = r * r / (t + xi);
    let z = a * xi;
    let damp = (-a * t_minus_xi).exp();
    (a / (2.0 * c_w)) * damp * (i0e(z) + a * t * i1e_over_x(z))
}

/// The diffusion (heat) kernel solution for a Gaussian initial profile:
/// ε(x,t) = E0 (2π(σ0² + 2κt))^{−1/2} exp(−x²/(2(σ0² + 2κt))).
///
/// Exact solution of ∂t ε = κ ∂x² ε (c_r → ∞) with ε(x,0) = E0 (2πσ0²)^{−1/2} e^{−x²/2σ0²}.
/// `E0` is the energy per area [energy/length² in 1D slab geometry], σ0 ≥ 0 [length],
/// κ ≥ 0 [length²/time]; σ0² + 2κt must be > 0.
pub fn heat_kernel_gaussian(
    x: f64,
    t: f64,
    sigma0: f64,
    e0: f64,
    kappa: f64,
) -> Result<f64, RefError> {
    super::finite("x", x)?;
    non_negative("t", t)?;
    non_negative("sigma0", sigma0)?;
    super::finite("E0", e0)?;
    non_negative("kappa", kappa)?;
    let s2 = sigma0 * sigma0 + 2.0 * kappa * t;
    if s2 <= 0.0 {
        return Err(RefError::InvalidParameter {
            key: "sigma0",
            value: sigma0,
            allowed: "> 0 unless kappa·t > 0 (the variance sigma0² + 2 kappa t must be positive)",
        });
    }
    Ok(e0 / (2.0 * std::f64::consts::PI * s2).sqrt() * (-x * x / (2.0 * s2)).exp())
}

/// Telegraph solution for the Gaussian initial condition ε(x,0) = E0 (2πσ0²)^{−1/2}
/// e^{−x²/2σ0²}, F(x,0) = 0: the convolution of [`telegraph_green`] with it, fronts included:
///
/// ε(x,t) = (e^{−at}/2)[g(x − c_w t) + g(x + c_w t)] + ∫_{−c_w t}^{c_w t} G_smooth(y,t) g(x − y) dy.
///
/// The integral is done by composite 16-point Gauss–Legendre quadrature (G_smooth is an
/// analytic function of y on the light cone, so the rule converges spectrally); relative
/// accuracy ≲ 1e-10 for σ0 ≳ 1e-3 c_w t. `sigma0` > 0 [length]; units as [`telegraph_green`].
pub fn telegraph_gaussian(
    x: f64,
    t: f64,
    sigma0: f64,
    e0: f64,
    kappa: f64,
    c_r: f64,
) -> Result<f64, RefError> {
    super::finite("x", x)?;
    non_negative("t", t)?;
    positive("sigma0", sigma0)?;
    super::finite("E0", e0)?;
    positive("kappa", kappa)?;
    positive("c_r", c_r)?;
    let c_w = c_r / 3f64.sqrt();
    let a = c_r * c_r / (6.0 * kappa);
    let g = |y: f64| {
        e0 / (2.0 * std::f64::consts::PI * sigma0 * sigma0).sqrt()
            * (-y * y / (2.0 * sigma0 * sigma0)).exp()
    };
    let l = c_w * t;
    let fronts = 0.5 * (-a * t).exp() * (g(x - l) + g(x + l));
    if l == 0.0 {
        return Ok(fronts);
    }
    // Integrate over y ∈ [−l, l] ∩ [x − 12σ0, x + 12σ0] (Gaussian < e^{−72} of its peak outside).
    let lo = (-l).max(x - 12.0 * sigma0);
    let hi = l.min(x + 12.0 * sigma0);
    if hi <= lo {
        return Ok(fronts);
    }
    // Panel width: resolve the Gaussian (σ0) and the core of G (width √(κ t) ~ c_w √(t/a)).
    let core = c_w * (t / a).sqrt().min(t);
    let width = (0.5 * sigma0).min(0.5 * core).max((hi - lo) * 1e-4);
    let panels = ((hi - lo) / width).ceil() as usize;
    let rule = GaussLegendre::new(16);
    let smooth = rule.integrate_panels(lo, hi, panels, |y| smooth_part(y, t, a, c_w) * g(x - y));
    Ok(fronts + smooth)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn g(x: f64, t: f64, kappa: f64, c_r: f64) -> TelegraphGreen {
        telegraph_green(x, t, kappa, c_r).unwrap()
    }

    /// physics-detail §4.3 table [computed], κ = 1, t = 0.5, printed to 5 digits.
    #[test]
    fn spec_table_4_3() {
        let rows = [
            (10.0, 0.39281, 0.24954, 1.2e-4),
            (30.0, 0.39828, 0.24278, 1e-33),
            (3.0, 0.31656, 0.0, 0.236),
        ];
        for (c_r, g0, g1, w) in rows {
            let a = g(0.0, 0.5, 1.0, c_r);
            let b = g(1.0, 0.5, 1.0, c_r);
            assert!(
                (a.smooth - g0).abs() <= 5e-6,
                "c_r={c_r}: G(0)={}",
                a.smooth
            );
            assert!(
                (b.smooth - g1).abs() <= 5e-6,
                "c_r={c_r}: G(1)={}",
                b.smooth
            );
            if w > 1e-20 {
                assert!(
                    (a.front_weight - w).abs() <= 0.05 * w,
                    "weight {}",
                    a.front_weight
                );
            } else {
                assert!(
                    a.front_weight < 1e-30 && a.front_weight > 1e-36,
                    "weight {}",
                    a.front_weight
                );
            }
        }
        let h0 = heat_kernel_gaussian(0.0, 0.5, 0.0, 1.0, 1.0).unwrap();
        let h1 = heat_kernel_gaussian(1.0, 0.5, 0.0, 1.0, 1.0).unwrap();
        assert!((h0 - 0.39894).abs() < 5e-6 && (h1 - 0.24197).abs() < 5e-6);
    }

    /// Unit mass: ∫G_smooth dx + 2·front_weight = 1 (ε is conserved, ∂tε = −∂xF).
    #[test]
    fn green_conserves_mass() {
        let rule = GaussLegendre::new(16);
        for (t, kappa, c_r) in [
            (0.5, 1.0, 3.0),
            (0.5, 1.0, 10.0),
            (2.0, 0.3, 1.0),
            (0.01, 1.0, 30.0),
        ] {
            let gr = g(0.0, t, kappa, c_r);
            let l = gr.front_position;
            let m = rule.integrate_panels(-l, l, 400, |x| g(x, t, kappa, c_r).smooth);
            assert!(
                (m + 2.0 * gr.front_weight - 1.0).abs() < 1e-12,
                "t={t} c_r={c_r}: {m}"
            );
        }
    }

    /// G_smooth satisfies ε_tt + 2a ε_t = c_w² ε_xx inside the light cone (finite differences).
    #[test]
    fn green_satisfies_telegraph_equation() {
        let (kappa, c_r) = (1.0, 3.0);
        let c_w = c_r / 3f64.sqrt();
        let a = c_r * c_r / (6.0 * kappa);
        let h = 1e-3;
        for (x, t) in [(0.0, 0.5), (0.4, 0.5), (-0.7, 1.0), (1.5, 2.0)] {
            let f = |x: f64, t: f64| g(x, t, kappa, c_r).smooth;
            let ftt = (f(x, t + h) - 2.0 * f(x, t) + f(x, t - h)) / (h * h);
            let ft = (f(x, t + h) - f(x, t - h)) / (2.0 * h);
            let fxx = (f(x + h, t) - 2.0 * f(x, t) + f(x - h, t)) / (h * h);
            let res = ftt + 2.0 * a * ft - c_w * c_w * fxx;
            let scale = (2.0 * a * ft).abs() + (c_w * c_w * fxx).abs();
            assert!(
                res.abs() < 1e-4 * scale,
                "({x},{t}): residual {res} scale {scale}"
            );
        }
    }

    /// c_r → ∞: telegraph → heat kernel; convolution with a Gaussian → spreading Gaussian.
    #[test]
    fn diffusion_limit() {
        let (sigma0, e0, kappa, t) = (0.3, 2.0, 0.5, 0.4);
        for x in [0.0, 0.3, 1.0] {
            let heat = heat_kernel_gaussian(x, t, sigma0, e0, kappa).unwrap();
            let err_lo = (telegraph_gaussian(x, t, sigma0, e0, kappa, 100.0).unwrap() - heat).abs();
            let err_hi = (telegraph_gaussian(x, t, sigma0, e0, kappa, 400.0).unwrap() - heat).abs();
            // the O(τ/t) = O(3κ/(c_r² t)) deviation drops ≈ 16× when c_r grows 4×
            assert!(err_hi < 1e-4 * heat, "x={x}: {err_hi}");
            assert!(
                err_hi < err_lo / 8.0 || err_lo < 1e-12,
                "x={x}: {err_lo} -> {err_hi}"
            );
        }
    }

    /// Gaussian convolution conserves the total energy E0 (fronts included) and is symmetric.
    #[test]
    fn gaussian_convolution_conserves_energy() {
        let rule = GaussLegendre::new(16);
        let (sigma0, e0, kappa, c_r, t) = (0.2, 1.5, 1.0, 3.0, 0.5);
        let l = c_r / 3f64.sqrt() * t + 10.0 * sigma0;
        let total = rule.integrate_panels(-l, l, 200, |x| {
            telegraph_gaussian(x, t, sigma0, e0, kappa, c_r).unwrap()
        });
        assert!((total - e0).abs() < 1e-9 * e0, "total {total}");
        let a = telegraph_gaussian(0.37, t, sigma0, e0, kappa, c_r).unwrap();
        let b = telegraph_gaussian(-0.37, t, sigma0, e0, kappa, c_r).unwrap();
        assert!((a - b).abs() < 1e-13 * a);
    }

    #[test]
    fn bad_input_is_an_error() {
        let e = telegraph_green(0.0, 1.0, -1.0, 1.0).unwrap_err();
        assert!(e.to_string().contains("kappa"));
        assert!(telegraph_gaussian(0.0, 1.0, 0.0, 1.0, 1.0, 1.0).is_err());
        assert!(heat_kernel_gaussian(0.0, 0.0, 0.0, 1.0, 1.0).is_err());
        assert!(telegraph_green(f64::NAN, 1.0, 1.0, 1.0).is_err());
    }
}
