//! `sluice plot`: profile and time-series figures (SVG or PNG).

use crate::Failure;

/// Arguments of `sluice plot`.
#[derive(clap::Args)]
pub struct PlotArgs {}

/// Runs `sluice plot`.
pub fn run(_a: PlotArgs) -> Result<(), Failure> {
    Err(Failure("`sluice plot` is being built".into(), 2))
}
