//! Per-cell gas thermodynamics (temperature, ionisation, n_H) and the adapter of the cgs
//! damping laws of `sluice-damping` to the CR crate's [`WaveDamping`] trait.
//!
//! Definitions (docs/deck.md, "Physics sections"):
//! * T = μ m p/(ρ k_B): with `gas.mean_molecular_weight` μ is that number and m the atomic mass
//!   unit (as in the snapshot temperature); otherwise μ = (1 + 4y)/(1 + y + x_i(1 + 2y)) from
//!   the `[ionisation]` composition with m = m_p (`sluice_damping::Composition`), solved
//!   self-consistently with x_i(T) for CIE by bisection in T.
//! * n_H = ρ/(m_p (1 + 4y)), y = n_He/n_H (`[ionisation].helium_per_hydrogen`, default 0.1).
//! * x_i = n_HII/n_H from `[ionisation]` (1 without it); neutral fraction x_n = 1 − x_i.
//! * The ion **mass** fraction handed to `CrSolver::set_ion_fraction` for
//!   `alfven_density = "ion"` is ρ_i/ρ = x_i/(1 + 4y) (hydrogen ions only, as
//!   `Composition::ion_mass_density` with helium_ions_per_h = 0).

use crate::units::{Units, ATOMIC_MASS_UNIT, K_BOLTZMANN};
use sluice_cosmic_rays::{WaveDamping, WaveDirection};
use sluice_damping::constants::M_PROTON;
use sluice_damping::{CharacteristicCr, Composition, DampingModel, Ionisation, LocalConditions};
use sluice_mhd::State;

/// How the temperature and ionisation of a cell follow from ρ and p (cgs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Thermo {
    /// `gas.mean_molecular_weight`, if given.
    pub mu: Option<f64>,
    /// `[ionisation]`, if given.
    pub ionisation: Option<Ionisation>,
    /// H/He composition.
    pub composition: Composition,
}

/// Thermodynamic state of one cell (cgs).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct CellThermo {
    /// Temperature, K.
    pub temperature: f64,
    /// Ionised hydrogen fraction x_i = n_HII/n_H.
    pub ion_fraction: f64,
    /// Hydrogen nucleus density, cm⁻³.
    pub n_h: f64,
    /// Total particle density p/(k_B T), cm⁻³.
    pub n_total: f64,
}

impl Thermo {
    /// Ion mass fraction ρ_i/ρ = x_i/(1 + 4y) for ionised fraction `x_i`.
    pub fn ion_mass_fraction(&self, x_i: f64) -> f64 {
        self.composition.ion_mass_density(1.0, x_i) / self.composition.mass_density(1.0)
    }

    /// T, x_i, n_H and n_tot of a cell with density `rho` [g/cm³] and pressure `p` [erg/cm³].
    /// Non-positive inputs give T = 0.
    pub fn cell(&self, rho: f64, p: f64) -> CellThermo {
        let n_h = self.composition.hydrogen_density(rho);
        let p = p.max(0.0);
        let (t, xi) = match (self.mu, self.ionisation) {
            (Some(mu), ion) => {
                let t = mu * ATOMIC_MASS_UNIT * p / (rho * K_BOLTZMANN);
                (t, ion.map_or(1.0, |i| i.ion_fraction(t)))
            }
            (None, Some(Ionisation::Fixed { ion_fraction })) => {
                let mu = self.composition.mean_molecular_weight(ion_fraction);
                (mu * M_PROTON * p / (rho * K_BOLTZMANN), ion_fraction)
            }
            (None, Some(ion)) => {
                // T = μ(x_i(T)) m_p p/(ρ k): μ lies between its ionised and neutral values, so
                // the root is bracketed by the two corresponding temperatures.
                let scale = M_PROTON * p / (rho * K_BOLTZMANN);
                let f = |t: f64| {
                    t - self.composition.mean_molecular_weight(ion.ion_fraction(t)) * scale
                };
                let mut lo = self.composition.mean_molecular_weight(1.0) * scale;
                let mut hi = self.composition.mean_molecular_weight(0.0) * scale;
                if !(lo > 0.0 && hi.is_finite()) {
                    (0.0, ion.ion_fraction(0.0))
                } else {
                    if f(lo) >= 0.0 {
                        hi = lo;
                    } else if f(hi) <= 0.0 {
                        lo = hi;
                    }
                    for _ in 0..80 {
                        if hi - lo <= 1e-13 * hi {
                            break;
                        }
                        let mid = 0.5 * (lo + hi);
                        if f(mid) > 0.0 {
                            hi = mid;
                        } else {
                            lo = mid;
                        }
                    }
                    let t = 0.5 * (lo + hi);
                    (t, ion.ion_fraction(t))
                }
            }
            (None, None) => (0.0, 1.0),
        };
        let n_total = if t > 0.0 { p / (K_BOLTZMANN * t) } else { 0.0 };
        CellThermo {
            temperature: t,
            ion_fraction: xi,
            n_h,
            n_total,
        }
    }
}

