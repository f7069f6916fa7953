//! Parameter sweeps: the cartesian product of `--vary key.path=v1,v2,...` lists, run in
//! parallel on a rayon thread pool, one summary row per run; shards for cluster job arrays and
//! the merge of their CSVs.
//!
//! Determinism: run ids are the positions in the cartesian product (the first `--vary` varies
//! slowest), each run is single-threaded and independent of the others and takes exactly the
//! steps `sluice run` takes for the same deck and overrides (it stops at every output time,
//! written or not), and rows are written in run-id order. So the summary CSV is the same for
//! any thread count and any sharding (after [`merge`]) except the last column,
//! `wall_seconds[s]`, which is measured time and the only non-deterministic value. The
//! parallel path takes no lock and prints nothing.
//!
//! Every row carries `sweep_id`, a 64-bit FNV-1a fingerprint of the deck text, the common
//! overrides and the varied keys and values, so [`merge`] refuses shards of different sweeps.

use crate::deck::parse_deck;
use crate::output::{build_snapshot, LedgerCsv};
use crate::restart::write_text_atomic;
use crate::simulation::{Observer, Simulation};
use crate::snapshot::write_atomic;
use crate::DriverError;
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::time::Instant;

/// Most runs one sweep may hold (guards against a mistyped list exploding the product).
pub const MAX_RUNS: usize = 1_000_000;

/// Errors of sweep planning and merging. Each names the flag, key or file.
#[derive(Debug, thiserror::Error)]
pub enum SweepError {
    /// A malformed `--vary` argument.
    #[error("--vary `{arg}`: {message}")]
    Vary {
        /// The argument as given.
        arg: String,
        /// What is wrong and what is allowed.
        message: String,
    },
    /// One varied value is rejected by the deck parser.
    #[error("--vary {key}: value `{value}` is not allowed: {source}")]
    Value {
        /// Deck key.
        key: String,
        /// The value.
        value: String,
        /// The deck error (names the key and the allowed range).
        source: crate::DeckError,
    },
    /// A combination of individually valid values is rejected by the deck parser.
    #[error("sweep run {id} ({assignments}): {source}")]
    Combination {
        /// Run id.
        id: usize,
        /// `key=value` of every varied key, space separated.
        assignments: String,
        /// The deck error.
        source: crate::DeckError,
    },
    /// The base deck itself is invalid.
    #[error("the deck: {0}")]
    Base(crate::DeckError),
    /// A malformed `--shard`.
    #[error("--shard `{arg}`: {message}")]
    Shard {
        /// The argument as given.
        arg: String,
        /// What is allowed.
        message: String,
    },
    /// The thread pool could not be started.
    #[error("--threads {threads}: cannot start the thread pool: {message}")]
    Pool {
        /// Threads asked for.
        threads: usize,
        /// The error.
        message: String,
    },
    /// Too many runs.
    #[error(
        "the sweep has {runs} runs; at most {MAX_RUNS} are allowed (split it into several sweeps)"
    )]
    TooMany {
        /// Product of the list lengths.
        runs: usize,
    },
    /// Shard CSVs that cannot be merged.
    #[error("merge: {0}")]
    Merge(String),
    /// Writing the summary failed.
    #[error(transparent)]
    Io(#[from] DriverError),
}

/// One `--vary key.path=v1,v2,...`: the deck key and its values as TOML value text.
#[derive(Debug, Clone, PartialEq)]
pub struct Vary {
    /// Deck key path, e.g. `gas.gamma` or `init.regions[1].density`.
    pub key: String,
    /// Values in the order given (TOML value text, e.g. `1.4`, `"hlle"`, `[0.1, 0.2]`).
    pub values: Vec<String>,
}

/// Splits at commas outside brackets, braces and quotes.
fn split_values(s: &str) -> Vec<String> {
    let (mut out, mut cur) = (Vec::new(), String::new());
    let (mut depth, mut quote) = (0i32, None::<char>);
    for c in s.chars() {
        match (quote, c) {
            (Some(q), c) if c == q => quote = None,
            (Some(_), _) => {}
            (None, '"' | '\'') => quote = Some(c),
            (None, '[' | '{') => depth += 1,
            (None, ']' | '}') => depth -= 1,
            (None, ',') if depth == 0 => {
                out.push(std::mem::take(&mut cur).trim().to_string());
                continue;
            }
            _ => {}
        }
        cur.push(c);
    }
    out.push(cur.trim().to_string());
    out
}

