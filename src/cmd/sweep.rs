//! `sluice sweep` and `sluice merge`: parameter ensembles, shards and their merge.
//!
//! A thin layer over [`sluice_driver::sweep`]: the plan (cartesian product of the `--vary`
//! lists, every value and combination checked by the deck parser before anything runs), the
//! rayon ensemble on a local thread pool, and the summary CSV (see docs/sweeps.md).

use crate::Failure;
use sluice_driver::deck::read_deck;
use sluice_driver::sweep::{self, Shard, SnapshotMode, SweepPlan};
use std::path::{Path, PathBuf};
use std::time::Instant;

/// Arguments of `sluice sweep`.
#[derive(clap::Args)]
pub struct SweepArgs {
    /// The deck (TOML, see docs/deck.md).
    pub deck: PathBuf,
    /// A varied deck key and its values: key.path=v1,v2,... (repeatable; the runs are the
    /// cartesian product, the first --vary varying slowest). Commas inside [...] or quotes do
    /// not split, e.g. --vary 'run.output_times=[0.1,0.2],[0.3]'.
    #[arg(long = "vary", value_name = "KEY=V1,V2,...", required = true)]
    pub vary: Vec<String>,
    /// Override a deck value for every run: key.path=value (repeatable), as in `sluice run`.
    #[arg(long = "set", value_name = "KEY=VALUE")]
    pub set: Vec<String>,
    /// Output folder: the summary CSV (`sweep.csv`, or `sweep_shard_K_of_N.csv` with --shard)
    /// and, with --snapshots last|all, one folder run_NNNNNN per run (default:
    /// out/<deck file stem>_sweep).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Threads of the ensemble (default: every core, or RAYON_NUM_THREADS). Each run is
    /// single-threaded; the results do not depend on this number.
    #[arg(long, value_name = "N")]
    pub threads: Option<String>,
    /// Run only shard K of N (1 ≤ K ≤ N): the runs whose id i has i mod N = K − 1, e.g.
    /// --shard $SLURM_ARRAY_TASK_ID/8. Join the shard CSVs with `sluice merge`.
    #[arg(long, value_name = "K/N")]
    pub shard: Option<String>,
    /// Files per run besides its summary row: none (default), last (final snapshot and
    /// ledger.csv) or all (every snapshot and ledger.csv), in <out>/run_NNNNNN/.
    #[arg(long, value_name = "MODE", default_value = "none")]
    pub snapshots: String,
    /// Plan and validate the sweep, print the runs and stop.
    #[arg(long)]
    pub dry_run: bool,
}

fn bad(msg: String) -> Failure {
    Failure(msg, 2)
}

fn parse_threads(s: &str) -> Result<usize, Failure> {
    match s.trim().parse::<usize>() {
        Ok(n) if n >= 1 => Ok(n),
        _ => Err(bad(format!(
            "--threads `{s}`: expected a whole number ≥ 1 (leave it out for every core)"
        ))),
    }
}

fn parse_mode(s: &str) -> Result<SnapshotMode, Failure> {
    match s.trim() {
        "none" => Ok(SnapshotMode::None),
        "last" => Ok(SnapshotMode::Last),
        "all" => Ok(SnapshotMode::All),
        _ => Err(bad(format!(
            "--snapshots `{s}`: expected none, last or all"
        ))),
    }
}

/// Runs `sluice sweep`.
pub fn run(a: SweepArgs) -> Result<(), Failure> {
    let varies = a
        .vary
        .iter()
        .map(|v| sweep::parse_vary(v))
        .collect::<Result<Vec<_>, _>>()?;
    let shard = match &a.shard {
        Some(s) => Shard::parse(s)?,
        None => Shard::ALL,
    };
    let threads = a.threads.as_deref().map(parse_threads).transpose()?;
    let mode = parse_mode(&a.snapshots)?;
    // The deck file and the common overrides exactly as `sluice run` reads them.
    let (_deck, text) = read_deck(&a.deck, &a.set)?;
    let plan = SweepPlan::new(&text, &a.set, varies)?;
    let mine = plan.runs.iter().filter(|r| shard.owns(r.id)).count();
    if a.dry_run {
        println!(
            "sluice: sweep {} of {} runs ({} in shard {}/{}):",
            plan.sweep_id,
            plan.runs.len(),
            mine,
            shard.k,
            shard.n
        );
        for r in plan.runs.iter().filter(|r| shard.owns(r.id)) {
            println!("  run {:6}: {}", r.id, r.overrides[a.set.len()..].join(" "));
        }
        return Ok(());
    }
    let out = a.out.unwrap_or_else(|| {
        let d = super::run::default_out(&a.deck, None);
        let stem = d
            .file_name()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| "run".into());
        d.with_file_name(format!("{stem}_sweep"))
    });
    std::fs::create_dir_all(&out)
        .map_err(|e| bad(format!("--out `{}`: cannot create it: {e}", out.display())))?;
    let start = Instant::now();
    let rows = sweep::run_sweep(&plan, shard, threads.unwrap_or(0), Some(&out), mode)?;
    let csv = out.join(shard.csv_name());
    sweep::write_csv(&csv, &plan, &rows)?;
    let failed: Vec<String> = rows
        .iter()
        .filter(|r| r.result.is_err())
        .map(|r| r.id.to_string())
        .collect();
    let pool = threads.unwrap_or_else(rayon::current_num_threads);
    println!(
        "sluice: sweep {}: {} of {} runs (shard {}/{}) on {} thread(s) in {:.2} s; summary {}",
        plan.sweep_id,
        rows.len(),
        plan.runs.len(),
        shard.k,
        shard.n,
        pool,
        start.elapsed().as_secs_f64(),
        csv.display()
    );
    if !failed.is_empty() {
        eprintln!(
            "sluice: note: {} run(s) failed (status `failed`, reason in the message column): {}",
            failed.len(),
            failed.join(", ")
        );
        if failed.len() == rows.len() {
            return Err(bad(format!(
                "every run of the sweep failed; see the message column of {}",
                csv.display()
            )));
        }
    }
    Ok(())
}

/// Arguments of `sluice merge`.
#[derive(clap::Args)]
pub struct MergeArgs {
    /// The summary CSVs of the shards (any order), e.g. out/x_sweep/sweep_shard_*_of_8.csv.
    #[arg(required = true)]
    pub shards: Vec<PathBuf>,
    /// The merged CSV (default: sweep.csv beside the first shard).
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// Runs `sluice merge`.
pub fn run_merge(a: MergeArgs) -> Result<(), Failure> {
    let mut inputs = Vec::with_capacity(a.shards.len());
    for p in &a.shards {
        let text = std::fs::read_to_string(p)
            .map_err(|e| bad(format!("merge: cannot read `{}`: {e}", p.display())))?;
        inputs.push((p.display().to_string(), text));
    }
    let merged = sweep::merge(&inputs)?;
    let out = a.out.unwrap_or_else(|| {
        a.shards[0]
            .parent()
            .unwrap_or(Path::new("."))
            .join("sweep.csv")
    });
    if a.shards.iter().any(|s| s == &out) {
        return Err(bad(format!(
            "--out `{}` is one of the shard CSVs; give another file",
            out.display()
        )));
    }
    sluice_driver::restart::write_text_atomic(&out, &merged)?;
    println!(
        "sluice: merged {} shard CSV(s), {} runs, into {}",
        a.shards.len(),
        merged.lines().count() - 1,
        out.display()
    );
    Ok(())
}
