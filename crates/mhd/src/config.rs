//! Solver configuration: equation of state, Riemann solver, reconstruction, integrator,
//! boundaries and floors.

use crate::state::Primitive;
use crate::MhdError;

/// Equation of state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Eos {
    /// Ideal gas p = (γ−1) e_th with γ > 1.
    Ideal {
        /// Adiabatic index γ.
        gamma: f64,
    },
    /// Isothermal gas p = c_s² ρ; the energy equation is not evolved.
    Isothermal {
        /// Isothermal sound speed c_s (code velocity units).
        cs: f64,
    },
}

/// Approximate Riemann solver for the interface fluxes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RiemannKind {
    /// Harten–Lax–van Leer with Einfeldt/Davis wave-speed bounds (Einfeldt 1988).
    Hlle,
    /// Five-wave HLLD (Miyoshi & Kusano 2005), falling back to HLLE per face when degenerate.
    Hlld,
}

/// Slope limiter for piecewise-linear reconstruction.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Limiter {
    /// minmod.
    Minmod,
    /// van Leer harmonic limiter (van Leer 1974).
    VanLeer,
    /// Monotonized central (van Leer 1977).
    Mc,
}

/// Spatial reconstruction.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Reconstruction {
    /// Piecewise constant (first order).
    FirstOrder,
    /// Piecewise linear in primitive variables.
    Plm(Limiter),
    /// Piecewise linear, limited in the characteristic variables of the MHD system.
    PlmCharacteristic(Limiter),
}

/// Time integrator.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Integrator {
    /// Two-stage strong-stability-preserving Runge–Kutta (Heun; Shu & Osher 1988).
    SspRk2,
    /// Three-stage SSP Runge–Kutta (Shu & Osher 1988).
    SspRk3,
}

/// Boundary condition for one side of the domain.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Boundary {
    /// Periodic (both sides must be periodic).
    Periodic,
    /// Zero-gradient outflow.
    Outflow,
    /// Reflecting wall (normal velocity and transverse field mirrored as appropriate).
    Reflecting,
    /// Ghost cells held at a fixed primitive state (inflow).
    Inflow(Primitive),
}

/// Left and right boundary conditions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoundaryPair {
    /// Boundary at x_min.
    pub left: Boundary,
    /// Boundary at x_max.
    pub right: Boundary,
}

/// Density and pressure floors (code units). Every application is counted.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Floors {
    /// Minimum density.
    pub rho_min: f64,
    /// Minimum gas pressure.
    pub p_min: f64,
}

impl Default for Floors {
    fn default() -> Self {
        Self {
            rho_min: 1e-12,
            p_min: 1e-12,
        }
    }
}

/// Complete configuration of the MHD solver.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SolverConfig {
    /// Equation of state.
    pub eos: Eos,
    /// Riemann solver.
    pub riemann: RiemannKind,
    /// Reconstruction.
    pub reconstruction: Reconstruction,
    /// Time integrator.
    pub integrator: Integrator,
    /// Courant number, 0 < C < 1.
    pub cfl: f64,
    /// Floors.
    pub floors: Floors,
    /// Boundaries.
    pub boundaries: BoundaryPair,
}

impl SolverConfig {
    /// Checks every value; the error names the setting, the value and what is allowed.
    pub fn validate(&self) -> Result<(), MhdError> {
        match self.eos {
            Eos::Ideal { gamma } if !(gamma > 1.0 && gamma.is_finite()) => {
                return Err(MhdError::InvalidConfig {
                    key: "gamma",
                    value: gamma.to_string(),
                    allowed: "a finite number > 1",
                })
            }
            Eos::Isothermal { cs } if !(cs > 0.0 && cs.is_finite()) => {
                return Err(MhdError::InvalidConfig {
                    key: "cs",
                    value: cs.to_string(),
                    allowed: "a finite number > 0",
                })
            }
            _ => {}
        }
        if let Reconstruction::PlmCharacteristic(l) = self.reconstruction {
            return Err(MhdError::InvalidConfig {
                key: "reconstruction",
                value: format!("PlmCharacteristic({l:?})"),
                allowed:
                    "FirstOrder or Plm(limiter) (characteristic limiting is not implemented yet)",
            });
        }
        if !(self.cfl > 0.0 && self.cfl < 1.0) {
            return Err(MhdError::InvalidConfig {
                key: "cfl",
                value: self.cfl.to_string(),
                allowed: "0 < cfl < 1",
            });
        }
        if !(self.floors.rho_min > 0.0 && self.floors.rho_min.is_finite()) {
            return Err(MhdError::InvalidConfig {
                key: "rho_min",
                value: self.floors.rho_min.to_string(),
                allowed: "a finite number > 0",
            });
        }
        if !(self.floors.p_min > 0.0 && self.floors.p_min.is_finite()) {
            return Err(MhdError::InvalidConfig {
                key: "p_min",
                value: self.floors.p_min.to_string(),
                allowed: "a finite number > 0",
            });
        }
        for b in [self.boundaries.left, self.boundaries.right] {
            if let Boundary::Inflow(w) = b {
                let iso = matches!(self.eos, Eos::Isothermal { .. });
                if !(w.rho > 0.0 && w.rho.is_finite()) {
                    return Err(MhdError::InvalidConfig {
                        key: "inflow.rho",
                        value: w.rho.to_string(),
                        allowed: "a finite number > 0",
                    });
                }
                if !(iso || (w.p > 0.0 && w.p.is_finite())) {
                    return Err(MhdError::InvalidConfig {
                        key: "inflow.p",
                        value: w.p.to_string(),
                        allowed: "a finite number > 0",
                    });
                }
                if ![w.vx, w.vy, w.vz, w.by, w.bz].iter().all(|x| x.is_finite()) {
                    return Err(MhdError::InvalidConfig {
                        key: "inflow",
                        value: format!("{w:?}"),
                        allowed: "finite velocity and field components",
                    });
                }
            }
        }
        let lp = matches!(self.boundaries.left, Boundary::Periodic);
        let rp = matches!(self.boundaries.right, Boundary::Periodic);
        if lp != rp {
            return Err(MhdError::InvalidConfig {
                key: "boundaries",
                value: format!("{:?} / {:?}", self.boundaries.left, self.boundaries.right),
                allowed: "periodic on both sides or on neither",
            });
        }
        Ok(())
    }
}

impl Default for SolverConfig {
    /// Ideal gas γ = 5/3, HLLD, PLM with the MC limiter, SSP-RK2, C = 0.8, default floors,
    /// periodic boundaries.
    fn default() -> Self {
        Self {
            eos: Eos::Ideal { gamma: 5.0 / 3.0 },
            riemann: RiemannKind::Hlld,
            reconstruction: Reconstruction::Plm(Limiter::Mc),
            integrator: Integrator::SspRk2,
            cfl: 0.8,
            floors: Floors::default(),
            boundaries: BoundaryPair {
                left: Boundary::Periodic,
                right: Boundary::Periodic,
            },
        }
    }
}
