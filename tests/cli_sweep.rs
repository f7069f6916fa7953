//! `sluice sweep` and `sluice merge` end to end on small grids.
//!
//! Outside references: every summary row is compared bit-for-bit with a plain `sluice run` of
//! the same deck and overrides (its ledger.csv and slab series), the Sod runs with the exact
//! undisturbed states of the Riemann problem (Sod 1978, J. Comput. Phys. 27, 1; the states
//! outside the fan are the initial ones), and the periodic CR pulse with energy conservation
//! to round-off (conservative finite-volume update with a closed box, common practice).

mod common;

use common::{problem, sluice, text};
use sluice_driver::snapshot::{self, Snapshot};
use std::collections::BTreeMap;
use std::path::Path;
use std::process::Output;

fn ok(args: &[&str]) -> Output {
    let o = sluice(args);
    assert!(
        o.status.success(),
        "sluice {args:?} failed: {}",
        text(&o.stderr)
    );
    o
}

/// Runs `args`, expects exit status 2 and returns stderr.
fn fails(args: &[&str]) -> String {
    let o = sluice(args);
    assert_eq!(
        o.status.code(),
        Some(2),
        "sluice {args:?}: status {:?}, stderr {}",
        o.status,
        text(&o.stderr)
    );
    text(&o.stderr)
}

/// Header and rows of a CSV (`#` lines skipped; no quoted fields in these tests).
fn csv(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let t = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let mut lines = t.lines().filter(|l| !l.starts_with('#') && !l.is_empty());
    let h = lines
        .next()
        .unwrap()
        .split(',')
        .map(str::to_string)
        .collect();
    let rows = lines
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect();
    (h, rows)
}

/// Row `r` as a map column → text.
fn row_map(h: &[String], r: &[String]) -> BTreeMap<String, String> {
    h.iter().cloned().zip(r.iter().cloned()).collect()
}

/// Every dataset of a snapshot as f64 bits.
fn data_bits(s: &Snapshot) -> Vec<(String, Vec<u64>)> {
    s.datasets
        .iter()
        .map(|d| (d.path.clone(), d.data.iter().map(|x| x.to_bits()).collect()))
        .collect()
}

/// Bits of a number written by sluice (shortest round-trip text).
fn bits(s: &str) -> u64 {
    s.parse::<f64>()
        .unwrap_or_else(|_| panic!("`{s}` is not a number"))
        .to_bits()
}

/// The summary text without its last column (wall time, the only non-deterministic one).
fn strip_wall(path: &Path) -> String {
    std::fs::read_to_string(path)
        .unwrap()
        .lines()
        .map(|l| l.rsplit_once(',').unwrap().0.to_string() + "\n")
        .collect()
}

const SOD_VARY: [&str; 4] = [
    "--vary",
    "gas.gamma=1.4,1.6666666666666667",
    "--vary",
    "mhd.cfl=0.4,0.8",
];

/// Sweep column → ledger.csv column of `sluice run`.
const LEDGER_PAIRS: [(&str, &str); 11] = [
    ("time[s]", "time"),
    ("steps", "step"),
    ("mass[g/cm^2]", "mass"),
    ("total_energy[erg/cm^2]", "total"),
    ("gas_thermal[erg/cm^2]", "gas_thermal"),
    ("gas_kinetic[erg/cm^2]", "gas_kinetic"),
    ("gas_magnetic[erg/cm^2]", "gas_magnetic"),
    ("floor_energy[erg/cm^2]", "floor_energy"),
    ("stage_sources[erg/cm^2]", "stage_sources"),
    ("energy_residual[erg/cm^2]", "energy_residual"),
    ("mass_residual[g/cm^2]", "mass_residual"),
];

/// The last ledger row of `sluice run deck --set ...` as column → text.
fn single_run_ledger(
    deck: &str,
    sets: &[String],
    dir: &Path,
) -> (BTreeMap<String, String>, std::path::PathBuf) {
    let mut args = vec![
        "run".to_string(),
        deck.to_string(),
        "--quiet".into(),
        "--out".into(),
        dir.display().to_string(),
    ];
    for s in sets {
        args.push("--set".into());
        args.push(s.clone());
    }
    let a: Vec<&str> = args.iter().map(String::as_str).collect();
    ok(&a);
    let (h, rows) = csv(&dir.join("ledger.csv"));
    (row_map(&h, rows.last().unwrap()), dir.to_path_buf())
}

