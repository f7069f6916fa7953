//! The run deck: a strict TOML schema of Sluice's own, `--set` overrides and range validation.
//!
//! Parsing happens in three passes, each of which reports the full key path on failure:
//!
//! 1. TOML syntax → a [`toml::Table`];
//! 2. `--set key.path=value` overrides are written into that table ([`apply_override`]);
//! 3. the table is deserialised into [`Deck`] (unknown keys and wrong types are errors,
//!    paths tracked with `serde_path_to_error`), then [`Deck::validate`] checks every range.
//!
//! All physical inputs are cgs: lengths cm, times s, densities g/cm³, pressures erg/cm³,
//! velocities cm/s, magnetic fields gauss. The full key reference is `docs/deck.md`.

use serde::Deserialize;
use std::fmt::Write as _;

/// Errors of deck reading, overriding and validation. Every variant names the key.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum DeckError {
    /// The deck file could not be read.
    #[error("cannot read deck `{path}`: {message}")]
    Io {
        /// File path.
        path: String,
        /// OS error text.
        message: String,
    },
    /// The text is not valid TOML.
    #[error("deck is not valid TOML: {0}")]
    Syntax(String),
    /// Unknown key, missing key or wrong type.
    #[error("deck key `{key}`: {message}")]
    Schema {
        /// Full key path, e.g. `init.regions[1].density`.
        key: String,
        /// What went wrong (from the deserialiser).
        message: String,
    },
    /// A value outside its allowed range.
    #[error("deck key `{key}` = {value}: {allowed}")]
    Invalid {
        /// Full key path.
        key: String,
        /// The offending value, printed.
        value: String,
        /// What is allowed.
        allowed: String,
    },
    /// A malformed or impossible `--set` override.
    #[error("--set `{arg}`: {message}")]
    Override {
        /// The override as given.
        arg: String,
        /// What went wrong.
        message: String,
    },
}

impl DeckError {
    fn invalid(
        key: impl Into<String>,
        value: impl std::fmt::Display,
        allowed: impl Into<String>,
    ) -> Self {
        DeckError::Invalid {
            key: key.into(),
            value: value.to_string(),
            allowed: allowed.into(),
        }
    }

    /// The key path the error is about, when there is one.
    pub fn key(&self) -> Option<&str> {
        match self {
            DeckError::Schema { key, .. } | DeckError::Invalid { key, .. } => Some(key),
            _ => None,
        }
    }
}

/// A complete, validated run description.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Deck {
    /// `[run]`: duration, outputs, name.
    pub run: RunSection,
    /// `[units]`: code-unit scales (optional; default cgs).
    #[serde(default)]
    pub units: UnitsSection,
    /// `[grid]`: cells and extent.
    pub grid: GridSection,
    /// `[gas]`: equation of state and floors.
    pub gas: GasSection,
    /// `[mhd]`: numerical method (optional; defaults below).
    #[serde(default)]
    pub mhd: MhdSection,
    /// `[magnetic_field]`: the constant normal field (optional; default 0).
    #[serde(default)]
    pub magnetic_field: MagneticFieldSection,
    /// `[boundaries]`: one condition per side.
    pub boundaries: BoundariesSection,
    /// `[init]`: initial conditions.
    pub init: InitSection,
    /// `[cosmic_rays]`: the cosmic-ray stage (see [`crate::physics::sections`]).
    #[serde(default)]
    pub cosmic_rays: Option<crate::physics::sections::CosmicRaysSection>,
    /// `[damping]`: wave damping of the self-confined CR model.
    #[serde(default)]
    pub damping: Option<crate::physics::sections::DampingSection>,
    /// `[ionisation]`: ionised fraction for damping, the ion Alfvén speed and μ.
    #[serde(default)]
    pub ionisation: Option<crate::physics::sections::IonisationSection>,
    /// `[cooling]`: radiative cooling stage.
    #[serde(default)]
    pub cooling: Option<crate::physics::sections::CoolingSection>,
    /// `[slab]` or `[[slab]]`: dense slabs over `[init.background]` (see [`crate::slab`]).
    #[serde(default)]
    pub slab: Option<crate::slab::SlabSpec>,
}

/// `[run]`.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RunSection {
    /// Run name, used for snapshot file names `<name>_NNNN.h5`. Letters, digits, `-`, `_`, `.`.
    pub name: String,
    /// End time, s (> 0).
    pub t_end: f64,
    /// Time between snapshots, s. Outputs at 0, Δ, 2Δ, … and always at `t_end`.
    #[serde(default)]
    pub output_interval: Option<f64>,
    /// Explicit snapshot times, s, strictly increasing in (0, t_end]. Excludes `output_interval`.
    #[serde(default)]
    pub output_times: Option<Vec<f64>>,
    /// Output folder (default `out/<deck file stem>`; `--out` wins).
    #[serde(default)]
    pub output_dir: Option<String>,
    /// Safety limit on the number of steps (default 10 000 000).
    #[serde(default = "default_max_steps")]
    pub max_steps: u64,
}

fn default_max_steps() -> u64 {
    10_000_000
}

/// `[units]`: code units. Every scale is the cgs value of one code unit.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UnitsSection {
    /// Code length unit, cm.
    #[serde(default = "one")]
    pub length: f64,
    /// Code density unit, g/cm³.
    #[serde(default = "one")]
    pub density: f64,
    /// Code velocity unit, cm/s.
    #[serde(default = "one")]
    pub velocity: f64,
}

fn one() -> f64 {
    1.0
}

impl Default for UnitsSection {
    fn default() -> Self {
        Self {
            length: 1.0,
            density: 1.0,
            velocity: 1.0,
        }
    }
}

/// `[grid]`.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GridSection {
    /// Number of cells (1 ..= 100 000 000).
    pub cells: u64,
    /// Left edge, cm.
    pub x_min: f64,
    /// Right edge, cm (> x_min).
    pub x_max: f64,
}

