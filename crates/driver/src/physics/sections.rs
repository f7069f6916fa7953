//! Deck sections of the physics stages: `[cosmic_rays]` (+ `[cosmic_rays.init]`), `[damping]`,
//! `[ionisation]` and `[cooling]`, with their validation.
//!
//! All inputs are cgs (the schema is documented in `docs/deck.md`, section "Physics
//! sections"). Every error names the full key path, the value and what is allowed.

use crate::deck::{shape_value, BoundaryChoice, Deck, ProfileField, ShapeKind};
use crate::DeckError;
use serde::de::{self, Deserializer, Unexpected, Visitor};
use serde::Deserialize;

fn invalid(
    key: impl Into<String>,
    value: impl std::fmt::Display,
    allowed: impl Into<String>,
) -> DeckError {
    DeckError::Invalid {
        key: key.into(),
        value: value.to_string(),
        allowed: allowed.into(),
    }
}

fn finite_pos(key: &str, v: f64) -> Result<(), DeckError> {
    if v.is_finite() && v > 0.0 {
        Ok(())
    } else {
        Err(invalid(key, v, "a finite number > 0"))
    }
}

fn finite_nonneg(key: &str, v: f64) -> Result<(), DeckError> {
    if v.is_finite() && v >= 0.0 {
        Ok(())
    } else {
        Err(invalid(key, v, "a finite number >= 0"))
    }
}

fn finite(key: &str, v: f64) -> Result<(), DeckError> {
    if v.is_finite() {
        Ok(())
    } else {
        Err(invalid(key, v, "a finite number"))
    }
}

/// Default scattering prefactor α_ν = 3π/16 (Thomas & Pfrommer 2019, from memory).
pub const DEFAULT_SCATTERING_PREFACTOR: f64 = 3.0 * std::f64::consts::PI / 16.0;

/// CR transport model.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum CrModelChoice {
    /// Self-confinement by forward/backward Alfvén waves (default).
    #[default]
    SelfConfined,
    /// Fixed diffusion coefficient `kappa`.
    FixedKappa,
    /// Streaming at the Alfvén speed plus residual diffusion `kappa`.
    Streaming,
}

/// `reduced_speed_of_light`: a number in cm/s or `"auto"`.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum SpeedChoice {
    /// `auto_factor` × the largest MHD signal speed at t = 0.
    #[default]
    Auto,
    /// A speed, cm/s.
    Value(f64),
}

impl<'de> Deserialize<'de> for SpeedChoice {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = SpeedChoice;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                write!(f, "a speed in cm/s (a number) or \"auto\"")
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<SpeedChoice, E> {
                Ok(SpeedChoice::Value(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<SpeedChoice, E> {
                Ok(SpeedChoice::Value(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<SpeedChoice, E> {
                Ok(SpeedChoice::Value(v as f64))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<SpeedChoice, E> {
                if v == "auto" {
                    Ok(SpeedChoice::Auto)
                } else {
                    Err(E::invalid_value(Unexpected::Str(v), &self))
                }
            }
        }
        d.deserialize_any(V)
    }
}

/// Density in the Alfvén speed of the CR terms.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum AlfvenDensityChoice {
    /// Ion mass density ρ_i = x_i,m ρ (x_i,m from `[ionisation]`, 1 if absent). Default.
    #[default]
    Ion,
    /// Total gas density.
    Total,
}

/// Form of the CR work on the gas.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum WorkFormChoice {
    /// v (S_+ + S_−) (default).
    #[default]
    Scattering,
    /// −v ∂_x P_c.
    PressureGradient,
}

/// CR slope limiter.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum CrLimiterChoice {
    /// minmod.
    Minmod,
    /// van Leer (default).
    #[default]
    VanLeer,
    /// Monotonized central.
    Mc,
}

/// Where the CR–wave–gas exchange is applied.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum CouplingChoice {
    /// Inside every transport subcycle (default).
    #[default]
    InTransport,
    /// Strang-split source stage.
    Split,
}

/// CR boundary of one side.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CrBoundaryChoice {
    /// Zero gradient.
    Outflow,
    /// Mirror.
    Reflecting,
    /// Periodic (both sides, and the gas too).
    Periodic,
    /// Fixed CR energy flux into the domain, `<side>_flux` erg/cm²/s.
    InjectedFlux,
    /// Fixed CR energy density in the ghost cells, `<side>_energy_density` erg/cm³.
    FixedEnergyDensity,
}

