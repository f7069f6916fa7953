//! Damping rates of the forward/backward Alfvén-wave energies e_± (physics-detail §3).
//!
//! Conventions (physics-detail §0, §3):
//! * e_± = δB_±²/(4π) is the total (magnetic + kinetic) energy density of the resonant waves
//!   [erg cm⁻³], e_B = B²/(8π) [erg cm⁻³], hence (δB/B)² = 4π e_±/(8π e_B) = e_±/(2 e_B).
//! * The literature quotes **amplitude** damping rates Γ [s⁻¹] (δB ∝ e^{−Γt}); the wave-energy
//!   loss is Q_± = f_E Γ e_± [erg cm⁻³ s⁻¹] with f_E = `energy_factor` (default 2).
//! * Linear mechanisms (ion–neutral, turbulent, constant) have Γ independent of e_±; nonlinear
//!   Landau damping has Γ ∝ e_±, so Q_± = linear·e_± + quadratic·e_±².

use crate::constants::{C_LIGHT, E_CHARGE, K_BOLTZMANN, M_PROTON, M_PROTON_C2};
use crate::error::{check_non_negative, check_positive, check_range, DampingError};

/// Smallest magnetic energy density used in the nonlinear coefficient [erg cm⁻³]
/// (B ≈ 5e-15 G); keeps the quadratic coefficient finite when B → 0 (common practice).
pub const E_B_MIN: f64 = 1.0e-30;
/// Smallest Alfvén speed used in the turbulent rate [cm s⁻¹]; keeps M_A finite when v_a → 0.
pub const V_A_MIN: f64 = 1.0e-30;

/// Local plasma state of one cell, all in cgs. Built by the driver per cell.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LocalConditions {
    /// Hydrogen nucleus number density n_H [cm⁻³].
    pub n_h: f64,
    /// Gas temperature T [K].
    pub temperature: f64,
    /// Magnetic field strength |B| [G].
    pub b_field: f64,
    /// Neutral hydrogen fraction x_n = n_HI / n_H (dimensionless, 0…1).
    pub neutral_fraction: f64,
    /// Alfvén speed used for streaming v_a [cm s⁻¹] (ion or total density, the driver's choice).
    pub alfven_speed: f64,
    /// Gyro-radius of the characteristic CR r_g [cm]; the resonant wavenumber is k = 1/r_g.
    pub gyro_radius: f64,
}

impl LocalConditions {
    /// Magnetic energy density e_B = B²/(8π) [erg cm⁻³].
    pub fn magnetic_energy_density(&self) -> f64 {
        self.b_field * self.b_field / (8.0 * std::f64::consts::PI)
    }

    /// Resonant wavenumber k = 1/r_g [cm⁻¹].
    pub fn resonant_wavenumber(&self) -> f64 {
        1.0 / self.gyro_radius
    }

    /// Neutral hydrogen density n_n = x_n n_H [cm⁻³].
    pub fn neutral_density(&self) -> f64 {
        self.neutral_fraction * self.n_h
    }

    /// Checks that every field is in its physical range.
    pub fn validate(&self) -> Result<(), DampingError> {
        check_non_negative("n_h", self.n_h)?;
        check_non_negative("temperature", self.temperature)?;
        check_positive("b_field", self.b_field)?;
        check_range(
            "neutral_fraction",
            self.neutral_fraction,
            0.0,
            1.0,
            "0 ≤ x_n ≤ 1",
        )?;
        check_non_negative("alfven_speed", self.alfven_speed)?;
        check_positive("gyro_radius", self.gyro_radius)?;
        Ok(())
    }
}

/// The characteristic cosmic ray whose resonant waves are damped: a proton of momentum p.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CharacteristicCr {
    /// Momentum p c [GeV] (default 1 GeV, physics.md §2).
    pub momentum_gev: f64,
}

impl Default for CharacteristicCr {
    fn default() -> Self {
        Self { momentum_gev: 1.0 }
    }
}

