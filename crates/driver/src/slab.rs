//! Dense slabs: the `[slab]` / `[[slab]]` deck section, the slab overlay of the initial state,
//! slab membership and diagnostics, and the `sluice check` lines of a bottleneck set-up.
//!
//! A slab `k` with centre c, width w (full width between the two half-contrast points), edge
//! thickness δ and density contrast χ has the shape
//!
//! s_k(x) = ½ [tanh((x − c + w/2)/δ) − tanh((x − c − w/2)/δ)]  ∈ [0, 1],
//!
//! and overlays the uniform `[init.background]` (ρ_bg, p_bg, B_⊥,bg): ρ = ρ_bg [1 + Σ (χ_k − 1) s_k].
//! With `equilibrium = "temperature"` the slab has the background temperature,
//! p = p_bg ρ/ρ_bg (not in pressure balance: it expands); with `"pressure"` (default) the total
//! pressure p + B_⊥²/8π equals the background's, so T_slab = T_bg/χ when B_⊥ is uniform.
//! A cell takes the mode of the slab with the largest s_k.
//!
//! Membership (diagnostics): slab k is the connected run of cells around its last centre of
//! mass with ρ > ρ_bg [1 + f (χ_k − 1)], f = `threshold` (default ½). All diagnostics are cgs
//! per unit area (the problem is planar): see docs/output-format.md, "Slab series".

use crate::deck::{Deck, DeckError, ProfileField};
use crate::simulation::Simulation;
use crate::units::Units;
use serde::de::{self, Deserializer, MapAccess, SeqAccess, Visitor};
use serde::Deserialize;
use sluice_mhd::{Eos, Primitive, State};

/// Temperature or pressure equilibrium of a slab with the background.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Equilibrium {
    /// Total pressure p + B_⊥²/8π equal to the background's (default).
    #[default]
    Pressure,
    /// Same temperature as the background (p ∝ ρ): not in pressure balance.
    Temperature,
}

/// `neutral_fraction`: a number x_n = 1 − x_i or `"cie"`. Sluice's ionisation model is
/// uniform (`[ionisation]`), so the key declares what the slab assumes and is checked
/// against that section: `"cie"` needs a CIE model (x_n then follows T cell by cell), a number
/// needs `model = "fixed"` with `ion_fraction = 1 − neutral_fraction`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum NeutralFraction {
    /// A fixed neutral fraction x_n in [0, 1).
    Value(f64),
    /// Collisional ionisation equilibrium.
    Cie,
}

impl<'de> Deserialize<'de> for NeutralFraction {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = NeutralFraction;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                write!(f, "a neutral fraction 0 <= x_n < 1 (a number) or \"cie\"")
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<NeutralFraction, E> {
                Ok(NeutralFraction::Value(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<NeutralFraction, E> {
                Ok(NeutralFraction::Value(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<NeutralFraction, E> {
                Ok(NeutralFraction::Value(v as f64))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<NeutralFraction, E> {
                if v == "cie" {
                    Ok(NeutralFraction::Cie)
                } else {
                    Err(E::invalid_value(de::Unexpected::Str(v), &self))
                }
            }
        }
        d.deserialize_any(V)
    }
}

fn default_threshold() -> f64 {
    0.5
}

/// One `[slab]` (or `[[slab]]` entry). Lengths cm, fields gauss, times s.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SlabSection {
    /// Centre, cm.
    pub center: f64,
    /// Full width between the two half-contrast points, cm (> 0).
    pub width: f64,
    /// Edge thickness δ of the tanh edges, cm (0 < δ ≤ width/4).
    pub edge: f64,
    /// Density contrast χ = ρ_slab/ρ_bg (> 1).
    pub contrast: f64,
    /// `"pressure"` (default) or `"temperature"`.
    #[serde(default)]
    pub equilibrium: Equilibrium,
    /// `"cie"` or a number 0 ≤ x_n < 1, checked against `[ionisation]` (optional).
    #[serde(default)]
    pub neutral_fraction: Option<NeutralFraction>,
    /// Transverse field B_y inside the slab, gauss (default: the background's).
    #[serde(default)]
    pub magnetic_field_y: Option<f64>,
    /// Transverse field B_z inside the slab, gauss (default: the background's).
    #[serde(default)]
    pub magnetic_field_z: Option<f64>,
    /// Membership threshold f: a cell belongs to the slab where ρ > ρ_bg [1 + f (χ − 1)]
    /// (0 < f < 1, default 0.5).
    #[serde(default = "default_threshold")]
    pub threshold: f64,
    /// Extra rows of the slab series every this many seconds (besides every snapshot time;
    /// > 0). With several slabs the smallest value given is used.
    #[serde(default)]
    pub diagnostics_every: Option<f64>,
}

impl SlabSection {
    /// Shape s(x) ∈ [0, 1] at `x` cm.
    pub fn shape(&self, x: f64) -> f64 {
        let a = self.center - 0.5 * self.width;
        let b = self.center + 0.5 * self.width;
        0.5 * (((x - a) / self.edge).tanh() - ((x - b) / self.edge).tanh())
    }
}

/// The deck's slabs: `[slab]` (one table) or `[[slab]]` (an array of tables).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SlabSpec(pub Vec<SlabSection>);

impl<'de> Deserialize<'de> for SlabSpec {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = SlabSpec;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                write!(f, "a [slab] table or [[slab]] array of tables")
            }
            fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<SlabSpec, A::Error> {
                let s = SlabSection::deserialize(de::value::MapAccessDeserializer::new(map))?;
                Ok(SlabSpec(vec![s]))
            }
            fn visit_seq<A: SeqAccess<'de>>(self, seq: A) -> Result<SlabSpec, A::Error> {
                let v =
                    Vec::<SlabSection>::deserialize(de::value::SeqAccessDeserializer::new(seq))?;
                Ok(SlabSpec(v))
            }
        }
        d.deserialize_any(V)
    }
}

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