/// Shape of a CR initial profile.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CrProfileShape {
    /// amplitude · exp(−(x − center)²/(2 width²)).
    Gaussian,
    /// amplitude for |x − center| < width, else 0.
    TopHat,
    /// amplitude · ½ [1 + tanh((x − center)/width)].
    TanhStep,
    /// amplitude · sin(2π x / wavelength + phase).
    Sine,
}

/// Field a CR profile is added to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum CrProfileField {
    /// CR energy density e_c, erg/cm³ (default).
    #[default]
    EnergyDensity,
    /// Comoving CR energy flux F (x component), erg/cm²/s.
    Flux,
}

/// `[[cosmic_rays.init.profiles]]`.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CrProfile {
    /// Shape.
    pub shape: CrProfileShape,
    /// Centre, cm (gaussian, top_hat, tanh_step).
    #[serde(default)]
    pub center: Option<f64>,
    /// Width, cm (> 0; gaussian σ, top-hat half-width, tanh scale).
    #[serde(default)]
    pub width: Option<f64>,
    /// Wavelength, cm (> 0, sine).
    #[serde(default)]
    pub wavelength: Option<f64>,
    /// Phase, rad (sine; default 0).
    #[serde(default)]
    pub phase: Option<f64>,
    /// Amplitude in the field's unit (erg/cm³ or erg/cm²/s).
    pub amplitude: f64,
    /// Field.
    #[serde(default)]
    pub field: CrProfileField,
}

impl CrProfile {
    /// Profile value at `x` cm (validated profile).
    pub fn value(&self, x: f64) -> f64 {
        let kind = match self.shape {
            CrProfileShape::Gaussian => ShapeKind::Gaussian,
            CrProfileShape::TopHat => ShapeKind::TopHat,
            CrProfileShape::TanhStep => ShapeKind::TanhStep,
            CrProfileShape::Sine => ShapeKind::Sine,
        };
        shape_value(
            kind,
            self.amplitude,
            [self.center, self.width, self.wavelength, self.phase],
            x,
        )
    }
}

/// `[cosmic_rays.init]`.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CrInitSection {
    /// Uniform background e_c, erg/cm³ (≥ 0, required).
    pub energy_density: f64,
    /// Uniform initial F, erg/cm²/s (default 0).
    #[serde(default)]
    pub flux: f64,
    /// Initial e_+ as a fraction of e_B (default = `wave_floor`).
    #[serde(default)]
    pub forward_wave_energy: Option<f64>,
    /// Initial e_− as a fraction of e_B (default = `wave_floor`).
    #[serde(default)]
    pub backward_wave_energy: Option<f64>,
    /// Profiles added on top of the background.
    #[serde(default)]
    pub profiles: Vec<CrProfile>,
}