/// Four Sod runs (γ × CFL): one row each in cartesian order, parameter columns equal to the
/// varied values, every diagnostic bit-identical to the single run, exact outer states,
/// mass conserved.
#[test]
fn sod_rows_equal_single_runs() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("sw");
    let deck = problem("sod.toml");
    let mut args = vec!["sweep", &deck, "--set", "grid.cells=64", "--out"];
    let out_s = out.display().to_string();
    args.push(&out_s);
    args.extend(SOD_VARY);
    ok(&args);
    let (h, rows) = csv(&out.join("sweep.csv"));
    assert_eq!(rows.len(), 4);
    assert_eq!(h.last().unwrap(), "wall_seconds[s]");
    let expect = [
        ("1.4", "0.4"),
        ("1.4", "0.8"),
        ("1.6666666666666667", "0.4"),
        ("1.6666666666666667", "0.8"),
    ];
    for (i, r) in rows.iter().enumerate() {
        let m = row_map(&h, r);
        assert_eq!(m["run_id"], i.to_string());
        assert_eq!(m["n_runs"], "4");
        assert_eq!(m["status"], "ok", "{m:?}");
        assert_eq!((m["gas.gamma"].as_str(), m["mhd.cfl"].as_str()), expect[i]);
        let sets = vec![
            "grid.cells=64".to_string(),
            format!("gas.gamma={}", expect[i].0),
            format!("mhd.cfl={}", expect[i].1),
        ];
        let (l, _) = single_run_ledger(&deck, &sets, &tmp.path().join(format!("run{i}")));
        for (c, lc) in LEDGER_PAIRS {
            assert_eq!(
                bits(&m[c]),
                bits(&l[lc]),
                "run {i}: {c} {} vs {}",
                m[c],
                l[lc]
            );
        }
        // Sod 1978: at t = 0.2 s the rarefaction head (x = 0.5 − c_L t ≥ 0.24 cm) and the
        // shock (x ≤ 0.87 cm) are inside the tube, so the undisturbed states ρ = 1 and
        // 0.125 g/cm³ are still present and are the extremes of the exact solution.
        assert_eq!(m["density_max[g/cm^3]"].parse::<f64>().unwrap(), 1.0);
        assert_eq!(m["density_min[g/cm^3]"].parse::<f64>().unwrap(), 0.125);
        // Nothing reaches the outflow boundaries: the mass 0.5 × 1 + 0.5 × 0.125 stays.
        let mass: f64 = m["mass[g/cm^2]"].parse().unwrap();
        assert!((mass - 0.5625).abs() < 1e-15, "mass {mass}");
        let rel: f64 = m["relative_energy_error[1]"].parse().unwrap();
        assert!(rel.abs() < 1e-14, "relative energy error {rel}");
    }
}

