//! `sluice compare`: compare a profile from another code with a Sluice reference.

use crate::Failure;

/// Arguments of `sluice compare`.
#[derive(clap::Args)]
pub struct CompareArgs {}

/// Runs `sluice compare`.
pub fn run(_a: CompareArgs) -> Result<(), Failure> {
    Err(Failure("`sluice compare` is being built".into(), 2))
}
