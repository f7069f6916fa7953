//! The finite-volume MHD update (to be completed: see docs/design.md).

use crate::config::SolverConfig;
use crate::grid::Grid;
use crate::state::State;
use crate::MhdError;

/// What one call of [`MhdSolver::step`] did. Fluxes through the boundaries are
/// time-integrated over the step (per unit area, code units), positive = into the domain.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct StepReport {
    /// Cells whose density was raised to the floor.
    pub rho_floor_hits: u64,
    /// Cells whose pressure was raised to the floor.
    pub p_floor_hits: u64,
    /// Energy per unit area added by floors.
    pub floor_energy: f64,
    /// Mass per unit area added by floors.
    pub floor_mass: f64,
    /// Faces where HLLD fell back to HLLE.
    pub hlld_fallbacks: u64,
    /// Time-integrated conserved fluxes into the domain through the left face
    /// (ρ, ρv_x, ρv_y, ρv_z, E, b̃_y, b̃_z).
    pub inflow_left: [f64; 7],
    /// Time-integrated conserved fluxes into the domain through the right face.
    pub inflow_right: [f64; 7],
}

/// The MHD solver: configuration plus preallocated scratch arrays (no allocation per step).
#[derive(Debug, Clone)]
pub struct MhdSolver {
    config: SolverConfig,
    grid: Grid,
}

impl MhdSolver {
    /// Validates `config` and allocates scratch for `grid`.
    pub fn new(config: SolverConfig, grid: Grid) -> Result<Self, MhdError> {
        config.validate()?;
        Ok(Self { config, grid })
    }

    /// The configuration.
    pub fn config(&self) -> &SolverConfig {
        &self.config
    }

    /// The grid.
    pub fn grid(&self) -> &Grid {
        &self.grid
    }

    /// Fills the ghost cells of `state` according to the boundary conditions.
    pub fn apply_boundaries(&self, _state: &mut State) {
        todo!("MHD core")
    }

    /// Largest stable time step: cfl · Δx / max(|v_x| + c_f) over interior cells.
    pub fn max_dt(&self, _state: &State) -> f64 {
        todo!("MHD core")
    }

    /// Advances `state` by `dt` (one full multi-stage step).
    pub fn step(&mut self, _state: &mut State, _dt: f64) -> Result<StepReport, MhdError> {
        todo!("MHD core")
    }
}
