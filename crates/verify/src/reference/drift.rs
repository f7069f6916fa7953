//! Steady streaming excess from growth = damping (physics-detail §4.1; Wiener, Zweibel & Oh
//! 2013, ApJ 767, 87; Wiener, Oh & Guo 2013, MNRAS 434, 2209).
//!
//! Quasi-steady (C2) with only the wave family that propagates down the CR gradient (direction
//! d = sgn(−∂x P_c) in x; the counter-propagating family negligible) and wave balance
//! (W±) growth = damping:
//!
//! * ∂x P_c = −σ (F − d v_a h),  σ = α_ν Ω ε/(c² e_B)  (scattering off the growing waves);
//! * d v_a σ (F − d v_a h) = v_a |∂x P_c| = Q(ε),  Q(ε) = 2Γ ε + b ε²  (damping law).
//!
//! Hence ε = 2S/(2Γ + √(4Γ² + 4bS)) with S = v_a|∂x P_c| (cancellation-free root of
//! bε² + 2Γε − S = 0) and F − d v_a h = −∂x P_c/σ = d c² e_B |∂x P_c| /(α_ν Ω ε).
//! Linear damping (b = 0): F − d v_a h = d 2Γ c² e_B/(α_ν Ω v_a), independent of the gradient.
//! Non-linear Landau (Γ = 0, b = C_nll k v_i/e_B): F − d v_a h = d (c²/(α_ν Ω)) √(C_nll k v_i e_B |∂x P_c|/v_a).
//!
//! Units: cgs (∂x P_c [erg cm⁻⁴], v_a [cm s⁻¹], Ω [s⁻¹], e_B [erg cm⁻³], c [cm s⁻¹],
//! Γ [s⁻¹], b [cm³ erg⁻¹ s⁻¹]); any consistent set works.

use super::{finite, non_negative, positive, RefError};

/// Speed of light in vacuum [cm s⁻¹] (exact by the SI definition of the metre).
pub const C_LIGHT: f64 = 2.997_924_58e10;

/// Wave damping law Q(ε) = 2 Γ ε + b ε² [energy density per time].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DampingLaw {
    /// Linear amplitude damping rate Γ [s⁻¹] (ion–neutral ν_in/2, turbulent, constant), ≥ 0.
    pub gamma_lin: f64,
    /// Quadratic coefficient b [cm³ erg⁻¹ s⁻¹] (NLL: C_nll k v_i / e_B), ≥ 0.
    pub quadratic: f64,
}

impl DampingLaw {
    /// Linear damping with amplitude rate Γ (Q = 2Γε).
    pub fn linear(gamma: f64) -> Self {
        Self {
            gamma_lin: gamma,
            quadratic: 0.0,
        }
    }
    /// Non-linear Landau damping Q = C_nll k v_i ε²/e_B (physics-detail §3.2).
    pub fn nll(c_nll: f64, k: f64, v_i: f64, e_b: f64) -> Self {
        Self {
            gamma_lin: 0.0,
            quadratic: c_nll * k * v_i / e_b,
        }
    }
    /// Q(ε).
    pub fn rate(&self, eps: f64) -> f64 {
        2.0 * self.gamma_lin * eps + self.quadratic * eps * eps
    }
}

/// Local plasma and CR-gradient data for the steady drift.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DriftInputs {
    /// CR pressure gradient ∂x P_c [erg cm⁻⁴], non-zero.
    pub grad_pc: f64,
    /// Alfvén speed v_a > 0 [cm s⁻¹] (ion Alfvén speed if that option is used).
    pub v_a: f64,
    /// Gyro-frequency Ω of the characteristic CR [s⁻¹], > 0.
    pub omega: f64,
    /// Magnetic energy density e_B = B²/8π [erg cm⁻³], > 0.
    pub e_b: f64,
    /// Scattering prefactor α_ν (configurable; default 3π/16, from memory, physics-detail §2.1).
    pub alpha_nu: f64,
    /// Speed of light used in κ = c²/(3ν) [cm s⁻¹] (the TRUE c, never c_r).
    pub c: f64,
}