/// `[gas]`: exactly one of `gamma` and `isothermal_sound_speed`.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GasSection {
    /// Adiabatic index γ (> 1) of an ideal gas.
    #[serde(default)]
    pub gamma: Option<f64>,
    /// Isothermal sound speed, cm/s (> 0); selects the isothermal equation of state.
    #[serde(default)]
    pub isothermal_sound_speed: Option<f64>,
    /// Mean molecular weight μ in atomic mass units (> 0); enables the temperature output.
    #[serde(default)]
    pub mean_molecular_weight: Option<f64>,
    /// Density floor, g/cm³ (> 0, below every initial density). Default: 1e-10 × the smallest
    /// density of the background, regions and inflow states. Every application is counted.
    #[serde(default)]
    pub density_floor: Option<f64>,
    /// Pressure floor, erg/cm³ (> 0, below every initial pressure). Default: 1e-10 × the
    /// smallest pressure of those states (c_s² ρ for an isothermal gas). Every application is
    /// counted.
    #[serde(default)]
    pub pressure_floor: Option<f64>,
}

/// Default floors are this fraction of the smallest initial value (common practice).
pub const DEFAULT_FLOOR_FRACTION: f64 = 1e-10;

/// Riemann solver choice.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum RiemannChoice {
    /// HLLE (Einfeldt 1988).
    Hlle,
    /// HLLD (Miyoshi & Kusano 2005), default.
    #[default]
    Hlld,
}

/// Reconstruction choice.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum ReconstructionChoice {
    /// Piecewise constant.
    First,
    /// Piecewise linear in primitive variables (default).
    #[default]
    Plm,
    /// Piecewise linear in characteristic variables.
    PlmCharacteristic,
}

/// Slope limiter choice.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum LimiterChoice {
    /// minmod.
    Minmod,
    /// van Leer.
    VanLeer,
    /// Monotonized central (default).
    #[default]
    Mc,
}

/// Time integrator choice.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum IntegratorChoice {
    /// SSP-RK2 (default).
    #[default]
    Rk2,
    /// SSP-RK3.
    Rk3,
}

/// `[mhd]`: numerics of the MHD step.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MhdSection {
    /// `hlle` | `hlld` (default `hlld`).
    #[serde(default)]
    pub riemann: RiemannChoice,
    /// `first` | `plm` | `plm_characteristic` (default `plm`).
    #[serde(default)]
    pub reconstruction: ReconstructionChoice,
    /// `minmod` | `van_leer` | `mc` (default `mc`); unused with `first`.
    #[serde(default)]
    pub limiter: LimiterChoice,
    /// `rk2` | `rk3` (default `rk2`).
    #[serde(default)]
    pub integrator: IntegratorChoice,
    /// Courant number, 0 < cfl < 1 (default 0.8).
    #[serde(default = "default_cfl")]
    pub cfl: f64,
}

fn default_cfl() -> f64 {
    0.8
}

impl Default for MhdSection {
    fn default() -> Self {
        Self {
            riemann: RiemannChoice::default(),
            reconstruction: ReconstructionChoice::default(),
            limiter: LimiterChoice::default(),
            integrator: IntegratorChoice::default(),
            cfl: default_cfl(),
        }
    }
}

/// `[magnetic_field]`.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct MagneticFieldSection {
    /// Constant normal field B_x, gauss (default 0).
    #[serde(default)]
    pub x: f64,
}

/// Boundary kind of one side.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum BoundaryChoice {
    /// Periodic (both sides).
    Periodic,
    /// Zero-gradient outflow.
    Outflow,
    /// Reflecting wall.
    Reflecting,
    /// Ghost cells held at `left_state` / `right_state`.
    Inflow,
}

/// `[boundaries]`.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BoundariesSection {
    /// Condition at x_min.
    pub left: BoundaryChoice,
    /// Condition at x_max.
    pub right: BoundaryChoice,
    /// Ghost state at x_min, required exactly when `left = "inflow"`.
    #[serde(default)]
    pub left_state: Option<GasState>,
    /// Ghost state at x_max, required exactly when `right = "inflow"`.
    #[serde(default)]
    pub right_state: Option<GasState>,
}

/// A gas state in cgs. Unset velocities and transverse fields are 0. `pressure` is required
/// for an ideal gas and must be absent for an isothermal one.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GasState {
    /// Density, g/cm³ (> 0).
    pub density: f64,
    /// Gas pressure, erg/cm³ (> 0).
    #[serde(default)]
    pub pressure: Option<f64>,
    /// Velocity x, cm/s.
    #[serde(default)]
    pub velocity_x: f64,
    /// Velocity y, cm/s.
    #[serde(default)]
    pub velocity_y: f64,
    /// Velocity z, cm/s.
    #[serde(default)]
    pub velocity_z: f64,
    /// Transverse field B_y, gauss.
    #[serde(default)]
    pub magnetic_field_y: f64,
    /// Transverse field B_z, gauss.
    #[serde(default)]
    pub magnetic_field_z: f64,
}

/// One piecewise-constant region `[x_min, x_max)` (cm) of the initial state; the state keys
/// are those of [`GasState`].
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Region {
    /// Left edge, cm.
    pub x_min: f64,
    /// Right edge, cm (> x_min).
    pub x_max: f64,
    /// Density, g/cm³ (> 0).
    pub density: f64,
    /// Gas pressure, erg/cm³ (> 0; absent for an isothermal gas).
    #[serde(default)]
    pub pressure: Option<f64>,
    /// Velocity x, cm/s.
    #[serde(default)]
    pub velocity_x: f64,
    /// Velocity y, cm/s.
    #[serde(default)]
    pub velocity_y: f64,
    /// Velocity z, cm/s.
    #[serde(default)]
    pub velocity_z: f64,
    /// Transverse field B_y, gauss.
    #[serde(default)]
    pub magnetic_field_y: f64,
    /// Transverse field B_z, gauss.
    #[serde(default)]
    pub magnetic_field_z: f64,
}

impl Region {
    /// The region's gas state.
    pub fn state(&self) -> GasState {
        GasState {
            density: self.density,
            pressure: self.pressure,
            velocity_x: self.velocity_x,
            velocity_y: self.velocity_y,
            velocity_z: self.velocity_z,
            magnetic_field_y: self.magnetic_field_y,
            magnetic_field_z: self.magnetic_field_z,
        }
    }
}

