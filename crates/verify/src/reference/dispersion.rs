//! CR-modified sound waves of the fixed-κ two-moment model (physics-detail §4.5).
//!
//! Background: uniform ρ0, p0, P_c0 = ε_c0/3, static gas, no streaming (u_A = 0), fixed total
//! diffusion coefficient κ (σ_+ + σ_− = 1/(3κ)), reduced speed of light c_r, γ_c = 4/3.
//! Perturbations ∝ e^{i(kx − ωt)} of (C1), (C2), (G1)–(G3) give (derivation in
//! docs/references.md)
//!
//! ω² = k² [ c_g² + c_c² ω / D(ω) ],
//!
//! * [`GasForce::PressureGradient`] (the relation printed in physics-detail §4.5, gas force
//!   −∂x P_c): D = ω + i κ_eff k², κ_eff = κ/(1 − iωτ), τ = 3κ/c_r²;
//! * [`GasForce::Scattering`] (Sluice's default (G2), gas force S_+ + S_− = σF =
//!   −∂x P_c − c_r^{−2} ∂t F): D = ω(1 − iωτ) + iκk².
//!
//! The two agree for c_r → ∞ and differ at O(ωτ). c_g² = γ p0/ρ0, c_c² = γ_c P_c0/ρ0.
//! Limits (Drury & Völk 1981, ApJ 248, 344; Ptuskin 1981, Ap&SS 76, 265): κk² ≪ ω →
//! ω = k c_eff − i κk² c_c²/(2c_eff²), c_eff² = c_g² + c_c²; κk² ≫ ω → ω = k c_g − i c_c²/(2κ).
//!
//! The sound branch is the root continuous with ω = k c_eff at κ = 0 along the path κ → sκ
//! (s from 0 to 1, c_r fixed, so τ → sτ); it is followed by Newton continuation.

use super::complex::Complex;
use super::{non_negative, positive, RefError};

/// γ_c of the model (P_c = ε_c/3, P1 closure in (C2)).
pub const GAMMA_C: f64 = 4.0 / 3.0;

/// Which force the gas feels in the linearised momentum equation.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum GasForce {
    /// −∂x P_c (the relation as printed in physics-detail §4.5; reproduces its table).
    PressureGradient,
    /// S_+ + S_− = σF (Sluice's (G2)); reduced momentum ρv + F/c_r² conserved.
    Scattering,
}

/// Sound-branch frequency ω (complex, [1/time]) for wavenumber `k` > 0 [1/length], gas sound
/// speed `c_g` > 0 and CR sound speed `c_c` ≥ 0 [length/time], κ ≥ 0 [length²/time],
/// `c_r` > 0 (or `f64::INFINITY`) [length/time], using the relation printed in
/// physics-detail §4.5 ([`GasForce::PressureGradient`]). Re ω > 0, Im ω ≤ 0 (damping).
pub fn cr_sound_dispersion(
    k: f64,
    c_g: f64,
    c_c: f64,
    kappa: f64,
    c_r: f64,
) -> Result<Complex, RefError> {
    cr_sound_dispersion_with(k, c_g, c_c, kappa, c_r, GasForce::PressureGradient)
}