impl CharacteristicCr {
    /// Lorentz factor γ_L = sqrt(1 + (pc / m_p c²)²) (1.4615 for 1 GeV/c).
    pub fn lorentz_factor(&self) -> f64 {
        let r = self.momentum_gev * 1.0e9 * crate::constants::EV / M_PROTON_C2;
        (1.0 + r * r).sqrt()
    }

    /// Gyro-radius r_g = pc/(eB) [cm] at field strength `b_field` [G] (pitch angle 90°).
    pub fn gyro_radius(&self, b_field: f64) -> f64 {
        self.momentum_gev * 1.0e9 * crate::constants::EV / (E_CHARGE * b_field)
    }

    /// Relativistic gyro-frequency Ω = eB/(γ_L m_p c) [s⁻¹] at field strength `b_field` [G].
    pub fn gyro_frequency(&self, b_field: f64) -> f64 {
        E_CHARGE * b_field / (self.lorentz_factor() * M_PROTON * C_LIGHT)
    }

    /// Checks `momentum_gev > 0`.
    pub fn validate(&self) -> Result<(), DampingError> {
        check_positive("momentum_gev", self.momentum_gev)
    }
}

/// Ion–neutral damping in the high-frequency limit (Kulsrud & Pearce 1969, ApJ 156, 445):
/// Γ_in = ν_in/2 with ν_in = n_n ⟨σv⟩_in and ⟨σv⟩_in = σv_ref (T/T_ref)^s.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IonNeutral {
    /// ⟨σv⟩_in at T_ref [cm³ s⁻¹] (default 8.4e-9, from memory).
    pub sigma_v_ref: f64,
    /// Reference temperature T_ref [K] (default 1e4).
    pub t_ref: f64,
    /// Temperature exponent s (default 0.4, from memory).
    pub t_exponent: f64,
}

impl Default for IonNeutral {
    fn default() -> Self {
        Self {
            sigma_v_ref: 8.4e-9,
            t_ref: 1.0e4,
            t_exponent: 0.4,
        }
    }
}

impl IonNeutral {
    /// Rate coefficient ⟨σv⟩_in(T) [cm³ s⁻¹]; T < 0 is treated as 0.
    pub fn rate_coefficient(&self, temperature: f64) -> f64 {
        self.sigma_v_ref * (temperature.max(0.0) / self.t_ref).powf(self.t_exponent)
    }

    /// Ion–neutral collision frequency ν_in = n_n ⟨σv⟩_in [s⁻¹].
    pub fn collision_frequency(&self, c: &LocalConditions) -> f64 {
        c.neutral_density().max(0.0) * self.rate_coefficient(c.temperature)
    }

    /// Amplitude damping rate Γ_in = ν_in/2 [s⁻¹] (high-frequency limit).
    pub fn amplitude_rate(&self, c: &LocalConditions) -> f64 {
        0.5 * self.collision_frequency(c)
    }

    /// k v_a / ν_in (dimensionless): the high-frequency limit used here needs this ≫ 1
    /// (physics-detail §3.1). Returns +∞ when there are no neutrals.
    pub fn high_frequency_parameter(&self, c: &LocalConditions) -> f64 {
        let nu = self.collision_frequency(c);
        if nu > 0.0 {
            c.alfven_speed / (c.gyro_radius * nu)
        } else {
            f64::INFINITY
        }
    }

    /// Checks the parameters.
    pub fn validate(&self) -> Result<(), DampingError> {
        check_non_negative("ion_neutral.sigma_v_ref", self.sigma_v_ref)?;
        check_positive("ion_neutral.t_ref", self.t_ref)?;
        check_range(
            "ion_neutral.t_exponent",
            self.t_exponent,
            -5.0,
            5.0,
            "-5 ≤ exponent ≤ 5",
        )
    }
}