/// Parses `key.path=v1,v2,...` (commas inside `[...]`, `{...}` or quotes do not split).
pub fn parse_vary(arg: &str) -> Result<Vary, SweepError> {
    let err = |message: String| SweepError::Vary {
        arg: arg.to_string(),
        message,
    };
    let (key, list) = arg
        .split_once('=')
        .ok_or_else(|| err("expected key.path=v1,v2,... (e.g. gas.gamma=1.4,1.6667)".into()))?;
    let key = key.trim();
    if key.is_empty()
        || !key
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || "_-.[]".contains(c))
    {
        return Err(err(format!(
            "`{key}` is not a key path like `gas.gamma` or `init.regions[1].density`"
        )));
    }
    let values = split_values(list);
    if let Some(i) = values.iter().position(|v| v.is_empty()) {
        return Err(err(format!(
            "value {} of the list is empty (values are separated by single commas)",
            i + 1
        )));
    }
    let mut seen = BTreeSet::new();
    if let Some(d) = values.iter().find(|v| !seen.insert(v.as_str())) {
        return Err(err(format!("value `{d}` appears twice")));
    }
    Ok(Vary {
        key: key.to_string(),
        values,
    })
}

/// `--shard K/N`: this job runs the ids i with i mod N = K − 1 (1 ≤ K ≤ N).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// 1-based shard number.
    pub k: usize,
    /// Number of shards.
    pub n: usize,
}

impl Shard {
    /// The whole sweep.
    pub const ALL: Shard = Shard { k: 1, n: 1 };

    /// Parses `K/N`.
    pub fn parse(arg: &str) -> Result<Shard, SweepError> {
        let err = |message: &str| SweepError::Shard {
            arg: arg.to_string(),
            message: message.to_string(),
        };
        let (k, n) = arg
            .split_once('/')
            .ok_or_else(|| err("expected K/N, e.g. 3/8"))?;
        let k: usize = k
            .trim()
            .parse()
            .map_err(|_| err("K must be a whole number ≥ 1"))?;
        let n: usize = n
            .trim()
            .parse()
            .map_err(|_| err("N must be a whole number ≥ 1"))?;
        if n == 0 || k == 0 || k > n {
            return Err(err("need 1 ≤ K ≤ N"));
        }
        Ok(Shard { k, n })
    }

    /// Whether run `id` belongs to this shard (round robin, so neighbouring, similarly
    /// expensive runs are spread over the shards).
    pub fn owns(&self, id: usize) -> bool {
        id % self.n == self.k - 1
    }

    /// Summary file name: `sweep.csv`, or `sweep_shard_K_of_N.csv`.
    pub fn csv_name(&self) -> String {
        if self.n == 1 {
            "sweep.csv".into()
        } else {
            format!("sweep_shard_{}_of_{}.csv", self.k, self.n)
        }
    }
}

/// One run of the sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct RunSpec {
    /// Position in the cartesian product (0-based).
    pub id: usize,
    /// The value of each varied key, in `--vary` order.
    pub values: Vec<String>,
    /// All overrides of the run: the common `--set` ones, then `key=value` per varied key.
    pub overrides: Vec<String>,
}

/// A validated sweep: deck text, varied keys and every run.
#[derive(Debug, Clone)]
pub struct SweepPlan {
    /// The deck text.
    pub deck_text: String,
    /// The varied keys and values.
    pub varies: Vec<Vary>,
    /// Every run in id order.
    pub runs: Vec<RunSpec>,
    /// Deck-dependent scalar columns after [`SCALARS`] (`name[unit]`): the slab diagnostics
    /// of [`crate::slab::scalars`] when the deck has `[slab]`, else none.
    pub extra: Vec<String>,
    /// Fingerprint of the sweep (16 hex digits, see the module docs).
    pub sweep_id: String,
}

/// 64-bit FNV-1a hash of a byte stream (Fowler, Noll & Vo; offset basis and prime of the
/// 64-bit variant as in the IETF draft draft-eastlake-fnv, from memory; checked against its
/// test vectors below).
fn fnv1a_bytes(bytes: impl Iterator<Item = u8>) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

/// FNV-1a of the parts, each followed by a NUL byte (so `["ab", "c"]` ≠ `["a", "bc"]`).
fn fnv1a(parts: &[&str]) -> u64 {
    fnv1a_bytes(parts.iter().flat_map(|p| p.bytes().chain([0u8])))
}

