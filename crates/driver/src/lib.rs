//! `sluice-driver`: decks, unit conversion, problem set-up, the operator-split time loop,
//! the energy ledger, snapshots and progress reporting.
//!
//! Entry points: [`deck::parse_deck`] / [`deck::read_deck`] for a validated [`Deck`], then
//! [`Simulation::from_deck`] (or [`Simulation::from_toml_str`] in tests) and
//! [`Simulation::run`] with an [`Observer`] such as [`output::OutputWriter`]. Extra physics
//! plugs in as a [`Stage`].

pub mod check;
pub mod deck;
pub mod output;
pub mod physics;
pub mod restart;
pub mod setup;
pub mod simulation;
pub mod slab;
pub mod slab_series;
pub mod snapshot;
pub mod stage;
pub mod study;
pub mod sweep;
pub mod units;

pub use deck::{Deck, DeckError};
pub use simulation::{Counters, Ledger, LedgerEntry, Observer, RunSummary, Simulation};
pub use stage::{OutputField, Stage, StageError, StageReport};
pub use units::Units;

/// Errors of the driver. Each names what failed and, where there is one, the deck key.
#[derive(Debug, thiserror::Error)]
pub enum DriverError {
    /// Deck parsing or validation.
    #[error(transparent)]
    Deck(#[from] DeckError),
    /// The MHD crate rejected a setting or produced an unphysical state.
    #[error("MHD: {0}")]
    Mhd(#[from] sluice_mhd::MhdError),
    /// A stage failed.
    #[error(transparent)]
    Stage(#[from] StageError),
    /// The initial state or the stage list could not be built.
    #[error("set-up: {0}")]
    Setup(String),
    /// The time step became zero, negative or non-finite.
    #[error("time step collapsed to {dt:e} s at t = {time:e} s (check floors, resolution and the state near the failure)")]
    TimeStep {
        /// Time, s.
        time: f64,
        /// The step, s.
        dt: f64,
    },
    /// `run.max_steps` was reached before t_end.
    #[error("run.max_steps = {max} reached at t = {time:e} s before t_end; raise run.max_steps or lower grid.cells")]
    MaxSteps {
        /// The limit.
        max: u64,
        /// Time reached, s.
        time: f64,
    },
    /// Snapshot writing or reading.
    #[error(transparent)]
    Snapshot(#[from] snapshot::SnapshotError),
    /// Restarting from a snapshot failed.
    #[error(transparent)]
    Restart(#[from] restart::RestartError),
    /// Other file-system failure.
    #[error("cannot write `{path}`: {message}")]
    Io {
        /// Path.
        path: String,
        /// OS error text.
        message: String,
    },
}

#[cfg(test)]
mod tests;
