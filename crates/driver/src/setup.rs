//! Problem set-up: a validated [`Deck`] → grid, MHD solver configuration and initial state,
//! all in code units.

use crate::deck::{
    BoundaryChoice, Deck, GasState, IntegratorChoice, LimiterChoice, ProfileField,
    ReconstructionChoice, RiemannChoice, WaveDirection, WaveFamily,
};
use crate::units::Units;
use crate::DriverError;
use sluice_mhd::{
    Boundary, BoundaryPair, Eos, Floors, Grid, Integrator, Limiter, Primitive, Reconstruction,
    RiemannKind, SolverConfig, State,
};

/// Equation of state in code units.
pub fn eos(deck: &Deck, u: &Units) -> Eos {
    match (deck.gas.gamma, deck.gas.isothermal_sound_speed) {
        (_, Some(cs)) => Eos::Isothermal {
            cs: cs / u.velocity,
        },
        (Some(gamma), None) => Eos::Ideal { gamma },
        // `Deck::validate` guarantees one of the two.
        (None, None) => Eos::Ideal { gamma: f64::NAN },
    }
}

/// A deck gas state (cgs) → MHD primitive (code units). For an isothermal gas the pressure
/// slot is c_s² ρ.
pub fn primitive(s: &GasState, eos: &Eos, u: &Units) -> Primitive {
    let rho = s.density / u.density;
    let p = match *eos {
        Eos::Ideal { .. } => s.pressure.unwrap_or(f64::NAN) / u.pressure(),
        Eos::Isothermal { cs } => cs * cs * rho,
    };
    Primitive {
        rho,
        vx: s.velocity_x / u.velocity,
        vy: s.velocity_y / u.velocity,
        vz: s.velocity_z / u.velocity,
        p,
        by: u.field_to_code(s.magnetic_field_y),
        bz: u.field_to_code(s.magnetic_field_z),
    }
}

/// Grid in code length units.
pub fn grid(deck: &Deck, u: &Units) -> Result<Grid, DriverError> {
    Ok(Grid::new(
        deck.grid.cells as usize,
        deck.grid.x_min / u.length,
        deck.grid.x_max / u.length,
    )?)
}

/// MHD solver configuration in code units.
pub fn solver_config(deck: &Deck, u: &Units) -> SolverConfig {
    let eos = eos(deck, u);
    let m = &deck.mhd;
    let limiter = match m.limiter {
        LimiterChoice::Minmod => Limiter::Minmod,
        LimiterChoice::VanLeer => Limiter::VanLeer,
        LimiterChoice::Mc => Limiter::Mc,
    };
    let side = |b: BoundaryChoice, st: &Option<GasState>| match b {
        BoundaryChoice::Periodic => Boundary::Periodic,
        BoundaryChoice::Outflow => Boundary::Outflow,
        BoundaryChoice::Reflecting => Boundary::Reflecting,
        BoundaryChoice::Inflow => Boundary::Inflow(
            st.as_ref()
                .map(|s| primitive(s, &eos, u))
                .unwrap_or_default(),
        ),
    };
    SolverConfig {
        eos,
        riemann: match m.riemann {
            RiemannChoice::Hlle => RiemannKind::Hlle,
            RiemannChoice::Hlld => RiemannKind::Hlld,
        },
        reconstruction: match m.reconstruction {
            ReconstructionChoice::First => Reconstruction::FirstOrder,
            ReconstructionChoice::Plm => Reconstruction::Plm(limiter),
            ReconstructionChoice::PlmCharacteristic => Reconstruction::PlmCharacteristic(limiter),
        },
        integrator: match m.integrator {
            IntegratorChoice::Rk2 => Integrator::SspRk2,
            IntegratorChoice::Rk3 => Integrator::SspRk3,
        },
        cfl: m.cfl,
        floors: {
            let (rho_min, p_min) = deck.floors();
            Floors {
                rho_min: rho_min / u.density,
                p_min: p_min / u.pressure(),
            }
        },
        boundaries: BoundaryPair {
            left: side(deck.boundaries.left, &deck.boundaries.left_state),
            right: side(deck.boundaries.right, &deck.boundaries.right_state),
        },
    }
}