/// `[cosmic_rays]`: presence switches the CR stage on.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CosmicRaysSection {
    /// Transport model (default `self_confined`).
    #[serde(default)]
    pub model: CrModelChoice,
    /// c_r in cm/s or `"auto"` (default).
    #[serde(default)]
    pub reduced_speed_of_light: SpeedChoice,
    /// c_r = auto_factor × max(|v_x| + c_f) at t = 0 (default 10; ≥ 1, warning below 10).
    #[serde(default = "default_auto_factor")]
    pub auto_factor: f64,
    /// κ, cm²/s: required for `fixed_kappa` and `streaming` (residual diffusion).
    #[serde(default)]
    pub kappa: Option<f64>,
    /// κ of decoupled CRs, cm²/s (streaming only; default none = no scattering).
    #[serde(default)]
    pub kappa_decoupled: Option<f64>,
    /// Momentum of the characteristic CR proton, GeV/c (default 1).
    #[serde(default = "default_one")]
    pub cr_momentum: f64,
    /// α_ν (default 3π/16).
    #[serde(default = "default_alpha")]
    pub scattering_prefactor: f64,
    /// γ_c (default 4/3).
    #[serde(default = "default_gamma_c")]
    pub adiabatic_index: f64,
    /// Wave-energy floor as a fraction of e_B (default 1e-10).
    #[serde(default = "default_wave_floor")]
    pub wave_floor: f64,
    /// `ion` (default) | `total`.
    #[serde(default)]
    pub alfven_density: AlfvenDensityChoice,
    /// `scattering` (default) | `pressure_gradient`.
    #[serde(default)]
    pub work_form: WorkFormChoice,
    /// Asymptotic-preserving HLL dissipation (default true).
    #[serde(default = "default_true")]
    pub asymptotic_preserving: bool,
    /// `minmod` | `van_leer` (default) | `mc`.
    #[serde(default)]
    pub limiter: CrLimiterChoice,
    /// Courant number of the CR subcycles, 0 < cfl ≤ 1 (default 0.5).
    #[serde(default = "default_half")]
    pub cfl: f64,
    /// `in_transport` (default) | `split`.
    #[serde(default)]
    pub coupling: CouplingChoice,
    /// CR boundary at x_min (default: follows `boundaries.left`; inflow → outflow).
    #[serde(default)]
    pub left: Option<CrBoundaryChoice>,
    /// CR boundary at x_max (default: follows `boundaries.right`).
    #[serde(default)]
    pub right: Option<CrBoundaryChoice>,
    /// Injected CR energy flux at x_min, erg/cm²/s (for `left = "injected_flux"`).
    #[serde(default)]
    pub left_flux: Option<f64>,
    /// Ghost e_c at x_min, erg/cm³ (for `left = "fixed_energy_density"`).
    #[serde(default)]
    pub left_energy_density: Option<f64>,
    /// Injected CR energy flux at x_max (into the domain, i.e. towards −x), erg/cm²/s.
    #[serde(default)]
    pub right_flux: Option<f64>,
    /// Ghost e_c at x_max, erg/cm³.
    #[serde(default)]
    pub right_energy_density: Option<f64>,
    /// Largest number of CR subcycles per MHD step (addition; default 100 000).
    #[serde(default = "default_max_subcycles")]
    pub max_subcycles: usize,
    /// `[cosmic_rays.init]` (required).
    pub init: CrInitSection,
}

fn default_auto_factor() -> f64 {
    10.0
}
fn default_one() -> f64 {
    1.0
}
fn default_alpha() -> f64 {
    DEFAULT_SCATTERING_PREFACTOR
}
fn default_gamma_c() -> f64 {
    4.0 / 3.0
}
fn default_wave_floor() -> f64 {
    1e-10
}
fn default_true() -> bool {
    true
}
fn default_half() -> f64 {
    0.5
}
fn default_max_subcycles() -> usize {
    100_000
}
fn default_energy_factor() -> f64 {
    2.0
}

/// `[damping.ion_neutral]` (defaults: the damping crate's, from memory).
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct IonNeutralSection {
    /// ⟨σv⟩_in at t_ref, cm³/s (default 8.4e-9).
    #[serde(default)]
    pub sigma_v: Option<f64>,
    /// Reference temperature, K (default 1e4).
    #[serde(default)]
    pub t_ref: Option<f64>,
    /// Temperature exponent (default 0.4).
    #[serde(default)]
    pub t_exponent: Option<f64>,
}

/// `[damping.nonlinear_landau]`.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct NllSection {
    /// C_nll (default √π/8).
    #[serde(default)]
    pub coefficient: Option<f64>,
    /// Factor on sqrt(k_B T/m_p) (default 1).
    #[serde(default)]
    pub ion_speed_factor: Option<f64>,
}

/// `[damping.turbulent]`: give `velocity` or `alfven_mach` (neither: M_A = 1).
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TurbulentSection {
    /// Outer scale, cm (default 100 pc).
    #[serde(default)]
    pub outer_scale: Option<f64>,
    /// Turbulent velocity at the outer scale, cm/s.
    #[serde(default)]
    pub velocity: Option<f64>,
    /// Alfvén Mach number at the outer scale.
    #[serde(default)]
    pub alfven_mach: Option<f64>,
    /// C_turb (default 1).
    #[serde(default)]
    pub coefficient: Option<f64>,
}

/// `[damping]`: wave damping of the self-confined model.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DampingSection {
    /// Q = energy_factor · Γ · e (default 2).
    #[serde(default = "default_energy_factor")]
    pub energy_factor: f64,
    /// Background amplitude rate Γ_0, s⁻¹ (default 0).
    #[serde(default)]
    pub constant_rate: f64,
    /// Ion–neutral damping (on when present).
    #[serde(default)]
    pub ion_neutral: Option<IonNeutralSection>,
    /// Nonlinear Landau damping (on when present).
    #[serde(default)]
    pub nonlinear_landau: Option<NllSection>,
    /// Turbulent damping (on when present).
    #[serde(default)]
    pub turbulent: Option<TurbulentSection>,
}

