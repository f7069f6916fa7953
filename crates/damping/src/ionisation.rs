//! Hydrogen ionisation state and composition helpers (physics-detail §6, §0).
//!
//! Collisional-ionisation equilibrium (CIE) of pure hydrogen without photoionisation:
//! x_n = α(T)/(α(T) + Γ_ci(T)), x_i = 1 − x_n, with rate fits of Cen (1992, ApJS 78, 341) or
//! Hui & Gnedin (1997, MNRAS 292, 27), case A or B. All fit coefficients are from memory
//! (physics-detail §6) and therefore configurable.

use crate::constants::{M_PROTON, T_HI_CEN, T_HI_HG};
use crate::error::{check_range, DampingError};

/// Cen (1992) fits (from memory):
/// α_HII = a T^{-1/2} (T/T_a)^{-s_a} [1 + (T/T_b)^{s_b}]^{-1},
/// Γ_eHI = g T^{1/2} exp(−T_H/T) [1 + (T/T_c)^{1/2}]^{-1}   [cm³ s⁻¹].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cen1992 {
    /// a = 8.40e-11.
    pub rec_norm: f64,
    /// T_a = 1e3 K.
    pub rec_t_scale: f64,
    /// s_a = 0.2.
    pub rec_t_exp: f64,
    /// T_b = 1e6 K.
    pub rec_hi_scale: f64,
    /// s_b = 0.7.
    pub rec_hi_exp: f64,
    /// g = 5.85e-11.
    pub ion_norm: f64,
    /// T_H = 157809.1 K.
    pub ion_t: f64,
    /// T_c = 1e5 K.
    pub ion_scale: f64,
}

impl Default for Cen1992 {
    fn default() -> Self {
        Self {
            rec_norm: 8.40e-11,
            rec_t_scale: 1.0e3,
            rec_t_exp: 0.2,
            rec_hi_scale: 1.0e6,
            rec_hi_exp: 0.7,
            ion_norm: 5.85e-11,
            ion_t: T_HI_CEN,
            ion_scale: 1.0e5,
        }
    }
}

impl Cen1992 {
    /// Recombination rate coefficient α_HII(T) [cm³ s⁻¹].
    pub fn recombination(&self, t: f64) -> f64 {
        self.rec_norm / t.sqrt()
            * (t / self.rec_t_scale).powf(-self.rec_t_exp)
            * (1.0 + (t / self.rec_hi_scale).powf(self.rec_hi_exp)).recip()
    }

    /// Collisional ionisation rate coefficient Γ_eHI(T) [cm³ s⁻¹].
    pub fn ionisation(&self, t: f64) -> f64 {
        self.ion_norm * t.sqrt() * (-self.ion_t / t).exp() / (1.0 + (t / self.ion_scale).sqrt())
    }

    /// ln(Γ_eHI/α_HII) at T [K], evaluated in log form (no underflow of exp(−T_H/T)).
    pub fn ln_ionisation_over_recombination(&self, t: f64) -> f64 {
        let ln_t = t.ln();
        let ln_a = self.rec_norm.ln()
            - 0.5 * ln_t
            - self.rec_t_exp * (t / self.rec_t_scale).ln()
            - (t / self.rec_hi_scale).powf(self.rec_hi_exp).ln_1p();
        let ln_g =
            self.ion_norm.ln() + 0.5 * ln_t - self.ion_t / t - (t / self.ion_scale).sqrt().ln_1p();
        ln_g - ln_a
    }
}

/// Hui & Gnedin (1997) fits (from memory), λ = 2 T_H/T:
/// α = a λ^{p} / [1 + (λ/λ_0)^{q}]^{r},
/// Γ_ci = g T^{-3/2} exp(−λ/2) λ^{p_i} / [1 + (λ/λ_i)^{q_i}]^{r_i}   [cm³ s⁻¹].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HuiGnedin1997 {
    /// a (case A 1.269e-13, case B 2.753e-14).
    pub rec_norm: f64,
    /// p (A 1.503, B 1.500).
    pub rec_p: f64,
    /// λ_0 (A 0.522, B 2.740).
    pub rec_lambda0: f64,
    /// q (A 0.470, B 0.407).
    pub rec_q: f64,
    /// r (A 1.923, B 2.242).
    pub rec_r: f64,
    /// g = 21.11.
    pub ion_norm: f64,
    /// p_i = −1.089.
    pub ion_p: f64,
    /// λ_i = 0.354.
    pub ion_lambda0: f64,
    /// q_i = 0.874.
    pub ion_q: f64,
    /// r_i = 1.101.
    pub ion_r: f64,
    /// T_H = 157807 K.
    pub t_hi: f64,
}