/// Builds the initial state (code units, ghosts filled by the caller's solver).
///
/// Order: background, then regions (a cell belongs to the last region containing its centre),
/// then the linear wave (conserved perturbation δU = ε R cos(k x) sampled at cell centres),
/// then profiles (added to primitive fields at cell centres, cgs amplitudes). A profile that
/// makes density or pressure non-positive is an error naming the profile.
pub fn initial_state(deck: &Deck, u: &Units, grid: &Grid) -> Result<State, DriverError> {
    let eos = eos(deck, u);
    let bx = u.field_to_code(deck.magnetic_field.x);
    let mut st = State::zeros(*grid, bx);
    let bg = deck.init.background.as_ref().map(|s| primitive(s, &eos, u));
    let regions: Vec<(f64, f64, Primitive)> = deck
        .init
        .regions
        .iter()
        .map(|r| (r.x_min, r.x_max, primitive(&r.state(), &eos, u)))
        .collect();
    let to_cm = u.length;
    for j in grid.interior() {
        let x_cm = grid.x_center(j) * to_cm;
        let mut w = regions.iter().rev().find(|(a, b, _)| x_cm >= *a && x_cm < *b).map(|r| r.2).or(bg).ok_or_else(|| {
            DriverError::Setup(format!("no region of init.regions covers the cell centred at x = {x_cm} cm and there is no init.background"))
        })?;
        if let Some(b) = &bg {
            crate::slab::overlay(deck, u, b, x_cm, &mut w);
        }
        for (i, p) in deck.init.profiles.iter().enumerate() {
            let d = p.value(x_cm);
            match p.field {
                ProfileField::Density => w.rho += d / u.density,
                ProfileField::Pressure => w.p += d / u.pressure(),
                ProfileField::VelocityX => w.vx += d / u.velocity,
                ProfileField::VelocityY => w.vy += d / u.velocity,
                ProfileField::VelocityZ => w.vz += d / u.velocity,
                ProfileField::MagneticFieldY => w.by += u.field_to_code(d),
                ProfileField::MagneticFieldZ => w.bz += u.field_to_code(d),
            }
            if !(w.rho > 0.0 && w.rho.is_finite())
                || (matches!(eos, Eos::Ideal { .. }) && !(w.p > 0.0 && w.p.is_finite()))
            {
                return Err(DriverError::Setup(format!(
                    "init.profiles[{i}] makes the state unphysical at x = {x_cm} cm (density {} g/cm³, pressure {} erg/cm³); allowed: density > 0 and pressure > 0 everywhere",
                    w.rho * u.density,
                    w.p * u.pressure()
                )));
            }
        }
        if let Eos::Isothermal { cs } = eos {
            w.p = cs * cs * w.rho;
        }
        st.set_primitive(j, &w, &eos);
    }
    if let (Some(wave), Some(bgw)) = (&deck.init.wave, bg) {
        let family = match wave.family {
            WaveFamily::Fast => sluice_mhd::WaveFamily::Fast,
            WaveFamily::Alfven => sluice_mhd::WaveFamily::Alfven,
            WaveFamily::Slow => sluice_mhd::WaveFamily::Slow,
            WaveFamily::Entropy => sluice_mhd::WaveFamily::Entropy,
        };
        if matches!(eos, Eos::Isothermal { .. }) && family == sluice_mhd::WaveFamily::Entropy {
            return Err(DriverError::Setup("init.wave.family = \"entropy\": an isothermal gas has no entropy wave; allowed: fast, alfven, slow".into()));
        }
        let dir = match wave.direction {
            WaveDirection::Right => 1,
            WaveDirection::Left => -1,
        };
        let (_lam, r) = sluice_mhd::linear_wave(&bgw, bx, &eos, family, dir);
        if r.iter().any(|v| !v.is_finite()) || r.iter().all(|v| *v == 0.0) {
            return Err(DriverError::Setup(format!("init.wave: the {:?} eigenvector is degenerate for this background; choose another family or background", wave.family)));
        }
        let k = 2.0 * std::f64::consts::PI * wave.wavelengths as f64 / (grid.x_max - grid.x_min);
        let eps = wave.amplitude;
        for j in grid.interior() {
            let c = eps * (k * (grid.x_center(j) - grid.x_min)).cos();
            st.rho[j] += c * r[0];
            st.mx[j] += c * r[1];
            st.my[j] += c * r[2];
            st.mz[j] += c * r[3];
            st.en[j] += c * r[4];
            st.by[j] += c * r[5];
            st.bz[j] += c * r[6];
        }
    }
    Ok(st)
}

/// Phase speed of the deck's linear wave in code units (`None` without `[init.wave]`).
pub fn wave_speed(deck: &Deck, u: &Units) -> Option<f64> {
    let wave = deck.init.wave.as_ref()?;
    let eos = eos(deck, u);
    let bg = primitive(deck.init.background.as_ref()?, &eos, u);
    let family = match wave.family {
        WaveFamily::Fast => sluice_mhd::WaveFamily::Fast,
        WaveFamily::Alfven => sluice_mhd::WaveFamily::Alfven,
        WaveFamily::Slow => sluice_mhd::WaveFamily::Slow,
        WaveFamily::Entropy => sluice_mhd::WaveFamily::Entropy,
    };
    let dir = if wave.direction == WaveDirection::Right {
        1
    } else {
        -1
    };
    Some(
        sluice_mhd::linear_wave(
            &bg,
            u.field_to_code(deck.magnetic_field.x),
            &eos,
            family,
            dir,
        )
        .0,
    )
}
