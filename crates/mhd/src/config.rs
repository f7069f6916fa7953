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
        Self { rho_min: 1e-12, p_min: 1e-12 }
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
                return Err(MhdError::InvalidConfig { key: "gamma", value: gamma.to_string(), allowed: "a finite number > 1" })
            }
            Eos::Isothermal { cs } if !(cs > 0.0 && cs.is_finite()) => {
                return Err(MhdError::InvalidConfig { key: "cs", value: cs.to_string(), allowed: "a finite number > 0" })
            }
            _ => {}
        }
        if !(self.cfl > 0.0 && self.cfl < 1.0) {
            return Err(MhdError::InvalidConfig { key: "cfl", value: self.cfl.to_string(), allowed: "0 < cfl < 1" });
        }
        if !(self.floors.rho_min > 0.0 && self.floors.rho_min.is_finite()) {
            return Err(MhdError::InvalidConfig { key: "rho_min", value: self.floors.rho_min.to_string(), allowed: "a finite number > 0" });
        }
        if !(self.floors.p_min > 0.0 && self.floors.p_min.is_finite()) {
            return Err(MhdError::InvalidConfig { key: "p_min", value: self.floors.p_min.to_string(), allowed: "a finite number > 0" });
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