impl HuiGnedin1997 {
    /// Case A recombination (default CIE fit of Sluice).
    pub fn case_a() -> Self {
        Self {
            rec_norm: 1.269e-13,
            rec_p: 1.503,
            rec_lambda0: 0.522,
            rec_q: 0.470,
            rec_r: 1.923,
            ..Self::ionisation_defaults()
        }
    }

    /// Case B recombination.
    pub fn case_b() -> Self {
        Self {
            rec_norm: 2.753e-14,
            rec_p: 1.500,
            rec_lambda0: 2.740,
            rec_q: 0.407,
            rec_r: 2.242,
            ..Self::ionisation_defaults()
        }
    }

    fn ionisation_defaults() -> Self {
        Self {
            rec_norm: 0.0,
            rec_p: 0.0,
            rec_lambda0: 1.0,
            rec_q: 0.0,
            rec_r: 0.0,
            ion_norm: 21.11,
            ion_p: -1.089,
            ion_lambda0: 0.354,
            ion_q: 0.874,
            ion_r: 1.101,
            t_hi: T_HI_HG,
        }
    }

    /// Recombination rate coefficient α(T) [cm³ s⁻¹].
    pub fn recombination(&self, t: f64) -> f64 {
        let l = 2.0 * self.t_hi / t;
        self.rec_norm * l.powf(self.rec_p)
            / (1.0 + (l / self.rec_lambda0).powf(self.rec_q)).powf(self.rec_r)
    }

    /// Collisional ionisation rate coefficient Γ_ci(T) [cm³ s⁻¹].
    pub fn ionisation(&self, t: f64) -> f64 {
        let l = 2.0 * self.t_hi / t;
        self.ion_norm * t.powf(-1.5) * (-0.5 * l).exp() * l.powf(self.ion_p)
            / (1.0 + (l / self.ion_lambda0).powf(self.ion_q)).powf(self.ion_r)
    }

    /// ln(Γ_ci/α) at T [K], evaluated in log form (no underflow of exp(−λ/2)).
    pub fn ln_ionisation_over_recombination(&self, t: f64) -> f64 {
        let l = 2.0 * self.t_hi / t;
        let ln_l = l.ln();
        let ln_a = self.rec_norm.ln() + self.rec_p * ln_l
            - self.rec_r * (self.rec_q * (l / self.rec_lambda0).ln()).exp().ln_1p();
        let ln_g = self.ion_norm.ln() - 1.5 * t.ln() - 0.5 * l + self.ion_p * ln_l
            - self.ion_r * (self.ion_q * (l / self.ion_lambda0).ln()).exp().ln_1p();
        ln_g - ln_a
    }
}

/// Choice of CIE rate fits.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CieFit {
    /// Cen (1992).
    Cen1992(Cen1992),
    /// Hui & Gnedin (1997), case A or B coefficients.
    HuiGnedin1997(HuiGnedin1997),
}

impl Default for CieFit {
    fn default() -> Self {
        CieFit::HuiGnedin1997(HuiGnedin1997::case_a())
    }
}

impl CieFit {
    /// (recombination, collisional ionisation) rate coefficients at T [K], both [cm³ s⁻¹].
    pub fn rates(&self, t: f64) -> (f64, f64) {
        match self {
            CieFit::Cen1992(f) => (f.recombination(t), f.ionisation(t)),
            CieFit::HuiGnedin1997(f) => (f.recombination(t), f.ionisation(t)),
        }
    }

    /// Neutral fraction in CIE, x_n = α/(α + Γ_ci) = 1/(1 + exp ln(Γ_ci/α)), without floor;
    /// x_n = 1 for T ≤ 0 (or NaN).
    #[inline]
    pub fn neutral_fraction(&self, t: f64) -> f64 {
        if t.is_nan() || t <= 0.0 {
            return 1.0;
        }
        let d = match self {
            CieFit::Cen1992(f) => f.ln_ionisation_over_recombination(t),
            CieFit::HuiGnedin1997(f) => f.ln_ionisation_over_recombination(t),
        };
        if d.is_nan() {
            return 1.0;
        }
        1.0 / (1.0 + d.exp())
    }

    /// Temperature [K] at which x_n = `x_n` between 1e3 and 1e9 K (bisection in ln T; the CIE
    /// neutral fraction is monotonically decreasing there). `None` if not bracketed.
    pub fn temperature_at_neutral_fraction(&self, x_n: f64) -> Option<f64> {
        let (mut lo, mut hi) = (1.0e3_f64, 1.0e9_f64);
        let f = |t: f64| self.neutral_fraction(t) - x_n;
        if f(lo) < 0.0 || f(hi) > 0.0 {
            return None;
        }
        for _ in 0..200 {
            let mid = (lo * hi).sqrt();
            if f(mid) > 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo <= 1e-14 * hi {
                break;
            }
        }
        Some((lo * hi).sqrt())
    }
}

