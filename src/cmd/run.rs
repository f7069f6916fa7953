//! `sluice run`: run a deck, write snapshots and the ledger.

use crate::Failure;
use sluice_driver::deck::read_deck;
use sluice_driver::output::OutputWriter;
use sluice_driver::Simulation;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};

/// Arguments of `sluice run`.
#[derive(clap::Args)]
pub struct RunArgs {
    /// The deck (TOML, see docs/deck.md). Not given with --restart.
    #[arg(required_unless_present = "restart")]
    pub deck: Option<PathBuf>,
    /// Continue the run stored in this snapshot (bit-identical to a run never stopped).
    /// Only run.t_end, run.output_interval, run.output_times, run.output_dir and
    /// run.max_steps may be changed with --set.
    #[arg(long, value_name = "SNAPSHOT", conflicts_with = "deck")]
    pub restart: Option<PathBuf>,
    /// Output folder (default: run.output_dir of the deck, else out/<deck file stem>; with
    /// --restart: run.output_dir if set with --set, else the snapshot's folder).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Override a deck value: key.path=value (repeatable), e.g. --set grid.cells=800.
    #[arg(long = "set", value_name = "KEY=VALUE")]
    pub set: Vec<String>,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
}

/// Runs `sluice run`.
pub fn run(a: RunArgs) -> Result<(), Failure> {
    match (&a.restart, &a.deck) {
        (Some(snap), _) => cmd_restart(snap, a.out, &a.set, a.quiet),
        (None, Some(deck)) => cmd_run(deck, a.out, &a.set, a.quiet),
        (None, None) => Err(Failure("give a deck, or --restart SNAPSHOT".into(), 2)),
    }
}

/// `sluice run --restart SNAPSHOT`: rebuild the run from the snapshot and continue it.
fn cmd_restart(
    snap_path: &Path,
    out: Option<PathBuf>,
    set: &[String],
    quiet: bool,
) -> Result<(), Failure> {
    if !snap_path.is_file() {
        return Err(Failure(
            format!(
                "--restart `{}`: no such file (give a snapshot <name>_NNNN.h5 written by sluice run)",
                snap_path.display()
            ),
            2,
        ));
    }
    let mut sim = Simulation::from_snapshot_file(snap_path, set)?;
    let snap_dir = snap_path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .map(Path::to_path_buf)
        .unwrap_or_else(|| PathBuf::from("."));
    let set_dir = set
        .iter()
        .any(|s| s.trim_start().starts_with("run.output_dir"));
    let dir = match (out, set_dir, sim.deck().run.output_dir.as_deref()) {
        (Some(d), _, _) => d,
        (None, true, Some(d)) => PathBuf::from(d),
        _ => snap_dir.clone(),
    };
    let progress = !quiet && std::io::stderr().is_terminal();
    let previous = snap_dir.join("ledger.csv");
    let mut writer = OutputWriter::resume(&dir, &sim, progress, Some(&previous))?;
    let (t0, step0) = (sim.time_seconds(), sim.steps());
    let result = sim.run(&mut writer);
    writer.finish();
    let summary = result?;
    let n = writer.written().len();
    println!(
        "sluice: restarted from {} at t = {t0:.6e} s (step {}); {summary}; {n} new snapshot(s) in {}, ledger {}",
        snap_path.display(),
        step0,
        dir.display(),
        writer.ledger_path().display()
    );
    Ok(())
}

pub fn default_out(deck_path: &Path, deck_dir: Option<&str>) -> PathBuf {
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