/// Ionisation model.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum IonisationModelChoice {
    /// Fixed ionised fraction `ion_fraction`.
    Fixed,
    /// CIE, Cen (1992) fits.
    CieCen1992,
    /// CIE, Hui & Gnedin (1997) case A.
    CieHuiGnedinA,
    /// CIE, Hui & Gnedin (1997) case B.
    CieHuiGnedinB,
}

/// `[ionisation]`.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct IonisationSection {
    /// Model.
    pub model: IonisationModelChoice,
    /// x_i = n_HII/n_H for `fixed` (0 < x_i ≤ 1).
    #[serde(default)]
    pub ion_fraction: Option<f64>,
    /// Floor of the CIE ionised fraction (default 1e-4).
    #[serde(default = "default_min_ion")]
    pub min_ion_fraction: f64,
    /// n_He/n_H by number (default 0.1).
    #[serde(default = "default_helium")]
    pub helium_per_hydrogen: f64,
}

fn default_min_ion() -> f64 {
    1e-4
}
fn default_helium() -> f64 {
    0.1
}

/// Cooling function.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CoolingFunctionChoice {
    /// Koyama & Inutsuka (2002) with heating, backward-Euler update.
    Ki02,
    /// Rosen & Bregman (1995) piecewise power law, Townsend (2009) exact update.
    HotPowerLaw,
    /// `[[cooling.table]]` piecewise power laws, Townsend (2009) exact update.
    Table,
}

/// Density prefactor of the cooling term.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum DensityPrefactorChoice {
    /// n_H² (default).
    #[default]
    NHSquared,
    /// n_e n_H.
    NENH,
}

/// `[[cooling.table]]` row.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CoolingTableRow {
    /// Lower edge, K.
    pub t_min: f64,
    /// Λ at t_min, erg cm³/s.
    pub lambda: f64,
    /// d ln Λ / d ln T on the segment.
    pub exponent: f64,
}

/// `[cooling]`.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CoolingSection {
    /// `ki02` | `hot_power_law` | `table`.
    pub function: CoolingFunctionChoice,
    /// Heating per H, erg/s (ki02 only; default 2e-26).
    #[serde(default)]
    pub heating: Option<f64>,
    /// Temperature floor, K (default 10 K; 1e4 K for hot_power_law).
    #[serde(default)]
    pub temperature_floor: Option<f64>,
    /// `n_h_squared` (default) | `n_e_n_h`.
    #[serde(default)]
    pub density_prefactor: DensityPrefactorChoice,
    /// Δt ≤ this × t_cool; 0 = off (default).
    #[serde(default)]
    pub max_cooling_fraction: f64,
    /// Rows for `function = "table"`, ascending t_min.
    #[serde(default)]
    pub table: Vec<CoolingTableRow>,
}

fn any_transverse_field(deck: &Deck) -> Option<(String, f64)> {
    if let Some(b) = &deck.init.background {
        if b.magnetic_field_y != 0.0 {
            return Some((
                "init.background.magnetic_field_y".into(),
                b.magnetic_field_y,
            ));
        }
        if b.magnetic_field_z != 0.0 {
            return Some((
                "init.background.magnetic_field_z".into(),
                b.magnetic_field_z,
            ));
        }
    }
    for (i, r) in deck.init.regions.iter().enumerate() {
        if r.magnetic_field_y != 0.0 {
            return Some((
                format!("init.regions[{i}].magnetic_field_y"),
                r.magnetic_field_y,
            ));
        }
        if r.magnetic_field_z != 0.0 {
            return Some((
                format!("init.regions[{i}].magnetic_field_z"),
                r.magnetic_field_z,
            ));
        }
    }
    for (i, p) in deck.init.profiles.iter().enumerate() {
        if matches!(
            p.field,
            ProfileField::MagneticFieldY | ProfileField::MagneticFieldZ
        ) && p.amplitude != 0.0
        {
            return Some((format!("init.profiles[{i}].amplitude"), p.amplitude));
        }
    }
    for (side, st) in [
        ("left", &deck.boundaries.left_state),
        ("right", &deck.boundaries.right_state),
    ] {
        if let Some(s) = st {
            if s.magnetic_field_y != 0.0 {
                return Some((
                    format!("boundaries.{side}_state.magnetic_field_y"),
                    s.magnetic_field_y,
                ));
            }
            if s.magnetic_field_z != 0.0 {
                return Some((
                    format!("boundaries.{side}_state.magnetic_field_z"),
                    s.magnetic_field_z,
                ));
            }
        }
    }
    if let Some(w) = &deck.init.wave {
        if !matches!(w.family, crate::deck::WaveFamily::Entropy) {
            return Some(("init.wave.family".into(), f64::NAN));
        }
    }
    None
}

