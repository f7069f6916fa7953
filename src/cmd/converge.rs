//! `sluice converge`: run a resolution series and report errors and orders.

use crate::Failure;

/// Arguments of `sluice converge`.
#[derive(clap::Args)]
pub struct ConvergeArgs {}

/// Runs `sluice converge`.
pub fn run(_a: ConvergeArgs) -> Result<(), Failure> {
    Err(Failure("`sluice converge` is being built".into(), 2))
}
