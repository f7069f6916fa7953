//! The cosmic-ray stage: `sluice_cosmic_rays::CrSolver` behind the driver's [`Stage`] trait.
//!
//! Calling order per step Δt (docs/cosmic-rays.md, "Calling sequence"): `source(Δt/2)` =
//! `CrSolver::exchange` (a no-op with the default `coupling = "in_transport"`), the MHD step,
//! `transport(Δt)` = gas ghost cells filled, damping rates and ion fractions re-evaluated from
//! the gas, `CrSolver::transport`, then `source(Δt/2)` again.

use super::damping_adapter::{DampingAdapter, Thermo};
use super::sections::{
    default_boundary, AlfvenDensityChoice, CosmicRaysSection, CouplingChoice, CrBoundaryChoice,
    CrLimiterChoice, CrModelChoice, CrProfileField, SpeedChoice, WorkFormChoice,
};
use crate::deck::Deck;
use crate::stage::{OutputField, Stage, StageError, StageReport};
use crate::units::Units;
use sluice_cosmic_rays::{
    auto_c_r, AlfvenDensity, Coupling, CrBoundary, CrBoundaryPair, CrParams, CrReport, CrSolver,
    CrState, Limiter, NoDamping, TransportModel, WaveDamping, WorkForm,
};
use sluice_damping::constants::C_LIGHT;
use sluice_damping::CharacteristicCr;
use sluice_mhd::{Eos, MhdSolver, State};

/// Derived numbers of the CR set-up (cgs), also printed by `sluice check`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CrDerived {
    /// Reduced speed of light, cm/s.
    pub c_r: f64,
    /// Largest MHD signal speed max(|v_x| + c_f) at t = 0, cm/s.
    pub v_max: f64,
    /// Whether c_r came from `"auto"`.
    pub auto: bool,
    /// Gyro-frequency of the characteristic CR, s⁻¹.
    pub omega: f64,
    /// Gyro-radius of the characteristic CR, cm.
    pub gyro_radius: f64,
}

/// Builds the CR parameters (code units) and derived numbers from the deck section.
pub fn cr_params(
    deck: &Deck,
    sec: &CosmicRaysSection,
    units: &Units,
    gas: &State,
    eos: &Eos,
) -> Result<(CrParams, CrDerived), String> {
    let u = units;
    let v_max = auto_c_r(gas, eos, 10.0).map_err(|e| e.to_string())?.v_max * u.velocity;
    let (c_r, auto) = match sec.reduced_speed_of_light {
        SpeedChoice::Value(v) => (v, false),
        SpeedChoice::Auto => ((sec.auto_factor * v_max).min(C_LIGHT), true),
    };
    let b_gauss = deck.magnetic_field.x.abs();
    let ch = CharacteristicCr {
        momentum_gev: sec.cr_momentum,
    };
    let omega = ch.gyro_frequency(b_gauss);
    let kappa_code = |k: f64| k / (u.length * u.velocity);
    let model = match sec.model {
        CrModelChoice::SelfConfined => TransportModel::SelfConfined,
        CrModelChoice::FixedKappa => TransportModel::FixedKappa {
            kappa: kappa_code(sec.kappa.unwrap_or(f64::NAN)),
        },
        CrModelChoice::Streaming => TransportModel::Streaming {
            kappa: kappa_code(sec.kappa.unwrap_or(f64::NAN)),
            kappa_decoupled: sec.kappa_decoupled.map_or(f64::INFINITY, kappa_code),
        },
    };
    let flux_u = u.pressure() * u.velocity;
    let side = |ch: Option<CrBoundaryChoice>, gas_b, flux: Option<f64>, dens: Option<f64>| match ch
        .unwrap_or_else(|| default_boundary(gas_b))
    {
        CrBoundaryChoice::Outflow => CrBoundary::Outflow,
        CrBoundaryChoice::Reflecting => CrBoundary::Reflecting,
        CrBoundaryChoice::Periodic => CrBoundary::Periodic,
        CrBoundaryChoice::InjectedFlux => CrBoundary::FixedFlux(flux.unwrap_or(0.0) / flux_u),
        CrBoundaryChoice::FixedEnergyDensity => {
            CrBoundary::FixedEnergyDensity(dens.unwrap_or(0.0) / u.pressure())
        }
    };
    let mut p = CrParams::new(c_r / u.velocity, C_LIGHT / u.velocity, omega * u.time());
    p.gamma_c = sec.adiabatic_index;
    p.alpha_nu = sec.scattering_prefactor;
    p.wave_floor = sec.wave_floor;
    p.alfven_density = match sec.alfven_density {
        AlfvenDensityChoice::Ion => AlfvenDensity::Ion,
        AlfvenDensityChoice::Total => AlfvenDensity::Total,
    };
    p.limiter = match sec.limiter {
        CrLimiterChoice::Minmod => Limiter::Minmod,
        CrLimiterChoice::VanLeer => Limiter::VanLeer,
        CrLimiterChoice::Mc => Limiter::Mc,
    };
    p.asymptotic_preserving = sec.asymptotic_preserving;
    p.work_form = match sec.work_form {
        WorkFormChoice::Scattering => WorkForm::Scattering,
        WorkFormChoice::PressureGradient => WorkForm::PressureGradient,
    };
    p.model = model;
    p.boundaries = CrBoundaryPair {
        left: side(
            sec.left,
            deck.boundaries.left,
            sec.left_flux,
            sec.left_energy_density,
        ),
        right: side(
            sec.right,
            deck.boundaries.right,
            sec.right_flux,
            sec.right_energy_density,
        ),
    };
    p.cfl = sec.cfl;
    p.max_subcycles = sec.max_subcycles;
    p.coupling = match sec.coupling {
        CouplingChoice::InTransport => Coupling::InTransport,
        CouplingChoice::Split => Coupling::Split,
    };
    Ok((
        p,
        CrDerived {
            c_r,
            v_max,
            auto,
            omega,
            gyro_radius: ch.gyro_radius(b_gauss),
        },
    ))
}