/// Nonlinear Landau damping (Kulsrud 2005, *Plasma Physics for Astrophysics*; used by
/// Wiener, Oh & Guo 2013, MNRAS 434, 2209): Γ = C_nll k v_i (δB/B)², k = 1/r_g,
/// (δB/B)² = e_±/(2 e_B), v_i = f_v sqrt(k_B T/m_p).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Nll {
    /// C_nll (default √π/8 ≈ 0.2216, from memory).
    pub coefficient: f64,
    /// Factor f_v multiplying sqrt(k_B T/m_p) in the ion thermal speed (default 1).
    pub ion_speed_factor: f64,
}

impl Default for Nll {
    fn default() -> Self {
        Self {
            coefficient: std::f64::consts::PI.sqrt() / 8.0,
            ion_speed_factor: 1.0,
        }
    }
}

impl Nll {
    /// Ion thermal speed v_i = f_v sqrt(k_B T/m_p) [cm s⁻¹]; T < 0 is treated as 0.
    pub fn ion_thermal_speed(&self, temperature: f64) -> f64 {
        self.ion_speed_factor * (K_BOLTZMANN * temperature.max(0.0) / M_PROTON).sqrt()
    }

    /// Γ per unit wave energy: Γ_nll = slope·e_±, slope = C k v_i/(2 e_B) [cm³ erg⁻¹ s⁻¹].
    pub fn rate_per_energy(&self, c: &LocalConditions) -> f64 {
        let e_b = c.magnetic_energy_density().max(E_B_MIN);
        self.coefficient * c.resonant_wavenumber() * self.ion_thermal_speed(c.temperature)
            / (2.0 * e_b)
    }

    /// Amplitude damping rate Γ_nll(e_±) [s⁻¹] for wave energy `wave_energy` [erg cm⁻³].
    pub fn amplitude_rate(&self, c: &LocalConditions, wave_energy: f64) -> f64 {
        self.rate_per_energy(c) * wave_energy.max(0.0)
    }

    /// Checks the parameters.
    pub fn validate(&self) -> Result<(), DampingError> {
        check_non_negative("nll.coefficient", self.coefficient)?;
        check_non_negative("nll.ion_speed_factor", self.ion_speed_factor)
    }
}

/// How the turbulence amplitude is given.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TurbulenceAmplitude {
    /// Alfvén Mach number M_A = v_L/v_a at the outer scale (dimensionless).
    MachNumber(f64),
    /// Turbulent velocity v_L at the outer scale [cm s⁻¹]; M_A = v_L/v_a per cell.
    Velocity(f64),
}

/// Which branch of the turbulent rate applies in a cell.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TurbulentRegime {
    /// M_A ≥ 1: ε_m = v_L³/L.
    SuperAlfvenic,
    /// M_A < 1 and r_g < L M_A² (strong-turbulence range): ε_m = v_L⁴/(v_a L).
    SubAlfvenicStrong,
    /// M_A < 1 but r_g ≥ L M_A²: the resonant scale lies in the weak cascade; the
    /// sub-Alfvénic formula is still applied (Lazarian 2016 gives a different law; not included).
    SubAlfvenicWeak,
}

/// Turbulent damping (Farmer & Goldreich 2004, ApJ 604, 671; regimes after Lazarian 2016,
/// ApJ 833, 131): Γ = C_turb sqrt(ε_m/(r_g v_a)), i.e.
/// Γ = C_turb (v_a/sqrt(L r_g)) M_A^{p_sup} for M_A ≥ 1 and M_A^{p_sub} for M_A < 1.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Turbulent {
    /// Outer scale L [cm] (default 100 pc: our choice, the spec gives none).
    pub outer_scale: f64,
    /// Amplitude at the outer scale (default M_A = 1, the Farmer & Goldreich case).
    pub amplitude: TurbulenceAmplitude,
    /// C_turb (default 1, from memory).
    pub coefficient: f64,
    /// Exponent p_sup of M_A for M_A ≥ 1 (default 3/2 from ε_m = v_L³/L).
    pub super_alfvenic_exponent: f64,
    /// Exponent p_sub of M_A for M_A < 1 (default 2 from ε_m = v_L⁴/(v_a L)).
    pub sub_alfvenic_exponent: f64,
}