/// Steady-drift result.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SteadyDrift {
    /// Streaming direction d = sgn(−∂x P_c) ∈ {−1, +1} (x-direction).
    pub direction: f64,
    /// Streaming excess F − d v_a h [erg cm⁻² s⁻¹] (sign d).
    pub flux_excess: f64,
    /// Energy density of the growing wave family (the one moving along d) [erg cm⁻³].
    pub wave_energy: f64,
    /// Damping heat Q = v_a |∂x P_c| [erg cm⁻³ s⁻¹].
    pub heating: f64,
    /// Diffusion coefficient of the growing family κ = 1/(3σ) [cm² s⁻¹].
    pub kappa: f64,
}

impl SteadyDrift {
    /// Drift excess speed v_st − v_a = |F − d v_a h|/h for CR enthalpy h > 0 [cm s⁻¹].
    pub fn excess_speed(&self, h: f64) -> Result<f64, RefError> {
        positive("h", h)?;
        Ok(self.flux_excess.abs() / h)
    }
    /// Which of ε_+ (along b) / ε_− grows, for sign(B_x) = `sign_bx`: true for ε_+.
    pub fn forward_family_grows(&self, sign_bx: f64) -> bool {
        self.direction * sign_bx > 0.0
    }
}

/// Steady streaming excess and wave energy for a given gradient and damping law (module docs).
pub fn steady_drift(inp: &DriftInputs, damping: &DampingLaw) -> Result<SteadyDrift, RefError> {
    finite("grad_pc", inp.grad_pc)?;
    if inp.grad_pc == 0.0 {
        return Err(RefError::InvalidParameter {
            key: "grad_pc",
            value: 0.0,
            allowed: "non-zero (no streaming direction without a CR gradient)",
        });
    }
    positive("v_a", inp.v_a)?;
    positive("omega", inp.omega)?;
    positive("e_b", inp.e_b)?;
    positive("alpha_nu", inp.alpha_nu)?;
    positive("c", inp.c)?;
    non_negative("gamma_lin", damping.gamma_lin)?;
    non_negative("quadratic", damping.quadratic)?;
    if damping.gamma_lin == 0.0 && damping.quadratic == 0.0 {
        return Err(RefError::InvalidParameter {
            key: "damping",
            value: 0.0,
            allowed: "gamma_lin > 0 or quadratic > 0 (undamped waves grow without bound)",
        });
    }
    let d = -inp.grad_pc.signum();
    let s = inp.v_a * inp.grad_pc.abs();
    let (g, b) = (damping.gamma_lin, damping.quadratic);
    let eps = 2.0 * s / (2.0 * g + (4.0 * g * g + 4.0 * b * s).sqrt());
    let sigma = inp.alpha_nu * inp.omega * eps / (inp.c * inp.c * inp.e_b);
    Ok(SteadyDrift {
        direction: d,
        flux_excess: -inp.grad_pc / sigma,
        wave_energy: eps,
        heating: s,
        kappa: 1.0 / (3.0 * sigma),
    })
}

/// Closed form for linear damping: F − d v_a h = d 2Γ c² e_B/(α_ν Ω v_a) [erg cm⁻² s⁻¹].
pub fn linear_damping_excess(inp: &DriftInputs, gamma: f64) -> Result<f64, RefError> {
    finite("grad_pc", inp.grad_pc)?;
    positive("gamma", gamma)?;
    Ok(
        -inp.grad_pc.signum() * 2.0 * gamma * inp.c * inp.c * inp.e_b
            / (inp.alpha_nu * inp.omega * inp.v_a),
    )
}