/// Initial CR state (code units) from `[cosmic_rays.init]`.
pub fn initial_cr_state(
    sec: &CosmicRaysSection,
    units: &Units,
    gas: &State,
) -> Result<CrState, String> {
    let g = gas.grid;
    let mut cr = CrState::zeros(&g);
    let eb = 0.5 * gas.bx * gas.bx;
    let init = &sec.init;
    let pu = units.pressure();
    let fu = pu * units.velocity;
    let fwd = init.forward_wave_energy.unwrap_or(sec.wave_floor) * eb;
    let bwd = init.backward_wave_energy.unwrap_or(sec.wave_floor) * eb;
    let waves = sec.model == CrModelChoice::SelfConfined;
    for j in 0..g.len() {
        let x = g.x_center(j) * units.length;
        let mut e = init.energy_density;
        let mut f = init.flux;
        for p in &init.profiles {
            match p.field {
                CrProfileField::EnergyDensity => e += p.value(x),
                CrProfileField::Flux => f += p.value(x),
            }
        }
        if g.interior().contains(&j) && !(e >= 0.0 && e.is_finite()) {
            return Err(format!(
                "cosmic_rays.init.profiles make the CR energy density {e:e} erg/cm^3 at x = {x} cm; allowed: >= 0 everywhere"
            ));
        }
        cr.e_c[j] = e.max(0.0) / pu;
        cr.f[j] = f / fu;
        if waves {
            cr.e_plus[j] = fwd;
            cr.e_minus[j] = bwd;
        }
    }
    Ok(cr)
}

/// The CR stage (name `cr`).
pub struct CosmicRayStage {
    solver: CrSolver,
    cr: CrState,
    damping: Option<DampingAdapter>,
    /// Fills the gas ghost cells before the CR transport (which reads them at the edges).
    mhd: MhdSolver,
    units: Units,
    derived: CrDerived,
    thermo: Thermo,
    gamma: f64,
    bx: f64,
    xi_update: bool,
    waves: bool,
    xi_scratch: Vec<f64>,
}

impl std::fmt::Debug for CosmicRayStage {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("CosmicRayStage")
            .field("derived", &self.derived)
            .finish()
    }
}

fn stage_err(e: impl std::fmt::Display) -> StageError {
    StageError::Failed {
        stage: "cr".into(),
        what: e.to_string(),
    }
}