impl Default for Turbulent {
    fn default() -> Self {
        Self {
            outer_scale: 100.0 * crate::constants::PARSEC,
            amplitude: TurbulenceAmplitude::MachNumber(1.0),
            coefficient: 1.0,
            super_alfvenic_exponent: 1.5,
            sub_alfvenic_exponent: 2.0,
        }
    }
}

impl Turbulent {
    /// Alfvén Mach number M_A in this cell (dimensionless).
    pub fn mach_number(&self, c: &LocalConditions) -> f64 {
        match self.amplitude {
            TurbulenceAmplitude::MachNumber(m) => m,
            TurbulenceAmplitude::Velocity(v) => v / c.alfven_speed.max(V_A_MIN),
        }
    }

    /// Which branch applies (see [`TurbulentRegime`]).
    pub fn regime(&self, c: &LocalConditions) -> TurbulentRegime {
        let m = self.mach_number(c);
        if m >= 1.0 {
            TurbulentRegime::SuperAlfvenic
        } else if c.gyro_radius < self.outer_scale * m * m {
            TurbulentRegime::SubAlfvenicStrong
        } else {
            TurbulentRegime::SubAlfvenicWeak
        }
    }

    /// Amplitude damping rate Γ_turb [s⁻¹].
    pub fn amplitude_rate(&self, c: &LocalConditions) -> f64 {
        let m = self.mach_number(c).max(0.0);
        let p = if m >= 1.0 {
            self.super_alfvenic_exponent
        } else {
            self.sub_alfvenic_exponent
        };
        let va = c.alfven_speed.max(V_A_MIN);
        self.coefficient * va / (self.outer_scale * c.gyro_radius).sqrt() * m.powf(p)
    }

    /// Checks the parameters.
    pub fn validate(&self) -> Result<(), DampingError> {
        check_positive("turbulent.outer_scale", self.outer_scale)?;
        match self.amplitude {
            TurbulenceAmplitude::MachNumber(m) => check_non_negative("turbulent.mach_number", m)?,
            TurbulenceAmplitude::Velocity(v) => check_non_negative("turbulent.velocity", v)?,
        }
        check_non_negative("turbulent.coefficient", self.coefficient)?;
        check_range(
            "turbulent.super_alfvenic_exponent",
            self.super_alfvenic_exponent,
            0.0,
            10.0,
            "0 ≤ exponent ≤ 10",
        )?;
        check_range(
            "turbulent.sub_alfvenic_exponent",
            self.sub_alfvenic_exponent,
            0.0,
            10.0,
            "0 ≤ exponent ≤ 10",
        )
    }
}

/// Energy-form damping coefficients of one wave field: Q = linear·e + quadratic·e².
///
/// The CR crate integrates de/dt = a e − b e² exactly; `linear` enters a (with a minus sign)
/// and `quadratic` is b. Both already include `energy_factor`.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct DampingRates {
    /// Linear energy loss rate [s⁻¹]: f_E (Γ_in + Γ_turb + Γ_0).
    pub linear: f64,
    /// Quadratic coefficient [cm³ erg⁻¹ s⁻¹]: f_E C_nll k v_i/(2 e_B).
    pub quadratic: f64,
}

impl DampingRates {
    /// Wave energy loss (= heating) rate Q(e) = linear·e + quadratic·e² [erg cm⁻³ s⁻¹].
    pub fn energy_loss(&self, wave_energy: f64) -> f64 {
        let e = wave_energy.max(0.0);
        (self.linear + self.quadratic * e) * e
    }

    /// Wave energy e ≥ 0 [erg cm⁻³] at which Q(e) equals `heating` [erg cm⁻³ s⁻¹]
    /// (steady balance with a given growth/heating rate, physics-detail §4.1). Solved as the
    /// positive root of q e² + l e − H = 0 in the cancellation-free form 2H/(l + sqrt(l² + 4qH)).
    /// Returns +∞ if there is no damping at all and H > 0.
    pub fn steady_wave_energy(&self, heating: f64) -> f64 {
        let h = heating.max(0.0);
        if h == 0.0 {
            return 0.0;
        }
        let l = self.linear.max(0.0);
        let q = self.quadratic.max(0.0);
        let d = l + (l * l + 4.0 * q * h).sqrt();
        if d > 0.0 {
            2.0 * h / d
        } else {
            f64::INFINITY
        }
    }
}

