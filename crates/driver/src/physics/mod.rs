//! Physics stages of the driver: cosmic rays (with wave damping) and radiative cooling.
//!
//! * [`sections`] — the deck sections `[cosmic_rays]`, `[damping]`, `[ionisation]`,
//!   `[cooling]` and their validation (called from [`crate::Deck::validate`]);
//! * [`cosmic_rays`] — the CR stage (`cr`), wrapping `sluice_cosmic_rays::CrSolver`;
//! * [`damping_adapter`] — per-cell temperature/ionisation and the cgs damping laws behind the
//!   CR crate's `WaveDamping` trait;
//! * [`cooling`] — the cooling source stage (`cooling`).
//!
//! [`build_stages`] turns a validated deck into the stage list (CR first, then cooling).

pub mod cooling;
pub mod cosmic_rays;
pub mod damping_adapter;
pub mod sections;

use crate::deck::Deck;
use crate::stage::Stage;
use crate::units::Units;
use damping_adapter::Thermo;
use sections::{DampingSection, IonisationModelChoice, IonisationSection};
use sluice_damping::{
    Cen1992, CieFit, Composition, DampingModel, HuiGnedin1997, IonNeutral, Ionisation, Nll,
    TurbulenceAmplitude, Turbulent,
};
use sluice_mhd::{Eos, MhdSolver, State};

pub use cooling::CoolingStage;
pub use cosmic_rays::{CosmicRayStage, CrDerived};

/// `[ionisation]` → the damping crate's model.
pub fn ionisation(sec: &IonisationSection) -> Ionisation {
    let cie = |fit| Ionisation::Cie {
        fit,
        ion_fraction_min: sec.min_ion_fraction,
    };
    match sec.model {
        IonisationModelChoice::Fixed => Ionisation::Fixed {
            ion_fraction: sec.ion_fraction.unwrap_or(1.0),
        },
        IonisationModelChoice::CieCen1992 => cie(CieFit::Cen1992(Cen1992::default())),
        IonisationModelChoice::CieHuiGnedinA => cie(CieFit::HuiGnedin1997(HuiGnedin1997::case_a())),
        IonisationModelChoice::CieHuiGnedinB => cie(CieFit::HuiGnedin1997(HuiGnedin1997::case_b())),
    }
}

/// Temperature/ionisation model of the deck.
pub fn thermo(deck: &Deck) -> Thermo {
    let composition = Composition {
        helium_per_h: deck
            .ionisation
            .as_ref()
            .map_or(0.1, |i| i.helium_per_hydrogen),
        ..Composition::default()
    };
    Thermo {
        mu: deck.gas.mean_molecular_weight,
        ionisation: deck.ionisation.as_ref().map(ionisation),
        composition,
    }
}

/// `[damping]` → the damping crate's model (mechanisms on when their table is present).
pub fn damping_model(sec: &DampingSection) -> DampingModel {
    let mut m = DampingModel::none();
    m.energy_factor = sec.energy_factor;
    m.constant = sec.constant_rate;
    if let Some(i) = &sec.ion_neutral {
        let d = IonNeutral::default();
        m.ion_neutral = Some(IonNeutral {
            sigma_v_ref: i.sigma_v.unwrap_or(d.sigma_v_ref),
            t_ref: i.t_ref.unwrap_or(d.t_ref),
            t_exponent: i.t_exponent.unwrap_or(d.t_exponent),
        });
    }
    if let Some(n) = &sec.nonlinear_landau {
        let d = Nll::default();
        m.nll = Some(Nll {
            coefficient: n.coefficient.unwrap_or(d.coefficient),
            ion_speed_factor: n.ion_speed_factor.unwrap_or(d.ion_speed_factor),
        });
    }
    if let Some(t) = &sec.turbulent {
        let d = Turbulent::default();
        m.turbulent = Some(Turbulent {
            outer_scale: t.outer_scale.unwrap_or(d.outer_scale),
            amplitude: match (t.velocity, t.alfven_mach) {
                (Some(v), _) => TurbulenceAmplitude::Velocity(v),
                (None, Some(ma)) => TurbulenceAmplitude::MachNumber(ma),
                (None, None) => d.amplitude,
            },
            coefficient: t.coefficient.unwrap_or(d.coefficient),
            ..d
        });
    }
    m
}