/// MHD wave family of the linear-wave generator.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum WaveFamily {
    /// Fast magnetosonic.
    Fast,
    /// Alfvén.
    Alfven,
    /// Slow magnetosonic.
    Slow,
    /// Entropy (contact).
    Entropy,
}

/// Propagation direction of the linear wave.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum WaveDirection {
    /// Towards +x (default).
    #[default]
    Right,
    /// Towards −x.
    Left,
}

/// `[init.wave]`: a linear MHD eigenmode on the uniform `init.background`.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct WaveSection {
    /// Wave family.
    pub family: WaveFamily,
    /// Dimensionless amplitude ε: δU = ε R cos(kx), R the right eigenvector normalised
    /// to the background (0 < ε ≤ 0.1).
    pub amplitude: f64,
    /// Whole wavelengths in the box (≥ 1).
    #[serde(default = "one_u32")]
    pub wavelengths: u32,
    /// Propagation direction.
    #[serde(default)]
    pub direction: WaveDirection,
}

fn one_u32() -> u32 {
    1
}

/// Shape of a smooth profile.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ProfileShape {
    /// amplitude · exp(−(x − center)² / (2 width²)).
    Gaussian,
    /// amplitude · ½ [1 + tanh((x − center) / width)].
    TanhStep,
    /// amplitude · sin(2π x / wavelength + phase).
    Sine,
}

/// Field a profile is added to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ProfileField {
    /// Density, g/cm³.
    Density,
    /// Pressure, erg/cm³.
    Pressure,
    /// Velocity x, cm/s.
    VelocityX,
    /// Velocity y, cm/s.
    VelocityY,
    /// Velocity z, cm/s.
    VelocityZ,
    /// B_y, gauss.
    MagneticFieldY,
    /// B_z, gauss.
    MagneticFieldZ,
}

/// `[[init.profiles]]`: a smooth profile added to one primitive field, sampled at cell centres.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Profile {
    /// Shape.
    pub shape: ProfileShape,
    /// Field it is added to.
    pub field: ProfileField,
    /// Amplitude in the field's cgs unit.
    pub amplitude: f64,
    /// Centre, cm (gaussian, tanh_step).
    #[serde(default)]
    pub center: Option<f64>,
    /// Width, cm (gaussian σ; tanh_step scale), > 0.
    #[serde(default)]
    pub width: Option<f64>,
    /// Wavelength, cm (sine), > 0.
    #[serde(default)]
    pub wavelength: Option<f64>,
    /// Phase, rad (sine; default 0).
    #[serde(default)]
    pub phase: Option<f64>,
}

impl Profile {
    /// Profile value at `x` cm, in the field's cgs unit (validated profile).
    pub fn value(&self, x: f64) -> f64 {
        let kind = match self.shape {
            ProfileShape::Gaussian => ShapeKind::Gaussian,
            ProfileShape::TanhStep => ShapeKind::TanhStep,
            ProfileShape::Sine => ShapeKind::Sine,
        };
        shape_value(
            kind,
            self.amplitude,
            [self.center, self.width, self.wavelength, self.phase],
            x,
        )
    }
}

/// Profile shapes known to any deck profile (gas `[[init.profiles]]` and
/// `[[cosmic_rays.init.profiles]]`); each deck enum maps onto the ones it allows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum ShapeKind {
    /// amplitude · exp(−(x − center)² / (2 width²)).
    Gaussian,
    /// amplitude for |x − center| < width, else 0.
    TopHat,
    /// amplitude · ½ [1 + tanh((x − center) / width)].
    TanhStep,
    /// amplitude · sin(2π x / wavelength + phase).
    Sine,
}

/// Value at `x` cm of a profile of shape `kind`; `geometry` is
/// `[center, width, wavelength, phase]` (cm, cm, cm, rad) as given in the deck, already
/// validated (absent entries fall back to 0, 1, 1, 0).
pub(crate) fn shape_value(
    kind: ShapeKind,
    amplitude: f64,
    geometry: [Option<f64>; 4],
    x: f64,
) -> f64 {
    let [center, width, wavelength, phase] = geometry;
    let c = center.unwrap_or(0.0);
    let w = width.unwrap_or(1.0);
    match kind {
        ShapeKind::Gaussian => amplitude * (-(x - c) * (x - c) / (2.0 * w * w)).exp(),
        ShapeKind::TopHat => {
            if (x - c).abs() < w {
                amplitude
            } else {
                0.0
            }
        }
        ShapeKind::TanhStep => amplitude * 0.5 * (1.0 + ((x - c) / w).tanh()),
        ShapeKind::Sine => {
            let l = wavelength.unwrap_or(1.0);
            amplitude * (2.0 * std::f64::consts::PI * x / l + phase.unwrap_or(0.0)).sin()
        }
    }
}

/// `[init]`: background, then regions (later wins), then the wave, then profiles.
#[derive(Debug, Clone, PartialEq, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct InitSection {
    /// State everywhere not covered by a region.
    #[serde(default)]
    pub background: Option<GasState>,
    /// Piecewise-constant regions.
    #[serde(default)]
    pub regions: Vec<Region>,
    /// Linear MHD wave on the background.
    #[serde(default)]
    pub wave: Option<WaveSection>,
    /// Smooth profiles added on top.
    #[serde(default)]
    pub profiles: Vec<Profile>,
}

/// Parses deck text, applies `--set` overrides (`key.path=value`) and validates.
pub fn parse_deck(text: &str, overrides: &[String]) -> Result<Deck, DeckError> {
    let mut table: toml::Table = text
        .parse()
        .map_err(|e: toml::de::Error| DeckError::Syntax(syntax_message(text, &e)))?;
    for arg in overrides {
        apply_override(&mut table, arg)?;
    }
    let deck: Deck = serde_path_to_error::deserialize(table).map_err(|e| {
        let key = e.path().to_string();
        let message = e.into_inner().to_string();
        // The TOML deserialiser appends "in `table`" lines; the path already says where.
        let message = message
            .lines()
            .next()
            .unwrap_or_default()
            .trim()
            .to_string();
        // A missing key is reported at its parent; name the key itself.
        let key = match message
            .strip_prefix("missing field `")
            .and_then(|m| m.split('`').next())
        {
            Some(field) if key == "." => field.to_string(),
            Some(field) => format!("{key}.{field}"),
            None if key == "." => "(top level)".to_string(),
            None => key,
        };
        DeckError::Schema { key, message }
    })?;
    deck.validate()?;
    Ok(deck)
}

