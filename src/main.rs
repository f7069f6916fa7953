//! The `sluice` command: a thin layer over `sluice-driver`, `sluice-analysis` and
//! `sluice-verify`; one module per subcommand under `cmd/`.
//!
//! Exit status: 0 success, 1 a verification check or a comparison failed, 2 bad input or a
//! failed run (one-line message on stderr), 101 an internal error (a bug; one line, no
//! backtrace).

mod cmd;

use clap::{Parser, Subcommand};
use std::process::ExitCode;

#[derive(Parser)]
#[command(
    name = "sluice",
    version,
    about = "1D two-moment cosmic-ray MHD solver"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Run a deck and write snapshots, ledger.csv and a summary line.
    Run(cmd::run::RunArgs),
    /// Validate a deck and print derived quantities and a run-time estimate.
    Check(cmd::check::CheckArgs),
    /// Run the built-in checks against published results.
    Verify(cmd::verify::VerifyArgs),
    /// Compare a 1D profile from another code (CSV, columns or HDF5) with a reference.
    Compare(Box<cmd::compare::CompareArgs>),
    /// Run a deck at several resolutions and print errors and measured orders.
    Converge(cmd::converge::ConvergeArgs),
    /// Run a parameter ensemble in parallel (one summary row per run).
    Sweep(cmd::sweep::SweepArgs),
    /// Join the summary CSVs of sweep shards into one.
    Merge(cmd::sweep::MergeArgs),
    /// Streaming versus diffusion: one CR pulse deck run under several transport variants in
    /// parallel; reports the width exponent α, the front speed, v_eff, the streaming
    /// fraction and the flank drift against growth = damping.
    Study(cmd::study::StudyArgs),
    /// Plot snapshot profiles or time series (ledger, slab diagnostics) as SVG or PNG.
    Plot(cmd::plot::PlotArgs),
}

/// A failure to report: message and exit code.
pub(crate) struct Failure(pub(crate) String, pub(crate) u8);

impl<E: std::fmt::Display> From<E> for Failure {
    fn from(e: E) -> Self {
        Failure(e.to_string(), 2)
    }
}

fn main() -> ExitCode {
    std::panic::set_hook(Box::new(|info| {
        let msg = info
            .payload()
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| info.payload().downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown panic".into());
        let at = info
            .location()
            .map(|l| format!(" at {}:{}", l.file(), l.line()))
            .unwrap_or_default();
        eprintln!("sluice: internal error (a bug, please report it): {msg}{at}");
    }));
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Run(a) => cmd::run::run(a),
        Command::Check(a) => cmd::check::run(a),
        Command::Verify(a) => cmd::verify::run(a),
        Command::Compare(a) => cmd::compare::run(*a),
        Command::Converge(a) => cmd::converge::run(a),
        Command::Sweep(a) => cmd::sweep::run(a),
        Command::Merge(a) => cmd::sweep::run_merge(a),
        Command::Study(a) => cmd::study::run(a),
        Command::Plot(a) => cmd::plot::run(a),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(Failure(msg, code)) => {
            eprintln!("sluice: error: {msg}");
            ExitCode::from(code)
        }
    }
}