/// Amplitude damping rates Γ [s⁻¹] of each mechanism at a given wave energy (diagnostics).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct RateBreakdown {
    /// Γ_in [s⁻¹].
    pub ion_neutral: f64,
    /// Γ_nll(e) [s⁻¹].
    pub nll: f64,
    /// Γ_turb [s⁻¹].
    pub turbulent: f64,
    /// Γ_0 [s⁻¹].
    pub constant: f64,
}

impl RateBreakdown {
    /// Sum of all amplitude rates [s⁻¹].
    pub fn total(&self) -> f64 {
        self.ion_neutral + self.nll + self.turbulent + self.constant
    }
}

/// The combined wave-damping model. Mechanisms set to `None` are off.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DampingModel {
    /// Ion–neutral damping (default on; vanishes where x_n = 0).
    pub ion_neutral: Option<IonNeutral>,
    /// Nonlinear Landau damping (default on).
    pub nll: Option<Nll>,
    /// Turbulent damping (default off: needs the deck's L and M_A).
    pub turbulent: Option<Turbulent>,
    /// Constant background amplitude rate Γ_0 [s⁻¹] (default 0).
    pub constant: f64,
    /// f_E in Q = f_E Γ e (`damping_energy_factor`, default 2).
    pub energy_factor: f64,
}

impl Default for DampingModel {
    fn default() -> Self {
        Self {
            ion_neutral: Some(IonNeutral::default()),
            nll: Some(Nll::default()),
            turbulent: None,
            constant: 0.0,
            energy_factor: 2.0,
        }
    }
}

impl DampingModel {
    /// A model with every mechanism off (add the ones wanted).
    pub fn none() -> Self {
        Self {
            ion_neutral: None,
            nll: None,
            turbulent: None,
            constant: 0.0,
            energy_factor: 2.0,
        }
    }

    /// Energy-form coefficients (linear [s⁻¹], quadratic [cm³ erg⁻¹ s⁻¹]) in this cell.
    #[inline]
    pub fn rates(&self, c: &LocalConditions) -> DampingRates {
        let mut gamma_lin = self.constant;
        if let Some(m) = &self.ion_neutral {
            gamma_lin += m.amplitude_rate(c);
        }
        if let Some(m) = &self.turbulent {
            gamma_lin += m.amplitude_rate(c);
        }
        let slope = self.nll.as_ref().map_or(0.0, |m| m.rate_per_energy(c));
        DampingRates {
            linear: self.energy_factor * gamma_lin,
            quadratic: self.energy_factor * slope,
        }
    }

    /// Amplitude rates Γ of each mechanism at wave energy `wave_energy` [erg cm⁻³].
    pub fn amplitude_rates(&self, c: &LocalConditions, wave_energy: f64) -> RateBreakdown {
        RateBreakdown {
            ion_neutral: self
                .ion_neutral
                .as_ref()
                .map_or(0.0, |m| m.amplitude_rate(c)),
            nll: self
                .nll
                .as_ref()
                .map_or(0.0, |m| m.amplitude_rate(c, wave_energy)),
            turbulent: self.turbulent.as_ref().map_or(0.0, |m| m.amplitude_rate(c)),
            constant: self.constant,
        }
    }

    /// Wave energy loss rate Q(e) = f_E Γ(e) e [erg cm⁻³ s⁻¹].
    pub fn energy_loss(&self, c: &LocalConditions, wave_energy: f64) -> f64 {
        self.rates(c).energy_loss(wave_energy)
    }