/// The deck-dependent columns of the final state (`name[unit]`, value, cgs).
fn extra_scalars(sim: &Simulation) -> Vec<(String, f64)> {
    crate::slab::scalars(sim)
        .unwrap_or_default()
        .into_iter()
        .map(|(n, u, v)| (format!("{n}[{u}]"), v))
        .collect()
}

impl SweepPlan {
    /// Builds the cartesian product and validates every value and every combination with the
    /// deck parser before anything runs. `set` are overrides common to all runs.
    pub fn new(deck_text: &str, set: &[String], varies: Vec<Vary>) -> Result<Self, SweepError> {
        parse_deck(deck_text, set).map_err(SweepError::Base)?;
        let mut keys = BTreeSet::new();
        for v in &varies {
            if !keys.insert(v.key.as_str()) {
                return Err(SweepError::Vary {
                    arg: v.key.clone(),
                    message: "the key is varied twice (give all its values in one --vary)".into(),
                });
            }
            if set
                .iter()
                .any(|s| s.split('=').next().map(str::trim) == Some(&v.key))
            {
                return Err(SweepError::Vary {
                    arg: v.key.clone(),
                    message: "the key is also given with --set".into(),
                });
            }
            // Each value alone: errors name the key and the value.
            for val in &v.values {
                let mut o = set.to_vec();
                o.push(format!("{}={}", v.key, val));
                parse_deck(deck_text, &o).map_err(|source| SweepError::Value {
                    key: v.key.clone(),
                    value: val.clone(),
                    source,
                })?;
            }
        }
        let runs_total = varies
            .iter()
            .try_fold(1usize, |acc, v| acc.checked_mul(v.values.len()))
            .unwrap_or(usize::MAX);
        if runs_total > MAX_RUNS {
            return Err(SweepError::TooMany { runs: runs_total });
        }
        let mut runs = Vec::with_capacity(runs_total);
        for id in 0..runs_total {
            // Mixed radix, last key fastest.
            let mut rest = id;
            let mut values = vec![String::new(); varies.len()];
            for (j, v) in varies.iter().enumerate().rev() {
                values[j] = v.values[rest % v.values.len()].clone();
                rest /= v.values.len();
            }
            let mut overrides = set.to_vec();
            for (v, val) in varies.iter().zip(&values) {
                overrides.push(format!("{}={}", v.key, val));
            }
            if varies.len() > 1 {
                parse_deck(deck_text, &overrides).map_err(|source| SweepError::Combination {
                    id,
                    assignments: overrides[set.len()..].join(" "),
                    source,
                })?;
            }
            runs.push(RunSpec {
                id,
                values,
                overrides,
            });
        }
        // Slab columns are named from the first run's set-up (a run whose slabs differ gets
        // NaN in the columns it lacks).
        let extra = match (parse_deck(deck_text, set), runs.first()) {
            (Ok(d), Some(r0)) if d.slab.is_some() => {
                Simulation::from_toml_str(deck_text, &r0.overrides)
                    .map(|sim| extra_scalars(&sim).into_iter().map(|e| e.0).collect())
                    .unwrap_or_default()
            }
            _ => Vec::new(),
        };
        let mut parts: Vec<&str> = vec![deck_text];
        parts.extend(set.iter().map(String::as_str));
        for v in &varies {
            parts.push("--vary");
            parts.push(&v.key);
            parts.extend(v.values.iter().map(String::as_str));
        }
        let sweep_id = format!("{:016x}", fnv1a(&parts));
        Ok(Self {
            deck_text: deck_text.to_string(),
            varies,
            runs,
            extra,
            sweep_id,
        })
    }

    /// The CSV header (units in brackets; varied keys are in deck units, cgs).
    pub fn header(&self) -> Vec<String> {
        let mut h: Vec<String> = vec![
            "run_id".into(),
            "n_runs".into(),
            "sweep_id".into(),
            "status".into(),
        ];
        h.extend(self.varies.iter().map(|v| v.key.clone()));
        h.extend(SCALARS.iter().map(|s| s.to_string()));
        h.extend(self.extra.iter().cloned());
        h.push("message".into());
        h.push(WALL_COLUMN.into());
        h
    }
}

/// Name of the only non-deterministic column (measured wall time of the run).
pub const WALL_COLUMN: &str = "wall_seconds[s]";

