//! Typed errors of `sluice-damping`.

use thiserror::Error;

/// Error raised by the constructors and `validate()` methods of this crate.
///
/// Every variant names the parameter, the offending value and what is allowed, so the driver
/// can pass the message on to the user unchanged.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum DampingError {
    /// A scalar parameter is outside its allowed range.
    #[error("invalid parameter {name} = {value}: allowed {allowed}")]
    InvalidParameter {
        /// Parameter name as the driver exposes it.
        name: &'static str,
        /// The rejected value.
        value: f64,
        /// Human-readable allowed range.
        allowed: &'static str,
    },
    /// An entry of a cooling table is invalid.
    #[error("invalid cooling table entry {name}[{index}] = {value}: allowed {allowed}")]
    InvalidTable {
        /// Column name (`temperature`, `lambda`, `slope`, ...).
        name: &'static str,
        /// Zero-based row index.
        index: usize,
        /// The rejected value.
        value: f64,
        /// Human-readable allowed range.
        allowed: &'static str,
    },
    /// A cooling table has the wrong shape.
    #[error("invalid cooling table: {reason}")]
    TableShape {
        /// What is wrong (e.g. mismatched column lengths).
        reason: String,
    },
}

/// Checks `lo ≤ value ≤ hi` (and finiteness), else `InvalidParameter`.
pub(crate) fn check_range(
    name: &'static str,
    value: f64,
    lo: f64,
    hi: f64,
    allowed: &'static str,
) -> Result<(), DampingError> {
    if value.is_finite() && value >= lo && value <= hi {
        Ok(())
    } else {
        Err(DampingError::InvalidParameter {
            name,
            value,
            allowed,
        })
    }
}

/// Checks `value > 0` and finite, else `InvalidParameter`.
pub(crate) fn check_positive(name: &'static str, value: f64) -> Result<(), DampingError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(DampingError::InvalidParameter {
            name,
            value,
            allowed: "a finite number > 0",
        })
    }
}

/// Checks `value ≥ 0` and finite, else `InvalidParameter`.
pub(crate) fn check_non_negative(name: &'static str, value: f64) -> Result<(), DampingError> {
    if value.is_finite() && value >= 0.0 {
        Ok(())
    } else {
        Err(DampingError::InvalidParameter {
            name,
            value,
            allowed: "a finite number ≥ 0",
        })
    }
}