/// Gas pressure (code units) of storage cell `j` of an ideal gas with index `gamma`.
#[inline]
pub fn pressure(gas: &State, j: usize, gamma: f64) -> f64 {
    let d = gas.rho[j];
    let k = 0.5 * (gas.mx[j] * gas.mx[j] + gas.my[j] * gas.my[j] + gas.mz[j] * gas.mz[j]) / d;
    let m = 0.5 * (gas.bx * gas.bx + gas.by[j] * gas.by[j] + gas.bz[j] * gas.bz[j]);
    (gamma - 1.0) * (gas.en[j] - k - m)
}

/// The cgs [`DampingModel`] evaluated per cell once per step and served to the CR solver in
/// code units: linear [s⁻¹] × t_unit, quadratic [cm³ erg⁻¹ s⁻¹] × t_unit × P_unit.
#[derive(Debug, Clone)]
pub struct DampingAdapter {
    model: DampingModel,
    thermo: Thermo,
    cr: CharacteristicCr,
    units: Units,
    gamma: f64,
    ion_alfven: bool,
    /// Linear rate per storage cell, code 1/time.
    linear: Vec<f64>,
    /// Quadratic coefficient per storage cell, code 1/(energy density · time).
    quadratic: Vec<f64>,
    /// Ion mass fraction per storage cell (for the solver's ion Alfvén speed).
    ion_mass_fraction: Vec<f64>,
    /// Temperature per storage cell, K.
    temperature: Vec<f64>,
}

impl DampingAdapter {
    /// A cache of `len` cells. `ion_alfven`: the Alfvén speed in the damping rates uses the ion
    /// density (as the CR terms do with `alfven_density = "ion"`).
    pub fn new(
        model: DampingModel,
        thermo: Thermo,
        cr: CharacteristicCr,
        units: Units,
        gamma: f64,
        ion_alfven: bool,
        len: usize,
    ) -> Self {
        Self {
            model,
            thermo,
            cr,
            units,
            gamma,
            ion_alfven,
            linear: vec![0.0; len],
            quadratic: vec![0.0; len],
            ion_mass_fraction: vec![1.0; len],
            temperature: vec![0.0; len],
        }
    }

    /// Re-evaluates every storage cell's conditions and rates from `gas` (ghosts must be filled).
    pub fn update(&mut self, gas: &State) {
        let u = self.units;
        let b = u.field_to_gauss(gas.bx).abs();
        let r_g = self.cr.gyro_radius(b);
        let t_u = u.time();
        let qfac = t_u * u.pressure();
        let it = self
            .linear
            .iter_mut()
            .zip(self.quadratic.iter_mut())
            .zip(self.ion_mass_fraction.iter_mut())
            .zip(self.temperature.iter_mut())
            .enumerate();
        for (j, (((lin, quad), ximass), temp)) in it {
            let rho = gas.rho[j] * u.density;
            let p = pressure(gas, j, self.gamma) * u.pressure();
            if !(rho > 0.0 && rho.is_finite()) {
                *lin = 0.0;
                *quad = 0.0;
                continue;
            }
            let th = self.thermo.cell(rho, p);
            let xm = self.thermo.ion_mass_fraction(th.ion_fraction);
            *ximass = xm;
            *temp = th.temperature;
            let rho_a = if self.ion_alfven { xm * rho } else { rho };
            let c = LocalConditions {
                n_h: th.n_h,
                temperature: th.temperature.max(0.0),
                b_field: b,
                neutral_fraction: (1.0 - th.ion_fraction).clamp(0.0, 1.0),
                alfven_speed: b / (4.0 * std::f64::consts::PI * rho_a).sqrt(),
                gyro_radius: r_g,
            };
            let r = self.model.rates(&c);
            *lin = r.linear * t_u;
            *quad = r.quadratic * qfac;
        }
    }