/// The deterministic scalar columns of a run, in order (units in brackets).
pub const SCALARS: &[&str] = &[
    "time[s]",
    "steps",
    "mass[g/cm^2]",
    "total_energy[erg/cm^2]",
    "gas_thermal[erg/cm^2]",
    "gas_kinetic[erg/cm^2]",
    "gas_magnetic[erg/cm^2]",
    "stage_energy[erg/cm^2]",
    "cr_energy[erg/cm^2]",
    "boundary_energy[erg/cm^2]",
    "stage_sources[erg/cm^2]",
    "floor_energy[erg/cm^2]",
    "energy_residual[erg/cm^2]",
    "relative_energy_error[1]",
    "mass_residual[g/cm^2]",
    "floors_hit",
    "density_min[g/cm^3]",
    "density_max[g/cm^3]",
    "cr_pressure_max[erg/cm^3]",
];

/// Positions in [`SCALARS`] of the whole-number columns (`steps`, `floors_hit`), written
/// without an exponent.
const COUNT_COLUMNS: [usize; 2] = [1, 15];

/// What each run writes besides its summary row.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SnapshotMode {
    /// Every snapshot and the ledger, in `<out>/run_NNNNNN/`.
    All,
    /// The final snapshot and the ledger (enough to restart or inspect a run).
    Last,
    /// Nothing but the summary row (the default of `sluice sweep`).
    None,
}

/// The summary of one run.
#[derive(Debug, Clone, PartialEq)]
pub struct RunRow {
    /// Run id.
    pub id: usize,
    /// Varied values.
    pub values: Vec<String>,
    /// `Ok(scalars in SCALARS order, then the plan's extra columns)` or `Err(message)`.
    pub result: Result<Vec<f64>, String>,
    /// Wall time of the run, s (non-deterministic).
    pub wall_seconds: f64,
}

/// Folder of run `id` below the sweep folder.
pub fn run_dir(out: &Path, id: usize) -> PathBuf {
    out.join(format!("run_{id:06}"))
}

/// Writes the snapshots the mode asks for and the ledger (nothing for [`SnapshotMode::None`]).
struct SweepObserver {
    dir: PathBuf,
    name: String,
    last: usize,
    mode: SnapshotMode,
    ledger: LedgerCsv,
}

impl Observer for SweepObserver {
    fn output(&mut self, sim: &Simulation, index: usize) -> Result<(), DriverError> {
        if self.mode == SnapshotMode::None {
            return Ok(());
        }
        if self.mode == SnapshotMode::All || index == self.last {
            let path = self.dir.join(format!("{}_{index:04}.h5", self.name));
            write_atomic(&path, &build_snapshot(sim, index))?;
        }
        self.ledger.append(&sim.ledger())
    }
}

/// Scalars of the final state in [`SCALARS`] order (cgs).
pub fn scalars(sim: &Simulation) -> Vec<f64> {
    let l = sim.ledger();
    let g = |n: &str| l.get(n).unwrap_or(f64::NAN);
    let stage_energy: f64 = sim
        .stages()
        .iter()
        .flat_map(|s| {
            s.energy_terms(sim.state())
                .into_iter()
                .map(|t| format!("{}_{}", s.name(), t.0))
                .collect::<Vec<_>>()
        })
        .map(|n| g(&n))
        .fold(0.0, |a, b| a + b);
    let cr_energy = l.get("cr_cosmic_rays").unwrap_or(0.0);
    let e0 = sim.ledger_origin().0 * sim.units().energy_per_area();
    let residual = g("energy_residual");
    let rel = if e0 != 0.0 {
        residual / e0.abs()
    } else {
        f64::NAN
    };
    let u = sim.units();
    let st = sim.state();
    let (mut dmin, mut dmax) = (f64::INFINITY, f64::NEG_INFINITY);
    for j in st.grid.interior() {
        dmin = dmin.min(st.rho[j]);
        dmax = dmax.max(st.rho[j]);
    }
    let mut pc_max: f64 = 0.0;
    for s in sim.stages() {
        for f in s.fields(st) {
            if f.name == "cr_pressure" {
                pc_max = f.data.iter().fold(pc_max, |a, &b| a.max(b));
            }
        }
    }
    let summary = sim.summary();
    vec![
        sim.time_seconds(),
        sim.steps() as f64,
        g("mass"),
        g("total"),
        g("gas_thermal"),
        g("gas_kinetic"),
        g("gas_magnetic"),
        stage_energy,
        cr_energy,
        g("boundary_left") + g("boundary_right"),
        g("stage_sources"),
        g("floor_energy"),
        residual,
        rel,
        g("mass_residual"),
        summary.floors_hit() as f64,
        dmin * u.density,
        dmax * u.density,
        pc_max,
    ]
}

