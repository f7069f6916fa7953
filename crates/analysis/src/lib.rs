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
//!
//! ```
//! use sluice_analysis::{compare, parse_profile, CompareOptions, ReadOptions, Tolerance};
//!
//! let reference = "x density\n0.25 1.0\n0.75 2.0\n";
//! // OTHER on a grid refined 2x (nested), cell averages, 1 % high in the second half.
//! let other = "# x density\n0.125 1.0\n0.375 1.0\n0.625 2.02\n0.875 2.02\n";
//! let opts = ReadOptions::default();
//! let r = parse_profile(reference, "reference.txt", &opts)?;
//! let o = parse_profile(other, "other.txt", &opts)?;
//! let report = compare(&r, &o, &CompareOptions::default())?;
//! let d = &report.fields[0];
//! // L1 of the difference: (0.5·0 + 0.5·0.02) / 1 = 0.01; L1 of the reference: 1.5.
//! assert!((d.absolute.l1 - 0.01).abs() < 1e-15);
//! assert!((d.relative.l1.unwrap() - 0.01 / 1.5).abs() < 1e-15);
//! assert!(report.pass); // relative L1 0.0067 <= 1e-2
//! let strict = CompareOptions { tolerance: "linf:5e-3".parse::<Tolerance>()?, ..Default::default() };
//! assert!(!compare(&r, &o, &strict)?.pass); // relative L∞ 0.02/2 = 0.01 > 5e-3
//! println!("{}", report.to_table());
//! # Ok::<(), sluice_analysis::AnalysisError>(())
//! ```

pub mod compare;
pub mod convergence;
pub mod error;
pub mod profile;
pub mod reader;
pub mod remap;
pub mod report;

pub use compare::{
    compare, norms, parse_field_list, parse_field_tolerances, parse_tolerances, CompareOptions,
    CompareReport, FieldComparison, Norm, NormSet, RelativeNormSet, Tolerance, ToleranceKind,
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