/// Key prefix of slab `i`: `slab` for a single `[slab]` table, else `slab[i]`.
fn key_of(deck: &Deck, i: usize) -> String {
    match &deck.slab {
        Some(s) if s.0.len() > 1 => format!("slab[{i}]"),
        _ => "slab".into(),
    }
}

/// Validates `[slab]` (called by [`Deck::validate`]).
pub fn validate(deck: &Deck) -> Result<(), DeckError> {
    let Some(spec) = &deck.slab else {
        return Ok(());
    };
    if spec.0.is_empty() {
        return Err(invalid(
            "slab",
            "(empty array)",
            "at least one [[slab]] entry",
        ));
    }
    let Some(bg) = &deck.init.background else {
        return Err(invalid(
            "init.background",
            "(missing)",
            "the uniform background state the slab overlays, required by [slab]",
        ));
    };
    if !deck.init.regions.is_empty() {
        return Err(invalid(
            "init.regions",
            format!("{} regions", deck.init.regions.len()),
            "none with [slab]: the slab overlays the uniform [init.background] (use one or the other)",
        ));
    }
    if deck.init.wave.is_some() {
        return Err(invalid("init.wave", "(set)", "not together with [slab]"));
    }
    let sets_b = spec
        .0
        .iter()
        .any(|s| s.magnetic_field_y.is_some() || s.magnetic_field_z.is_some());
    for (i, p) in deck.init.profiles.iter().enumerate() {
        let clash = match p.field {
            ProfileField::Density | ProfileField::Pressure => true,
            ProfileField::MagneticFieldY | ProfileField::MagneticFieldZ => sets_b,
            _ => false,
        };
        if clash {
            return Err(invalid(
                format!("init.profiles[{i}].field"),
                format!("{:?}", p.field),
                "a velocity field: [slab] already defines density, pressure (and the transverse field it sets)",
            ));
        }
    }
    let (x0, x1) = (deck.grid.x_min, deck.grid.x_max);
    let dx = (x1 - x0) / deck.grid.cells as f64;
    let mut spans: Vec<(f64, f64, f64, usize)> = Vec::new();
    for (i, s) in spec.0.iter().enumerate() {
        let k = key_of(deck, i);
        let fin = |n: &str, v: f64| {
            if v.is_finite() {
                Ok(())
            } else {
                Err(invalid(format!("{k}.{n}"), v, "a finite number"))
            }
        };
        fin("center", s.center)?;
        if !(s.width.is_finite() && s.width > 0.0) {
            return Err(invalid(format!("{k}.width"), s.width, "a width in cm > 0"));
        }
        if !(s.edge.is_finite() && s.edge > 0.0 && s.edge <= 0.25 * s.width) {
            return Err(invalid(
                format!("{k}.edge"),
                s.edge,
                format!(
                    "an edge thickness in cm with 0 < edge <= width/4 = {:e}",
                    0.25 * s.width
                ),
            ));
        }
        if s.edge < dx {
            return Err(invalid(
                format!("{k}.edge"),
                s.edge,
                format!("at least one cell width ({dx:e} cm) so that the tanh edges are resolved; raise grid.cells or the edge"),
            ));
        }
        if !(s.contrast.is_finite() && s.contrast > 1.0) {
            return Err(invalid(
                format!("{k}.contrast"),
                s.contrast,
                "a density contrast ρ_slab/ρ_background > 1",
            ));
        }
        if !(s.threshold > 0.0 && s.threshold < 1.0) {
            return Err(invalid(
                format!("{k}.threshold"),
                s.threshold,
                "a fraction with 0 < threshold < 1",
            ));
        }
        if let Some(t) = s.diagnostics_every {
            if !(t.is_finite() && t > 0.0 && deck.run.t_end / t <= 1e6) {
                return Err(invalid(
                    format!("{k}.diagnostics_every"),
                    t,
                    "an interval in s > 0 with t_end / diagnostics_every <= 1e6",
                ));
            }
        }
        for (n, b) in [
            ("magnetic_field_y", s.magnetic_field_y),
            ("magnetic_field_z", s.magnetic_field_z),
        ] {
            if let Some(b) = b {
                fin(n, b)?;
                if deck.cosmic_rays.is_some() && b != 0.0 {
                    return Err(invalid(
                        format!("{k}.{n}"),
                        b,
                        "0 with [cosmic_rays]: the CR stage needs B along x (B_y = B_z = 0)",
                    ));
                }
            }
        }
        let lo = s.center - 0.5 * s.width - 3.0 * s.edge;
        let hi = s.center + 0.5 * s.width + 3.0 * s.edge;
        if lo < x0 || hi > x1 {
            return Err(invalid(
                format!("{k}.center"),
                s.center,
                format!("a slab whose edges (± 3 edge thicknesses) lie inside the grid [{x0:e}, {x1:e}] cm (it spans [{lo:e}, {hi:e}] cm)"),
            ));
        }
        match s.equilibrium {
            Equilibrium::Pressure => {
                if deck.isothermal() {
                    return Err(invalid(
                        format!("{k}.equilibrium"),
                        "\"pressure\"",
                        "\"temperature\" for an isothermal gas (p = c_s² ρ cannot be balanced)",
                    ));
                }
                let p = bg.pressure.unwrap_or(f64::NAN);
                let b2 = |y: f64, z: f64| (y * y + z * z) / (8.0 * std::f64::consts::PI);
                let by = s.magnetic_field_y.unwrap_or(bg.magnetic_field_y);
                let bz = s.magnetic_field_z.unwrap_or(bg.magnetic_field_z);
                let ps = p + b2(bg.magnetic_field_y, bg.magnetic_field_z) - b2(by, bz);
                if ps.is_nan() || ps <= 0.0 {
                    return Err(invalid(
                        format!("{k}.magnetic_field_y"),
                        by,
                        format!("a slab field whose magnetic pressure leaves a positive gas pressure in total-pressure balance (slab gas pressure would be {ps:e} erg/cm³)"),
                    ));
                }
            }
            Equilibrium::Temperature => {}
        }
        if let Some(nf) = s.neutral_fraction {
            check_neutral(deck, &k, nf)?;
        }
        spans.push((
            s.center - 0.5 * s.width,
            s.center + 0.5 * s.width,
            s.edge,
            i,
        ));
    }
    spans.sort_by(|a, b| a.0.total_cmp(&b.0));
    for p in spans.windows(2) {
        let gap = p[1].0 - p[0].1;
        let need = 6.0 * p[0].2.max(p[1].2);
        if gap < need {
            return Err(invalid(
                format!("{}.center", key_of(deck, p[1].3)),
                spec.0[p[1].3].center,
                format!("slabs that do not overlap: the gap to {} must be at least 6 edge thicknesses ({need:e} cm), it is {gap:e} cm", key_of(deck, p[0].3)),
            ));
        }
    }
    Ok(())
}