/// Reads and parses a deck file. Returns the deck and the exact text read.
pub fn read_deck(
    path: &std::path::Path,
    overrides: &[String],
) -> Result<(Deck, String), DeckError> {
    let text = std::fs::read_to_string(path).map_err(|e| DeckError::Io {
        path: path.display().to_string(),
        message: e.to_string(),
    })?;
    let deck = parse_deck(&text, overrides)?;
    Ok((deck, text))
}

/// One-line description of a TOML syntax error with its line and column.
fn syntax_message(text: &str, e: &toml::de::Error) -> String {
    let msg = e
        .message()
        .lines()
        .next()
        .unwrap_or("syntax error")
        .trim()
        .to_string();
    match e.span() {
        Some(span) => {
            let upto = &text[..span.start.min(text.len())];
            let line = upto.matches('\n').count() + 1;
            let col = upto.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
            format!("line {line}, column {col}: {msg}")
        }
        None => msg,
    }
}

#[derive(Debug, Clone, PartialEq)]
enum PathSeg {
    Key(String),
    Index(usize),
}

fn parse_key_path(path: &str) -> Option<Vec<PathSeg>> {
    let mut segs = Vec::new();
    for part in path.split('.') {
        let (name, mut rest) = match part.find('[') {
            Some(i) => (&part[..i], &part[i..]),
            None => (part, ""),
        };
        if name.is_empty()
            || !name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
        {
            return None;
        }
        segs.push(PathSeg::Key(name.to_string()));
        while !rest.is_empty() {
            let close = rest.find(']')?;
            if !rest.starts_with('[') {
                return None;
            }
            let idx: usize = rest[1..close].parse().ok()?;
            segs.push(PathSeg::Index(idx));
            rest = &rest[close + 1..];
        }
    }
    Some(segs)
}

fn parse_override_value(raw: &str) -> toml::Value {
    let doc = format!("v = {raw}");
    match doc.parse::<toml::Table>() {
        Ok(mut t) => t
            .remove("v")
            .unwrap_or_else(|| toml::Value::String(raw.to_string())),
        Err(_) => toml::Value::String(raw.to_string()),
    }
}

/// Applies one `key.path=value` override to a TOML table. The value is parsed as a TOML value
/// (`0.4`, `"hlle"`, `[0.1, 0.2]`, `true`), falling back to a plain string (`hlle`). Missing
/// tables on the path are created; whether the final key exists in the schema is checked when
/// the table is deserialised, so a misspelt key fails there with its full path.
pub fn apply_override(table: &mut toml::Table, arg: &str) -> Result<(), DeckError> {
    let err = |message: String| DeckError::Override {
        arg: arg.to_string(),
        message,
    };
    let (path, raw) = arg
        .split_once('=')
        .ok_or_else(|| err("expected key.path=value".into()))?;
    let path = path.trim();
    let segs = parse_key_path(path).ok_or_else(|| {
        err(format!(
            "`{path}` is not a key path like `gas.gamma` or `init.regions[1].density`"
        ))
    })?;
    let value = parse_override_value(raw.trim());

    let mut root = toml::Value::Table(std::mem::take(table));
    let result = set_path(&mut root, &segs, value).map_err(err);
    if let toml::Value::Table(t) = root {
        *table = t;
    }
    result
}

fn set_path(root: &mut toml::Value, segs: &[PathSeg], value: toml::Value) -> Result<(), String> {
    let mut here = String::new();
    let mut cur = root;
    for (i, seg) in segs.iter().enumerate() {
        let last = i + 1 == segs.len();
        match seg {
            PathSeg::Key(k) => {
                let t = match cur {
                    toml::Value::Table(t) => t,
                    other => {
                        return Err(format!(
                            "`{here}` is a {}, not a table, so it has no key `{k}`",
                            other.type_str()
                        ))
                    }
                };
                if !here.is_empty() {
                    here.push('.');
                }
                here.push_str(k);
                if last {
                    t.insert(k.clone(), value);
                    return Ok(());
                }
                if !t.contains_key(k) {
                    if matches!(segs[i + 1], PathSeg::Index(_)) {
                        return Err(format!(
                            "`{here}` is not in the deck, so it cannot be indexed"
                        ));
                    }
                    t.insert(k.clone(), toml::Value::Table(toml::Table::new()));
                }
                cur = t.get_mut(k).ok_or_else(|| format!("`{here}` vanished"))?;
            }
            PathSeg::Index(idx) => {
                let a = match cur {
                    toml::Value::Array(a) => a,
                    other => {
                        return Err(format!("`{here}` is a {}, not an array", other.type_str()))
                    }
                };
                let len = a.len();
                let _ = write!(here, "[{idx}]");
                if *idx >= len {
                    return Err(format!(
                        "index {idx} is out of range: `{}` has {len} entries",
                        here.rsplit_once('[').map_or("", |x| x.0)
                    ));
                }
                if last {
                    a[*idx] = value;
                    return Ok(());
                }
                cur = &mut a[*idx];
            }
        }
    }
    Ok(())
}

fn finite_pos(key: &str, v: f64) -> Result<(), DeckError> {
    if v.is_finite() && v > 0.0 {
        Ok(())
    } else {
        Err(DeckError::invalid(key, v, "a finite number > 0"))
    }
}

fn finite(key: &str, v: f64) -> Result<(), DeckError> {
    if v.is_finite() {
        Ok(())
    } else {
        Err(DeckError::invalid(key, v, "a finite number"))
    }
}

impl Deck {
    /// Whether the gas is isothermal.
    pub fn isothermal(&self) -> bool {
        self.gas.isothermal_sound_speed.is_some()
    }