/// As [`cr_sound_dispersion`], choosing the gas-force form (use [`GasForce::Scattering`] to
/// compare with Sluice's default equations at finite c_r).
pub fn cr_sound_dispersion_with(
    k: f64,
    c_g: f64,
    c_c: f64,
    kappa: f64,
    c_r: f64,
    force: GasForce,
) -> Result<Complex, RefError> {
    positive("k", k)?;
    positive("c_g", c_g)?;
    non_negative("c_c", c_c)?;
    non_negative("kappa", kappa)?;
    if c_r.is_nan() || c_r <= 0.0 {
        return Err(RefError::InvalidParameter {
            key: "c_r",
            value: c_r,
            allowed: "> 0 (infinity allowed)",
        });
    }
    let c_eff = (c_g * c_g + c_c * c_c).sqrt();
    if kappa == 0.0 || c_c == 0.0 {
        // CRs frozen in (κ = 0) or absent: ω = k c_eff exactly (c_eff = c_g if c_c = 0).
        return Ok(Complex::new(k * c_eff, 0.0));
    }
    let tau = if c_r.is_infinite() {
        0.0
    } else {
        3.0 * kappa / (c_r * c_r)
    };
    let poly = |s: f64| coefficients(k, c_g, c_c, kappa * s, tau * s, force);
    // Start where κ k² = 1e-8 k c_eff with the first-order perturbation result.
    let mut s = (1e-8 * c_eff / (kappa * k)).min(1.0);
    let ks = kappa * s;
    let mut w = Complex::new(k * c_eff, -ks * k * k * c_c * c_c / (2.0 * c_eff * c_eff));
    w = newton(&poly(s), w).ok_or(RefError::NoConvergence {
        what: "sound branch at small kappa",
    })?;
    let mut ratio: f64 = 2.0;
    let mut prev: Option<(f64, Complex)> = None;
    let mut guard = 0;
    while s < 1.0 {
        guard += 1;
        if guard > 100_000 {
            return Err(RefError::NoConvergence {
                what: "sound-branch continuation (too many steps)",
            });
        }
        let s_new = (s * ratio).min(1.0);
        // secant predictor in ln s
        let pred = match prev {
            Some((sp, wp)) => {
                let f = (s_new / s).ln() / (s / sp).ln();
                w + (w - wp).scale(f)
            }
            None => w,
        };
        match newton(&poly(s_new), pred) {
            Some(wn) if (wn - pred).abs() <= 0.02 * w.abs() => {
                prev = Some((s, w));
                s = s_new;
                w = wn;
                ratio = (ratio * 1.5).min(4.0);
            }
            _ => {
                ratio = 1.0 + (ratio - 1.0) / 2.0;
                if ratio - 1.0 < 1e-9 {
                    return Err(RefError::NoConvergence {
                        what: "sound-branch continuation (step underflow)",
                    });
                }
            }
        }
    }
    Ok(w)
}

/// Coefficients a[0..=4] of P(ω) = Σ a_j ω^j (see module docs; multiplied out):
/// P = −iτω⁴ + ω³ + i k²(κ + τc_g² + [τc_c²]) ω² − k²(c_g² + c_c²) ω − iκk⁴c_g²,
/// the bracket present for [`GasForce::PressureGradient`] only.
pub fn coefficients(
    k: f64,
    c_g: f64,
    c_c: f64,
    kappa: f64,
    tau: f64,
    force: GasForce,
) -> [Complex; 5] {
    let k2 = k * k;
    let extra = match force {
        GasForce::PressureGradient => tau * c_c * c_c,
        GasForce::Scattering => 0.0,
    };
    [
        Complex::new(0.0, -kappa * k2 * k2 * c_g * c_g),
        Complex::new(-k2 * (c_g * c_g + c_c * c_c), 0.0),
        Complex::new(0.0, k2 * (kappa + tau * c_g * c_g + extra)),
        Complex::ONE,
        Complex::new(0.0, -tau),
    ]
}

/// P(ω) and P'(ω) by Horner.
pub fn eval(a: &[Complex; 5], w: Complex) -> (Complex, Complex) {
    let mut p = Complex::ZERO;
    let mut d = Complex::ZERO;
    for c in a.iter().rev() {
        d = d * w + p;
        p = p * w + *c;
    }
    (p, d)
}

fn newton(a: &[Complex; 5], mut w: Complex) -> Option<Complex> {
    for _ in 0..50 {
        let (p, d) = eval(a, w);
        if d.abs() == 0.0 {
            return None;
        }
        let dw = p / d;
        w = w - dw;
        if !w.is_finite() {
            return None;
        }
        if dw.abs() <= 1e-15 * w.abs() {
            return Some(w);
        }
    }
    None
}

