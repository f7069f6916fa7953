//! Operator-split stages: everything the time loop runs besides the MHD step.
//!
//! A step of size Δt is (Strang splitting, see docs/design.md):
//!
//! 1. `source(Δt/2)` of every stage, in the order the stages were added;
//! 2. the MHD step over Δt;
//! 3. `transport(Δt)` of every stage (a stage subcycles internally as it needs);
//! 4. `source(Δt/2)` of every stage, in reverse order.
//!
//! Δt is the minimum of the MHD CFL step and every stage's [`Stage::max_dt`]. All numbers a
//! stage exchanges with the driver are in code units (see [`crate::Units`]); a stage that
//! needs cgs constants receives them already converted when it is built.

use sluice_mhd::State;

/// What one `source` or `transport` call did, for the run summary and the energy ledger.
/// Energies are per unit area in code units, integrated over the call.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct StageReport {
    /// Floor applications of this stage (any kind: stage variables or gas). Never silent.
    pub floor_hits: u64,
    /// Energy per unit area added by those floors.
    pub floor_energy: f64,
    /// Energy per unit area the stage added to the total (gas + every stage's energy terms)
    /// by physics that does not conserve it, e.g. minus the energy radiated by cooling.
    pub energy_source: f64,
    /// Energy per unit area of the stage's own variables that entered through x_min.
    pub boundary_energy_left: f64,
    /// Energy per unit area of the stage's own variables that entered through x_max.
    pub boundary_energy_right: f64,
    /// Substeps taken (1 when the stage does not subcycle).
    pub substeps: u64,
}

impl StageReport {
    /// Adds another report into this one.
    pub fn accumulate(&mut self, other: &StageReport) {
        self.floor_hits += other.floor_hits;
        self.floor_energy += other.floor_energy;
        self.energy_source += other.energy_source;
        self.boundary_energy_left += other.boundary_energy_left;
        self.boundary_energy_right += other.boundary_energy_right;
        self.substeps += other.substeps;
    }
}

/// A failure inside a stage. Stops the run with the stage's name.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum StageError {
    /// The stage produced a state it cannot repair (non-finite, negative energy …).
    #[error("stage `{stage}`: unphysical state in cell {cell}: {what}")]
    Unphysical {
        /// Stage name.
        stage: String,
        /// Interior cell index (0-based).
        cell: usize,
        /// Description.
        what: String,
    },
    /// An implicit solve or similar did not converge.
    #[error("stage `{stage}`: {what}")]
    Failed {
        /// Stage name.
        stage: String,
        /// Description.
        what: String,
    },
    /// Restart data did not match what the stage expects.
    #[error("stage `{stage}`: cannot restore from snapshot: {what}")]
    Restore {
        /// Stage name.
        stage: String,
        /// Description.
        what: String,
    },
}

/// One extra snapshot dataset. `data` has one value per interior cell, in cgs.
#[derive(Debug, Clone, PartialEq)]
pub struct OutputField {
    /// Dataset name (letters, digits, `_`), written as `/fields/<name>`.
    pub name: String,
    /// Values per interior cell, cgs.
    pub data: Vec<f64>,
    /// cgs units, e.g. `erg/cm^3`.
    pub units: String,
}

/// An operator-split physics stage (cosmic rays, wave damping, cooling …).
///
/// Every method is required: a stage that has, say, no transport part says so explicitly by
/// returning `Ok(StageReport { substeps: 0, ..Default::default() })`.
pub trait Stage: Send {
    /// Short unique name, used in errors, the ledger columns and snapshot groups.
    fn name(&self) -> &str;

    /// Largest step (code time) this stage allows for the current state; `f64::INFINITY` for
    /// no limit. A stage that subcycles should return the step that keeps subcycling bounded.
    fn max_dt(&self, gas: &State) -> f64;

    /// Local source terms over `dt` (called with Δt/2 before and after the MHD step).
    fn source(&mut self, gas: &mut State, dt: f64) -> Result<StageReport, StageError>;

    /// Transport over `dt` (called once per step, after the MHD step).
    fn transport(&mut self, gas: &mut State, dt: f64) -> Result<StageReport, StageError>;

    /// Energies per unit area (code units) held by the stage's own variables, as
    /// `(name, value)` pairs with a fixed list of names, e.g. `("cosmic_rays", …)`.
    fn energy_terms(&self, gas: &State) -> Vec<(String, f64)>;

    /// Extra snapshot datasets (cgs; the stage converts with the units it was built with).
    fn fields(&self, gas: &State) -> Vec<OutputField>;

    /// The stage's complete internal state in code units, enough to restart it bit-for-bit
    /// (stored under `/restart/<stage name>/` in snapshots).
    fn checkpoint(&self) -> Vec<OutputField>;

    /// Restores the state written by [`Stage::checkpoint`].
    fn restore(&mut self, data: &[OutputField]) -> Result<(), StageError>;

    /// A per-cell array the stage exposes by name for diagnostics (storage cells including
    /// ghosts, code units), e.g. the CR stage's `e_c` (CR energy density) and `heating_rate`
    /// (CR → gas heating averaged over the last step, energy/(volume·time)). Default: none.
    fn cell_array(&self, _name: &str) -> Option<&[f64]> {
        None
    }
}