    /// Range and consistency checks; the error names the full key, the value and what is allowed.
    pub fn validate(&self) -> Result<(), DeckError> {
        // [run]
        let r = &self.run;
        if r.name.is_empty()
            || !r
                .name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | '.'))
        {
            return Err(DeckError::invalid(
                "run.name",
                format!("{:?}", r.name),
                "a non-empty name of letters, digits, `-`, `_` and `.`",
            ));
        }
        finite_pos("run.t_end", r.t_end)?;
        match (&r.output_interval, &r.output_times) {
            (Some(_), Some(_)) => {
                return Err(DeckError::invalid(
                    "run.output_times",
                    "(set)",
                    "give either run.output_interval or run.output_times, not both",
                ));
            }
            (Some(dt), None) => {
                finite_pos("run.output_interval", *dt)?;
                if r.t_end / dt > 1e6 {
                    return Err(DeckError::invalid(
                        "run.output_interval",
                        dt,
                        "at most 1 000 000 outputs per run (t_end / output_interval ≤ 1e6)",
                    ));
                }
            }
            (None, Some(ts)) => {
                let mut prev = 0.0;
                for (i, &t) in ts.iter().enumerate() {
                    if !(t.is_finite() && t > prev && t <= r.t_end) {
                        return Err(DeckError::invalid(
                            format!("run.output_times[{i}]"),
                            t,
                            format!("strictly increasing times in (0, t_end = {}] s", r.t_end),
                        ));
                    }
                    prev = t;
                }
            }
            (None, None) => {}
        }
        if r.max_steps == 0 {
            return Err(DeckError::invalid("run.max_steps", 0, "at least 1"));
        }
        // [units]
        finite_pos("units.length", self.units.length)?;
        finite_pos("units.density", self.units.density)?;
        finite_pos("units.velocity", self.units.velocity)?;
        // [grid]
        let g = &self.grid;
        if !(1..=100_000_000).contains(&g.cells) {
            return Err(DeckError::invalid(
                "grid.cells",
                g.cells,
                "an integer from 1 to 100 000 000",
            ));
        }
        finite("grid.x_min", g.x_min)?;
        finite("grid.x_max", g.x_max)?;
        if g.x_max <= g.x_min {
            return Err(DeckError::invalid(
                "grid.x_max",
                g.x_max,
                format!("greater than grid.x_min = {}", g.x_min),
            ));
        }
        // [gas]
        let gas = &self.gas;
        match (gas.gamma, gas.isothermal_sound_speed) {
            (Some(_), Some(_)) => {
                return Err(DeckError::invalid(
                    "gas.isothermal_sound_speed",
                    "(set)",
                    "give either gas.gamma (ideal gas) or gas.isothermal_sound_speed, not both",
                ));
            }
            (None, None) => {
                return Err(DeckError::invalid("gas.gamma", "(missing)", "gas.gamma (ideal gas, > 1) or gas.isothermal_sound_speed (cm/s, > 0) is required"));
            }
            (Some(gm), None) => {
                if !(gm.is_finite() && gm > 1.0) {
                    return Err(DeckError::invalid("gas.gamma", gm, "a finite number > 1"));
                }
            }
            (None, Some(cs)) => finite_pos("gas.isothermal_sound_speed", cs)?,
        }
        if let Some(mu) = gas.mean_molecular_weight {
            finite_pos("gas.mean_molecular_weight", mu)?;
        }
        if let Some(f) = gas.density_floor {
            finite_pos("gas.density_floor", f)?;
        }
        if let Some(f) = gas.pressure_floor {
            finite_pos("gas.pressure_floor", f)?;
        }
        // [mhd]
        let c = self.mhd.cfl;
        if !(c.is_finite() && c > 0.0 && c < 1.0) {
            return Err(DeckError::invalid(
                "mhd.cfl",
                c,
                "a number with 0 < cfl < 1",
            ));
        }
        // [magnetic_field]
        finite("magnetic_field.x", self.magnetic_field.x)?;
        // [boundaries]
        let b = &self.boundaries;
        let lp = b.left == BoundaryChoice::Periodic;
        let rp = b.right == BoundaryChoice::Periodic;
        if lp != rp {
            let key = if lp {
                "boundaries.right"
            } else {
                "boundaries.left"
            };
            let val = if lp { b.right } else { b.left };
            return Err(DeckError::invalid(
                key,
                format!("{val:?}").to_lowercase(),
                "\"periodic\" on both sides or on neither",
            ));
        }
        for (side, kind, st) in [
            ("left", b.left, &b.left_state),
            ("right", b.right, &b.right_state),
        ] {
            match (kind, st) {
                (BoundaryChoice::Inflow, None) => {
                    return Err(DeckError::invalid(
                        format!("boundaries.{side}_state"),
                        "(missing)",
                        format!("a gas state table, required by boundaries.{side} = \"inflow\""),
                    ));
                }
                (BoundaryChoice::Inflow, Some(s)) => {
                    self.validate_state(&format!("boundaries.{side}_state"), s)?
                }
                (_, Some(_)) => {
                    return Err(DeckError::invalid(
                        format!("boundaries.{side}_state"),
                        "(set)",
                        format!("only allowed with boundaries.{side} = \"inflow\""),
                    ));
                }
                _ => {}
            }
        }
        // [init]
        let init = &self.init;
        if let Some(bg) = &init.background {
            self.validate_state("init.background", bg)?;
        }
        for (i, reg) in init.regions.iter().enumerate() {
            let k = format!("init.regions[{i}]");
            finite(&format!("{k}.x_min"), reg.x_min)?;
            finite(&format!("{k}.x_max"), reg.x_max)?;
            if reg.x_max <= reg.x_min {
                return Err(DeckError::invalid(
                    format!("{k}.x_max"),
                    reg.x_max,
                    format!("greater than {k}.x_min = {}", reg.x_min),
                ));
            }
            self.validate_state(&k, &reg.state())?;
        }
        if init.background.is_none() {
            if init.regions.is_empty() {
                return Err(DeckError::invalid(
                    "init.background",
                    "(missing)",
                    "an [init.background] state or at least one [[init.regions]] entry",
                ));
            }
            // Every cell centre must be covered by some region.
            let dx = (g.x_max - g.x_min) / g.cells as f64;
            for j in 0..g.cells {
                let x = g.x_min + (j as f64 + 0.5) * dx;
                if !init.regions.iter().any(|r| x >= r.x_min && x < r.x_max) {
                    return Err(DeckError::invalid(
                        "init.regions",
                        format!("no region covers the cell centred at x = {x} cm"),
                        "regions that cover the whole grid, or an [init.background] state",
                    ));
                }
            }
        }
        if let Some(w) = &init.wave {
            if init.background.is_none() {
                return Err(DeckError::invalid(
                    "init.background",
                    "(missing)",
                    "a uniform background state, required by [init.wave]",
                ));
            }
            if !init.regions.is_empty() {
                return Err(DeckError::invalid(
                    "init.regions",
                    format!("{} regions", init.regions.len()),
                    "none: [init.wave] needs a uniform background",
                ));
            }
            if !(w.amplitude.is_finite() && w.amplitude > 0.0 && w.amplitude <= 0.1) {
                return Err(DeckError::invalid(
                    "init.wave.amplitude",
                    w.amplitude,
                    "a linear amplitude with 0 < amplitude ≤ 0.1",
                ));
            }
            if w.wavelengths == 0 || w.wavelengths as u64 * 4 > g.cells {
                return Err(DeckError::invalid(
                    "init.wave.wavelengths",
                    w.wavelengths,
                    format!("an integer from 1 to grid.cells / 4 = {}", g.cells / 4),
                ));
            }
            if !lp {
                return Err(DeckError::invalid(
                    "boundaries.left",
                    format!("{:?}", b.left).to_lowercase(),
                    "\"periodic\" (both sides), required by [init.wave]",
                ));
            }
        }
        for (i, p) in init.profiles.iter().enumerate() {
            let k = format!("init.profiles[{i}]");
            finite(&format!("{k}.amplitude"), p.amplitude)?;
            let (need, forbid): (&[&str], &[&str]) = match p.shape {
                ProfileShape::Gaussian | ProfileShape::TanhStep => {
                    (&["center", "width"], &["wavelength", "phase"])
                }
                ProfileShape::Sine => (&["wavelength"], &["center", "width"]),
            };
            let get = |name: &str| match name {
                "center" => p.center,
                "width" => p.width,
                "wavelength" => p.wavelength,
                "phase" => p.phase,
                _ => None,
            };
            let shape = format!("{:?}", p.shape);
            for n in need {
                if get(n).is_none() {
                    return Err(DeckError::invalid(
                        format!("{k}.{n}"),
                        "(missing)",
                        format!("required by shape {}", snake(&shape)),
                    ));
                }
            }
            for n in forbid {
                if get(n).is_some() {
                    return Err(DeckError::invalid(
                        format!("{k}.{n}"),
                        "(set)",
                        format!("not used by shape {}; remove it", snake(&shape)),
                    ));
                }
            }
            if let Some(c) = p.center {
                finite(&format!("{k}.center"), c)?;
            }
            if let Some(wd) = p.width {
                finite_pos(&format!("{k}.width"), wd)?;
            }
            if let Some(l) = p.wavelength {
                finite_pos(&format!("{k}.wavelength"), l)?;
            }
            if let Some(ph) = p.phase {
                finite(&format!("{k}.phase"), ph)?;
            }
            if p.field == ProfileField::Pressure && self.isothermal() {
                return Err(DeckError::invalid(
                    format!("{k}.field"),
                    "\"pressure\"",
                    "a field other than pressure: the gas is isothermal (p = c_s² ρ)",
                ));
            }
        }
        let (rho_min, p_min) = self.smallest_initial();
        if let Some(f) = gas.density_floor {
            if f >= rho_min {
                return Err(DeckError::invalid(
                    "gas.density_floor",
                    f,
                    format!("a floor below the smallest initial density ({rho_min:e} g/cm³)"),
                ));
            }
        }
        if let Some(f) = gas.pressure_floor {
            if f >= p_min {
                return Err(DeckError::invalid(
                    "gas.pressure_floor",
                    f,
                    format!("a floor below the smallest initial pressure ({p_min:e} erg/cm³)"),
                ));
            }
        }
        crate::physics::sections::validate(self)?;
        crate::slab::validate(self)?;
        Ok(())
    }

    fn validate_state(&self, key: &str, s: &GasState) -> Result<(), DeckError> {
        finite_pos(&format!("{key}.density"), s.density)?;
        match (self.isothermal(), s.pressure) {
            (false, None) => {
                return Err(DeckError::invalid(
                    format!("{key}.pressure"),
                    "(missing)",
                    "a gas pressure in erg/cm³ (> 0), required for an ideal gas",
                ))
            }
            (false, Some(p)) => finite_pos(&format!("{key}.pressure"), p)?,
            (true, Some(_)) => {
                return Err(DeckError::invalid(
                    format!("{key}.pressure"),
                    "(set)",
                    "no pressure for an isothermal gas (p = c_s² ρ); remove it",
                ));
            }
            (true, None) => {}
        }
        finite(&format!("{key}.velocity_x"), s.velocity_x)?;
        finite(&format!("{key}.velocity_y"), s.velocity_y)?;
        finite(&format!("{key}.velocity_z"), s.velocity_z)?;
        finite(&format!("{key}.magnetic_field_y"), s.magnetic_field_y)?;
        finite(&format!("{key}.magnetic_field_z"), s.magnetic_field_z)?;
        Ok(())
    }

    fn states(&self) -> impl Iterator<Item = GasState> + '_ {
        self.init
            .background
            .iter()
            .copied()
            .chain(self.init.regions.iter().map(|r| r.state()))
            .chain(self.boundaries.left_state.iter().copied())
            .chain(self.boundaries.right_state.iter().copied())
    }

    /// Smallest density (g/cm³) and pressure (erg/cm³) of the background, region and inflow
    /// states (profiles and waves not included).
    pub fn smallest_initial(&self) -> (f64, f64) {
        let cs2 = self.gas.isothermal_sound_speed.map(|c| c * c);
        self.states()
            .fold((f64::INFINITY, f64::INFINITY), |(r, p), s| {
                let ps = match cs2 {
                    Some(c2) => c2 * s.density,
                    None => s.pressure.unwrap_or(f64::INFINITY),
                };
                (r.min(s.density), p.min(ps))
            })
    }

    /// Density floor (g/cm³) and pressure floor (erg/cm³) in force: the deck's values or the
    /// defaults ([`DEFAULT_FLOOR_FRACTION`] × smallest initial value).
    pub fn floors(&self) -> (f64, f64) {
        let (r, p) = self.smallest_initial();
        (
            self.gas.density_floor.unwrap_or(DEFAULT_FLOOR_FRACTION * r),
            self.gas
                .pressure_floor
                .unwrap_or(DEFAULT_FLOOR_FRACTION * p),
        )
    }

    /// Output times in seconds, excluding the initial output at t = 0 and ending at `t_end`.
    pub fn output_times(&self) -> Vec<f64> {
        let t_end = self.run.t_end;
        let mut v = match (&self.run.output_interval, &self.run.output_times) {
            (Some(dt), _) => {
                let n = (t_end / dt * (1.0 + 1e-12)).floor() as u64;
                (1..=n)
                    .map(|k| k as f64 * dt)
                    .filter(|&t| t < t_end * (1.0 - 1e-12))
                    .collect()
            }
            (None, Some(ts)) => ts
                .iter()
                .copied()
                .filter(|&t| t < t_end * (1.0 - 1e-12))
                .collect(),
            (None, None) => Vec::new(),
        };
        v.push(t_end);
        v
    }
}