/// How the ionised fraction x_i = n_HII/n_H of a cell is set.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Ionisation {
    /// A fixed ionised fraction (0 < x_i ≤ 1).
    Fixed {
        /// x_i.
        ion_fraction: f64,
    },
    /// Collisional-ionisation equilibrium with a floor.
    Cie {
        /// Rate fits.
        fit: CieFit,
        /// Floor x_i,min (default 1e-4, physics-detail §6).
        ion_fraction_min: f64,
    },
}

impl Default for Ionisation {
    fn default() -> Self {
        Ionisation::Cie {
            fit: CieFit::default(),
            ion_fraction_min: 1.0e-4,
        }
    }
}

impl Ionisation {
    /// Ionised fraction x_i(T) (dimensionless).
    pub fn ion_fraction(&self, temperature: f64) -> f64 {
        match *self {
            Ionisation::Fixed { ion_fraction } => ion_fraction,
            Ionisation::Cie {
                fit,
                ion_fraction_min,
            } => (1.0 - fit.neutral_fraction(temperature)).clamp(ion_fraction_min, 1.0),
        }
    }

    /// Neutral fraction x_n = 1 − x_i(T) (dimensionless).
    pub fn neutral_fraction(&self, temperature: f64) -> f64 {
        1.0 - self.ion_fraction(temperature)
    }

    /// Checks the parameters.
    pub fn validate(&self) -> Result<(), DampingError> {
        match *self {
            Ionisation::Fixed { ion_fraction } => check_range(
                "ion_fraction",
                ion_fraction,
                f64::MIN_POSITIVE,
                1.0,
                "0 < x_i ≤ 1",
            ),
            Ionisation::Cie {
                ion_fraction_min, ..
            } => check_range(
                "ion_fraction_min",
                ion_fraction_min,
                f64::MIN_POSITIVE,
                1.0,
                "0 < x_i,min ≤ 1",
            ),
        }
    }
}

/// H + He composition for particle counts and mass densities (common practice: m_He = 4 m_p,
/// helium ionisation follows hydrogen's).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Composition {
    /// y = n_He/n_H (default 0.1, as in physics-detail §3.5; gives μ = 1.27 neutral, 0.609 ionised).
    pub helium_per_h: f64,
    /// Free electrons per He atom when hydrogen is fully ionised (default 2).
    pub helium_electrons: f64,
    /// He ions per H nucleus counted in the ion mass density ρ_i when x_i = 1 (default 0:
    /// ρ_i = x_i n_H m_p, as used for v_A,ion in the physics-detail §3.5 table; set equal to
    /// `helium_per_h` to get ρ_i = x_i ρ as in physics-detail §0).
    pub helium_ions_per_h: f64,
}

impl Default for Composition {
    fn default() -> Self {
        Self {
            helium_per_h: 0.1,
            helium_electrons: 2.0,
            helium_ions_per_h: 0.0,
        }
    }
}

impl Composition {
    /// Total mass density ρ = n_H m_p (1 + 4y) [g cm⁻³] for hydrogen density `n_h` [cm⁻³].
    pub fn mass_density(&self, n_h: f64) -> f64 {
        n_h * M_PROTON * (1.0 + 4.0 * self.helium_per_h)
    }

    /// Hydrogen density n_H [cm⁻³] of a gas of mass density `rho` [g cm⁻³].
    pub fn hydrogen_density(&self, rho: f64) -> f64 {
        rho / (M_PROTON * (1.0 + 4.0 * self.helium_per_h))
    }

    /// Electrons per H nucleus n_e/n_H = x_i (1 + z y).
    pub fn electrons_per_h(&self, x_i: f64) -> f64 {
        x_i * (1.0 + self.helium_electrons * self.helium_per_h)
    }

    /// Particles per H nucleus n_tot/n_H = 1 + y + n_e/n_H.
    pub fn particles_per_h(&self, x_i: f64) -> f64 {
        1.0 + self.helium_per_h + self.electrons_per_h(x_i)
    }

    /// Mean molecular weight μ = (1 + 4y)/(n_tot/n_H) (dimensionless).
    pub fn mean_molecular_weight(&self, x_i: f64) -> f64 {
        (1.0 + 4.0 * self.helium_per_h) / self.particles_per_h(x_i)
    }

    /// Ion mass density ρ_i = x_i n_H m_p (1 + 4 y_i) [g cm⁻³] (for v_A,ion = B/sqrt(4π ρ_i)).
    pub fn ion_mass_density(&self, n_h: f64, x_i: f64) -> f64 {
        x_i * n_h * M_PROTON * (1.0 + 4.0 * self.helium_ions_per_h)
    }

