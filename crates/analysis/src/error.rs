//! Typed errors of `sluice-analysis`.
//!
//! Every variant names the file (or option key), the offending value and what is allowed, so
//! the command-line layer can print the message unchanged.

use thiserror::Error;

/// Error raised while reading, remapping, comparing or analysing profiles.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum AnalysisError {
    /// A file could not be read at all.
    #[error("{file}: cannot read: {message}")]
    Io {
        /// Path of the file.
        file: String,
        /// Operating-system message.
        message: String,
    },
    /// A line of a text profile is malformed.
    #[error("{file}, line {line}: {message}")]
    Parse {
        /// Name of the file (or of the in-memory source).
        file: String,
        /// 1-based line number.
        line: usize,
        /// What was found and what was expected (names the column where one is concerned).
        message: String,
    },
    /// A profile is inconsistent (lengths, ordering, non-finite values, missing column...).
    #[error("{file}: {message}")]
    Profile {
        /// Name of the profile's source file.
        file: String,
        /// What is wrong and what is allowed.
        message: String,
    },
    /// An option has an invalid value.
    #[error("invalid `{key}` = `{value}`: {allowed}")]
    InvalidOption {
        /// Option name as the user spells it.
        key: String,
        /// The rejected value.
        value: String,
        /// What is allowed.
        allowed: String,
    },
    /// A requested field is not present in a profile.
    #[error("{file}: no field `{field}`; available fields: {available}")]
    MissingField {
        /// Name of the profile's source file.
        file: String,
        /// The requested field.
        field: String,
        /// Comma-separated list of the fields that exist.
        available: String,
    },
    /// OTHER does not cover the whole reference range and coverage is strict.
    #[error(
        "{other} covers x in [{other_lo}, {other_hi}] but the reference {reference} spans \
         [{reference_lo}, {reference_hi}]; uncovered: {uncovered}; extend the export, or \
         restrict the comparison to the overlap (coverage = overlap)"
    )]
    Uncovered {
        /// Name of OTHER.
        other: String,
        /// Name of the reference.
        reference: String,
        /// Lower end of OTHER's data range.
        other_lo: f64,
        /// Upper end of OTHER's data range.
        other_hi: f64,
        /// Lower end of the reference range that needs covering.
        reference_lo: f64,
        /// Upper end of the reference range that needs covering.
        reference_hi: f64,
        /// Human-readable list of uncovered intervals.
        uncovered: String,
    },
    /// The two profiles do not overlap in a single reference cell.
    #[error(
        "{other} (x in [{other_lo}, {other_hi}]) and the reference {reference} (x in \
         [{reference_lo}, {reference_hi}]) share no reference cell; nothing to compare"
    )]
    NoOverlap {
        /// Name of OTHER.
        other: String,
        /// Name of the reference.
        reference: String,
        /// Lower end of OTHER's data range.
        other_lo: f64,
        /// Upper end of OTHER's data range.
        other_hi: f64,
        /// Lower end of the reference range.
        reference_lo: f64,
        /// Upper end of the reference range.
        reference_hi: f64,
    },
    /// A convergence series is unusable.
    #[error("convergence series `{label}`: {message}")]
    Convergence {
        /// Label of the series (field and norm).
        label: String,
        /// What is wrong and what is allowed.
        message: String,
    },
}

/// Result alias of this crate.
pub type Result<T> = std::result::Result<T, AnalysisError>;