fn snake(camel: &str) -> String {
    let mut s = String::new();
    for (i, c) in camel.chars().enumerate() {
        if c.is_uppercase() {
            if i > 0 {
                s.push('_');
            }
            s.extend(c.to_lowercase());
        } else {
            s.push(c);
        }
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    pub(crate) const SOD: &str = r#"
[run]
name = "sod"
t_end = 0.2
output_interval = 0.1
[grid]
cells = 100
x_min = 0.0
x_max = 1.0
[gas]
gamma = 1.4
[boundaries]
left = "outflow"
right = "outflow"
[[init.regions]]
x_min = 0.0
x_max = 0.5
density = 1.0
pressure = 1.0
[[init.regions]]
x_min = 0.5
x_max = 1.0
density = 0.125
pressure = 0.1
"#;

    fn err_of(text: &str, sets: &[&str]) -> DeckError {
        let sets: Vec<String> = sets.iter().map(|s| s.to_string()).collect();
        parse_deck(text, &sets).expect_err("deck should be rejected")
    }

    #[test]
    fn sod_parses_with_defaults() {
        let d = parse_deck(SOD, &[]).unwrap();
        assert_eq!(d.grid.cells, 100);
        assert_eq!(d.mhd.riemann, RiemannChoice::Hlld);
        assert_eq!(d.mhd.limiter, LimiterChoice::Mc);
        assert_eq!(d.init.regions[1].density, 0.125);
        assert_eq!(d.output_times(), vec![0.1, 0.2]);
    }

    #[test]
    fn unknown_key_names_its_path() {
        let e = err_of(&SOD.replace("gamma = 1.4", "gamma = 1.4\ngamm = 2"), &[]);
        assert_eq!(e.key(), Some("gas.gamm"), "{e}");
        let e = err_of(
            &SOD.replace("density = 0.125", "density = 0.125\ndensty = 1"),
            &[],
        );
        assert_eq!(e.key(), Some("init.regions[1].densty"), "{e}");
    }

    #[test]
    fn wrong_type_names_its_path() {
        let e = err_of(&SOD.replace("cells = 100", "cells = \"many\""), &[]);
        assert_eq!(e.key(), Some("grid.cells"), "{e}");
        let e = err_of(&SOD.replace("cells = 100", "cells = -5"), &[]);
        assert_eq!(e.key(), Some("grid.cells"), "{e}");
    }

    #[test]
    fn range_errors_name_key_value_and_rule() {
        let cases: &[(&str, &str, &str)] = &[
            ("gamma = 1.4", "gamma = 1.0", "gas.gamma"),
            (
                "density = 0.125",
                "density = -0.125",
                "init.regions[1].density",
            ),
            ("cells = 100", "cells = 0", "grid.cells"),
            ("x_max = 1.0\n[gas]", "x_max = 0.0\n[gas]", "grid.x_max"),
            ("t_end = 0.2", "t_end = 0.0", "run.t_end"),
            (
                "pressure = 0.1",
                "pressure = nan",
                "init.regions[1].pressure",
            ),
        ];
        for (from, to, key) in cases {
            let text = SOD.replacen(from, to, 1);
            assert_ne!(text, SOD, "replacement {from} did not apply");
            let e = err_of(&text, &[]);
            assert_eq!(e.key(), Some(*key), "{e}");
        }
        let e = err_of(SOD, &["mhd.cfl=1.0"]);
        assert_eq!(e.key(), Some("mhd.cfl"));
        assert!(e.to_string().contains("0 < cfl < 1"), "{e}");
    }

    #[test]
    fn overrides_apply_and_create_tables() {
        let sets = [
            "gas.gamma=1.6667".to_string(),
            "mhd.riemann=hlle".into(),
            "init.regions[1].density=0.2".into(),
            "run.name=other".into(),
        ];
        let d = parse_deck(SOD, &sets).unwrap();
        assert_eq!(d.gas.gamma, Some(1.6667));
        assert_eq!(d.mhd.riemann, RiemannChoice::Hlle);
        assert_eq!(d.init.regions[1].density, 0.2);
        assert_eq!(d.run.name, "other");
    }

    #[test]
    fn bad_overrides_name_the_key() {
        let e = err_of(SOD, &["mhd.limitr=mc"]);
        assert_eq!(e.key(), Some("mhd.limitr"), "{e}");
        let e = err_of(SOD, &["init.regions[7].density=1"]);
        assert!(matches!(e, DeckError::Override { .. }), "{e}");
        assert!(e.to_string().contains("init.regions[7].density"), "{e}");
        let e = err_of(SOD, &["gas.gamma.x=1"]);
        assert!(e.to_string().contains("gas.gamma"), "{e}");
        let e = err_of(SOD, &["nonsense"]);
        assert!(matches!(e, DeckError::Override { .. }));
        let e = err_of(SOD, &["mhd.riemann=hllx"]);
        assert_eq!(e.key(), Some("mhd.riemann"), "{e}");
    }

    #[test]
    fn coverage_and_boundary_consistency() {
        let e = err_of(&SOD.replacen("x_min = 0.5", "x_min = 0.6", 1), &[]);
        assert_eq!(e.key(), Some("init.regions"), "{e}");
        let e = err_of(SOD, &["boundaries.left=periodic"]);
        assert_eq!(e.key(), Some("boundaries.right"), "{e}");
        let e = err_of(SOD, &["boundaries.left=inflow"]);
        assert_eq!(e.key(), Some("boundaries.left_state"), "{e}");
        let ok = parse_deck(
            SOD,
            &[
                "boundaries.left=inflow".into(),
                "boundaries.left_state.density=1".into(),
                "boundaries.left_state.pressure=1".into(),
            ],
        );
        assert!(ok.is_ok(), "{ok:?}");
    }

    const SLAB_BG: &str = "[init.background]\ndensity = 1.0\npressure = 1.0\n";

    fn slab_deck(slab: &str) -> String {
        let head = SOD.split("[[init.regions]]").next().unwrap_or_default();
        format!("{head}{SLAB_BG}{slab}")
    }

    #[test]
    fn slab_tables_parse_and_bad_keys_name_their_path() {
        let one = "[slab]\ncenter = 0.5\nwidth = 0.2\nedge = 0.02\ncontrast = 10\n";
        let d = parse_deck(&slab_deck(one), &[]).unwrap();
        assert_eq!(d.slab.as_ref().map(|s| s.0.len()), Some(1));
        let two = "[[slab]]\ncenter = 0.25\nwidth = 0.1\nedge = 0.02\ncontrast = 10\n[[slab]]\ncenter = 0.75\nwidth = 0.1\nedge = 0.02\ncontrast = 4\nequilibrium = \"temperature\"\n";
        let d = parse_deck(&slab_deck(two), &[]).unwrap();
        assert_eq!(d.slab.as_ref().map(|s| s.0[1].contrast), Some(4.0));
        let e = err_of(
            &slab_deck(&one.replace("contrast = 10", "contrst = 10")),
            &[],
        );
        assert_eq!(e.key(), Some("slab.contrst"), "{e}");
        let e = err_of(
            &slab_deck(&two.replace("contrast = 4", "contrast = 0.5")),
            &[],
        );
        assert_eq!(e.key(), Some("slab[1].contrast"), "{e}");
        let e = err_of(&slab_deck(&one.replace("edge = 0.02", "edge = 0.2")), &[]);
        assert_eq!(e.key(), Some("slab.edge"), "{e}");
        let e = err_of(
            &slab_deck(&two.replace("center = 0.75", "center = 0.4")),
            &[],
        );
        assert_eq!(e.key(), Some("slab[1].center"), "{e}");
        // The slab and explicit gas regions both define the density: a clear error.
        let e = err_of(&format!("{SOD}{SLAB_BG}{one}"), &[]);
        assert_eq!(e.key(), Some("init.regions"), "{e}");
        let e = err_of(
            &slab_deck(&format!("{one}neutral_fraction = \"cie\"\n")),
            &[],
        );
        assert_eq!(e.key(), Some("slab.neutral_fraction"), "{e}");
    }

    #[test]
    fn isothermal_rules() {
        let text = SOD.replace("gamma = 1.4", "isothermal_sound_speed = 1.0");
        let e = err_of(&text, &[]);
        assert_eq!(e.key(), Some("init.regions[0].pressure"), "{e}");
        let e = err_of(SOD, &["gas.isothermal_sound_speed=1"]);
        assert_eq!(e.key(), Some("gas.isothermal_sound_speed"), "{e}");
    }

    #[test]
    fn profile_keys_depend_on_shape() {
        let base = format!("{SOD}\n[[init.profiles]]\nshape = \"gaussian\"\nfield = \"density\"\namplitude = 0.1\ncenter = 0.5\n");
        let e = err_of(&base, &[]);
        assert_eq!(e.key(), Some("init.profiles[0].width"), "{e}");
        let e = err_of(&format!("{base}width = 0.1\nwavelength = 1\n"), &[]);
        assert_eq!(e.key(), Some("init.profiles[0].wavelength"), "{e}");
        assert!(parse_deck(&format!("{base}width = 0.1\n"), &[]).is_ok());
    }

    #[test]
    fn floors_default_relative_and_must_be_below_the_state() {
        let d = parse_deck(SOD, &[]).unwrap();
        assert_eq!(
            d.floors(),
            (0.125 * DEFAULT_FLOOR_FRACTION, 0.1 * DEFAULT_FLOOR_FRACTION)
        );
        let e = err_of(SOD, &["gas.density_floor=0.2"]);
        assert_eq!(e.key(), Some("gas.density_floor"), "{e}");
        let e = err_of(SOD, &["gas.pressure_floor=-1"]);
        assert_eq!(e.key(), Some("gas.pressure_floor"), "{e}");
    }

    #[test]
    fn missing_keys_and_syntax_errors() {
        let e = err_of("", &[]);
        assert_eq!(e.key(), Some("run"), "{e}");
        let e = err_of(&SOD.replace("t_end = 0.2\n", ""), &[]);
        assert_eq!(e.key(), Some("run.t_end"), "{e}");
        let e = err_of("[run\nname = 1", &[]);
        assert!(e.to_string().contains("line 1, column 5"), "{e}");
        assert_eq!(e.to_string().lines().count(), 1);
    }

    #[test]
    fn output_times_list_and_interval() {
        let d = parse_deck(SOD, &["run.output_interval=0.03".into()]).unwrap();
        let t = d.output_times();
        assert_eq!(t.len(), 7);
        assert!((t[5] - 0.18).abs() < 1e-12 && t[6] == 0.2);
        let e = err_of(
            &SOD.replace("output_interval = 0.1", "output_times = [0.1, 0.05]"),
            &[],
        );
        assert_eq!(e.key(), Some("run.output_times[1]"), "{e}");
    }
}