impl CosmicRayStage {
    /// Builds the stage from the deck (`[cosmic_rays]` must be present), the gas at t = 0
    /// (ghost cells filled) and the MHD solver.
    pub fn new(
        deck: &Deck,
        units: &Units,
        gas: &State,
        mhd: &MhdSolver,
        thermo: Thermo,
        damping: Option<sluice_damping::DampingModel>,
    ) -> Result<Self, String> {
        let sec = deck
            .cosmic_rays
            .as_ref()
            .ok_or_else(|| "no [cosmic_rays] section".to_string())?;
        let eos = mhd.config().eos;
        let gamma = match eos {
            Eos::Ideal { gamma } => gamma,
            Eos::Isothermal { .. } => {
                return Err("cosmic_rays needs an ideal gas (gas.gamma)".into())
            }
        };
        let (params, derived) = cr_params(deck, sec, units, gas, &eos)?;
        let solver = CrSolver::new(params, gas.grid).map_err(|e| format!("cosmic_rays: {e}"))?;
        let cr = initial_cr_state(sec, units, gas)?;
        solver.check(&cr, gas).map_err(|e| {
            format!("cosmic_rays (see magnetic_field.x and the transverse init fields): {e}")
        })?;
        let ion_alfven = sec.alfven_density == AlfvenDensityChoice::Ion;
        let adapter = damping.map(|m| {
            DampingAdapter::new(
                m,
                thermo,
                CharacteristicCr {
                    momentum_gev: sec.cr_momentum,
                },
                *units,
                gamma,
                ion_alfven,
                gas.grid.len(),
            )
        });
        let mhd2 = MhdSolver::new(*mhd.config(), gas.grid).map_err(|e| e.to_string())?;
        let mut st = Self {
            solver,
            cr,
            damping: adapter,
            mhd: mhd2,
            units: *units,
            derived,
            thermo,
            gamma,
            bx: gas.bx,
            xi_update: ion_alfven && thermo.ionisation.is_some(),
            waves: sec.model == CrModelChoice::SelfConfined,
            xi_scratch: vec![1.0; gas.grid.len()],
        };
        st.refresh(gas).map_err(|e| e.to_string())?;
        st.solver.apply_boundaries(&mut st.cr, gas);
        Ok(st)
    }

    /// Re-evaluates the damping rates and (CIE or fixed ionisation with ion Alfvén density) the
    /// ion mass fractions from the current gas.
    fn refresh(&mut self, gas: &State) -> Result<(), StageError> {
        if let Some(d) = self.damping.as_mut() {
            d.update(gas);
            if self.xi_update {
                return self
                    .solver
                    .set_ion_fraction(d.ion_mass_fraction())
                    .map_err(stage_err);
            }
            return Ok(());
        }
        if self.xi_update {
            let u = self.units;
            for (j, x) in self.xi_scratch.iter_mut().enumerate() {
                let rho = gas.rho[j] * u.density;
                let p = super::damping_adapter::pressure(gas, j, self.gamma) * u.pressure();
                *x = if rho > 0.0 && rho.is_finite() {
                    self.thermo
                        .ion_mass_fraction(self.thermo.cell(rho, p).ion_fraction)
                } else {
                    1.0
                };
            }
            self.solver
                .set_ion_fraction(&self.xi_scratch)
                .map_err(stage_err)?;
        }
        Ok(())
    }

    /// Derived numbers (cgs).
    pub fn derived(&self) -> &CrDerived {
        &self.derived
    }

    /// The CR solver.
    pub fn solver(&self) -> &CrSolver {
        &self.solver
    }

    /// The CR state (code units).
    pub fn cr_state(&self) -> &CrState {
        &self.cr
    }

    fn damping(&self) -> &dyn WaveDamping {
        match &self.damping {
            Some(d) => d,
            None => &NoDamping,
        }
    }

    fn report(&self, r: &CrReport, substeps: u64) -> StageReport {
        // The wave floor's energy is taken from the gas inside the CR crate (conservative), so
        // it is no ledger source; the hits are counted as the wave fields sitting at the floor
        // after a call that applied it.
        let mut hits = 0u64;
        if self.waves && r.floor_energy > 0.0 {
            let fl = self.solver.params().wave_floor * 0.5 * self.bx * self.bx;
            let ng = sluice_mhd::Grid::GHOSTS;
            let n = self.cr.e_c.len();
            let r = ng..n - ng;
            let ep = &self.cr.e_plus.as_slice().unwrap_or(&[])[r.clone()];
            let em = &self.cr.e_minus.as_slice().unwrap_or(&[])[r];
            hits = ep
                .iter()
                .chain(em)
                .filter(|&&e| e <= fl * (1.0 + 1e-12))
                .count() as u64;
            hits = hits.max(1);
        }
        StageReport {
            floor_hits: hits,
            floor_energy: 0.0,
            energy_source: 0.0,
            boundary_energy_left: r.energy_in_left,
            boundary_energy_right: r.energy_in_right,
            substeps,
        }
    }

    fn map_cr_err(&self, e: sluice_cosmic_rays::CrError) -> StageError {
        match e {
            sluice_cosmic_rays::CrError::Unphysical { cell, what, .. } => StageError::Unphysical {
                stage: "cr".into(),
                cell,
                what,
            },
            other => stage_err(other),
        }
    }
}