/// Closed form for NLL damping: F − d v_a h = d (c²/(α_ν Ω)) √(C_nll k v_i e_B |∂x P_c|/v_a).
pub fn nll_damping_excess(
    inp: &DriftInputs,
    c_nll: f64,
    k: f64,
    v_i: f64,
) -> Result<f64, RefError> {
    finite("grad_pc", inp.grad_pc)?;
    positive("c_nll", c_nll)?;
    positive("k", k)?;
    positive("v_i", v_i)?;
    let root = (c_nll * k * v_i * inp.e_b * inp.grad_pc.abs() / inp.v_a).sqrt();
    Ok(-inp.grad_pc.signum() * inp.c * inp.c / (inp.alpha_nu * inp.omega) * root)
}

/// Ion–neutral drift excess in the Kulsrud & Pearce 1969 (ApJ 156, 445) / Wiener, Zweibel &
/// Oh 2013 form as written in physics-detail §4.1:
/// v_st − v_a = (2/π) v_a ν_in n_i /(Ω_0 n_cr) [cm s⁻¹], with v_a the ion Alfvén speed,
/// ν_in [s⁻¹], n_i [cm⁻³], Ω_0 = γ_L Ω the non-relativistic gyro-frequency [s⁻¹],
/// n_cr = ε_c/(γ_L m_p c²) [cm⁻³]. The 2/π corresponds to α_ν = 3π/16, γ_c = 4/3.
pub fn ion_neutral_excess_speed_kp(
    v_a: f64,
    nu_in: f64,
    n_i: f64,
    omega0: f64,
    n_cr: f64,
) -> Result<f64, RefError> {
    positive("v_a", v_a)?;
    positive("nu_in", nu_in)?;
    positive("n_i", n_i)?;
    positive("omega0", omega0)?;
    positive("n_cr", n_cr)?;
    Ok(2.0 / std::f64::consts::PI * v_a * nu_in * n_i / (omega0 * n_cr))
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    const M_P: f64 = 1.672_621_923_69e-24; // proton mass [g] (CODATA 2018)

    fn inputs(grad: f64) -> DriftInputs {
        // WNM-like numbers (our own scenario): B = 3 μG, v_a = 4e6 cm/s
        let b = 3e-6;
        DriftInputs {
            grad_pc: grad,
            v_a: 4e6,
            omega: 6.55e-3 * 3.0,
            e_b: b * b / (8.0 * PI),
            alpha_nu: 3.0 * PI / 16.0,
            c: C_LIGHT,
        }
    }

    /// The result satisfies the two defining balances to round-off.
    #[test]
    fn satisfies_steady_balances() {
        for grad in [-1e-33, 3e-32, -5e-31] {
            for law in [
                DampingLaw::linear(1e-9),
                DampingLaw::nll(0.22, 3e-13, 8e5, inputs(grad).e_b),
                DampingLaw {
                    gamma_lin: 1e-11,
                    quadratic: 1e-3,
                },
            ] {
                let inp = inputs(grad);
                let r = steady_drift(&inp, &law).unwrap();
                let sigma = inp.alpha_nu * inp.omega * r.wave_energy / (inp.c * inp.c * inp.e_b);
                assert!((inp.grad_pc + sigma * r.flux_excess).abs() < 1e-14 * grad.abs());
                let growth = r.direction * inp.v_a * sigma * r.flux_excess;
                assert!((growth - law.rate(r.wave_energy)).abs() < 1e-13 * growth);
                assert!((growth - r.heating).abs() < 1e-13 * growth);
                assert_eq!(r.direction, -grad.signum());
                assert!(r.flux_excess * r.direction > 0.0);
            }
        }
    }

    #[test]
    fn closed_forms_and_scalings() {
        let g = 1e-9;
        let a = steady_drift(&inputs(-1e-32), &DampingLaw::linear(g)).unwrap();
        let b = steady_drift(&inputs(-4e-32), &DampingLaw::linear(g)).unwrap();
        let cf = linear_damping_excess(&inputs(-1e-32), g).unwrap();
        assert!((a.flux_excess - cf).abs() < 1e-14 * cf.abs());
        assert!((a.flux_excess - b.flux_excess).abs() < 1e-14 * cf.abs()); // gradient-independent
        assert!((b.wave_energy / a.wave_energy - 4.0).abs() < 1e-14);
        let (c_nll, k, v_i) = (0.22, 3e-13, 8e5);
        let e_b = inputs(1.0).e_b;
        let a = steady_drift(&inputs(2e-32), &DampingLaw::nll(c_nll, k, v_i, e_b)).unwrap();
        let b = steady_drift(&inputs(8e-32), &DampingLaw::nll(c_nll, k, v_i, e_b)).unwrap();
        let cf = nll_damping_excess(&inputs(2e-32), c_nll, k, v_i).unwrap();
        assert!((a.flux_excess - cf).abs() < 1e-14 * cf.abs());
        assert!((b.flux_excess / a.flux_excess - 2.0).abs() < 1e-14); // ∝ |∇P_c|^{1/2}
        let eps_cf = (inputs(2e-32).v_a * 2e-32 * e_b / (c_nll * k * v_i)).sqrt();
        assert!((a.wave_energy - eps_cf).abs() < 1e-14 * eps_cf);
    }

    /// Kulsrud–Pearce / WZO13 ion–neutral form agrees with the general linear result.
    #[test]
    fn ion_neutral_forms_agree() {
        let (n_i, b_gauss, nu_in, gamma_l, e_c) = (0.025, 3e-6, 3.7e-9, 1.4615, 1.602e-12);
        let rho_i = n_i * M_P;
        let v_a = b_gauss / (4.0 * PI * rho_i).sqrt();
        let omega = 9.58e3 * b_gauss / gamma_l;
        let inp = DriftInputs {
            grad_pc: -1e-33,
            v_a,
            omega,
            e_b: b_gauss * b_gauss / (8.0 * PI),
            alpha_nu: 3.0 * PI / 16.0,
            c: C_LIGHT,
        };
        let r = steady_drift(&inp, &DampingLaw::linear(nu_in / 2.0)).unwrap();
        let h = 4.0 / 3.0 * e_c;
        let general = r.excess_speed(h).unwrap();
        let n_cr = e_c / (gamma_l * M_P * C_LIGHT * C_LIGHT);
        let kp = ion_neutral_excess_speed_kp(v_a, nu_in, n_i, gamma_l * omega, n_cr).unwrap();
        assert!((general - kp).abs() < 1e-13 * kp, "{general} vs {kp}");
    }

    /// physics-detail §3.5 [computed] WNM rows (n_H = 0.5, T = 8e3 K, x_i = 0.05, B = 3 μG,
    /// ε_c = 1 eV cm⁻³, L_P = 1 kpc; ions = protons). Regression of the formula chain: the
    /// rate coefficients ⟨σv⟩_in = 8.4e-9 (T/1e4)^0.4 and C_nll = √π/8 (both from memory,
    /// configurable) enter only as inputs.
    #[test]
    fn spec_table_3_5_wnm_rows() {
        let (n_h, t, x_i, b, e_c, l_p) = (0.5, 8e3, 0.05, 3e-6, 1.602_176_634e-12, 3.0857e21);
        let v_a = b / (4.0 * PI * x_i * n_h * M_P).sqrt();
        assert!((v_a / 1e5 - 41.0).abs() < 0.5);
        let grad = -(e_c / 3.0) / l_p;
        let inp = DriftInputs {
            grad_pc: grad,
            v_a,
            omega: 6.55e-3 * 3.0,
            e_b: b * b / (8.0 * PI),
            alpha_nu: 3.0 * PI / 16.0,
            c: C_LIGHT,
        };
        let h = 4.0 / 3.0 * e_c;
        // ion–neutral: Γ = ν_in/2 = 1.8e-9, ε_+/e_B = 5.5e-7, v_st − v_A = 115 km/s
        let nu_in = (1.0 - x_i) * n_h * 8.4e-9 * (t / 1e4f64).powf(0.4);
        let r = steady_drift(&inp, &DampingLaw::linear(nu_in / 2.0)).unwrap();
        assert!((nu_in / 2.0 - 1.8e-9).abs() < 0.05e-9);
        assert!((r.wave_energy / inp.e_b - 5.5e-7).abs() < 0.05e-7);
        assert!((r.excess_speed(h).unwrap() / 1e5 - 115.0).abs() < 0.5);
        // NLL only: Γ = 9e-12, ε_+/e_B = 1.1e-4, v_st − v_A = 0.57 km/s
        let k_b = 1.380_649e-16; // Boltzmann constant [erg K⁻¹] (SI 2019 exact)
        let v_i = (k_b * t / M_P).sqrt();
        let k = 1.0 / (3.34e12 / 3.0);
        let c_nll = PI.sqrt() / 8.0;
        let r = steady_drift(&inp, &DampingLaw::nll(c_nll, k, v_i, inp.e_b)).unwrap();
        let gamma_nll = c_nll * k * v_i * r.wave_energy / (2.0 * inp.e_b);
        assert!((gamma_nll - 9e-12).abs() < 0.5e-12);
        assert!((r.wave_energy / inp.e_b - 1.1e-4).abs() < 0.05e-4);
        assert!((r.excess_speed(h).unwrap() / 1e5 - 0.57).abs() < 0.005);
    }

    /// physics-detail §3.5 [computed], remaining rows (ions = protons: ρ_i = x_i n_H m_p):
    /// (n_H, T, x_i, B/μG, ε_c/eV cm⁻³, L_P/kpc, ion–neutral?, ε_+/e_B, v_st − v_A [km/s]).
    #[test]
    fn spec_table_3_5_other_rows() {
        let rows = [
            (0.1, 8e3, 1.0, 3.0, 1.0, 1.0, false, 7.9e-5, 0.8),
            (1e-3, 1e6, 1.0, 1.0, 0.1, 10.0, false, 2.2e-5, 0.85),
            (0.1, 1e4, 0.5, 1.0, 0.1, 1.0, true, 1.0e-6, 187.0),
        ];
        for (n_h, t, x_i, b_mu, e_ev, l_kpc, ion_neutral, eps_rel, excess) in rows {
            let (b, e_c) = (b_mu * 1e-6, e_ev * 1.602_176_634e-12);
            let v_a = b / (4.0 * PI * x_i * n_h * M_P).sqrt();
            let inp = DriftInputs {
                grad_pc: -(e_c / 3.0) / (l_kpc * 3.0857e21),
                v_a,
                omega: 6.55e-3 * b_mu,
                e_b: b * b / (8.0 * PI),
                alpha_nu: 3.0 * PI / 16.0,
                c: C_LIGHT,
            };
            let law = if ion_neutral {
                DampingLaw::linear(0.5 * (1.0 - x_i) * n_h * 8.4e-9 * (t / 1e4f64).powf(0.4))
            } else {
                let v_i = (1.380_649e-16 * t / M_P).sqrt();
                DampingLaw::nll(PI.sqrt() / 8.0, b_mu / 3.34e12, v_i, inp.e_b)
            };
            let r = steady_drift(&inp, &law).unwrap();
            let ex = r.excess_speed(4.0 / 3.0 * e_c).unwrap() / 1e5;
            assert!(
                (r.wave_energy / inp.e_b - eps_rel).abs() < 0.02 * eps_rel,
                "{n_h}: {}",
                r.wave_energy / inp.e_b
            );
            assert!((ex - excess).abs() < 0.02 * excess, "{n_h}: {ex}");
        }
    }

    #[test]
    fn bad_input() {
        let e = steady_drift(&inputs(0.0), &DampingLaw::linear(1.0)).unwrap_err();
        assert!(e.to_string().contains("grad_pc"));
        assert!(steady_drift(&inputs(1.0), &DampingLaw::linear(0.0)).is_err());
        assert!(steady_drift(&inputs(1.0), &DampingLaw::linear(-1.0)).is_err());
    }
}