/// Runs one member of the sweep in this thread. `out` = sweep folder (None: no files).
///
/// The run goes through [`Simulation::run`] whatever the mode, so it stops at every output
/// time exactly as `sluice run` does and its final state is bit-identical to that run's.
pub fn run_one(plan: &SweepPlan, spec: &RunSpec, out: Option<&Path>, mode: SnapshotMode) -> RunRow {
    let start = Instant::now();
    let result = (|| -> Result<Vec<f64>, DriverError> {
        let mut sim = Simulation::from_toml_str(&plan.deck_text, &spec.overrides)?;
        let (dir, mode) = match out {
            Some(out) if mode != SnapshotMode::None => {
                let dir = run_dir(out, spec.id);
                std::fs::create_dir_all(&dir).map_err(|e| DriverError::Io {
                    path: dir.display().to_string(),
                    message: e.to_string(),
                })?;
                (dir, mode)
            }
            _ => (PathBuf::new(), SnapshotMode::None),
        };
        let mut obs = SweepObserver {
            name: sim.deck().run.name.clone(),
            last: sim.output_times().len(),
            mode,
            ledger: LedgerCsv::new(dir.join("ledger.csv")),
            dir,
        };
        sim.run(&mut obs)?;
        let mut v = scalars(&sim);
        if !plan.extra.is_empty() {
            let ex = extra_scalars(&sim);
            v.extend(
                plan.extra
                    .iter()
                    .map(|name| ex.iter().find(|e| &e.0 == name).map_or(f64::NAN, |e| e.1)),
            );
        }
        Ok(v)
    })();
    RunRow {
        id: spec.id,
        values: spec.values.clone(),
        result: result.map_err(|e| e.to_string()),
        wall_seconds: start.elapsed().as_secs_f64(),
    }
}

/// Runs the runs of `shard` on a pool of `threads` threads (0: rayon's default, the
/// `RAYON_NUM_THREADS` variable or every core), rows in id order.
pub fn run_sweep(
    plan: &SweepPlan,
    shard: Shard,
    threads: usize,
    out: Option<&Path>,
    mode: SnapshotMode,
) -> Result<Vec<RunRow>, SweepError> {
    use rayon::prelude::*;
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .map_err(|e| SweepError::Pool {
            threads,
            message: e.to_string(),
        })?;
    let mine: Vec<&RunSpec> = plan.runs.iter().filter(|r| shard.owns(r.id)).collect();
    Ok(pool.install(|| {
        mine.par_iter()
            .with_max_len(1)
            .map(|r| run_one(plan, r, out, mode))
            .collect()
    }))
}

/// One CSV field, quoted when it holds a comma, quote or line break.
fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\"").replace(['\n', '\r'], " "))
    } else {
        s.to_string()
    }
}

/// The summary CSV text (header and one line per row, in the order given).
pub fn csv_text(plan: &SweepPlan, rows: &[RunRow]) -> String {
    let mut t = plan
        .header()
        .iter()
        .map(|h| csv_field(h))
        .collect::<Vec<_>>()
        .join(",");
    t.push('\n');
    let n = plan.runs.len();
    for r in rows {
        let mut f: Vec<String> = vec![r.id.to_string(), n.to_string(), plan.sweep_id.clone()];
        match &r.result {
            Ok(_) => f.push("ok".into()),
            Err(_) => f.push("failed".into()),
        }
        f.extend(r.values.iter().map(|v| csv_field(v)));
        match &r.result {
            Ok(s) => {
                f.extend(s.iter().enumerate().map(|(k, x)| {
                    if COUNT_COLUMNS.contains(&k) {
                        format!("{}", *x as u64)
                    } else {
                        format!("{x:e}")
                    }
                }));
                f.push(String::new());
            }
            Err(m) => {
                f.extend(std::iter::repeat_n(
                    String::new(),
                    SCALARS.len() + plan.extra.len(),
                ));
                f.push(csv_field(m));
            }
        }
        f.push(format!("{:e}", r.wall_seconds));
        t.push_str(&f.join(","));
        t.push('\n');
    }
    t
}