/// Validates the physics sections of a deck (called by [`Deck::validate`]).
pub fn validate(deck: &Deck) -> Result<(), DeckError> {
    let needs_ideal = |key: &str| -> Result<(), DeckError> {
        if deck.isothermal() {
            Err(invalid(
                key,
                "(section present)",
                "needs an ideal gas (gas.gamma): the isothermal gas has no energy equation",
            ))
        } else {
            Ok(())
        }
    };
    if let Some(ion) = &deck.ionisation {
        match ion.model {
            IonisationModelChoice::Fixed => match ion.ion_fraction {
                None => {
                    return Err(invalid(
                        "ionisation.ion_fraction",
                        "(missing)",
                        "required by ionisation.model = \"fixed\": a number with 0 < x_i <= 1",
                    ))
                }
                Some(x) if !(x > 0.0 && x <= 1.0) => {
                    return Err(invalid(
                        "ionisation.ion_fraction",
                        x,
                        "a number with 0 < x_i <= 1",
                    ))
                }
                _ => {}
            },
            _ => {
                if let Some(x) = ion.ion_fraction {
                    return Err(invalid(
                        "ionisation.ion_fraction",
                        x,
                        "only with ionisation.model = \"fixed\" (CIE computes x_i from T)",
                    ));
                }
            }
        }
        let m = ion.min_ion_fraction;
        if !(m > 0.0 && m <= 1.0) {
            return Err(invalid(
                "ionisation.min_ion_fraction",
                m,
                "a number with 0 < x_i,min <= 1",
            ));
        }
        let y = ion.helium_per_hydrogen;
        if !(y.is_finite() && (0.0..=1.0).contains(&y)) {
            return Err(invalid(
                "ionisation.helium_per_hydrogen",
                y,
                "a number with 0 <= n_He/n_H <= 1",
            ));
        }
    }
    let mu_known = deck.gas.mean_molecular_weight.is_some() || deck.ionisation.is_some();
    if let Some(cr) = &deck.cosmic_rays {
        needs_ideal("cosmic_rays")?;
        validate_cr(deck, cr)?;
    }
    if let Some(d) = &deck.damping {
        needs_ideal("damping")?;
        match &deck.cosmic_rays {
            Some(cr) if cr.model == CrModelChoice::SelfConfined => {}
            Some(cr) => {
                return Err(invalid(
                    "cosmic_rays.model",
                    format!("\"{}\"", model_name(cr.model)),
                    "[damping] acts on the self-confinement waves: it needs cosmic_rays.model = \"self_confined\"",
                ))
            }
            None => {
                return Err(invalid(
                    "damping",
                    "(section present)",
                    "[damping] needs a [cosmic_rays] section with model = \"self_confined\"",
                ))
            }
        }
        validate_damping(d)?;
        if (d.ion_neutral.is_some() || d.nonlinear_landau.is_some()) && !mu_known {
            return Err(invalid(
                "gas.mean_molecular_weight",
                "(missing)",
                "ion-neutral and nonlinear Landau damping need the temperature: give gas.mean_molecular_weight or an [ionisation] section",
            ));
        }
        if d.ion_neutral.is_some() && deck.ionisation.is_none() {
            return Err(invalid(
                "ionisation",
                "(missing)",
                "damping.ion_neutral needs the neutral fraction: add an [ionisation] section",
            ));
        }
    }
    if let Some(c) = &deck.cooling {
        needs_ideal("cooling")?;
        if !mu_known {
            return Err(invalid(
                "gas.mean_molecular_weight",
                "(missing)",
                "[cooling] needs the temperature: give gas.mean_molecular_weight or an [ionisation] section",
            ));
        }
        validate_cooling(c)?;
    }
    Ok(())
}

