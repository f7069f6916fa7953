//! `sluice-mhd`: one-dimensional ideal magnetohydrodynamics on a uniform finite-volume grid.
//!
//! Conserved variables per cell (structure of arrays, one [`ndarray::Array1`] each, ghost
//! cells included): ρ, ρv_x, ρv_y, ρv_z, E, B_y, B_z. B_x is a single constant (the 1D
//! divergence constraint). Magnetic fields are stored in Heaviside–Lorentz form
//! b̃ = B/√(4π), so the magnetic pressure is |b̃|²/2 and v_A = |b̃_x|/√ρ; the driver converts
//! from and to Gauss. The crate is unit-agnostic otherwise: it works in whatever consistent
//! (code) units the caller uses.
//!
//! No I/O and no deck parsing live here.

// Fixed-size 7-component loops read clearer with an index (common practice in numerics).
#![allow(clippy::needless_range_loop)]

pub mod config;
pub mod eigen;
pub mod grid;
pub mod physics;
pub mod riemann;
pub mod solver;
pub mod state;

#[cfg(test)]
mod tests;

pub use config::{
    Boundary, BoundaryPair, Eos, Floors, Integrator, Limiter, Reconstruction, RiemannKind,
    SolverConfig,
};
pub use eigen::{linear_wave, WaveFamily};
pub use grid::Grid;
pub use physics::{alfven_speed, conserved, fast_speed, flux, slow_speed, sound_speed};
pub use solver::{MhdSolver, StepReport};
pub use state::{Primitive, State};

/// Errors of the MHD crate.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
pub enum MhdError {
    /// A configuration value is outside its allowed range.
    #[error("invalid MHD setting `{key}` = {value}: {allowed}")]
    InvalidConfig {
        /// Name of the setting.
        key: &'static str,
        /// The offending value, printed.
        value: String,
        /// What is allowed.
        allowed: &'static str,
    },
    /// A non-finite or non-positive state was produced that floors could not repair.
    #[error("unphysical state in cell {cell} at x = {x}: {what}")]
    Unphysical {
        /// Interior cell index (0-based, ghosts excluded).
        cell: usize,
        /// Cell-centre coordinate.
        x: f64,
        /// Description.
        what: String,
    },
}