fn check_neutral(deck: &Deck, k: &str, nf: NeutralFraction) -> Result<(), DeckError> {
    use crate::physics::sections::IonisationModelChoice as M;
    let key = format!("{k}.neutral_fraction");
    match (nf, deck.ionisation.as_ref()) {
        (NeutralFraction::Cie, Some(ion)) if ion.model != M::Fixed => Ok(()),
        (NeutralFraction::Cie, _) => Err(invalid(
            key,
            "\"cie\"",
            "an [ionisation] section with a CIE model (cie_cen1992, cie_hui_gnedin_a, cie_hui_gnedin_b): the neutral fraction then follows T in every cell",
        )),
        (NeutralFraction::Value(x), _) if !(x.is_finite() && (0.0..1.0).contains(&x)) => {
            Err(invalid(key, x, "a neutral fraction with 0 <= x_n < 1, or \"cie\""))
        }
        (NeutralFraction::Value(x), Some(ion))
            if ion.model == M::Fixed
                && ion.ion_fraction.is_some_and(|xi| (xi - (1.0 - x)).abs() <= 1e-12) =>
        {
            Ok(())
        }
        (NeutralFraction::Value(x), _) => Err(invalid(
            key,
            x,
            format!("the neutral fraction of the uniform ionisation model: add [ionisation] model = \"fixed\" with ion_fraction = {} (Sluice's ionisation is the same model in every cell), or use \"cie\"", 1.0 - x),
        )),
    }
}

