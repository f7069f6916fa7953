//! `sluice-cosmic-rays`: grey two-moment cosmic-ray transport with forward and backward
//! Alfvén-wave energies (self-confinement, Thomas & Pfrommer 2019, MNRAS 485, 2977), in 1D
//! along a field B = B_x x̂, with a reduced speed of light c_r.
//!
//! Everything is in code units. Magnetic fields follow `sluice_mhd` (Heaviside–Lorentz
//! b̃ = B/√4π): v_a = |b̃_x|/√ρ_A, e_B = b̃_x²/2. The gas is a [`sluice_mhd::State`]; this crate
//! changes only its momentum `mx` and total energy `en` (interior cells) and reads `rho`, `mx`,
//! `bx`, `by`, `bz` and the ghost cells. Transverse fields must vanish (oblique CR runs are
//! rejected, physics-detail §2.9).
//!
//! # Use from a driver stage
//!
//! ```text
//! let params = CrParams { model: TransportModel::SelfConfined, ..CrParams::new(c_r, c, omega) };
//! // c_r may come from auto_c_r(&gas, &eos, 10.0)?.c_r
//! let mut crs = CrSolver::new(params, grid)?;          // validates
//! crs.set_ion_fraction(&xi)?;                          // optional (AlfvenDensity::Ion)
//! let mut cr = CrState::zeros(&grid);                   // fill e_c, f, e_plus, e_minus
//! // per step Δt (Δt ≤ min(MHD CFL, crs.max_dt(&gas))):
//! crs.exchange(&mut cr, &mut gas, &damping, dt / 2.0)?; // source stage (no-op by default)
//! mhd.step(&mut gas, dt)?;
//! let rep = crs.transport(&mut cr, &mut gas, &damping, dt)?; // subcycled; exchange inside
//! crs.exchange(&mut cr, &mut gas, &damping, dt / 2.0)?;
//! let d = crs.diagnostics(&cr, &gas, &damping);        // snapshots
//! ```
//!
//! With the default [`Coupling::InTransport`] the whole CR–wave–gas exchange (stiff flux
//! relaxation, wave growth, damping, heating, work) is applied implicitly after every
//! Runge–Kutta stage of every transport subcycle, because the relaxation rate c_r² σ may
//! exceed 1/Δt by orders of magnitude; `exchange` is then a no-op and may be called or not.
//! [`Coupling::Split`] moves the exchange into `exchange` (Strang split by the driver).
//! [`CrReport`] carries the ledger terms of each call (energy CR→waves, waves→heat, work on
//! gas, wave-pressure work, floor energy, boundary energy and momentum inflow).
//!
//! The MHD ghost cells of the gas must be filled before `transport` (for the face velocities
//! and Alfvén speeds at the domain edges); CR ghost cells are filled here.

pub mod damping;
pub mod diagnostics;
pub mod exchange;
pub mod params;
pub mod solver;
pub mod state;
pub mod steady;

pub use damping::{ConstantDamping, NoDamping, QuadraticDamping, WaveDamping, WaveDirection};
pub use diagnostics::CrDiagnostics;
pub use params::{
    AlfvenDensity, Coupling, CrBoundary, CrBoundaryPair, CrParams, ExchangeTolerances, Limiter,
    TransportModel, WorkForm,
};
pub use solver::{auto_c_r, AutoCr, CrReport, CrSolver};
pub use state::CrState;

/// Errors of the CR crate.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
pub enum CrError {
    /// A parameter is outside its allowed range.
    #[error("invalid CR parameter `{key}` = {value}: allowed {allowed}")]
    InvalidParameter {
        /// Parameter name.
        key: &'static str,
        /// The offending value.
        value: String,
        /// What is allowed.
        allowed: &'static str,
    },
    /// The field is not along x (B_⊥ ≠ 0) or B_x = 0: the CR module needs B = B_x x̂.
    #[error("CR transport needs B along x with B_x != 0 (b_x = {bx}, |b_perp| = {b_perp} in interior cell {cell:?}); oblique CR runs are not supported")]
    FieldNotAlongX {
        /// Interior cell (None: B_x itself).
        cell: Option<usize>,
        /// b̃_x.
        bx: f64,
        /// |b̃_⊥|.
        b_perp: f64,
    },
    /// An array does not fit the grid.
    #[error("array `{what}` has {found} cells, the grid has {expected}")]
    GridMismatch {
        /// Which array.
        what: &'static str,
        /// Grid length incl. ghosts.
        expected: usize,
        /// Array length.
        found: usize,
    },
    /// `transport` was asked for a step needing more than `max_subcycles` subcycles.
    #[error("CR step dt = {dt} exceeds max_dt = {max_dt} (max_subcycles × CR CFL step)")]
    StepTooLarge {
        /// Requested step.
        dt: f64,
        /// Largest allowed.
        max_dt: f64,
    },
    /// The local CR–wave–gas exchange of a cell could not be completed: the entry state has
    /// e_c < 0 (or is not finite), or `tolerances.max_substeps` substeps were used up. The
    /// message gives the entry values (code units) so the driver can report them with the time.
    #[error(
        "CR exchange stopped in interior cell {cell} at x = {x} (code length): {reason}; {values}"
    )]
    ExchangeStalled {
        /// Interior cell.
        cell: usize,
        /// Cell centre [code length].
        x: f64,
        /// What went wrong.
        reason: String,
        /// Entry and reached values of the cell, v_a, c_r, substeps and time covered (code units).
        values: String,
    },
    /// Non-finite state produced.
    #[error("unphysical CR state in cell {cell} at x = {x}: {what}")]
    Unphysical {
        /// Interior cell.
        cell: usize,
        /// Cell centre.
        x: f64,
        /// Description.
        what: String,
    },
}
