//! Radiative cooling as a gas source stage (`cooling`).
//!
//! Per interior cell and `source(Δt/2)` call: T, n_H and n_tot = p/(k_B T) from ρ and p (see
//! [`Thermo`]), an isochoric update of T by the `sluice-damping` integrators — the exact scheme
//! of Townsend (2009, ApJS 181, 391) for `hot_power_law` / `table`, the safeguarded backward-Euler
//! update with heating for `ki02` (Koyama & Inutsuka 2002, ApJ 564, L97) — and the gas energy
//! lowered by the thermal energy removed, n_tot k_B ΔT/(γ−1). The removed energy (radiated minus
//! heating) is booked as `StageReport::energy_source` (negative for net cooling), so the ledger
//! closes to round-off.

use super::damping_adapter::{pressure, Thermo};
use super::sections::{CoolingFunctionChoice, CoolingSection, DensityPrefactorChoice};
use crate::stage::{OutputField, Stage, StageError, StageReport};
use crate::units::Units;
use sluice_damping::{
    CoolingIntegrator, DensityPrefactor, Ki02, Ki02Cooler, PowerLawSegment, PowerLawTable,
    TownsendCooler,
};
use sluice_mhd::State;

enum Cooler {
    Ki02(Ki02Cooler),
    Townsend(Box<TownsendCooler>),
}

impl Cooler {
    fn integrator(&self) -> &dyn CoolingIntegrator {
        match self {
            Cooler::Ki02(c) => c,
            Cooler::Townsend(c) => c.as_ref(),
        }
    }
}

/// The cooling stage.
pub struct CoolingStage {
    cooler: Cooler,
    thermo: Thermo,
    units: Units,
    gamma: f64,
    t_floor: f64,
    max_fraction: f64,
    /// Whether to write `temperature` (the driver writes it itself when μ is given).
    write_temperature: bool,
}

impl std::fmt::Debug for CoolingStage {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("CoolingStage")
            .field("t_floor", &self.t_floor)
            .field("max_fraction", &self.max_fraction)
            .finish()
    }
}

impl CoolingStage {
    /// Builds the stage from a validated `[cooling]` section.
    pub fn new(
        sec: &CoolingSection,
        thermo: Thermo,
        units: Units,
        gamma: f64,
    ) -> Result<Self, String> {
        let prefactor = match sec.density_prefactor {
            DensityPrefactorChoice::NHSquared => DensityPrefactor::HydrogenSquared,
            // n_e/n_H of the fixed ionisation, or of fully ionised gas otherwise.
            DensityPrefactorChoice::NENH => DensityPrefactor::ElectronHydrogen {
                electrons_per_h: thermo.composition.electrons_per_h(match thermo.ionisation {
                    Some(sluice_damping::Ionisation::Fixed { ion_fraction }) => ion_fraction,
                    _ => 1.0,
                }),
            },
        };
        let (cooler, t_floor) = match sec.function {
            CoolingFunctionChoice::Ki02 => {
                let t_floor = sec.temperature_floor.unwrap_or(10.0);
                let c = Ki02Cooler {
                    model: Ki02 {
                        heating: sec.heating.unwrap_or(2e-26),
                        ..Ki02::default()
                    },
                    prefactor,
                    t_floor,
                    substeps: 1,
                };
                c.validate().map_err(|e| format!("cooling: {e}"))?;
                (Cooler::Ki02(c), t_floor)
            }
            CoolingFunctionChoice::HotPowerLaw | CoolingFunctionChoice::Table => {
                let t_floor = sec.temperature_floor.unwrap_or(
                    if sec.function == CoolingFunctionChoice::HotPowerLaw {
                        1e4
                    } else {
                        10.0
                    },
                );
                let table = if sec.function == CoolingFunctionChoice::HotPowerLaw {
                    PowerLawTable::rosen_bregman_1995()
                } else {
                    PowerLawTable::from_segments(
                        sec.table
                            .iter()
                            .map(|r| PowerLawSegment {
                                t_min: r.t_min,
                                lambda_min: r.lambda,
                                slope: r.exponent,
                            })
                            .collect(),
                    )
                    .map_err(|e| format!("cooling.table: {e}"))?
                };
                let c = TownsendCooler::new(&table, t_floor, prefactor)
                    .map_err(|e| format!("cooling: {e}"))?;
                let t_low = c.t_low();
                (Cooler::Townsend(Box::new(c)), t_low)
            }
        };
        Ok(Self {
            cooler,
            thermo,
            units,
            gamma,
            t_floor,
            max_fraction: sec.max_cooling_fraction,
            write_temperature: thermo.mu.is_none(),
        })
    }
}