impl Stage for CosmicRayStage {
    fn name(&self) -> &str {
        "cr"
    }

    fn max_dt(&self, gas: &State) -> f64 {
        self.solver.max_dt(gas)
    }

    fn source(&mut self, gas: &mut State, dt: f64) -> Result<StageReport, StageError> {
        if self.solver.params().coupling == Coupling::InTransport {
            return Ok(StageReport::default());
        }
        self.mhd.apply_boundaries(gas);
        self.refresh(gas)?;
        let damping: &dyn WaveDamping = match &self.damping {
            Some(d) => d,
            None => &NoDamping,
        };
        let r = self
            .solver
            .exchange(&mut self.cr, gas, damping, dt)
            .map_err(stage_err)?;
        Ok(self.report(&r, 1))
    }

    fn transport(&mut self, gas: &mut State, dt: f64) -> Result<StageReport, StageError> {
        self.mhd.apply_boundaries(gas);
        self.refresh(gas)?;
        let damping: &dyn WaveDamping = match &self.damping {
            Some(d) => d,
            None => &NoDamping,
        };
        let r = self.solver.transport(&mut self.cr, gas, damping, dt);
        let r = r.map_err(|e| self.map_cr_err(e))?;
        Ok(self.report(&r, r.subcycles as u64))
    }

    fn energy_terms(&self, _gas: &State) -> Vec<(String, f64)> {
        let t = self.cr.totals(&self.solver_grid());
        vec![
            ("cosmic_rays".into(), t[0]),
            ("forward_waves".into(), t[2]),
            ("backward_waves".into(), t[3]),
        ]
    }

    fn fields(&self, gas: &State) -> Vec<OutputField> {
        let u = self.units;
        let pu = u.pressure();
        let vu = u.velocity;
        let ku = u.length * u.velocity;
        let hu = pu / u.time();
        let g = self.solver_grid();
        let r = g.interior();
        let sl = |a: &ndarray::Array1<f64>, s: f64| -> Vec<f64> {
            a.slice(ndarray::s![r.clone()])
                .iter()
                .map(|x| x * s)
                .collect()
        };
        let d = self.solver.diagnostics(&self.cr, gas, self.damping());
        let sc = |v: &[f64], s: f64| -> Vec<f64> { v.iter().map(|x| x * s).collect() };
        let f = |name: &str, data: Vec<f64>, units: &str| OutputField {
            name: name.into(),
            data,
            units: units.into(),
        };
        let out = vec![
            f("cr_energy_density", sl(&self.cr.e_c, pu), "erg/cm^3"),
            f(
                "cr_pressure",
                sl(&self.cr.e_c, (self.gamma_c() - 1.0) * pu),
                "erg/cm^3",
            ),
            f("cr_flux", sl(&self.cr.f, pu * vu), "erg/cm^2/s"),
            f("forward_wave_energy", sl(&self.cr.e_plus, pu), "erg/cm^3"),
            f("backward_wave_energy", sl(&self.cr.e_minus, pu), "erg/cm^3"),
            f("streaming_speed", sc(&d.v_st, vu), "cm/s"),
            f("streaming_speed_over_alfven", d.v_st_over_v_a.clone(), "1"),
            f("kappa_forward", sc(&d.kappa_plus, ku), "cm^2/s"),
            f("kappa_backward", sc(&d.kappa_minus, ku), "cm^2/s"),
            f("kappa_effective", sc(&d.kappa_eff, ku), "cm^2/s"),
            f("alfven_speed", sc(&d.v_a, vu), "cm/s"),
            f(
                "wave_heating_rate",
                sc(&d.damping_heating, hu),
                "erg/cm^3/s",
            ),
            f(
                "wave_heating_last_step",
                sc(&d.heating_last_step, hu),
                "erg/cm^3/s",
            ),
            f(
                "streaming_heating",
                sc(&d.streaming_heating, hu),
                "erg/cm^3/s",
            ),
            f("cr_force", sc(&d.cr_force, pu / u.length), "dyn/cm^3"),
            f(
                "cr_streaming_flux",
                sc(&d.streaming_flux, pu * vu),
                "erg/cm^2/s",
            ),
            f(
                "cr_diffusive_flux",
                sc(&d.diffusive_flux, pu * vu),
                "erg/cm^2/s",
            ),
            f("cr_streaming_fraction", d.streaming_fraction.clone(), "1"),
            f("cr_regime", regime_map(&d.streaming_fraction), "1"),
        ];
        out
    }

