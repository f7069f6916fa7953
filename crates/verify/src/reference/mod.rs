//! Exact and analytic reference solutions for Sluice's coupled cosmic-ray checks.
//!
//! Pure functions, independent of the solver crates: they only take numbers and return
//! numbers. Each function documents its units, its source and its range of validity; the
//! derivations are collected in `docs/references.md`.
//!
//! * [`riemann`] — exact two-fluid (gas + advected CR) Riemann problem.
//! * [`dispersion`] — CR-modified sound waves of the fixed-κ two-moment model.
//! * [`telegraph`] — telegraph Green's function, Gaussian convolution, heat kernel.
//! * [`drift`] — steady streaming excess set by growth = damping.
//! * [`bottleneck`] — steady streaming bottleneck profile.
//! * [`topha`] — pure streaming of a top-hat and of a smooth profile (flat-top construction).
//! * [`bessel`], [`quad`], [`complex`] — the numerical building blocks (own implementations).

pub mod bessel;
pub mod bottleneck;
pub mod complex;
pub mod dispersion;
pub mod drift;
pub mod quad;
pub mod riemann;
pub mod telegraph;
pub mod topha;

use std::fmt;

/// Error of a reference function: bad input (named key, offending value, allowed range) or a
/// failed internal solve.
#[derive(Debug, Clone, PartialEq)]
pub enum RefError {
    /// An input is outside the range the reference solution is valid for.
    InvalidParameter {
        /// Name of the argument.
        key: &'static str,
        /// The value given.
        value: f64,
        /// What is allowed.
        allowed: &'static str,
    },
    /// The Riemann problem generates vacuum (not covered by the exact solver).
    Vacuum {
        /// Pressure-positivity condition value (must be positive).
        condition: f64,
    },
    /// An iterative solve did not converge.
    NoConvergence {
        /// What was being solved.
        what: &'static str,
    },
}

impl fmt::Display for RefError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            RefError::InvalidParameter { key, value, allowed } => {
                write!(f, "invalid parameter `{key}` = {value}: allowed {allowed}")
            }
            RefError::Vacuum { condition } => write!(
                f,
                "Riemann problem generates vacuum (pressure-positivity condition {condition} ≤ 0); not supported"
            ),
            RefError::NoConvergence { what } => write!(f, "no convergence: {what}"),
        }
    }
}

impl std::error::Error for RefError {}

/// Checks `value` is finite and strictly positive.
pub(crate) fn positive(key: &'static str, value: f64) -> Result<f64, RefError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(RefError::InvalidParameter {
            key,
            value,
            allowed: "finite and > 0",
        })
    }
}

/// Checks `value` is finite and ≥ 0.
pub(crate) fn non_negative(key: &'static str, value: f64) -> Result<f64, RefError> {
    if value.is_finite() && value >= 0.0 {
        Ok(value)
    } else {
        Err(RefError::InvalidParameter {
            key,
            value,
            allowed: "finite and >= 0",
        })
    }
}

/// Checks `value` is finite.
pub(crate) fn finite(key: &'static str, value: f64) -> Result<f64, RefError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(RefError::InvalidParameter {
            key,
            value,
            allowed: "finite",
        })
    }
}

/// Checks an adiabatic index is finite and > 1.
pub(crate) fn adiabatic(key: &'static str, value: f64) -> Result<f64, RefError> {
    if value.is_finite() && value > 1.0 {
        Ok(value)
    } else {
        Err(RefError::InvalidParameter {
            key,
            value,
            allowed: "finite and > 1",
        })
    }
}