/// All roots of the dispersion polynomial (3 for c_r = ∞, else 4) by the Durand–Kerner
/// iteration (Kerner 1966, Numer. Math. 8, 290), polished by Newton. For diagnostics/tests.
pub fn all_roots(a: &[Complex; 5]) -> Vec<Complex> {
    let deg = if a[4].abs() > 0.0 { 4 } else { 3 };
    let lead = a[deg];
    let monic: Vec<Complex> = (0..=deg).map(|j| a[j] / lead).collect();
    let radius = 1.0 + monic[..deg].iter().map(|c| c.abs()).fold(0.0, f64::max);
    let seed = Complex::new(0.4, 0.9);
    let mut z: Vec<Complex> = (0..deg)
        .map(|j| {
            let mut p = Complex::ONE;
            for _ in 0..j {
                p = p * seed;
            }
            p.scale(radius / seed.abs().powi(j as i32))
        })
        .collect();
    let evalm = |w: Complex| {
        monic
            .iter()
            .rev()
            .fold(Complex::ZERO, |acc, c| acc * w + *c)
    };
    for _ in 0..2000 {
        let mut delta = 0.0f64;
        for i in 0..deg {
            let mut den = Complex::ONE;
            for j in 0..deg {
                if i != j {
                    den = den * (z[i] - z[j]);
                }
            }
            let step = evalm(z[i]) / den;
            z[i] = z[i] - step;
            delta = delta.max(step.abs() / z[i].abs().max(1e-300));
        }
        if delta < 1e-15 {
            break;
        }
    }
    z.into_iter().map(|w| newton(a, w).unwrap_or(w)).collect()
}

/// Uniform background of a CR-modified sound wave (cgs or any consistent units).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SoundBackground {
    /// Gas density ρ0 [mass/length³], > 0.
    pub rho0: f64,
    /// Gas pressure p0 [pressure], > 0.
    pub p0: f64,
    /// Gas adiabatic index γ, > 1.
    pub gamma: f64,
    /// CR pressure P_c0 = ε_c0/3 [pressure], > 0.
    pub pc0: f64,
}

/// Linear eigenmode: complex amplitudes for δρ/ρ0 = 1. Physical fields are
/// q(x,t) = q0 + A·Re[δq e^{i(kx − ωt)}] with a small real amplitude A.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SoundMode {
    /// Frequency ω [1/time].
    pub omega: Complex,
    /// δρ [mass/length³] (= ρ0).
    pub drho: Complex,
    /// δv [length/time].
    pub dv: Complex,
    /// δp (gas pressure) [pressure].
    pub dp: Complex,
    /// δε_c (CR energy density) [energy/length³].
    pub de_c: Complex,
    /// δF (comoving CR energy flux along x) [energy/(length² time)].
    pub dflux: Complex,
}