/// The physics stages of a validated deck, in order (CR, then cooling). `gas` must have its
/// ghost cells filled.
pub fn build_stages(
    deck: &Deck,
    units: &Units,
    gas: &State,
    mhd: &MhdSolver,
) -> Result<Vec<Box<dyn Stage>>, String> {
    let th = thermo(deck);
    let mut out: Vec<Box<dyn Stage>> = Vec::new();
    if deck.cosmic_rays.is_some() {
        let dm = deck.damping.as_ref().map(damping_model);
        if let Some(m) = &dm {
            m.validate().map_err(|e| format!("damping: {e}"))?;
        }
        let st = CosmicRayStage::new(deck, units, gas, mhd, th, dm)?;
        out.push(Box::new(st));
    }
    if let Some(c) = &deck.cooling {
        let gamma = match mhd.config().eos {
            Eos::Ideal { gamma } => gamma,
            Eos::Isothermal { .. } => return Err("cooling needs an ideal gas (gas.gamma)".into()),
        };
        out.push(Box::new(CoolingStage::new(c, th, *units, gamma)?));
    }
    Ok(out)
}

/// Lines for `sluice check` about the physics stages of a simulation at t = 0: c_r and
/// c_r / v_max, the CR subcycles per MHD step, the κ range and the Alfvén speed.
pub fn check_lines(deck: &Deck, units: &Units, gas: &State, mhd: &MhdSolver) -> Vec<String> {
    let mut lines = Vec::new();
    let Some(sec) = &deck.cosmic_rays else {
        return lines;
    };
    let eos = mhd.config().eos;
    let st = match CosmicRayStage::new(
        deck,
        units,
        gas,
        mhd,
        thermo(deck),
        deck.damping.as_ref().map(damping_model),
    ) {
        Ok(s) => s,
        Err(e) => return vec![format!("cosmic rays              cannot be set up: {e}")],
    };
    let d = st.derived();
    lines.push(format!(
        "CR model                 {}",
        sections::model_name(sec.model)
    ));
    lines.push(format!(
        "reduced speed of light   c_r = {:.6e} cm/s ({}), c_r / v_max = {:.3} (v_max = {:.6e} cm/s)",
        d.c_r,
        if d.auto {
            format!("auto, factor {}", sec.auto_factor)
        } else {
            "given".into()
        },
        d.c_r / d.v_max,
        d.v_max
    ));
    if d.c_r / d.v_max < 10.0 {
        lines.push(format!(
            "warning                  c_r / v_max = {:.3} < 10: the reduced-speed-of-light error may be large",
            d.c_r / d.v_max
        ));
    }
    let dt_mhd = mhd.max_dt(gas);
    let dt_cr = st.solver().max_dt_cr(gas);
    lines.push(format!(
        "CR subcycles per step    {} (MHD dt {:.6e} s, CR dt {:.6e} s)",
        (dt_mhd / dt_cr).ceil().max(1.0),
        dt_mhd * units.time(),
        dt_cr * units.time()
    ));
    let fields = st.fields(gas);
    let get = |n: &str| fields.iter().find(|f| f.name == n).map(|f| f.data.clone());
    let range = |v: &[f64]| {
        v.iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| {
                (a.min(x), b.max(x))
            })
    };
    if let Some(k) = get("kappa_effective") {
        let (a, b) = range(&k);
        lines.push(format!("kappa_effective range    {a:.6e} … {b:.6e} cm^2/s"));
    }
    if let Some(v) = get("alfven_speed") {
        let (a, b) = range(&v);
        lines.push(format!(
            "CR Alfven speed          {a:.6e} … {b:.6e} cm/s{}",
            if matches!(sec.model, sections::CrModelChoice::FixedKappa) {
                " (fixed_kappa: no streaming)"
            } else {
                ""
            }
        ));
    }
    lines.push(format!(
        "characteristic CR        Ω = {:.6e} s^-1, r_g = {:.6e} cm",
        d.omega, d.gyro_radius
    ));
    let _ = eos;
    lines
}

#[cfg(test)]
mod tests;