impl Stage for CoolingStage {
    fn name(&self) -> &str {
        "cooling"
    }

    fn max_dt(&self, gas: &State) -> f64 {
        if self.max_fraction <= 0.0 || self.max_fraction.is_nan() {
            return f64::INFINITY;
        }
        let u = self.units;
        let integ = self.cooler.integrator();
        let mut dt = f64::INFINITY;
        for j in gas.grid.interior() {
            let rho = gas.rho[j] * u.density;
            let p = pressure(gas, j, self.gamma) * u.pressure();
            let c = self.thermo.cell(rho, p);
            if c.temperature > 0.0 {
                dt = dt.min(integ.max_dt(
                    self.max_fraction,
                    c.temperature,
                    c.n_h,
                    c.n_total,
                    self.gamma,
                ));
            }
        }
        dt / u.time()
    }

    fn source(&mut self, gas: &mut State, dt: f64) -> Result<StageReport, StageError> {
        let u = self.units;
        let dt_s = dt * u.time();
        let pu = u.pressure();
        let integ = self.cooler.integrator();
        let mut removed = 0.0;
        let mut hits = 0u64;
        for j in gas.grid.interior() {
            let rho = gas.rho[j] * u.density;
            let p = pressure(gas, j, self.gamma) * pu;
            if !(rho > 0.0 && p > 0.0 && p.is_finite()) {
                return Err(StageError::Unphysical {
                    stage: "cooling".into(),
                    cell: j - gas.grid.ng,
                    what: format!("density {rho:e} g/cm^3, pressure {p:e} erg/cm^3"),
                });
            }
            let c = self.thermo.cell(rho, p);
            if c.temperature <= self.t_floor && matches!(self.cooler, Cooler::Townsend(_)) {
                hits += 1;
                continue;
            }
            let step = integ.step(c.temperature, c.n_h, c.n_total, self.gamma, dt_s);
            if step.temperature <= self.t_floor * (1.0 + 1e-12) && step.energy_loss > 0.0 {
                hits += 1;
            }
            // Thermal energy removed per volume, from the integrator's T change at fixed n_tot.
            let de = c.n_total * crate::units::K_BOLTZMANN * (c.temperature - step.temperature)
                / (self.gamma - 1.0);
            let de_code = de / pu;
            gas.en[j] -= de_code;
            removed += de_code;
        }
        let dx = gas.grid.dx();
        Ok(StageReport {
            floor_hits: hits,
            floor_energy: 0.0,
            energy_source: -removed * dx,
            boundary_energy_left: 0.0,
            boundary_energy_right: 0.0,
            substeps: 1,
        })
    }

    fn transport(&mut self, _gas: &mut State, _dt: f64) -> Result<StageReport, StageError> {
        Ok(StageReport {
            substeps: 0,
            ..Default::default()
        })
    }

    fn energy_terms(&self, _gas: &State) -> Vec<(String, f64)> {
        Vec::new()
    }

    fn fields(&self, gas: &State) -> Vec<OutputField> {
        let u = self.units;
        let integ = self.cooler.integrator();
        let mut t = Vec::with_capacity(gas.grid.n);
        let mut rate = Vec::with_capacity(gas.grid.n);
        for j in gas.grid.interior() {
            let rho = gas.rho[j] * u.density;
            let p = pressure(gas, j, self.gamma) * u.pressure();
            let c = self.thermo.cell(rho, p);
            t.push(c.temperature);
            rate.push(if c.temperature > self.t_floor {
                integ.net_cooling_rate(c.temperature, c.n_h)
            } else {
                0.0
            });
        }
        let mut out = vec![OutputField {
            name: "cooling_rate".into(),
            data: rate,
            units: "erg/cm^3/s".into(),
        }];
        if self.write_temperature {
            out.push(OutputField {
                name: "temperature".into(),
                data: t,
                units: "K".into(),
            });
        }
        out
    }

    fn checkpoint(&self) -> Vec<OutputField> {
        Vec::new()
    }

    fn restore(&mut self, _data: &[OutputField]) -> Result<(), StageError> {
        Ok(())
    }
}
