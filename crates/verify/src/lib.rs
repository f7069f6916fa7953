//! `sluice-verify`: the built-in suite of checks against published results.
//!
//! Every check runs a problem, measures one number and compares it with a value from outside
//! the project (an exact solution, a published table, a published convergence rate, a
//! conservation law). `sluice verify` prints them; the test suite asserts them.

use serde::Serialize;

pub mod coupled_checks;
pub mod cr_checks;
pub mod damping_checks;
pub mod mhd_checks;
pub mod reference;

/// Outcome of one check. Serialised with exactly the keys
/// `name, source, measured, expected, tolerance, pass`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CheckResult {
    /// Check name, dotted (`mhd.sod.l1_density`).
    pub name: String,
    /// Published source of the expected value (author, year, journal, table/equation).
    pub source: String,
    /// What the solver produced.
    pub measured: f64,
    /// The published / exact value.
    pub expected: f64,
    /// Allowed deviation (its meaning — absolute, relative or a bound — is stated by the check).
    pub tolerance: f64,
    /// Whether the check passed.
    pub pass: bool,
}

/// A registered check.
#[derive(Clone, Copy)]
pub struct Check {
    /// Dotted name, unique.
    pub name: &'static str,
    /// Published source.
    pub source: &'static str,
    /// Runs the check.
    pub run: fn() -> CheckResult,
}

impl std::fmt::Debug for Check {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Check")
            .field("name", &self.name)
            .field("source", &self.source)
            .finish()
    }
}

/// All checks, in a stable order.
pub fn all_checks() -> Vec<Check> {
    let mut v = mhd_checks::checks();
    v.extend(cr_checks::checks());
    v.extend(damping_checks::checks());
    v.extend(coupled_checks::checks());
    v
}

/// Checks whose name contains `pattern` (all when `None`).
pub fn select(pattern: Option<&str>) -> Vec<Check> {
    all_checks()
        .into_iter()
        .filter(|c| pattern.is_none_or(|p| c.name.contains(p)))
        .collect()
}

/// Runs one check by exact name; `None` if unknown.
pub fn run_named(name: &str) -> Option<CheckResult> {
    all_checks()
        .into_iter()
        .find(|c| c.name == name)
        .map(|c| (c.run)())
}

/// Runs the given checks in parallel (rayon), results in input order.
pub fn run_all(checks: &[Check]) -> Vec<CheckResult> {
    use rayon::prelude::*;
    checks.par_iter().map(|c| (c.run)()).collect()
}

/// The result of a check whose verdict `pass` is already decided.
fn result(
    name: &str,
    source: &str,
    measured: f64,
    expected: f64,
    tolerance: f64,
    pass: bool,
) -> CheckResult {
    CheckResult {
        name: name.into(),
        source: source.into(),
        measured,
        expected,
        tolerance,
        pass,
    }
}

/// Builds a result where `pass` means |measured − expected| ≤ tolerance.
pub fn abs_check(
    name: &str,
    source: &str,
    measured: f64,
    expected: f64,
    tolerance: f64,
) -> CheckResult {
    let pass = measured.is_finite() && (measured - expected).abs() <= tolerance;
    result(name, source, measured, expected, tolerance, pass)
}

/// Builds a result where `pass` means |measured − expected| ≤ tolerance·|expected|.
pub fn rel_check(
    name: &str,
    source: &str,
    measured: f64,
    expected: f64,
    tolerance: f64,
) -> CheckResult {
    let pass = measured.is_finite() && (measured - expected).abs() <= tolerance * expected.abs();
    result(name, source, measured, expected, tolerance, pass)
}

/// Builds a result where `pass` means measured ≥ expected − tolerance (a lower bound, e.g. an order).
pub fn min_check(
    name: &str,
    source: &str,
    measured: f64,
    expected: f64,
    tolerance: f64,
) -> CheckResult {
    let pass = measured.is_finite() && measured >= expected - tolerance;
    result(name, source, measured, expected, tolerance, pass)
}

/// Builds a result where `pass` means measured ≤ expected + tolerance (an upper bound, e.g. an error).
pub fn max_check(
    name: &str,
    source: &str,
    measured: f64,
    expected: f64,
    tolerance: f64,
) -> CheckResult {
    let pass = measured.is_finite() && measured <= expected + tolerance;
    result(name, source, measured, expected, tolerance, pass)
}
