//! End-to-end tests of the `sluice` command: runs, checks, bad input, verify output.

mod common;

use common::{problem, sluice, text};
use sluice_driver::snapshot::{read, AttrValue};
use std::path::{Path, PathBuf};
use std::process::Output;

#[test]
fn run_sod_writes_snapshots_ledger_and_one_summary_line() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("sod-out");
    let o = sluice(&[
        "run",
        &problem("sod.toml"),
        "--out",
        out.to_str().unwrap(),
        "--set",
        "grid.cells=64",
        "--quiet",
    ]);
    assert!(o.status.success(), "stderr: {}", text(&o.stderr));
    let stdout = text(&o.stdout);
    let lines: Vec<&str> = stdout.lines().collect();
    assert_eq!(lines.len(), 1, "expected one summary line, got: {stdout}");
    let line = lines[0];
    for needle in [
        "steps",
        "s wall",
        "cell-updates/s",
        "floors hit: 0",
        "HLLD fallbacks",
        "sod_0000.h5",
        "sod_0004.h5",
        "ledger.csv",
    ] {
        assert!(line.contains(needle), "summary lacks `{needle}`: {line}");
    }
    assert!(
        line.contains(out.to_str().unwrap()),
        "summary does not say where: {line}"
    );
    for k in 0..5 {
        assert!(
            out.join(format!("sod_{k:04}.h5")).is_file(),
            "snapshot {k} missing"
        );
    }
    assert!(!out.join("sod_0005.h5").exists());
    let csv = std::fs::read_to_string(out.join("ledger.csv")).unwrap();
    assert_eq!(csv.lines().count(), 6, "{csv}");
    let last = read(&out.join("sod_0004.h5")).unwrap();
    assert!((last.attr("time").and_then(AttrValue::as_f64).unwrap() - 0.2).abs() < 1e-12);
    let rho = last.dataset("/fields/density").unwrap();
    assert_eq!(rho.data.len(), 64);
    assert_eq!(
        rho.attr("units").and_then(AttrValue::as_str),
        Some("g/cm^3")
    );
    // The shock has moved: the right state is no longer uniform, the left edge still is.
    assert!((rho.data[0] - 1.0).abs() < 1e-12);
    assert!(
        rho.data[40..].iter().any(|&d| d > 0.2),
        "no shock in the right half"
    );
    // The deck text in the snapshot is the file as read.
    let deck = std::fs::read_to_string(problem("sod.toml")).unwrap();
    assert_eq!(
        last.attr("deck").and_then(AttrValue::as_str),
        Some(deck.as_str())
    );
}

fn write_deck(dir: &Path, name: &str, body: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, body).unwrap();
    p
}

fn assert_rejected(o: &Output, key: &str) {
    let err = text(&o.stderr);
    assert_eq!(
        o.status.code(),
        Some(2),
        "exit status {:?}, stderr: {err}",
        o.status.code()
    );
    assert!(err.contains(key), "message does not name `{key}`: {err}");
    assert!(
        !err.contains("panicked") && !err.contains("RUST_BACKTRACE"),
        "panic: {err}"
    );
    assert_eq!(
        err.trim().lines().count(),
        1,
        "expected a one-line message: {err}"
    );
}

#[test]
fn bad_decks_exit_2_naming_the_key() {
    let dir = tempfile::tempdir().unwrap();
    let sod = std::fs::read_to_string(problem("sod.toml")).unwrap();
    let unknown = write_deck(
        dir.path(),
        "unknown.toml",
        &sod.replace("gamma = 1.4", "gamma = 1.4\nadiabatic = 1.4"),
    );
    assert_rejected(
        &sluice(&["check", unknown.to_str().unwrap()]),
        "gas.adiabatic",
    );
    let o = dir.path().join("unknown-out");
    assert_rejected(
        &sluice(&[
            "run",
            unknown.to_str().unwrap(),
            "--quiet",
            "--out",
            o.to_str().unwrap(),
        ]),
        "gas.adiabatic",
    );
    let neg = write_deck(
        dir.path(),
        "neg.toml",
        &sod.replace("density = 0.125", "density = -0.125"),
    );
    assert_rejected(
        &sluice(&["check", neg.to_str().unwrap()]),
        "init.regions[1].density",
    );
    let cases: &[(&str, &str)] = &[
        ("gas.gamma=1.0", "gas.gamma"),
        ("gas.gamma=0.5", "gas.gamma"),
        ("mhd.cfl=1.0", "mhd.cfl"),
        ("mhd.cfl=2", "mhd.cfl"),
        ("grid.cells=0", "grid.cells"),
        ("grid.x_max=-1", "grid.x_max"),
        ("init.regions[0].density=-1", "init.regions[0].density"),
        ("grid.cels=10", "grid.cels"),
        ("init.regions[9].density=1", "init.regions[9].density"),
        ("mhd.riemann=roe", "mhd.riemann"),
        ("gas.gamma=\"big\"", "gas.gamma"),
    ];
    let deck = problem("sod.toml");
    for (set, key) in cases {
        assert_rejected(&sluice(&["check", &deck, "--set", set]), key);
    }
    // The same checks apply to `run` (nothing is written).
    let out = dir.path().join("never");
    assert_rejected(
        &sluice(&[
            "run",
            &deck,
            "--out",
            out.to_str().unwrap(),
            "--set",
            "mhd.cfl=1.5",
        ]),
        "mhd.cfl",
    );
    assert!(!out.exists());
    // A missing file and invalid TOML are one-line errors too.
    assert_rejected(
        &sluice(&["check", "no/such/deck.toml"]),
        "no/such/deck.toml",
    );
    let broken = write_deck(dir.path(), "broken.toml", "[run\nname = 1");
    assert_rejected(&sluice(&["check", broken.to_str().unwrap()]), "TOML");
}

