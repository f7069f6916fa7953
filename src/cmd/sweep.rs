//! `sluice sweep` and `sluice merge`: parameter ensembles, shards and their merge.

use crate::Failure;

/// Arguments of `sluice sweep`.
#[derive(clap::Args)]
pub struct SweepArgs {}

/// Runs `sluice sweep`.
pub fn run(_a: SweepArgs) -> Result<(), Failure> {
    Err(Failure("`sluice sweep` is being built".into(), 2))
}

/// Arguments of `sluice merge`.
#[derive(clap::Args)]
pub struct MergeArgs {}

/// Runs `sluice merge`.
pub fn run_merge(_a: MergeArgs) -> Result<(), Failure> {
    Err(Failure("`sluice merge` is being built".into(), 2))
}