    /// Checks the parameters.
    pub fn validate(&self) -> Result<(), DampingError> {
        check_range(
            "helium_per_h",
            self.helium_per_h,
            0.0,
            1.0,
            "0 ≤ n_He/n_H ≤ 1",
        )?;
        check_range(
            "helium_electrons",
            self.helium_electrons,
            0.0,
            2.0,
            "0 ≤ z ≤ 2",
        )?;
        check_range(
            "helium_ions_per_h",
            self.helium_ions_per_h,
            0.0,
            self.helium_per_h,
            "0 ≤ y_i ≤ helium_per_h",
        )
    }
}

/// Alfvén speed v_A = B/sqrt(4π ρ) [cm s⁻¹] for `b_field` [G] and `rho` [g cm⁻³].
pub fn alfven_speed(b_field: f64, rho: f64) -> f64 {
    b_field.abs() / (4.0 * std::f64::consts::PI * rho).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn neutral_fraction_monotonic_and_bounded() {
        for fit in [
            CieFit::Cen1992(Cen1992::default()),
            CieFit::HuiGnedin1997(HuiGnedin1997::case_a()),
            CieFit::HuiGnedin1997(HuiGnedin1997::case_b()),
        ] {
            let mut last = 1.0;
            let mut t = 10.0;
            while t < 1e9 {
                let x = fit.neutral_fraction(t);
                assert!((0.0..=1.0).contains(&x) && x <= last + 1e-15, "T={t} x={x}");
                last = x;
                t *= 1.1;
            }
            // Limits: cold gas neutral, T ≤ 0 neutral, very hot gas ionised.
            assert!(fit.neutral_fraction(1.0) == 1.0);
            assert_eq!(fit.neutral_fraction(0.0), 1.0);
            assert!(fit.neutral_fraction(1e8) < 1e-5);
            // Log form equals the direct ratio of the rate coefficients.
            for t in [5e3, 1.5e4, 3e4, 1e6] {
                let (a, g) = fit.rates(t);
                assert!(
                    (fit.neutral_fraction(t) / (a / (a + g)) - 1.0).abs() < 1e-13,
                    "T={t}"
                );
            }
        }
    }

    #[test]
    fn hui_gnedin_case_a_recombination_at_1e4() {
        // physics-detail §6 sanity value (computed from the fit): α_A(1e4 K) = 4.30e-13.
        let a = HuiGnedin1997::case_a().recombination(1e4);
        assert!((a / 4.30e-13 - 1.0).abs() < 1.5e-3, "{a}");
    }

    #[test]
    fn ionisation_floor_and_fixed() {
        let i = Ionisation::default();
        assert_eq!(i.ion_fraction(100.0), 1e-4);
        assert!((i.neutral_fraction(100.0) - (1.0 - 1e-4)).abs() < 1e-16);
        assert!(i.ion_fraction(1e6) > 0.9999);
        let f = Ionisation::Fixed { ion_fraction: 0.05 };
        assert_eq!(f.ion_fraction(1e7), 0.05);
        assert!(Ionisation::Fixed { ion_fraction: 0.0 }.validate().is_err());
        let e = Ionisation::Cie {
            fit: CieFit::default(),
            ion_fraction_min: 2.0,
        }
        .validate();
        assert!(e.unwrap_err().to_string().contains("ion_fraction_min = 2"));
    }

    #[test]
    fn mean_molecular_weight_limits() {
        // physics-detail §0 defaults: μ = 1.27 neutral, 0.6 ionised (y = 0.1).
        let c = Composition::default();
        assert!((c.mean_molecular_weight(0.0) - 1.4 / 1.1).abs() < 1e-15);
        assert!((c.mean_molecular_weight(1.0) - 1.4 / 2.3).abs() < 1e-15);
        let rho = c.mass_density(2.0);
        assert!((c.hydrogen_density(rho) / 2.0 - 1.0).abs() < 1e-15);
        assert!(c.validate().is_ok());
        let bad = Composition {
            helium_ions_per_h: 0.5,
            ..Default::default()
        };
        assert!(bad
            .validate()
            .unwrap_err()
            .to_string()
            .contains("helium_ions_per_h"));
    }

    #[test]
    fn ion_alfven_speed_of_spec_table() {
        // physics-detail §3.5: WNM n_H = 0.5, x_i = 0.05, B = 3 μG → v_A,ion = 41 km/s.
        let c = Composition::default();
        let v = alfven_speed(3e-6, c.ion_mass_density(0.5, 0.05));
        assert!((v / 41.0e5 - 1.0).abs() < 0.013, "{v}");
    }
}