    /// Ion mass fractions of the last [`Self::update`], per storage cell.
    pub fn ion_mass_fraction(&self) -> &[f64] {
        &self.ion_mass_fraction
    }

    /// Temperatures of the last [`Self::update`], per storage cell, K.
    pub fn temperature(&self) -> &[f64] {
        &self.temperature
    }

    /// Cached (linear, quadratic) coefficients of storage cell `j`, code units.
    pub fn cached(&self, j: usize) -> (f64, f64) {
        (self.linear[j], self.quadratic[j])
    }
}

impl WaveDamping for DampingAdapter {
    #[inline]
    fn rates(&self, j: usize, _gas: &State, _e_wave: f64, _dir: WaveDirection) -> (f64, f64) {
        (self.linear[j], self.quadratic[j])
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use sluice_damping::{CieFit, Nll};
    use sluice_mhd::Grid;

    #[test]
    fn rates_convert_to_code_units() {
        // One uniform cell; compare the cached code-unit rates with the cgs call × unit factors
        // (de/dt = −a e − b e² is invariant under the rescaling, see the struct doc).
        let units = Units {
            length: 3.0e18,
            density: 1.6e-24,
            velocity: 1e6,
        };
        let grid = Grid::new(4, 0.0, 1.0).unwrap();
        let bx = units.field_to_code(3e-6);
        let mut gas = State::zeros(grid, bx);
        let eos = sluice_mhd::Eos::Ideal { gamma: 5.0 / 3.0 };
        let w = sluice_mhd::Primitive {
            rho: 1.3,
            vx: 0.0,
            vy: 0.0,
            vz: 0.0,
            p: 0.02,
            by: 0.0,
            bz: 0.0,
        };
        for j in 0..grid.len() {
            gas.set_primitive(j, &w, &eos);
        }
        let thermo = Thermo {
            mu: Some(0.6),
            ionisation: Some(Ionisation::Fixed { ion_fraction: 0.5 }),
            composition: Composition::default(),
        };
        let model = DampingModel {
            nll: Some(Nll::default()),
            constant: 1e-12,
            ..DampingModel::none()
        };
        let cr = CharacteristicCr::default();
        let mut a = DampingAdapter::new(model, thermo, cr, units, 5.0 / 3.0, true, grid.len());
        a.update(&gas);
        let rho = 1.3 * units.density;
        let p = 0.02 * units.pressure();
        let th = thermo.cell(rho, p);
        let t = 0.6 * ATOMIC_MASS_UNIT * p / (rho * K_BOLTZMANN);
        assert!((th.temperature / t - 1.0).abs() < 1e-14);
        let xm = 0.5 / 1.4;
        let c = LocalConditions {
            n_h: rho / (M_PROTON * 1.4),
            temperature: t,
            b_field: 3e-6,
            neutral_fraction: 0.5,
            alfven_speed: 3e-6 / (4.0 * std::f64::consts::PI * xm * rho).sqrt(),
            gyro_radius: cr.gyro_radius(3e-6),
        };
        let r = model.rates(&c);
        let (lin, quad) = a.cached(2);
        assert!(
            (lin / (r.linear * units.time()) - 1.0).abs() < 1e-12,
            "{lin}"
        );
        assert!((quad / (r.quadratic * units.time() * units.pressure()) - 1.0).abs() < 1e-12);
        assert!((a.ion_mass_fraction()[2] / xm - 1.0).abs() < 1e-14);
    }

    #[test]
    fn cie_temperature_is_self_consistent() {
        // T = μ(x_i(T)) m_p p/(ρ k_B) must hold at the returned T (definition of μ).
        let thermo = Thermo {
            mu: None,
            ionisation: Some(Ionisation::Cie {
                fit: CieFit::default(),
                ion_fraction_min: 1e-4,
            }),
            composition: Composition::default(),
        };
        for t_target in [5e3, 1.4e4, 1.6e4, 3e4, 1e6] {
            let rho = 1e-24;
            // Build p from a self-consistent state at t_target.
            let xi = thermo.ionisation.unwrap().ion_fraction(t_target);
            let mu = thermo.composition.mean_molecular_weight(xi);
            let p = rho * K_BOLTZMANN * t_target / (mu * M_PROTON);
            let c = thermo.cell(rho, p);
            assert!(
                (c.temperature / t_target - 1.0).abs() < 1e-9,
                "{} vs {t_target}",
                c.temperature
            );
            assert!((c.n_total * K_BOLTZMANN * c.temperature / p - 1.0).abs() < 1e-12);
        }
    }
}