/// Overlays the slabs on the background primitive `w` (code units) of the cell centred at
/// `x_cm` (cm). `bg` is the background primitive (code units).
pub fn overlay(deck: &Deck, u: &Units, bg: &Primitive, x_cm: f64, w: &mut Primitive) {
    let Some(spec) = &deck.slab else {
        return;
    };
    let mut chi_sum = 0.0;
    let (mut by, mut bz) = (bg.by, bg.bz);
    let mut best = (0.0, Equilibrium::Pressure);
    for s in &spec.0 {
        let sh = s.shape(x_cm);
        chi_sum += (s.contrast - 1.0) * sh;
        if let Some(b) = s.magnetic_field_y {
            by += (u.field_to_code(b) - bg.by) * sh;
        }
        if let Some(b) = s.magnetic_field_z {
            bz += (u.field_to_code(b) - bg.bz) * sh;
        }
        if sh > best.0 {
            best = (sh, s.equilibrium);
        }
    }
    w.rho = bg.rho * (1.0 + chi_sum);
    w.by = by;
    w.bz = bz;
    w.p = match best.1 {
        Equilibrium::Temperature => bg.p * (1.0 + chi_sum),
        Equilibrium::Pressure => bg.p + 0.5 * (bg.by * bg.by + bg.bz * bg.bz - by * by - bz * bz),
    };
}

/// Density threshold (code units) of slab `s` over a background density `rho_bg` (code).
fn threshold(s: &SlabSection, rho_bg: f64) -> f64 {
    rho_bg * (1.0 + s.threshold * (s.contrast - 1.0))
}

/// Locates a slab: the connected run `[lo, hi]` (storage indices) of cells with ρ > `thr`
/// containing the interior cell nearest `x` (code length), or, if that cell is below the
/// threshold, the nearest such run within `reach` cells. `None` when there is none.
pub fn locate(gas: &State, thr: f64, x: f64, reach: usize) -> Option<(usize, usize)> {
    let g = gas.grid;
    let r = g.interior();
    let (first, last) = (r.start, r.end - 1);
    let j0 = ((x - g.x_min) / g.dx()).floor();
    let j0 = (j0.max(0.0) as usize + first).min(last);
    let rho = gas.rho.as_slice()?;
    let mut seed = None;
    for d in 0..=reach {
        for j in [j0.checked_sub(d), Some(j0 + d)].into_iter().flatten() {
            if j >= first && j <= last && rho[j] > thr {
                seed = Some(j);
                break;
            }
        }
        if seed.is_some() {
            break;
        }
    }
    let j = seed?;
    let (mut lo, mut hi) = (j, j);
    while lo > first && rho[lo - 1] > thr {
        lo -= 1;
    }
    while hi < last && rho[hi + 1] > thr {
        hi += 1;
    }
    Some((lo, hi))
}

/// Instantaneous measurements of one slab (cgs, per unit area).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SlabMeasure {
    /// Column mass Σ = ∫ρ dx over the slab, g/cm².
    pub mass: f64,
    /// x-momentum ∫ρ v_x dx, g/(cm s).
    pub momentum: f64,
    /// Mass-weighted velocity ∫ρ v_x dx / Σ, cm/s.
    pub velocity: f64,
    /// Centre of mass ∫ρ x dx / Σ, cm.
    pub center_of_mass: f64,
    /// Left (x_min side) boundary of the member cells, cm (face).
    pub x_left: f64,
    /// Right boundary of the member cells, cm (face).
    pub x_right: f64,
    /// CR pressure 3 edge thicknesses left of the slab (NaN without CRs), erg/cm³.
    pub pc_left: f64,
    /// CR pressure 3 edge thicknesses right of the slab, erg/cm³.
    pub pc_right: f64,
    /// CR → gas heating rate ∫H dx over the slab, erg/(cm² s) (0 without CRs).
    pub heating_rate: f64,
    /// Member cells.
    pub cells: usize,
}

/// Per-slab tracking state: last centre (code length) used to seed [`locate`].
#[derive(Debug, Clone, PartialEq)]
pub struct SlabTracker {
    slabs: Vec<SlabSection>,
    centers: Vec<f64>,
    rho_bg: f64,
    gamma_c: f64,
}

impl SlabTracker {
    /// A tracker of the deck's slabs at their deck centres (`None` without `[slab]`).
    pub fn new(sim: &Simulation) -> Option<Self> {
        let deck = sim.deck();
        let spec = deck.slab.as_ref()?;
        let u = sim.units();
        let rho_bg = deck.init.background.as_ref()?.density / u.density;
        Some(Self {
            centers: spec.0.iter().map(|s| s.center / u.length).collect(),
            slabs: spec.0.clone(),
            rho_bg,
            gamma_c: deck
                .cosmic_rays
                .as_ref()
                .map_or(4.0 / 3.0, |c| c.adiabatic_index),
        })
    }

    /// Number of slabs.
    pub fn len(&self) -> usize {
        self.slabs.len()
    }