pub(crate) fn model_name(m: CrModelChoice) -> &'static str {
    match m {
        CrModelChoice::SelfConfined => "self_confined",
        CrModelChoice::FixedKappa => "fixed_kappa",
        CrModelChoice::Streaming => "streaming",
    }
}

fn validate_cr(deck: &Deck, cr: &CosmicRaysSection) -> Result<(), DeckError> {
    let bx = deck.magnetic_field.x;
    if !(bx != 0.0 && bx.is_finite()) {
        return Err(invalid(
            "magnetic_field.x",
            bx,
            "a finite non-zero B_x (gauss): the CR stage transports along B = B_x x̂",
        ));
    }
    if let Some((key, v)) = any_transverse_field(deck) {
        return Err(invalid(
            key,
            v,
            "0 with [cosmic_rays]: the CR stage needs B along x (B_y = B_z = 0, no transverse MHD wave); oblique CR runs are not supported",
        ));
    }
    match cr.reduced_speed_of_light {
        SpeedChoice::Auto => {}
        SpeedChoice::Value(v) => {
            if !(v.is_finite() && v > 0.0 && v <= sluice_damping::constants::C_LIGHT) {
                return Err(invalid(
                    "cosmic_rays.reduced_speed_of_light",
                    v,
                    "\"auto\" or a speed in cm/s with 0 < c_r <= c = 2.99792458e10",
                ));
            }
        }
    }
    let f = cr.auto_factor;
    if !(f.is_finite() && f >= 1.0) {
        return Err(invalid(
            "cosmic_rays.auto_factor",
            f,
            "a finite number >= 1 (10 or more recommended)",
        ));
    }
    match cr.model {
        CrModelChoice::FixedKappa | CrModelChoice::Streaming => match cr.kappa {
            None => {
                return Err(invalid(
                    "cosmic_rays.kappa",
                    "(missing)",
                    format!(
                    "required by cosmic_rays.model = \"{}\": a diffusion coefficient in cm^2/s > 0",
                    model_name(cr.model)
                ),
                ))
            }
            Some(k) => finite_pos("cosmic_rays.kappa", k)?,
        },
        CrModelChoice::SelfConfined => {
            if let Some(k) = cr.kappa {
                return Err(invalid(
                    "cosmic_rays.kappa",
                    k,
                    "only with model = \"fixed_kappa\" or \"streaming\" (self-confinement sets κ from the waves)",
                ));
            }
        }
    }
    if let Some(k) = cr.kappa_decoupled {
        if cr.model != CrModelChoice::Streaming {
            return Err(invalid(
                "cosmic_rays.kappa_decoupled",
                k,
                "only with model = \"streaming\"",
            ));
        }
        if k.is_nan() || k <= 0.0 {
            return Err(invalid(
                "cosmic_rays.kappa_decoupled",
                k,
                "a number > 0 in cm^2/s",
            ));
        }
    }
    finite_pos("cosmic_rays.cr_momentum", cr.cr_momentum)?;
    finite_pos("cosmic_rays.scattering_prefactor", cr.scattering_prefactor)?;
    let g = cr.adiabatic_index;
    if !(g > 1.0 && g <= 2.0) {
        return Err(invalid(
            "cosmic_rays.adiabatic_index",
            g,
            "a number with 1 < γ_c <= 2",
        ));
    }
    let w = cr.wave_floor;
    if !(w > 0.0 && w < 1.0) {
        return Err(invalid(
            "cosmic_rays.wave_floor",
            w,
            "a fraction of e_B with 0 < wave_floor < 1",
        ));
    }
    let c = cr.cfl;
    if !(c > 0.0 && c <= 1.0) {
        return Err(invalid("cosmic_rays.cfl", c, "a number with 0 < cfl <= 1"));
    }
    if cr.max_subcycles == 0 {
        return Err(invalid("cosmic_rays.max_subcycles", 0, "at least 1"));
    }
    // Boundaries.
    for (side, choice, gas, flux, dens) in [
        (
            "left",
            cr.left,
            deck.boundaries.left,
            cr.left_flux,
            cr.left_energy_density,
        ),
        (
            "right",
            cr.right,
            deck.boundaries.right,
            cr.right_flux,
            cr.right_energy_density,
        ),
    ] {
        let ch = choice.unwrap_or_else(|| default_boundary(gas));
        let gp = gas == BoundaryChoice::Periodic;
        if (ch == CrBoundaryChoice::Periodic) != gp {
            return Err(invalid(
                format!("cosmic_rays.{side}"),
                format!("\"{}\"", boundary_name(ch)),
                format!(
                    "\"periodic\" exactly when boundaries.{side} is periodic (it is \"{}\")",
                    format!("{gas:?}").to_lowercase()
                ),
            ));
        }
        match (ch, flux) {
            (CrBoundaryChoice::InjectedFlux, None) => {
                return Err(invalid(
                    format!("cosmic_rays.{side}_flux"),
                    "(missing)",
                    format!("required by cosmic_rays.{side} = \"injected_flux\": a CR energy flux in erg/cm^2/s"),
                ))
            }
            (CrBoundaryChoice::InjectedFlux, Some(x)) => finite(&format!("cosmic_rays.{side}_flux"), x)?,
            (_, Some(x)) => {
                return Err(invalid(
                    format!("cosmic_rays.{side}_flux"),
                    x,
                    format!("only with cosmic_rays.{side} = \"injected_flux\""),
                ))
            }
            _ => {}
        }
        match (ch, dens) {
            (CrBoundaryChoice::FixedEnergyDensity, None) => {
                return Err(invalid(
                    format!("cosmic_rays.{side}_energy_density"),
                    "(missing)",
                    format!(
                        "required by cosmic_rays.{side} = \"fixed_energy_density\": erg/cm^3 >= 0"
                    ),
                ))
            }
            (CrBoundaryChoice::FixedEnergyDensity, Some(x)) => {
                finite_nonneg(&format!("cosmic_rays.{side}_energy_density"), x)?
            }
            (_, Some(x)) => {
                return Err(invalid(
                    format!("cosmic_rays.{side}_energy_density"),
                    x,
                    format!("only with cosmic_rays.{side} = \"fixed_energy_density\""),
                ))
            }
            _ => {}
        }
    }
    // Init.
    let init = &cr.init;
    finite_nonneg("cosmic_rays.init.energy_density", init.energy_density)?;
    finite("cosmic_rays.init.flux", init.flux)?;
    for (k, v) in [
        ("forward_wave_energy", init.forward_wave_energy),
        ("backward_wave_energy", init.backward_wave_energy),
    ] {
        if let Some(v) = v {
            if !(v.is_finite() && v >= cr.wave_floor) {
                return Err(invalid(
                    format!("cosmic_rays.init.{k}"),
                    v,
                    format!(
                        "a fraction of e_B >= cosmic_rays.wave_floor = {:e}",
                        cr.wave_floor
                    ),
                ));
            }
            if cr.model != CrModelChoice::SelfConfined {
                return Err(invalid(
                    format!("cosmic_rays.init.{k}"),
                    v,
                    "only with cosmic_rays.model = \"self_confined\" (other models evolve no waves)",
                ));
            }
        }
    }
    for (i, p) in init.profiles.iter().enumerate() {
        let key = |k: &str| format!("cosmic_rays.init.profiles[{i}].{k}");
        finite(&key("amplitude"), p.amplitude)?;
        match p.shape {
            CrProfileShape::Sine => {
                match p.wavelength {
                    Some(l) => finite_pos(&key("wavelength"), l)?,
                    None => {
                        return Err(invalid(
                            key("wavelength"),
                            "(missing)",
                            "required by shape = \"sine\": cm > 0",
                        ))
                    }
                }
                if let Some(ph) = p.phase {
                    finite(&key("phase"), ph)?;
                }
                for (k, v) in [("center", p.center), ("width", p.width)] {
                    if let Some(v) = v {
                        return Err(invalid(
                            key(k),
                            v,
                            "not used by shape = \"sine\" (give wavelength, phase)",
                        ));
                    }
                }
            }
            _ => {
                match p.center {
                    Some(c) => finite(&key("center"), c)?,
                    None => {
                        return Err(invalid(
                            key("center"),
                            "(missing)",
                            "required by this shape: cm",
                        ))
                    }
                }
                match p.width {
                    Some(w) => finite_pos(&key("width"), w)?,
                    None => {
                        return Err(invalid(
                            key("width"),
                            "(missing)",
                            "required by this shape: cm > 0",
                        ))
                    }
                }
                for (k, v) in [("wavelength", p.wavelength), ("phase", p.phase)] {
                    if let Some(v) = v {
                        return Err(invalid(key(k), v, "only with shape = \"sine\""));
                    }
                }
            }
        }
    }
    Ok(())
}