    /// Checks every enabled mechanism and the scalar parameters.
    pub fn validate(&self) -> Result<(), DampingError> {
        if let Some(m) = &self.ion_neutral {
            m.validate()?;
        }
        if let Some(m) = &self.nll {
            m.validate()?;
        }
        if let Some(m) = &self.turbulent {
            m.validate()?;
        }
        check_non_negative("damping.constant", self.constant)?;
        check_positive("damping_energy_factor", self.energy_factor)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constants::{KM_PER_S, PARSEC};

    fn wnm() -> LocalConditions {
        LocalConditions {
            n_h: 0.5,
            temperature: 8.0e3,
            b_field: 3.0e-6,
            neutral_fraction: 0.95,
            alfven_speed: 41.3854 * KM_PER_S,
            gyro_radius: CharacteristicCr::default().gyro_radius(3.0e-6),
        }
    }

    #[test]
    fn characteristic_cr_defaults_match_spec() {
        // physics-detail §2.1: γ_L = 1.4615, Ω = 6.55e-3 (B/μG) s⁻¹, r_g = 3.34e12 (B/μG)⁻¹ cm.
        let cr = CharacteristicCr::default();
        assert!((cr.lorentz_factor() - 1.4615).abs() < 1e-4);
        assert!((cr.gyro_frequency(1e-6) / 6.55e-3 - 1.0).abs() < 1e-3);
        assert!((cr.gyro_radius(1e-6) / 3.34e12 - 1.0).abs() < 2e-3);
    }

    #[test]
    fn rates_are_energy_form_of_amplitude_rates() {
        let m = DampingModel {
            turbulent: Some(Turbulent::default()),
            constant: 1e-12,
            ..Default::default()
        };
        let c = wnm();
        let e = 1e-16;
        let r = m.rates(&c);
        let g = m.amplitude_rates(&c, e);
        let q = r.energy_loss(e);
        assert!((q / (2.0 * g.total() * e) - 1.0).abs() < 1e-14);
    }

    #[test]
    fn steady_wave_energy_inverts_energy_loss() {
        let r = DampingRates {
            linear: 3e-9,
            quadratic: 4e7,
        };
        for h in [1e-35, 1e-28, 1e-20] {
            let e = r.steady_wave_energy(h);
            assert!((r.energy_loss(e) / h - 1.0).abs() < 1e-13);
        }
        assert_eq!(
            DampingRates::default().steady_wave_energy(1.0),
            f64::INFINITY
        );
        assert_eq!(r.steady_wave_energy(0.0), 0.0);
    }

    #[test]
    fn monotonic_in_neutral_fraction_temperature_and_mach_number() {
        let m = IonNeutral::default();
        let mut c = wnm();
        let mut last = -1.0;
        for i in 0..=10 {
            c.neutral_fraction = i as f64 / 10.0;
            let g = m.amplitude_rate(&c);
            assert!(g > last || (i == 0 && g == 0.0));
            last = g;
        }
        let n = Nll::default();
        assert!(n.ion_thermal_speed(1e6) > n.ion_thermal_speed(1e4));
        let mut t = Turbulent::default();
        let mut last = -1.0;
        for i in 1..40 {
            t.amplitude = TurbulenceAmplitude::MachNumber(i as f64 * 0.1);
            let g = t.amplitude_rate(&c);
            assert!(g > last);
            last = g;
        }
    }

    #[test]
    fn turbulent_branches_are_continuous_at_unit_mach_number() {
        let c = wnm();
        let mut t = Turbulent {
            amplitude: TurbulenceAmplitude::MachNumber(1.0 - 1e-12),
            ..Default::default()
        };
        let below = t.amplitude_rate(&c);
        t.amplitude = TurbulenceAmplitude::MachNumber(1.0);
        let at = t.amplitude_rate(&c);
        assert!((below / at - 1.0).abs() < 1e-11);
        // Farmer & Goldreich (2004): Γ = v_a/sqrt(L r_g) at M_A = 1.
        let fg = c.alfven_speed / (t.outer_scale * c.gyro_radius).sqrt();
        assert!((at / fg - 1.0).abs() < 1e-14);
        // Velocity form equals Mach form.
        t.amplitude = TurbulenceAmplitude::Velocity(0.5 * c.alfven_speed);
        let gv = t.amplitude_rate(&c);
        t.amplitude = TurbulenceAmplitude::MachNumber(0.5);
        assert!((gv / t.amplitude_rate(&c) - 1.0).abs() < 1e-14);
    }

    #[test]
    fn turbulent_regime_classification() {
        let c = wnm();
        let mut t = Turbulent {
            outer_scale: 100.0 * PARSEC,
            ..Default::default()
        };
        t.amplitude = TurbulenceAmplitude::MachNumber(2.0);
        assert_eq!(t.regime(&c), TurbulentRegime::SuperAlfvenic);
        t.amplitude = TurbulenceAmplitude::MachNumber(0.5);
        assert_eq!(t.regime(&c), TurbulentRegime::SubAlfvenicStrong);
        t.amplitude = TurbulenceAmplitude::MachNumber(1e-5);
        assert_eq!(t.regime(&c), TurbulentRegime::SubAlfvenicWeak);
    }

    #[test]
    fn nll_is_quadratic_in_wave_energy() {
        let n = Nll::default();
        let c = wnm();
        let q1 = n.amplitude_rate(&c, 1e-17) * 1e-17;
        let q2 = n.amplitude_rate(&c, 2e-17) * 2e-17;
        assert!((q2 / q1 - 4.0).abs() < 1e-13);
    }

    #[test]
    fn no_nan_for_extreme_inputs() {
        let m = DampingModel {
            turbulent: Some(Turbulent {
                amplitude: TurbulenceAmplitude::Velocity(1e6),
                ..Default::default()
            }),
            constant: 1e-15,
            ..Default::default()
        };
        for t in [0.0, 1e-300, 1.0, 1e12] {
            for b in [0.0, 1e-300, 1e-6, 1e3] {
                for va in [0.0, 1e-10, 1e8] {
                    for e in [0.0, 1e-300, 1e-10] {
                        let c = LocalConditions {
                            n_h: 1.0,
                            temperature: t,
                            b_field: b,
                            neutral_fraction: 0.5,
                            alfven_speed: va,
                            gyro_radius: 1e12,
                        };
                        let r = m.rates(&c);
                        assert!(r.linear.is_finite() && r.linear >= 0.0, "{c:?}");
                        assert!(r.quadratic.is_finite() && r.quadratic >= 0.0, "{c:?}");
                        let q = r.energy_loss(e);
                        assert!(q.is_finite() && q >= 0.0, "{c:?} e={e}");
                        assert!(m.amplitude_rates(&c, e).total().is_finite());
                    }
                }
            }
        }
    }

    #[test]
    fn validation_names_the_parameter() {
        let mut m = DampingModel {
            energy_factor: 0.0,
            ..Default::default()
        };
        let err = m.validate().unwrap_err();
        assert!(matches!(
            err,
            DampingError::InvalidParameter {
                name: "damping_energy_factor",
                ..
            }
        ));
        assert!(err.to_string().contains("damping_energy_factor"));
        m = DampingModel::default();
        m.turbulent = Some(Turbulent {
            outer_scale: -1.0,
            ..Default::default()
        });
        let err = m.validate().unwrap_err();
        assert!(
            err.to_string().contains("turbulent.outer_scale = -1"),
            "{err}"
        );
        m = DampingModel::default();
        m.ion_neutral = Some(IonNeutral {
            sigma_v_ref: f64::NAN,
            ..Default::default()
        });
        assert!(m.validate().is_err());
        m = DampingModel::default();
        m.constant = -1.0;
        assert!(m.validate().is_err());
        assert!(DampingModel::default().validate().is_ok());
        let mut c = wnm();
        c.neutral_fraction = 1.5;
        assert!(c
            .validate()
            .unwrap_err()
            .to_string()
            .contains("neutral_fraction"));
        c = wnm();
        c.b_field = 0.0;
        assert!(c.validate().is_err());
        assert!(wnm().validate().is_ok());
        assert!(CharacteristicCr { momentum_gev: 0.0 }.validate().is_err());
    }
}