    /// Whether there are no slabs (never true for a validated deck).
    pub fn is_empty(&self) -> bool {
        self.slabs.is_empty()
    }

    /// Sets the tracked centre of slab `k`, cm (resuming a series).
    pub fn set_center_cm(&mut self, k: usize, x_cm: f64, u: &Units) {
        if x_cm.is_finite() {
            self.centers[k] = x_cm / u.length;
        }
    }

    /// Heating rate ∫H dx (code units) of every slab into `out`, with membership located
    /// afresh (no allocation). Slabs not found get 0.
    pub fn heating_rates(&mut self, sim: &Simulation, out: &mut [f64]) {
        let gas = sim.state();
        let dx = gas.grid.dx();
        let h = cell_array(sim, "heating_rate");
        for (k, s) in self.slabs.iter().enumerate() {
            let reach = (s.width / sim.units().length / dx).ceil() as usize;
            out[k] = match (
                locate(gas, threshold(s, self.rho_bg), self.centers[k], reach),
                h,
            ) {
                (Some((lo, hi)), Some(h)) => h[lo..=hi].iter().sum::<f64>() * dx,
                _ => 0.0,
            };
        }
    }

    /// Measures every slab now and moves the tracked centres to the centres of mass.
    pub fn measure(&mut self, sim: &Simulation) -> Vec<Option<SlabMeasure>> {
        let u = *sim.units();
        let gas = sim.state();
        let g = gas.grid;
        let dx = g.dx();
        let ec = cell_array(sim, "e_c");
        let h = cell_array(sim, "heating_rate");
        let r = g.interior();
        let mut out = Vec::with_capacity(self.slabs.len());
        for (k, s) in self.slabs.iter().enumerate() {
            let reach = (s.width / u.length / dx).ceil() as usize;
            let Some((lo, hi)) = locate(gas, threshold(s, self.rho_bg), self.centers[k], reach)
            else {
                out.push(None);
                continue;
            };
            let (mut m, mut p, mut mx) = (0.0, 0.0, 0.0);
            for j in lo..=hi {
                m += gas.rho[j] * dx;
                p += gas.mx[j] * dx;
                mx += gas.rho[j] * g.x_center(j) * dx;
            }
            let x_cm = mx / m;
            self.centers[k] = x_cm;
            let off = (3.0 * s.edge / u.length / dx).ceil() as usize;
            let jl = lo.saturating_sub(off).max(r.start);
            let jr = (hi + off).min(r.end - 1);
            let pc = |j: usize| ec.map_or(f64::NAN, |e| (self.gamma_c - 1.0) * e[j] * u.pressure());
            let heat = h.map_or(0.0, |h| h[lo..=hi].iter().sum::<f64>() * dx);
            let xl = g.x_center(lo) - 0.5 * dx;
            let xr = g.x_center(hi) + 0.5 * dx;
            out.push(Some(SlabMeasure {
                mass: m * u.mass_per_area(),
                momentum: p * u.mass_per_area() * u.velocity,
                velocity: p / m * u.velocity,
                center_of_mass: x_cm * u.length,
                x_left: xl * u.length,
                x_right: xr * u.length,
                pc_left: pc(jl),
                pc_right: pc(jr),
                heating_rate: heat * u.energy_per_area() / u.time(),
                cells: hi - lo + 1,
            }));
        }
        out
    }
}

/// A per-cell array (storage cells, code units) one of the stages exposes by `name`.
fn cell_array<'a>(sim: &'a Simulation, name: &str) -> Option<&'a [f64]> {
    sim.stages().iter().find_map(|s| s.cell_array(name))
}

/// The slab scalars of the current state for sweep summaries: per slab `k`
/// `slab{k}_mass` (g/cm²), `_velocity` (cm/s), `_center_of_mass` (cm), `_momentum`
/// (g/(cm s)), `_momentum_gained` (against the deck's initial state, g/(cm s)),
/// `_cr_pressure_jump` (P_c left − right, erg/cm³) and `_cr_heating_rate` (erg/(cm² s)),
/// as `(name, unit, value)`. Slabs are located around their deck centres. `None` without
/// `[slab]`. A slab that cannot be found gives NaN values.
pub fn scalars(sim: &Simulation) -> Option<Vec<(String, String, f64)>> {
    let mut tr = SlabTracker::new(sim)?;
    let now = tr.measure(sim);
    let initial = initial_momenta_of(sim);
    let mut out = Vec::new();
    for (k, m) in now.iter().enumerate() {
        let p0 = initial.get(k).copied().unwrap_or(f64::NAN);
        for (name, unit, v) in measure_columns(m.as_ref(), p0) {
            out.push((format!("slab{k}_{name}"), unit.to_string(), v));
        }
    }
    Some(out)
}

