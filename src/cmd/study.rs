//! `sluice study`: streaming versus diffusion of one CR pulse under several transport models.

use crate::Failure;

/// Arguments of `sluice study`.
#[derive(clap::Args)]
pub struct StudyArgs {}

/// Runs `sluice study`.
pub fn run(_a: StudyArgs) -> Result<(), Failure> {
    Err(Failure("`sluice study` is being built".into(), 2))
}