/// Writes the summary CSV atomically.
pub fn write_csv(path: &Path, plan: &SweepPlan, rows: &[RunRow]) -> Result<(), SweepError> {
    Ok(write_text_atomic(path, &csv_text(plan, rows))?)
}

/// Field `k` of a CSV line; the first three (run id, run count, sweep id) never need quoting.
fn field(line: &str, k: usize) -> &str {
    line.split(',').nth(k).unwrap_or("")
}

/// `(K, N)` of a shard file name `…sweep_shard_K_of_N.csv`.
fn shard_of_name(name: &str) -> Option<(usize, usize)> {
    let file = Path::new(name).file_name()?.to_str()?;
    let rest = file.strip_prefix("sweep_shard_")?.strip_suffix(".csv")?;
    let (k, n) = rest.split_once("_of_")?;
    Some((k.parse().ok()?, n.parse().ok()?))
}

/// Joins shard CSVs (`(name, text)` pairs, the name is used in errors): headers and sweep ids
/// must match, every run id of `0..n_runs` must appear exactly once. Returns the merged text
/// sorted by run id.
pub fn merge(inputs: &[(String, String)]) -> Result<String, SweepError> {
    let m = SweepError::Merge;
    let Some((first_name, first)) = inputs.first() else {
        return Err(m("no shard CSV given".into()));
    };
    let header = first.lines().next().unwrap_or("").to_string();
    if !header.starts_with("run_id,n_runs,sweep_id,status,") {
        return Err(m(format!(
            "`{first_name}` is not a sweep summary (its header does not start with run_id,n_runs,sweep_id,status)"
        )));
    }
    let mut rows: Vec<(usize, String, String)> = Vec::new();
    // (n_runs, sweep id, file of the first row)
    let mut sweep: Option<(usize, String, String)> = None;
    for (name, text) in inputs {
        let mut lines = text.lines();
        let h = lines.next().unwrap_or("");
        if h != header {
            return Err(m(format!(
                "the header of `{name}` differs from that of `{first_name}` (different sweeps?):\n  {h}\n  {header}"
            )));
        }
        for (i, line) in lines.enumerate() {
            if line.trim().is_empty() {
                continue;
            }
            let at = format!("`{name}` line {}", i + 2);
            let id: usize = field(line, 0).parse().map_err(|_| {
                m(format!(
                    "{at}: run id `{}` is not a whole number",
                    field(line, 0)
                ))
            })?;
            let n: usize = field(line, 1)
                .parse()
                .map_err(|_| m(format!("{at}: n_runs is not a whole number")))?;
            let sid = field(line, 2);
            match &sweep {
                None => sweep = Some((n, sid.to_string(), name.clone())),
                Some((n0, s0, f0)) if *n0 != n || s0 != sid => {
                    return Err(m(format!(
                        "{at} is from sweep {sid} of {n} runs, `{f0}` from sweep {s0} of {n0} runs (shards of different sweeps: other deck, --set or --vary)"
                    )))
                }
                _ => {}
            }
            rows.push((id, name.clone(), line.to_string()));
        }
    }
    rows.sort_by_key(|r| r.0);
    let mut dup = Vec::new();
    for w in rows.windows(2) {
        if w[0].0 == w[1].0 {
            dup.push(format!("{} (in `{}` and `{}`)", w[0].0, w[0].1, w[1].1));
        }
    }
    if !dup.is_empty() {
        return Err(m(format!("duplicate run ids: {}", dup.join(", "))));
    }
    let n = sweep.map_or(0, |x| x.0);
    if n == 0 {
        return Err(m("the shard CSVs hold no rows".into()));
    }
    let present: BTreeSet<usize> = rows.iter().map(|r| r.0).collect();
    if let Some(r) = rows.iter().find(|r| r.0 >= n) {
        return Err(m(format!("`{}`: run id {} is outside 0..{n}", r.1, r.0)));
    }
    let missing: Vec<usize> = (0..n).filter(|i| !present.contains(i)).collect();
    if !missing.is_empty() {
        let shown = missing
            .iter()
            .take(20)
            .map(|i| i.to_string())
            .collect::<Vec<_>>()
            .join(", ");
        // With shard file names, say which shards are absent (run i is in shard i mod N + 1).
        let shards: Vec<Option<(usize, usize)>> =
            inputs.iter().map(|(f, _)| shard_of_name(f)).collect();
        let hint = match shards.first() {
            Some(Some((_, total))) if shards.iter().all(|s| s.is_some_and(|s| s.1 == *total)) => {
                let absent: BTreeSet<usize> = missing.iter().map(|i| i % total + 1).collect();
                format!(
                    " (not given or incomplete: shard(s) {} of {total})",
                    absent
                        .iter()
                        .map(|k| format!("{k}/{total}"))
                        .collect::<Vec<_>>()
                        .join(", ")
                )
            }
            _ => " (a shard not run or not given?)".into(),
        };
        return Err(m(format!(
            "{} of {n} run ids are missing: {shown}{}{hint}",
            missing.len(),
            if missing.len() > 20 { ", …" } else { "" }
        )));
    }
    let mut out = header;
    out.push('\n');
    for r in rows {
        out.push_str(&r.2);
        out.push('\n');
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    const DECK: &str = r#"
[run]
name = "tube"
t_end = 0.05
[grid]
cells = 24
x_min = 0.0
x_max = 1.0
[gas]
gamma = 1.4
[boundaries]
left = "outflow"
right = "outflow"
[[init.regions]]
x_min = 0.0
x_max = 0.5
density = 1.0
pressure = 1.0
[[init.regions]]
x_min = 0.5
x_max = 1.0
density = 0.125
pressure = 0.1
"#;

    fn v(a: &str) -> Vary {
        parse_vary(a).unwrap()
    }

    #[test]
    fn vary_lists_split_outside_brackets_and_quotes() {
        assert_eq!(v("gas.gamma=1.4, 1.6").values, ["1.4", "1.6"]);
        assert_eq!(
            v("run.output_times=[0.01,0.02],[0.03]").values,
            ["[0.01,0.02]", "[0.03]"]
        );
        assert_eq!(v("mhd.riemann=\"a,b\",hlle").values, ["\"a,b\"", "hlle"]);
        for bad in [
            "gas.gamma",
            "=1,2",
            "gas.gamma=1,,2",
            "gas.gamma=1,1",
            "gas gamma=1",
        ] {
            let e = parse_vary(bad).unwrap_err().to_string();
            assert!(e.contains(bad), "{e}");
        }
    }

    /// FNV-1a 64 test vectors (draft-eastlake-fnv, from memory): "" → cbf29ce484222325,
    /// "a" → af63dc4c8601ec8c, "foobar" → 85944171f73967e8.
    #[test]
    fn fingerprint_is_fnv1a_64() {
        assert_eq!(fnv1a_bytes("".bytes()), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a_bytes("a".bytes()), 0xaf63_dc4c_8601_ec8c);
        assert_eq!(fnv1a_bytes("foobar".bytes()), 0x8594_4171_f739_67e8);
        assert_ne!(fnv1a(&["ab", "c"]), fnv1a(&["a", "bc"]));
    }

    #[test]
    fn shards_partition_the_ids() {
        let s: Vec<Shard> = (1..=3)
            .map(|k| Shard::parse(&format!("{k}/3")).unwrap())
            .collect();
        for id in 0..10 {
            assert_eq!(s.iter().filter(|x| x.owns(id)).count(), 1);
        }
        for bad in ["0/2", "3/2", "1", "a/2", "1/0"] {
            assert!(Shard::parse(bad).is_err(), "{bad}");
        }
        assert_eq!(
            Shard::parse("2/4").unwrap().csv_name(),
            "sweep_shard_2_of_4.csv"
        );
    }

    #[test]
    fn plan_is_the_cartesian_product_last_key_fastest() {
        let p = SweepPlan::new(
            DECK,
            &[],
            vec![v("gas.gamma=1.4,1.6667"), v("grid.cells=16,24,32")],
        )
        .unwrap();
        assert_eq!(p.runs.len(), 6);
        assert_eq!(p.runs[4].values, ["1.6667", "24"]);
        assert_eq!(p.runs[4].overrides, ["gas.gamma=1.6667", "grid.cells=24"]);
    }

    #[test]
    fn bad_values_and_keys_are_named_before_anything_runs() {
        let e = SweepPlan::new(DECK, &[], vec![v("gas.gamma=1.4,0.5")]).unwrap_err();
        let s = e.to_string();
        assert!(s.contains("gas.gamma") && s.contains("`0.5`"), "{s}");
        let e = SweepPlan::new(DECK, &[], vec![v("gas.gama=1.4")]).unwrap_err();
        assert!(e.to_string().contains("gas.gama"), "{e}");
        let e =
            SweepPlan::new(DECK, &[], vec![v("gas.gamma=1.4"), v("gas.gamma=1.5")]).unwrap_err();
        assert!(e.to_string().contains("varied twice"), "{e}");
    }

    /// Same rows for 1 and 2 threads (the wall column aside), and a merge of two shards gives
    /// the unsharded summary; the pure-hydro runs conserve energy and mass to round-off
    /// (outflow boundaries counted in the ledger; conservation law of the finite-volume
    /// scheme, common practice).
    #[test]
    fn threads_and_shards_do_not_change_results() {
        let p = SweepPlan::new(
            DECK,
            &[],
            vec![v("gas.gamma=1.4,1.6667"), v("grid.cells=16,24")],
        )
        .unwrap();
        let strip = |t: &str| -> String {
            t.lines()
                .map(|l| l.rsplit_once(',').unwrap().0.to_string() + "\n")
                .collect()
        };
        let r1 = run_sweep(&p, Shard::ALL, 1, None, SnapshotMode::None).unwrap();
        let r2 = run_sweep(&p, Shard::ALL, 2, None, SnapshotMode::None).unwrap();
        let (t1, t2) = (csv_text(&p, &r1), csv_text(&p, &r2));
        assert_eq!(strip(&t1), strip(&t2));
        for r in &r1 {
            let s = r.result.as_ref().unwrap();
            assert!(s[13].abs() < 1e-13, "relative energy error {}", s[13]);
        }
        let a = run_sweep(
            &p,
            Shard::parse("1/2").unwrap(),
            2,
            None,
            SnapshotMode::None,
        )
        .unwrap();
        let b = run_sweep(
            &p,
            Shard::parse("2/2").unwrap(),
            1,
            None,
            SnapshotMode::None,
        )
        .unwrap();
        let merged = merge(&[
            ("b".into(), csv_text(&p, &b)),
            ("a".into(), csv_text(&p, &a)),
        ])
        .unwrap();
        assert_eq!(strip(&merged), strip(&t1));
        let e = merge(&[("a".into(), csv_text(&p, &a))]).unwrap_err();
        assert!(e.to_string().contains("missing: 1, 3"), "{e}");
        let e = merge(&[
            ("a".into(), csv_text(&p, &a)),
            ("a2".into(), csv_text(&p, &a)),
        ])
        .unwrap_err();
        assert!(e.to_string().contains("duplicate run ids: 0"), "{e}");
        // Same keys and run count, other values: a different sweep id, refused.
        let q = SweepPlan::new(
            DECK,
            &[],
            vec![v("gas.gamma=1.4,1.5"), v("grid.cells=16,24")],
        )
        .unwrap();
        assert_ne!(p.sweep_id, q.sweep_id);
        let bq = run_sweep(
            &q,
            Shard::parse("2/2").unwrap(),
            1,
            None,
            SnapshotMode::None,
        )
        .unwrap();
        let e = merge(&[
            ("sweep_shard_1_of_2.csv".into(), csv_text(&p, &a)),
            ("sweep_shard_2_of_2.csv".into(), csv_text(&q, &bq)),
        ])
        .unwrap_err();
        assert!(e.to_string().contains("different sweeps"), "{e}");
        let e = merge(&[("x/sweep_shard_1_of_2.csv".into(), csv_text(&p, &a))]).unwrap_err();
        assert!(e.to_string().contains("shard(s) 2/2"), "{e}");
    }

    #[test]
    fn a_failed_run_gets_a_row_and_the_others_go_on() {
        let p = SweepPlan::new(DECK, &[], vec![v("run.max_steps=1,100000")]).unwrap();
        let rows = run_sweep(&p, Shard::ALL, 2, None, SnapshotMode::None).unwrap();
        assert!(rows[0].result.as_ref().unwrap_err().contains("max_steps"));
        assert!(rows[1].result.is_ok());
        let t = csv_text(&p, &rows);
        assert!(
            t.lines()
                .nth(1)
                .unwrap()
                .starts_with(&format!("0,2,{},failed,1,", p.sweep_id)),
            "{t}"
        );
    }
}