/// Slab momenta (g/(cm s)) of the deck's initial state (rebuilt from the deck).
pub(crate) fn initial_momenta_of(sim: &Simulation) -> Vec<f64> {
    let deck = sim.deck();
    let u = sim.units();
    let Ok(g) = crate::setup::grid(deck, u) else {
        return Vec::new();
    };
    let Ok(st) = crate::setup::initial_state(deck, u, &g) else {
        return Vec::new();
    };
    let Some(spec) = &deck.slab else {
        return Vec::new();
    };
    let rho_bg = deck
        .init
        .background
        .as_ref()
        .map_or(f64::NAN, |b| b.density / u.density);
    spec.0
        .iter()
        .map(|s| {
            let reach = (s.width / u.length / g.dx()).ceil() as usize;
            match locate(&st, threshold(s, rho_bg), s.center / u.length, reach) {
                Some((lo, hi)) => {
                    (lo..=hi).map(|j| st.mx[j]).sum::<f64>()
                        * g.dx()
                        * u.mass_per_area()
                        * u.velocity
                }
                None => f64::NAN,
            }
        })
        .collect()
}

/// Column names (without the `slab{k}_` prefix), units and values of one slab measurement;
/// `p0` is the initial momentum. `None` (slab not found) gives NaN.
pub(crate) fn measure_columns(
    m: Option<&SlabMeasure>,
    p0: f64,
) -> Vec<(&'static str, &'static str, f64)> {
    let n = f64::NAN;
    let g = |f: fn(&SlabMeasure) -> f64| m.map_or(n, f);
    vec![
        ("mass", "g/cm^2", g(|m| m.mass)),
        ("velocity", "cm/s", g(|m| m.velocity)),
        ("center_of_mass", "cm", g(|m| m.center_of_mass)),
        ("momentum", "g/(cm s)", g(|m| m.momentum)),
        ("momentum_gained", "g/(cm s)", g(|m| m.momentum) - p0),
        (
            "cr_pressure_jump",
            "erg/cm^3",
            g(|m| m.pc_left - m.pc_right),
        ),
        ("cr_heating_rate", "erg/(cm^2 s)", g(|m| m.heating_rate)),
        ("x_left", "cm", g(|m| m.x_left)),
        ("x_right", "cm", g(|m| m.x_right)),
    ]
}

/// Where the CRs come from: the side and the boundary value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CrSource {
    /// Injected lab-frame energy flux, erg/(cm² s), into the domain.
    Flux(f64),
    /// Fixed CR energy density, erg/cm³.
    EnergyDensity(f64),
}

/// The CR source of the deck: (`true` for the left side, value), left first.
pub fn cr_source(deck: &Deck) -> Option<(bool, CrSource)> {
    use crate::physics::sections::CrBoundaryChoice as B;
    let cr = deck.cosmic_rays.as_ref()?;
    for (left, ch, f, e) in [
        (true, cr.left, cr.left_flux, cr.left_energy_density),
        (false, cr.right, cr.right_flux, cr.right_energy_density),
    ] {
        match (ch, f, e) {
            (Some(B::InjectedFlux), Some(f), _) if f > 0.0 => {
                return Some((left, CrSource::Flux(f)))
            }
            (Some(B::FixedEnergyDensity), _, Some(e)) if e > 0.0 => {
                return Some((left, CrSource::EnergyDensity(e)))
            }
            _ => {}
        }
    }
    None
}

/// The direct steady streaming solution through the current gas of `sim` (cgs): cell
/// centres x (cm), the CR Alfvén speed v_a (cm/s), gas velocity v (cm/s) and the profile of
/// `sluice_cosmic_rays::steady` for the deck's CR source (mirrored for a right-hand source,
/// returned in ascending x). `None` without CRs, without a source or with no streaming
/// (fixed κ).
pub fn steady_profile(
    sim: &Simulation,
) -> Option<(Vec<f64>, sluice_cosmic_rays::steady::BottleneckProfile)> {
    let deck = sim.deck();
    let sec = deck.cosmic_rays.as_ref()?;
    let (left, src) = cr_source(deck)?;
    let u = sim.units();
    let gas = sim.state();
    let st = sim.stages().iter().find(|s| s.name() == "cr")?;
    let va = st
        .fields(gas)
        .into_iter()
        .find(|f| f.name == "alfven_speed")?
        .data;
    if va.iter().any(|&v| v.is_nan() || v <= 0.0) {
        return None;
    }
    let g = gas.grid;
    let eos = sim.solver().config().eos;
    let mut x: Vec<f64> = g.interior().map(|j| g.x_center(j) * u.length).collect();
    let mut v: Vec<f64> = g
        .interior()
        .map(|j| gas.primitive(j, &eos).vx * u.velocity)
        .collect();
    let mut va = va;
    if !left {
        x.reverse();
        x.iter_mut().for_each(|a| *a = -*a);
        v.reverse();
        v.iter_mut().for_each(|a| *a = -*a);
        va.reverse();
    }
    let gc = sec.adiabatic_index;
    let prof = match src {
        CrSource::Flux(f) => sluice_cosmic_rays::steady::bottleneck_from_flux(&x, &va, &v, f, gc),
        CrSource::EnergyDensity(e) => {
            sluice_cosmic_rays::steady::bottleneck_from_speeds(&x, &va, &v, (gc - 1.0) * e, gc)
        }
    }
    .ok()?;
    let mut prof = prof;
    if !left {
        for a in [
            &mut prof.x,
            &mut prof.w,
            &mut prof.w_min_downstream,
            &mut prof.pc,
            &mut prof.flux,
        ] {
            a.reverse();
        }
        prof.x.iter_mut().for_each(|a| *a = -*a);
        prof.coupled.reverse();
        prof.flux.iter_mut().for_each(|a| *a = -*a);
        prof.force_per_area = -prof.force_per_area;
    }
    Some((va, prof))
}