#[test]
fn every_problem_deck_passes_check() {
    let decks = common::problem_decks();
    assert!(
        decks.len() >= 4,
        "expected at least four decks in problems/"
    );
    for d in decks {
        let o = sluice(&["check", d.to_str().unwrap()]);
        let out = text(&o.stdout);
        assert!(o.status.success(), "{}: {}", d.display(), text(&o.stderr));
        for needle in [
            "is valid",
            "dx",
            "max fast speed",
            "max Alfven speed",
            "max sound speed",
            "initial dt",
            "estimated steps",
            "estimated run time",
        ] {
            assert!(
                out.contains(needle),
                "{}: check output lacks `{needle}`:\n{out}",
                d.display()
            );
        }
        let est: f64 = out
            .lines()
            .find(|l| l.starts_with("estimated run time"))
            .and_then(|l| l.split_whitespace().nth(3))
            .and_then(|v| v.parse().ok())
            .unwrap();
        assert!(
            est < 60.0,
            "{}: estimated {est} s, decks must run in well under a minute",
            d.display()
        );
    }
}

#[test]
fn verify_json_has_exactly_the_documented_keys() {
    let names: Vec<&str> = sluice_verify::all_checks().iter().map(|c| c.name).collect();
    if names.is_empty() {
        let o = sluice(&["verify", "--json", "--only", "anything"]);
        assert_eq!(o.status.code(), Some(2));
        return;
    }
    // The exact-Riemann-solver checks are fast; otherwise take the first check.
    let pattern = names
        .iter()
        .copied()
        .find(|n| n.contains("exact_riemann"))
        .map(|n| n.rsplit_once('.').map_or(n, |x| x.0))
        .unwrap_or(names[0]);
    let o = sluice(&["verify", "--json", "--only", pattern]);
    let stdout = text(&o.stdout);
    let v: serde_json::Value =
        serde_json::from_str(&stdout).unwrap_or_else(|e| panic!("not JSON ({e}): {stdout}"));
    let arr = v.as_array().expect("a JSON array");
    assert!(!arr.is_empty());
    let mut keys_want = vec![
        "expected",
        "measured",
        "name",
        "pass",
        "source",
        "tolerance",
    ];
    keys_want.sort();
    let mut all_pass = true;
    for obj in arr {
        let obj = obj.as_object().expect("objects");
        let mut keys: Vec<&str> = obj.keys().map(String::as_str).collect();
        keys.sort();
        assert_eq!(keys, keys_want);
        assert!(obj["name"].as_str().unwrap().contains(pattern));
        all_pass &= obj["pass"].as_bool().unwrap();
    }
    assert_eq!(
        o.status.success(),
        all_pass,
        "exit status must be non-zero exactly when a check fails"
    );
    // An unknown pattern is an error, not an empty pass.
    let o = sluice(&["verify", "--only", "no-such-check-name"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("no-such-check-name"));
}

#[test]
fn verify_table_is_aligned() {
    let names: Vec<&str> = sluice_verify::all_checks().iter().map(|c| c.name).collect();
    let Some(name) = names.iter().copied().find(|n| n.contains("exact_riemann")) else {
        return;
    };
    let o = sluice(&["verify", "--only", name]);
    let out = text(&o.stdout);
    let lines: Vec<&str> = out.lines().collect();
    assert!(
        lines[0].starts_with("name")
            && lines[0].contains("tolerance")
            && lines[0].ends_with("pass"),
        "{out}"
    );
    // Every row has the `pass` column at the same character offset as the header.
    let col = lines[0].chars().count() - 4;
    for l in &lines[1..lines.len() - 1] {
        let c: Vec<char> = l.chars().collect();
        let tail: String = c[col..].iter().collect();
        assert!(tail == "pass" || tail == "FAIL", "misaligned row: {l}");
    }
    assert!(lines.last().unwrap().contains("passed"));
}
