//! The `sluice` command: a thin layer over `sluice-driver` and `sluice-verify`.
//!
//! Exit status: 0 success, 1 a verification check failed, 2 bad input or a failed run
//! (one-line message on stderr), 101 an internal error (a bug; one line, no backtrace).

use clap::{Parser, Subcommand};
use sluice_driver::check::check_deck;
use sluice_driver::deck::read_deck;
use sluice_driver::output::OutputWriter;
use sluice_driver::Simulation;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
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
    Run {
        /// The deck (TOML, see docs/deck.md).
        deck: PathBuf,
        /// Output folder (default: run.output_dir of the deck, else out/<deck file stem>).
        #[arg(long)]
        out: Option<PathBuf>,
        /// Override a deck value: key.path=value (repeatable), e.g. --set grid.cells=800.
        #[arg(long = "set", value_name = "KEY=VALUE")]
        set: Vec<String>,
        /// No progress bar.
        #[arg(long)]
        quiet: bool,
    },
    /// Validate a deck and print derived quantities and a run-time estimate.
    Check {
        /// The deck.
        deck: PathBuf,
        /// Override a deck value: key.path=value (repeatable).
        #[arg(long = "set", value_name = "KEY=VALUE")]
        set: Vec<String>,
    },
    /// Run the built-in checks against published results.
    Verify {
        /// Only checks whose name contains this text.
        #[arg(long)]
        only: Option<String>,
        /// Print a JSON array instead of a table.
        #[arg(long)]
        json: bool,
    },
}

/// A failure to report: message and exit code.
struct Failure(String, u8);

impl<E: std::fmt::Display> From<E> for Failure {
    fn from(e: E) -> Self {
        Failure(e.to_string(), 2)
    }
}

fn default_out(deck_path: &Path, deck_dir: Option<&str>) -> PathBuf {
    if let Some(d) = deck_dir {
        return PathBuf::from(d);
    }
    let stem = deck_path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "run".into());
    Path::new("out").join(stem)
}

fn cmd_run(
    deck_path: &Path,
    out: Option<PathBuf>,
    set: &[String],
    quiet: bool,
) -> Result<(), Failure> {
    let (deck, text) = read_deck(deck_path, set)?;
    let dir = out.unwrap_or_else(|| default_out(deck_path, deck.run.output_dir.as_deref()));
    let mut sim = Simulation::from_deck(deck, text)?;
    sim.set_overrides(set.to_vec());
    let expected = sim.output_times().len() + 1;
    let stale = stale_snapshots(&dir, &sim.deck().run.name, expected);
    let progress = !quiet && std::io::stderr().is_terminal();
    let mut writer = OutputWriter::new(&dir, &sim, progress)?;
    let result = sim.run(&mut writer);
    writer.finish();
    let summary = result?;
    let files = writer.written();
    let where_ = match (files.first(), files.last()) {
        (Some(a), Some(b)) if files.len() > 1 => format!(
            "{} snapshots {} … {}",
            files.len(),
            a.display(),
            b.file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default()
        ),
        (Some(a), _) => format!("1 snapshot {}", a.display()),
        _ => "no snapshots".into(),
    };
    if !stale.is_empty() {
        eprintln!(
            "sluice: note: {} holds {} older snapshot(s) of this run name beyond this run's last output (e.g. {}); they are from a previous run",
            dir.display(),
            stale.len(),
            stale[0].display()
        );
    }
    println!(
        "sluice: {summary}; {where_}, ledger {}",
        writer.ledger_path().display()
    );
    Ok(())
}

/// Files `<name>_NNNN.h5` in `dir` with NNNN ≥ `expected` (left over from a longer run).
fn stale_snapshots(dir: &Path, name: &str, expected: usize) -> Vec<PathBuf> {
    let Ok(rd) = std::fs::read_dir(dir) else {
        return Vec::new();
    };
    let prefix = format!("{name}_");
    let mut v: Vec<PathBuf> = rd
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| {
            p.file_name()
                .and_then(|f| f.to_str())
                .and_then(|f| f.strip_prefix(&prefix))
                .and_then(|f| f.strip_suffix(".h5"))
                .and_then(|k| k.parse::<usize>().ok())
                .is_some_and(|k| k >= expected)
        })
        .collect();
    v.sort();
    v
}

fn cmd_check(deck_path: &Path, set: &[String]) -> Result<(), Failure> {
    let (deck, text) = read_deck(deck_path, set)?;
    let report = check_deck(&deck, &text)?;
    println!(
        "deck {} is valid (run `{}`, t_end = {:e} s)",
        deck_path.display(),
        deck.run.name,
        deck.run.t_end
    );
    println!("{report}");
    Ok(())
}

fn cmd_verify(only: Option<&str>, json: bool) -> Result<(), Failure> {
    let checks = sluice_verify::select(only);
    if checks.is_empty() {
        let names: Vec<&str> = sluice_verify::all_checks().iter().map(|c| c.name).collect();
        let avail = if names.is_empty() {
            "(none registered)".to_string()
        } else {
            names.join(", ")
        };
        return Err(Failure(
            format!(
                "no check name contains `{}`; available: {avail}",
                only.unwrap_or("")
            ),
            2,
        ));
    }
    let results = sluice_verify::run_all(&checks);
    if json {
        println!("{}", serde_json::to_string_pretty(&results)?);
    } else {
        let head = [
            "name",
            "source",
            "measured",
            "expected",
            "tolerance",
            "pass",
        ];
        let rows: Vec<[String; 6]> = results
            .iter()
            .map(|r| {
                [
                    r.name.clone(),
                    r.source.clone(),
                    format!("{:.6e}", r.measured),
                    format!("{:.6e}", r.expected),
                    format!("{:.3e}", r.tolerance),
                    if r.pass { "pass".into() } else { "FAIL".into() },
                ]
            })
            .collect();
        let mut w = head.map(|h| h.chars().count());
        for r in &rows {
            for (k, c) in r.iter().enumerate() {
                w[k] = w[k].max(c.chars().count());
            }
        }
        let line = |cells: [&str; 6]| {
            let mut s = String::new();
            for (k, c) in cells.iter().enumerate() {
                let pad = w[k] - c.chars().count();
                if (2..5).contains(&k) {
                    s.push_str(&" ".repeat(pad));
                    s.push_str(c);
                } else {
                    s.push_str(c);
                    if k < 5 {
                        s.push_str(&" ".repeat(pad));
                    }
                }
                if k < 5 {
                    s.push_str("  ");
                }
            }
            s
        };
        println!("{}", line(head));
        for r in &rows {
            println!("{}", line([&r[0], &r[1], &r[2], &r[3], &r[4], &r[5]]));
        }
        let failed = results.iter().filter(|r| !r.pass).count();
        println!("{} passed, {} failed", results.len() - failed, failed);
    }
    let failed: Vec<&str> = results
        .iter()
        .filter(|r| !r.pass)
        .map(|r| r.name.as_str())
        .collect();
    if failed.is_empty() {
        Ok(())
    } else {
        Err(Failure(
            format!("{} check(s) failed: {}", failed.len(), failed.join(", ")),
            1,
        ))
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
        Command::Run {
            deck,
            out,
            set,
            quiet,
        } => cmd_run(&deck, out, &set, quiet),
        Command::Check { deck, set } => cmd_check(&deck, &set),
        Command::Verify { only, json } => cmd_verify(only.as_deref(), json),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(Failure(msg, code)) => {
            eprintln!("sluice: error: {msg}");
            ExitCode::from(code)
        }
    }
}
