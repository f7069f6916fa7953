//! `sluice-analysis`: validating another code against Sluice reference runs.
//!
//! The pieces, each usable alone:
//!
//! * [`Profile`]: a 1D profile (coordinates, optional cell edges, named fields, cell averages
//!   or point samples);
//! * [`read_profile`] / [`parse_profile`]: strict CSV / whitespace-column readers;
//! * [`remap`](remap()): OTHER onto the reference grid (linear interpolation for point
//!   samples, conservative overlap averaging for cell averages);
//! * [`compare`](compare()): L1/L2/L∞ norms, absolute and relative, tolerances and the
//!   verdict, as a [`CompareReport`] (table and JSON);
//! * [`convergence_series`] and [`self_convergence`]: observed orders, least-squares fit,
//!   Richardson self-convergence, as a [`ConvergenceReport`] (table and JSON).
//!
//! No file format other than text is read here: the driver reads Sluice's HDF5 snapshots and
//! builds [`Profile`]s from the arrays. No unit conversion is done: both profiles must use
//! the same units and the same coordinate.

pub mod compare;
pub mod convergence;
pub mod error;
pub mod profile;
pub mod reader;
pub mod remap;
pub mod report;

pub use compare::{
    compare, norms, parse_field_tolerances, CompareOptions, CompareReport, FieldComparison, Norm,
    NormSet, RelativeNormSet, Tolerance, ToleranceKind,
};
pub use convergence::{
    convergence_series, fitted_order, pairwise_order, self_convergence, ConvergenceKind,
    ConvergenceRow, ConvergenceSeries,
};
pub use error::{AnalysisError, Result};
pub use profile::{Field, Profile, Sampling};
pub use reader::{parse_column_map, parse_profile, read_profile, Delimiter, ReadOptions};
pub use remap::{
    interpolate_linear, remap, remap_conservative, Coverage, Reconstruction, RemapMethod, Remapped,
};
pub use report::{aligned_table, ConvergenceReport};
