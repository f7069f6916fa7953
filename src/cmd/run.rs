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
    /// The deck (TOML, see docs/deck.md).
    pub deck: PathBuf,
    /// Output folder (default: run.output_dir of the deck, else out/<deck file stem>).
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
    cmd_run(&a.deck, a.out, &a.set, a.quiet)
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