/// One and two threads give the same summary; shards 1/3, 2/3, 3/3 merged give it too;
/// incomplete, duplicated and foreign shard sets are refused with the file or shard named.
#[test]
fn threads_and_shards_do_not_change_the_summary() {
    let tmp = tempfile::tempdir().unwrap();
    let deck = problem("sod.toml");
    let sweep = |dir: &str, extra: &[&str]| -> std::path::PathBuf {
        let out = tmp.path().join(dir);
        let out_s = out.display().to_string();
        let mut args = vec!["sweep", &deck, "--set", "grid.cells=64", "--out", &out_s];
        args.extend(SOD_VARY);
        args.extend(extra);
        ok(&args);
        out
    };
    let one = sweep("t1", &["--threads", "1"]).join("sweep.csv");
    let two = sweep("t2", &["--threads", "2"]).join("sweep.csv");
    assert_eq!(strip_wall(&one), strip_wall(&two));
    let sh = sweep("sh", &["--threads", "1", "--shard", "1/3"]);
    sweep("sh", &["--threads", "2", "--shard", "3/3"]);
    sweep("sh", &["--shard", "2/3"]);
    let shard = |k: usize| sh.join(format!("sweep_shard_{k}_of_3.csv"));
    let (_, r1) = csv(&shard(1));
    let ids: Vec<&str> = r1.iter().map(|r| r[0].as_str()).collect();
    assert_eq!(ids, ["0", "3"], "round robin: shard 1/3 holds ids 0 and 3");
    let merged = tmp.path().join("merged.csv");
    let (s1, s2, s3, m) = (
        shard(1).display().to_string(),
        shard(2).display().to_string(),
        shard(3).display().to_string(),
        merged.display().to_string(),
    );
    ok(&["merge", &s3, &s1, &s2, "--out", &m]);
    assert_eq!(strip_wall(&merged), strip_wall(&one));

    let e = fails(&["merge", &s1, &s3, "--out", &m]);
    assert!(
        e.contains("1 of 4 run ids are missing: 1") && e.contains("2/3"),
        "{e}"
    );
    let e = fails(&["merge", &s1, &s2, &s3, &s1, "--out", &m]);
    assert!(e.contains("duplicate run ids: 0") && e.contains(&s1), "{e}");
    // Same keys and run count, another value: a different sweep.
    let other = tmp.path().join("other");
    let other_s = other.display().to_string();
    ok(&[
        "sweep",
        &deck,
        "--set",
        "grid.cells=64",
        "--out",
        &other_s,
        "--vary",
        "gas.gamma=1.4,1.5",
        "--vary",
        "mhd.cfl=0.4,0.8",
        "--shard",
        "2/3",
    ]);
    let o2 = other.join("sweep_shard_2_of_3.csv").display().to_string();
    let e = fails(&["merge", &s1, &o2, &s3, "--out", &m]);
    assert!(e.contains("different sweeps") && e.contains(&o2), "{e}");
    let e = fails(&["merge", "no/such/shard.csv"]);
    assert!(e.contains("no/such/shard.csv"), "{e}");
}