/// Default CR boundary following the gas boundary.
pub(crate) fn default_boundary(gas: BoundaryChoice) -> CrBoundaryChoice {
    match gas {
        BoundaryChoice::Periodic => CrBoundaryChoice::Periodic,
        BoundaryChoice::Reflecting => CrBoundaryChoice::Reflecting,
        BoundaryChoice::Outflow | BoundaryChoice::Inflow => CrBoundaryChoice::Outflow,
    }
}

fn boundary_name(b: CrBoundaryChoice) -> &'static str {
    match b {
        CrBoundaryChoice::Outflow => "outflow",
        CrBoundaryChoice::Reflecting => "reflecting",
        CrBoundaryChoice::Periodic => "periodic",
        CrBoundaryChoice::InjectedFlux => "injected_flux",
        CrBoundaryChoice::FixedEnergyDensity => "fixed_energy_density",
    }
}

fn validate_damping(d: &DampingSection) -> Result<(), DeckError> {
    finite_pos("damping.energy_factor", d.energy_factor)?;
    finite_nonneg("damping.constant_rate", d.constant_rate)?;
    if let Some(i) = &d.ion_neutral {
        if let Some(v) = i.sigma_v {
            finite_nonneg("damping.ion_neutral.sigma_v", v)?;
        }
        if let Some(v) = i.t_ref {
            finite_pos("damping.ion_neutral.t_ref", v)?;
        }
        if let Some(v) = i.t_exponent {
            finite("damping.ion_neutral.t_exponent", v)?;
        }
    }
    if let Some(n) = &d.nonlinear_landau {
        if let Some(v) = n.coefficient {
            finite_nonneg("damping.nonlinear_landau.coefficient", v)?;
        }
        if let Some(v) = n.ion_speed_factor {
            finite_nonneg("damping.nonlinear_landau.ion_speed_factor", v)?;
        }
    }
    if let Some(t) = &d.turbulent {
        if let Some(v) = t.outer_scale {
            finite_pos("damping.turbulent.outer_scale", v)?;
        }
        if let Some(v) = t.coefficient {
            finite_nonneg("damping.turbulent.coefficient", v)?;
        }
        match (t.velocity, t.alfven_mach) {
            (Some(_), Some(m)) => return Err(invalid(
                "damping.turbulent.alfven_mach",
                m,
                "give either damping.turbulent.velocity or damping.turbulent.alfven_mach, not both",
            )),
            (Some(v), None) => finite_nonneg("damping.turbulent.velocity", v)?,
            (None, Some(m)) => finite_nonneg("damping.turbulent.alfven_mach", m)?,
            (None, None) => {}
        }
    }
    Ok(())
}