/// `sluice check` lines of the slabs at t = 0: geometry, density, temperature and neutral
/// fraction inside/outside, Alfvén speeds, time scales and the predicted bottleneck plateau.
pub fn check_lines(sim: &Simulation) -> Vec<String> {
    let deck = sim.deck();
    let Some(spec) = &deck.slab else {
        return Vec::new();
    };
    let u = *sim.units();
    let gas = sim.state();
    let g = gas.grid;
    let eos = sim.solver().config().eos;
    let th = crate::physics::thermo(deck);
    let cell_at = |x_cm: f64| {
        let j = ((x_cm / u.length - g.x_min) / g.dx()).floor().max(0.0) as usize;
        (j + g.interior().start).min(g.interior().end - 1)
    };
    let steady = steady_profile(sim);
    let va_cells: Option<Vec<f64>> = steady.as_ref().map(|s| s.0.clone()).or_else(|| {
        Some(
            g.interior()
                .map(|j| sluice_mhd::alfven_speed(&gas.primitive(j, &eos), gas.bx) * u.velocity)
                .collect(),
        )
    });
    let mut lines = Vec::new();
    let (gamma_c, cr) = match &deck.cosmic_rays {
        Some(c) => (c.adiabatic_index, true),
        None => (4.0 / 3.0, false),
    };
    let j_bg = g.interior().start;
    let w_bg = gas.primitive(j_bg, &eos);
    let sound = |w: &Primitive| sluice_mhd::sound_speed(w, &eos) * u.velocity;
    let va_name = if cr {
        "CR Alfven speed"
    } else {
        "Alfven speed"
    };
    let length = (g.x_max - g.x_min) * u.length;
    for (k, s) in spec.0.iter().enumerate() {
        let name = key_of(deck, k);
        let jc = cell_at(s.center);
        let w_in = gas.primitive(jc, &eos);
        lines.push(format!(
            "{name:<24} centre {:.6e} cm, width {:.6e} cm, edge {:.6e} cm, contrast {}, {} equilibrium",
            s.center,
            s.width,
            s.edge,
            s.contrast,
            match s.equilibrium {
                Equilibrium::Pressure => "pressure",
                Equilibrium::Temperature => "temperature",
            }
        ));
        let (rin, rout) = (w_in.rho * u.density, w_bg.rho * u.density);
        let (pin, pout) = (w_in.p * u.pressure(), w_bg.p * u.pressure());
        lines.push(format!(
            "{:<24} density {rin:.6e} inside, {rout:.6e} outside g/cm^3; pressure {pin:.6e} inside, {pout:.6e} outside erg/cm^3",
            format!("{name} gas")
        ));
        if matches!(eos, Eos::Ideal { .. }) && (th.mu.is_some() || th.ionisation.is_some()) {
            let ci = th.cell(rin, pin);
            let co = th.cell(rout, pout);
            let neutral = if th.ionisation.is_some() {
                format!(
                    "; neutral fraction {:.6} inside, {:.6} outside",
                    1.0 - ci.ion_fraction,
                    1.0 - co.ion_fraction
                )
            } else {
                String::new()
            };
            lines.push(format!(
                "{:<24} temperature {:.6e} inside, {:.6e} outside K{neutral}",
                format!("{name} thermal"),
                ci.temperature,
                co.temperature,
            ));
        }
        if let Some(va) = &va_cells {
            let i_in = jc - g.interior().start;
            let (vi, vo) = (va[i_in], va[0]);
            lines.push(format!(
                "{:<24} {vi:.6e} inside, {vo:.6e} outside cm/s (ratio {:.6})",
                format!("{name} {va_name}"),
                vo / vi
            ));
            let cs_in = sound(&w_in);
            lines.push(format!(
                "{:<24} Alfven crossing width/v_a,in {:.6e} s, sound crossing width/c_s,in {:.6e} s, box streaming crossing L/v_a,out {:.6e} s",
                format!("{name} time scales"),
                s.width / vi,
                s.width / cs_in,
                length / vo
            ));
        }
        if let Some((_, p)) = &steady {
            let (x, pc) = (&p.x, &p.pc);
            let near = |xc: f64| {
                x.iter()
                    .enumerate()
                    .min_by(|a, b| (a.1 - xc).abs().total_cmp(&(b.1 - xc).abs()))
                    .map_or(0, |(i, _)| i)
            };
            let il = near(s.center - 0.5 * s.width - 3.0 * s.edge);
            let ir = near(s.center + 0.5 * s.width + 3.0 * s.edge);
            let jump = pc[il] - pc[ir];
            let sigma: f64 = (il..=ir)
                .map(|i| gas.rho[i + g.interior().start])
                .sum::<f64>()
                * g.dx()
                * u.mass_per_area();
            // Streaming heating v_a |∂x P_c| over the member cells (ρ above the threshold),
            // as the slab series measures it.
            let thr = threshold(s, w_bg.rho);
            let r0 = g.interior().start;
            let members: Vec<usize> = (il..=ir).filter(|&i| gas.rho[i + r0] > thr).collect();
            let heat: f64 = match (members.first(), members.last()) {
                (Some(&a), Some(&b)) => (a..b)
                    .map(|i| 0.5 * (p.w[i] + p.w[i + 1]) * (pc[i] - pc[i + 1]))
                    .sum::<f64>()
                    .abs(),
                _ => 0.0,
            };
            lines.push(format!(
                "{:<24} P_c {:.6e} before, {:.6e} after the slab erg/cm^3; jump {jump:.6e} erg/cm^3; slab acceleration jump/column {:.6e} cm/s^2, time to move one width {:.6e} s; streaming heating of the slab {heat:.6e} erg/cm^2/s",
                format!("{name} steady CR"),
                pc[il],
                pc[ir],
                jump / sigma,
                (2.0 * s.width * sigma / jump.abs()).sqrt(),
            ));
        }
    }
    if let Some((_, p)) = &steady {
        let n = p.pc.len();
        let (up, down) = if p.flux[0] >= 0.0 {
            (0, n - 1)
        } else {
            (n - 1, 0)
        };
        let wmin = p.w.iter().cloned().fold(f64::INFINITY, f64::min);
        lines.push(format!(
            "bottleneck plateau       P_c = {:.6e} erg/cm^3 upstream of the Alfven-speed minimum ({wmin:.6e} cm/s), {:.6e} erg/cm^3 downstream; steady streaming: P_c (v + v_a)^gamma_c constant where P_c falls, gamma_c = {gamma_c} (Skilling 1971 ApJ 170, 265; Wiener, Oh & Zweibel 2017 MNRAS 467, 646)",
            p.pc[up], p.pc[down]
        ));
        lines.push(format!(
            "bottleneck flux          transmitted {:.6e} erg/cm^2/s (= gamma_c/(gamma_c-1) v_a,min P_c,plateau), leaving {:.6e}; streaming heating per area {:.6e} erg/cm^2/s; CR force per area {:.6e} dyn/cm^2",
            p.flux[up].abs(),
            p.flux[down].abs(),
            p.heating_per_area.abs(),
            p.force_per_area
        ));
        // Filling time of the upstream plateau from nothing: its energy over the inflow (the
        // injected flux, or for a fixed boundary energy density the flux the bottleneck lets
        // through, which the reservoir supplies once the plateau is in place).
        let l_up =
            p.x.iter()
                .zip(&p.coupled)
                .find(|(_, c)| **c)
                .map_or(0.0, |(x, _)| (x - p.x[up]).abs());
        let e_plateau = p.pc[up] / (gamma_c - 1.0);
        match cr_source(deck) {
            Some((_, CrSource::Flux(f))) => lines.push(format!(
                "plateau filling time     e_c,plateau L_upstream / F_in = {:.6e} s (L_upstream = {l_up:.6e} cm)",
                e_plateau * l_up / f
            )),
            Some((_, CrSource::EnergyDensity(e))) => lines.push(format!(
                "plateau filling time     e_c,plateau L_upstream / F_transmitted = {:.6e} s (L_upstream = {l_up:.6e} cm; source: fixed e_c = {e:.6e} erg/cm^3 at the boundary, P_c,plateau = (gamma_c-1) e_c)",
                e_plateau * l_up / p.flux[up].abs()
            )),
            None => {}
        }
    } else if cr {
        lines.push("bottleneck plateau       no prediction: needs a CR source (cosmic_rays.left/right = \"injected_flux\" or \"fixed_energy_density\" > 0) and streaming (not fixed_kappa)".into());
    }
    lines
}