    fn checkpoint(&self) -> Vec<OutputField> {
        let f = |name: &str, a: &ndarray::Array1<f64>| OutputField {
            name: name.into(),
            data: a.to_vec(),
            units: "code".into(),
        };
        let mut out = vec![
            f("e_c", &self.cr.e_c),
            f("f", &self.cr.f),
            f("e_plus", &self.cr.e_plus),
            f("e_minus", &self.cr.e_minus),
            OutputField {
                name: "c_r".into(),
                data: vec![self.solver.params().c_r],
                units: "code".into(),
            },
        ];
        // The ion mass fraction of the last refresh enters the next step's max_dt (ion Alfvén
        // speed), so a bit-exact restart needs it (storage cells, dimensionless).
        if self.xi_update {
            let xi = match &self.damping {
                Some(d) => d.ion_mass_fraction().to_vec(),
                None => self.xi_scratch.clone(),
            };
            out.push(OutputField {
                name: "ion_mass_fraction".into(),
                data: xi,
                units: "1".into(),
            });
        }
        out
    }

    fn cell_array(&self, name: &str) -> Option<&[f64]> {
        self.named_array(name)
    }

    fn restore(&mut self, data: &[OutputField]) -> Result<(), StageError> {
        let n = self.cr.e_c.len();
        let bad = |what: String| StageError::Restore {
            stage: "cr".into(),
            what,
        };
        for name in ["e_c", "f", "e_plus", "e_minus", "c_r"] {
            let Some(d) = data.iter().find(|d| d.name == name) else {
                return Err(bad(format!("dataset `{name}` missing")));
            };
            let want = if name == "c_r" { 1 } else { n };
            if d.data.len() != want {
                return Err(bad(format!(
                    "dataset `{name}` has {} values, expected {want}",
                    d.data.len()
                )));
            }
            match name {
                "e_c" => self
                    .cr
                    .e_c
                    .as_slice_mut()
                    .unwrap_or(&mut [])
                    .copy_from_slice(&d.data),
                "f" => self
                    .cr
                    .f
                    .as_slice_mut()
                    .unwrap_or(&mut [])
                    .copy_from_slice(&d.data),
                "e_plus" => self
                    .cr
                    .e_plus
                    .as_slice_mut()
                    .unwrap_or(&mut [])
                    .copy_from_slice(&d.data),
                "e_minus" => self
                    .cr
                    .e_minus
                    .as_slice_mut()
                    .unwrap_or(&mut [])
                    .copy_from_slice(&d.data),
                _ => self
                    .solver
                    .set_c_r(d.data[0])
                    .map_err(|e| bad(e.to_string()))?,
            }
        }
        if self.xi_update {
            if let Some(d) = data.iter().find(|d| d.name == "ion_mass_fraction") {
                self.solver
                    .set_ion_fraction(&d.data)
                    .map_err(|e| bad(format!("dataset `ion_mass_fraction`: {e}")))?;
                if self.xi_scratch.len() == d.data.len() {
                    self.xi_scratch.copy_from_slice(&d.data);
                }
            }
        }
        Ok(())
    }
}

impl CosmicRayStage {
    /// Per-cell arrays for diagnostics (storage cells, code units): `e_c`, `f` (the comoving
    /// CR flux F) and `heating_rate` (the solver's CR → gas heating averaged over the last
    /// call).
    fn named_array(&self, name: &str) -> Option<&[f64]> {
        match name {
            "e_c" => self.cr.e_c.as_slice(),
            "f" => self.cr.f.as_slice(),
            "heating_rate" => self.solver.heating_rate().as_slice(),
            _ => None,
        }
    }

    fn solver_grid(&self) -> sluice_mhd::Grid {
        *self.mhd.grid()
    }

    fn gamma_c(&self) -> f64 {
        self.solver.params().gamma_c
    }
}

/// Regime map from the streaming fraction φ (docs/output-format.md): 2 = streaming-dominated
/// (φ ≥ 1/2), 1 = diffusion-dominated (φ < 1/2), 0 = no quasi-steady CR flux (φ undefined:
/// flat e_c and no net streaming velocity). Stored as floats (snapshot datasets are f64).
pub fn regime_map(fraction: &[f64]) -> Vec<f64> {
    fraction
        .iter()
        .map(|&phi| {
            if phi.is_nan() {
                0.0
            } else if phi >= 0.5 {
                2.0
            } else {
                1.0
            }
        })
        .collect()
}