/// Sound-branch eigenmode of the linearised fixed-κ, no-streaming two-moment system
/// (module docs) for a background, wavenumber k > 0, κ ≥ 0, c_r > 0 (∞ allowed).
///
/// δv = ω/k, δp = γ p0, δε_c = k h0 δv /(ω + i k² κ/(1 − iωτ)), δF = −i k κ δε_c/(1 − iωτ)
/// (h0 = 4 P_c0, τ = 3κ/c_r²), from the (G1), (G3), (C1), (C2) rows.
pub fn cr_sound_mode(
    bg: &SoundBackground,
    k: f64,
    kappa: f64,
    c_r: f64,
    force: GasForce,
) -> Result<SoundMode, RefError> {
    positive("rho0", bg.rho0)?;
    positive("p0", bg.p0)?;
    super::adiabatic("gamma", bg.gamma)?;
    positive("pc0", bg.pc0)?;
    let c_g = (bg.gamma * bg.p0 / bg.rho0).sqrt();
    let c_c = (GAMMA_C * bg.pc0 / bg.rho0).sqrt();
    let omega = cr_sound_dispersion_with(k, c_g, c_c, kappa, c_r, force)?;
    let tau = if c_r.is_infinite() {
        0.0
    } else {
        3.0 * kappa / (c_r * c_r)
    };
    let h0 = GAMMA_C / (GAMMA_C - 1.0) * bg.pc0;
    let one_m = Complex::ONE - Complex::I * omega.scale(tau); // 1 − iωτ
    let kap_eff = Complex::from(kappa) / one_m;
    let dv = omega.scale(1.0 / k);
    let de_c = (dv.scale(k * h0)) / (omega + Complex::I * kap_eff.scale(k * k));
    let dflux = -(Complex::I * kap_eff.scale(k)) * de_c;
    Ok(SoundMode {
        omega,
        drho: Complex::from(bg.rho0),
        dv,
        dp: Complex::from(bg.gamma * bg.p0),
        de_c,
        dflux,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    /// physics-detail §4.5 table [computed]: k = 2π, c_g = c_c = 1, printed digits.
    #[test]
    fn spec_table_4_5() {
        let inf = f64::INFINITY;
        let rows = [
            (1e-3, inf, 8.88574, -0.00987),
            (0.1, inf, 8.61366, -0.93587),
            (0.1, 30.0, 8.61588, -0.93767),
            (1.0, inf, 6.34461, -0.49966),
            (1.0, 30.0, 6.33384, -0.50149),
            (10.0, inf, 6.28378, -0.05000),
        ];
        for (kappa, c_r, re, im) in rows {
            let w = cr_sound_dispersion(2.0 * PI, 1.0, 1.0, kappa, c_r).unwrap();
            assert!((w.re - re).abs() <= 5e-6, "κ={kappa} c_r={c_r}: {w:?}");
            assert!((w.im - im).abs() <= 5e-6, "κ={kappa} c_r={c_r}: {w:?}");
        }
    }

    #[test]
    fn limits() {
        let k = 2.0 * PI;
        let (c_g, c_c) = (1.0, 0.8);
        let ce2 = c_g * c_g + c_c * c_c;
        // κk² ≪ ω: Drury & Völk (1981) sound speed, damping −κk²c_c²/(2c_eff²); error O(κ²)
        let kappa = 1e-5;
        let w = cr_sound_dispersion(k, c_g, c_c, kappa, f64::INFINITY).unwrap();
        assert!((w.re - k * ce2.sqrt()).abs() < 1e-6 * w.re);
        let im = -kappa * k * k * c_c * c_c / (2.0 * ce2);
        assert!((w.im - im).abs() < 1e-4 * im.abs(), "{w:?} vs {im}");
        // κk² ≫ ω: gas sound speed, damping −c_c²/(2κ)
        let kappa = 1e4;
        let w = cr_sound_dispersion(k, c_g, c_c, kappa, f64::INFINITY).unwrap();
        assert!((w.re - k * c_g).abs() < 1e-6 * w.re);
        let im = -c_c * c_c / (2.0 * kappa);
        assert!((w.im - im).abs() < 1e-3 * im.abs(), "{w:?} vs {im}");
        // c_c = 0 → pure gas sound
        let w = cr_sound_dispersion(k, c_g, 0.0, 1.0, 3.0).unwrap();
        assert_eq!(w, Complex::new(k * c_g, 0.0));
    }

    /// The result is a root of the rational relation itself, −ω̄ is also a root, and it is one of
    /// the roots found independently by Durand–Kerner.
    #[test]
    fn root_properties() {
        let k = 2.0 * PI;
        for force in [GasForce::PressureGradient, GasForce::Scattering] {
            for (kappa, c_r) in [(0.1, 30.0), (1.0, 30.0), (0.3, 5.0), (1.0, f64::INFINITY)] {
                let (c_g, c_c) = (1.0, 1.0);
                let w = cr_sound_dispersion_with(k, c_g, c_c, kappa, c_r, force).unwrap();
                let tau = if c_r.is_infinite() {
                    0.0
                } else {
                    3.0 * kappa / (c_r * c_r)
                };
                let one_m = Complex::ONE - Complex::I * w.scale(tau);
                let d = match force {
                    GasForce::PressureGradient => {
                        w + Complex::I * (Complex::from(kappa * k * k) / one_m)
                    }
                    GasForce::Scattering => w * one_m + Complex::new(0.0, kappa * k * k),
                };
                let rhs = (Complex::from(c_g * c_g) + w.scale(c_c * c_c) / d).scale(k * k);
                assert!((w * w - rhs).abs() < 1e-12 * (w * w).abs());
                let a = coefficients(k, c_g, c_c, kappa, tau, force);
                let (p, _) = eval(&a, -w.conj());
                assert!(p.abs() < 1e-10 * w.abs().powi(3));
                let roots = all_roots(&a);
                assert!(
                    roots.iter().any(|r| (*r - w).abs() < 1e-9 * w.abs()),
                    "{roots:?} {w:?}"
                );
                assert!(w.re > 0.0 && w.im < 0.0);
            }
        }
    }

    /// The eigenvector solves the full 5×5 linearised system (rows (G1), (G2), (G3), (C1), (C2)).
    #[test]
    fn eigenvector_solves_linear_system() {
        let bg = SoundBackground {
            rho0: 2.0,
            p0: 0.9,
            gamma: 5.0 / 3.0,
            pc0: 0.6,
        };
        let k = 3.0;
        let i = Complex::I;
        for force in [GasForce::PressureGradient, GasForce::Scattering] {
            for (kappa, c_r) in [(0.05, 20.0), (0.5, 8.0), (0.2, f64::INFINITY)] {
                let m = cr_sound_mode(&bg, k, kappa, c_r, force).unwrap();
                let w = m.omega;
                let inv_c2 = if c_r.is_infinite() {
                    0.0
                } else {
                    1.0 / (c_r * c_r)
                };
                let h0 = 4.0 * bg.pc0;
                let sigma = 1.0 / (3.0 * kappa);
                let iw = i * w;
                let ik = Complex::new(0.0, k);
                let force_term = match force {
                    GasForce::PressureGradient => -(ik * m.de_c.scale(1.0 / 3.0)),
                    GasForce::Scattering => m.dflux.scale(sigma),
                };
                let rows = [
                    -(iw * m.drho) + ik * m.dv.scale(bg.rho0),
                    -(iw * m.dv.scale(bg.rho0)) + ik * m.dp - force_term,
                    -(iw * m.dp) + ik * m.dv.scale(bg.gamma * bg.p0),
                    -(iw * m.de_c) + ik * (m.dv.scale(h0) + m.dflux),
                    -(iw * m.dflux.scale(inv_c2))
                        + ik * m.de_c.scale(1.0 / 3.0)
                        + m.dflux.scale(sigma),
                ];
                let scale = (w * m.drho).abs() + (w * m.de_c).abs() + m.dflux.abs() * sigma;
                for (j, r) in rows.iter().enumerate() {
                    assert!(
                        r.abs() < 1e-12 * scale,
                        "row {j}: {r:?} (κ={kappa}, c_r={c_r}, {force:?})"
                    );
                }
            }
        }
    }

    #[test]
    fn bad_input() {
        let e = cr_sound_dispersion(-1.0, 1.0, 1.0, 1.0, 1.0).unwrap_err();
        assert!(e.to_string().contains("`k`"));
        assert!(cr_sound_dispersion(1.0, 1.0, 1.0, 1.0, 0.0).is_err());
        assert!(cr_sound_dispersion(1.0, 1.0, 1.0, f64::NAN, 1.0).is_err());
    }
}