fn validate_cooling(c: &CoolingSection) -> Result<(), DeckError> {
    if let Some(h) = c.heating {
        if c.function != CoolingFunctionChoice::Ki02 {
            return Err(invalid(
                "cooling.heating",
                h,
                "only with cooling.function = \"ki02\"",
            ));
        }
        finite_nonneg("cooling.heating", h)?;
    }
    if let Some(t) = c.temperature_floor {
        finite_pos("cooling.temperature_floor", t)?;
    }
    finite_nonneg("cooling.max_cooling_fraction", c.max_cooling_fraction)?;
    match c.function {
        CoolingFunctionChoice::Table => {
            if c.table.is_empty() {
                return Err(invalid(
                    "cooling.table",
                    "(missing)",
                    "required by cooling.function = \"table\": [[cooling.table]] rows with t_min, lambda, exponent",
                ));
            }
            let mut prev = 0.0;
            for (i, r) in c.table.iter().enumerate() {
                if !(r.t_min.is_finite() && r.t_min > prev) {
                    return Err(invalid(
                        format!("cooling.table[{i}].t_min"),
                        r.t_min,
                        "finite temperatures > 0 in strictly ascending order (K)",
                    ));
                }
                prev = r.t_min;
                finite_pos(&format!("cooling.table[{i}].lambda"), r.lambda)?;
                finite(&format!("cooling.table[{i}].exponent"), r.exponent)?;
            }
        }
        _ => {
            if !c.table.is_empty() {
                return Err(invalid(
                    "cooling.table",
                    "(rows given)",
                    "only with cooling.function = \"table\"",
                ));
            }
        }
    }
    Ok(())
}