/// CR pulse in a periodic box: the CR energy column equals the single run's ledger and the
/// total energy (gas + CR + waves) is conserved to round-off. Slab deck: the slab columns
/// equal the last row of the single run's slab series; `--snapshots last` writes the final
/// snapshot and a ledger whose last row is the summary row.
#[test]
fn cr_and_slab_columns_equal_single_runs() {
    let tmp = tempfile::tempdir().unwrap();
    let deck = problem("cr-pulse-diffusion.toml");
    let out = tmp.path().join("cr");
    let out_s = out.display().to_string();
    ok(&[
        "sweep",
        &deck,
        "--set",
        "grid.cells=64",
        "--vary",
        "cosmic_rays.kappa=1e26,3e26",
        "--out",
        &out_s,
    ]);
    let (h, rows) = csv(&out.join("sweep.csv"));
    assert_eq!(rows.len(), 2);
    for (i, kappa) in ["1e26", "3e26"].iter().enumerate() {
        let m = row_map(&h, &rows[i]);
        assert_eq!(m["cosmic_rays.kappa"], *kappa);
        let sets = vec![
            "grid.cells=64".to_string(),
            format!("cosmic_rays.kappa={kappa}"),
        ];
        let (l, _) = single_run_ledger(&deck, &sets, &tmp.path().join(format!("cr{i}")));
        assert_eq!(bits(&m["cr_energy[erg/cm^2]"]), bits(&l["cr_cosmic_rays"]));
        for (c, lc) in LEDGER_PAIRS {
            assert_eq!(bits(&m[c]), bits(&l[lc]), "{c}");
        }
        let cr: f64 = m["cr_energy[erg/cm^2]"].parse().unwrap();
        assert!(cr > 0.0);
        let rel: f64 = m["relative_energy_error[1]"].parse().unwrap();
        assert!(rel.abs() < 1e-14, "relative energy error {rel}");
    }

    let deck = problem("bottleneck-slab.toml");
    let out = tmp.path().join("slab");
    let out_s = out.display().to_string();
    ok(&[
        "sweep",
        &deck,
        "--set",
        "grid.cells=128",
        "--vary",
        "run.t_end=1e14,2e14",
        "--snapshots",
        "last",
        "--out",
        &out_s,
    ]);
    let (h, rows) = csv(&out.join("sweep.csv"));
    let slab_cols: Vec<&String> = h.iter().filter(|c| c.starts_with("slab0_")).collect();
    assert!(slab_cols.len() >= 7, "{h:?}");
    for (i, t_end) in ["1e14", "2e14"].iter().enumerate() {
        let m = row_map(&h, &rows[i]);
        let dir = tmp.path().join(format!("slab{i}"));
        let sets = vec!["grid.cells=128".to_string(), format!("run.t_end={t_end}")];
        let (l, _) = single_run_ledger(&deck, &sets, &dir);
        for (c, lc) in LEDGER_PAIRS {
            assert_eq!(bits(&m[c]), bits(&l[lc]), "{c}");
        }
        // The slab series header is a `# units: name [unit], ...` line; the columns follow.
        let series = std::fs::read_to_string(dir.join("bottleneck-slab_slab.csv")).unwrap();
        let names: Vec<String> = series
            .lines()
            .next()
            .unwrap()
            .trim_start_matches("# units:")
            .split(',')
            .map(|c| c.trim().replace(" [", "["))
            .collect();
        let last: Vec<&str> = series.lines().last().unwrap().split(',').collect();
        for c in &slab_cols {
            let k = names
                .iter()
                .position(|n| n == *c)
                .unwrap_or_else(|| panic!("{c} not in {names:?}"));
            assert_eq!(bits(&m[*c]), bits(last[k]), "{c}");
        }
        // Per-run folder: the final snapshot only, and the ledger of the run.
        let run = out.join(format!("run_{i:06}"));
        let mut files: Vec<String> = std::fs::read_dir(&run)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        files.sort();
        let (rh, rr) = csv(&run.join("ledger.csv"));
        let rl = row_map(&rh, rr.last().unwrap());
        assert_eq!(rl, l, "ledger of run {i}");
        let h5: Vec<&String> = files.iter().filter(|f| f.ends_with(".h5")).collect();
        assert_eq!(h5.len(), 1, "{files:?}");
        let mut single: Vec<String> = std::fs::read_dir(&dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter(|f| f.ends_with(".h5") && !f.ends_with("_slab.h5"))
            .collect();
        single.sort();
        assert_eq!(h5[0], single.last().unwrap(), "not the final snapshot");
        let (a, b) = (
            snapshot::read(&run.join(h5[0])).unwrap(),
            snapshot::read(&dir.join(h5[0])).unwrap(),
        );
        assert_eq!(data_bits(&a), data_bits(&b), "final snapshot of run {i}");
    }
}

/// Bad input exits 2 with the flag, the value and what is allowed; nothing runs.
#[test]
fn bad_input_is_named() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("bad");
    let out_s = out.display().to_string();
    let deck = problem("sod.toml");
    let run = |extra: &[&str]| -> String {
        let mut a = vec!["sweep", &deck, "--out", &out_s];
        a.extend(extra);
        fails(&a)
    };
    let e = run(&["--vary", "gas.gamma"]);
    assert!(
        e.contains("--vary `gas.gamma`") && e.contains("key.path=v1,v2"),
        "{e}"
    );
    let e = run(&["--vary", "gas.gamma=1.4,,1.5"]);
    assert!(e.contains("empty"), "{e}");
    let e = run(&["--vary", "gas.gama=1.4,1.5"]);
    assert!(e.contains("gas.gama"), "{e}");
    let e = run(&["--vary", "gas.gamma=1.4,0.5"]);
    assert!(e.contains("gas.gamma") && e.contains("`0.5`"), "{e}");
    for s in ["0/3", "4/3", "1-3", "a/3"] {
        let e = run(&["--vary", "gas.gamma=1.4", "--shard", s]);
        assert!(e.contains(&format!("--shard `{s}`")), "{e}");
    }
    let e = run(&["--vary", "gas.gamma=1.4", "--shard", "0/3"]);
    assert!(e.contains("1 ≤ K ≤ N"), "{e}");
    let e = run(&["--vary", "gas.gamma=1.4", "--threads", "0"]);
    assert!(e.contains("--threads `0`") && e.contains("≥ 1"), "{e}");
    let e = run(&["--vary", "gas.gamma=1.4", "--snapshots", "some"]);
    assert!(
        e.contains("--snapshots `some`") && e.contains("none, last or all"),
        "{e}"
    );
    let e = run(&["--vary", "gas.gamma=1.4", "--set", "gas.gamma=1.5"]);
    assert!(e.contains("also given with --set"), "{e}");
    assert!(!out.exists(), "bad input must not create the output folder");
}
