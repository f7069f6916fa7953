//! `sluice run --restart`: a run restarted from its middle snapshot continues bit-for-bit like
//! the run that was never stopped (every dataset of every later snapshot compared as f64 bits,
//! ledger.csv compared as text), and bad restart input exits 2 with a message naming it.
//!
//! The reference is the uninterrupted run itself: a restart is exact when it reproduces it
//! to the last bit (common practice for checkpoint/restart testing).

mod common;

use common::{problem, sluice, text};
use sluice_driver::snapshot::{self, Snapshot};
use std::path::Path;

fn ok(args: &[&str]) {
    let o = sluice(args);
    assert!(
        o.status.success(),
        "sluice {args:?} failed: {}",
        text(&o.stderr)
    );
}

fn data_bits(s: &Snapshot) -> Vec<(String, Vec<u64>)> {
    s.datasets
        .iter()
        .map(|d| (d.path.clone(), d.data.iter().map(|x| x.to_bits()).collect()))
        .collect()
}

/// Runs `deck` to t_end in A, to t_mid in B, restarts B from its snapshot `mid_index` up to
/// t_end and compares the snapshots after `mid_index` and the ledgers.
fn check_restart(deck: &str, name: &str, set: &[&str], t_mid: &str, t_end: &str, last: usize) {
    check_restart_into(deck, name, set, t_mid, t_end, last, false)
}

/// As [`check_restart`]; with `new_dir` the restart writes into a new folder `c` (ledger and
/// slab series continued from the snapshot's folder).
fn check_restart_into(
    deck: &str,
    name: &str,
    set: &[&str],
    t_mid: &str,
    t_end: &str,
    last: usize,
    new_dir: bool,
) {
    let tmp = tempfile::tempdir().unwrap();
    let a = tmp.path().join("a");
    let b = tmp.path().join("b");
    let (a_s, b_s) = (a.display().to_string(), b.display().to_string());
    let end = format!("run.t_end={t_end}");
    let mid = format!("run.t_end={t_mid}");
    let mut args = vec!["run", deck, "--quiet", "--out", &a_s, "--set", &end];
    for s in set {
        args.extend(["--set", s]);
    }
    ok(&args);
    let mut args = vec!["run", deck, "--quiet", "--out", &b_s, "--set", &mid];
    for s in set {
        args.extend(["--set", s]);
    }
    ok(&args);
    let mid_index = last / 2;
    let snap_b = b.join(format!("{name}_{mid_index:04}.h5"));
    assert!(
        !b.join(format!("{name}_{:04}.h5", mid_index + 1)).exists(),
        "B should stop at the middle snapshot"
    );
    let c = tmp.path().join("c");
    let c_s = c.display().to_string();
    let snap_s = snap_b.display().to_string();
    let mut args = vec!["run", "--restart", &snap_s, "--quiet", "--set", &end];
    if new_dir {
        args.extend(["--out", &c_s]);
    }
    let o = sluice(&args);
    let b = if new_dir { c } else { b };
    assert!(o.status.success(), "restart failed: {}", text(&o.stderr));
    assert!(
        text(&o.stdout).contains("restarted from"),
        "{}",
        text(&o.stdout)
    );
    let mut compared = 0;
    for k in mid_index + 1..=last {
        let f = format!("{name}_{k:04}.h5");
        let sa = snapshot::read(&a.join(&f)).unwrap();
        let sb = snapshot::read(&b.join(&f)).unwrap();
        let (da, db) = (data_bits(&sa), data_bits(&sb));
        assert_eq!(
            da.iter().map(|d| &d.0).collect::<Vec<_>>(),
            db.iter().map(|d| &d.0).collect::<Vec<_>>(),
            "{f}: dataset lists"
        );
        for (x, y) in da.iter().zip(&db) {
            assert_eq!(x.1, y.1, "{f}: {} differs", x.0);
        }
        assert_eq!(sa.attr("step"), sb.attr("step"), "{f}: step");
        assert_eq!(sa.attr("output_index"), sb.attr("output_index"));
        compared += 1;
    }
    assert_eq!(compared, last - mid_index);
    assert!(!b.join(format!("{name}_{:04}.h5", last + 1)).exists());
    let la = std::fs::read_to_string(a.join("ledger.csv")).unwrap();
    let lb = std::fs::read_to_string(b.join("ledger.csv")).unwrap();
    assert_eq!(la.lines().count(), last + 2, "ledger rows");
    assert_eq!(la, lb, "ledger.csv after restart");
    let slab = format!("{name}_slab.csv");
    if a.join(&slab).exists() {
        let sa = std::fs::read_to_string(a.join(&slab)).unwrap();
        let sb = std::fs::read_to_string(b.join(&slab)).unwrap();
        assert!(sa.lines().count() > 3, "slab series rows");
        assert_eq!(sa, sb, "{slab} after restart");
    }
}

#[test]
fn slab_restart_into_a_new_folder_continues_ledger_and_slab_series() {
    // Dense-slab bottleneck deck on 128 cells: 2 outputs of 50 Myr, restart at 50 Myr into a
    // new folder; the slab diagnostics series is compared too.
    check_restart_into(
        &problem("bottleneck-slab.toml"),
        "bottleneck-slab",
        &["grid.cells=128"],
        "1.5779e15",
        "3.1558e15",
        2,
        true,
    );
}

#[test]
fn pure_mhd_restart_is_bit_identical() {
    // Brio & Wu (1988) shock tube on 96 cells: 4 outputs to t = 0.1 s, restart at 0.05 s.
    check_restart(
        &problem("brio-wu.toml"),
        "brio-wu",
        &["grid.cells=96"],
        "0.05",
        "0.1",
        4,
    );
}

#[test]
fn coupled_cr_waves_damping_cooling_restart_is_bit_identical() {
    // Self-confined CRs with wave energies, ion-neutral damping, ion Alfvén speed and KI02
    // cooling: 4 outputs of 0.25 Myr, restart at 0.5 Myr.
    check_restart(
        &problem("cr-cooling-slab.toml"),
        "cr-cooling-slab",
        &["grid.cells=48", "run.output_interval=7.8895e12"],
        "1.5779e13",
        "3.1558e13",
        4,
    );
}

#[test]
fn coupled_restart_with_temperature_dependent_ionisation_is_bit_identical() {
    // As above with CIE ionisation (Cen 1992 fit), so the ion fraction and the ion Alfvén
    // speed follow the temperature (the snapshot keeps the ion fraction of the last refresh).
    let tmp = tempfile::tempdir().unwrap();
    let base = std::fs::read_to_string(problem("cr-cooling-slab.toml")).unwrap();
    let deck: String = base
        .lines()
        .filter(|l| !l.trim_start().starts_with("ion_fraction"))
        .map(|l| {
            if l.trim_start().starts_with("model = \"fixed\"") {
                "model = \"cie_cen1992\"".to_string()
            } else {
                l.to_string()
            }
        })
        .collect::<Vec<_>>()
        .join("\n");
    assert!(deck.contains("cie_cen1992"), "the demo deck changed shape");
    let path = tmp.path().join("cie.toml");
    std::fs::write(&path, deck).unwrap();
    check_restart(
        &path.display().to_string(),
        "cr-cooling-slab",
        &["grid.cells=48", "run.output_interval=7.8895e12"],
        "1.5779e13",
        "3.1558e13",
        4,
    );
}

fn assert_exit2(args: &[&str], needles: &[&str]) {
    let o = sluice(args);
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    for n in needles {
        assert!(err.contains(n), "{args:?}: `{n}` not in: {err}");
    }
    assert!(!err.contains("internal error"), "{err}");
}

#[test]
fn bad_restart_input_exits_2_with_a_clear_message() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    let missing = dir.join("nope_0003.h5").display().to_string();
    assert_exit2(
        &["run", "--restart", &missing],
        &["--restart", "no such file"],
    );

    let not_h5 = dir.join("deck.h5");
    std::fs::write(&not_h5, "[run]\nname = 'x'\n").unwrap();
    assert_exit2(
        &["run", "--restart", &not_h5.display().to_string()],
        &["deck.h5", "cannot be read"],
    );

    let out = dir.join("sod").display().to_string();
    ok(&[
        "run",
        &problem("sod.toml"),
        "--quiet",
        "--out",
        &out,
        "--set",
        "grid.cells=32",
    ]);
    let good = Path::new(&out).join("sod_0002.h5");
    let bytes = std::fs::read(&good).unwrap();
    let cut = dir.join("cut_0002.h5");
    std::fs::write(&cut, &bytes[..bytes.len() / 2]).unwrap();
    assert_exit2(
        &["run", "--restart", &cut.display().to_string()],
        &["cut_0002.h5"],
    );

    let g = good.display().to_string();
    assert_exit2(
        &["run", "--restart", &g, "--set", "grid.cells=64"],
        &["`grid.cells`", "cannot change on restart", "run.t_end"],
    );
    assert_exit2(
        &["run", "--restart", &g, "--set", "run.t_end=0.01"],
        &["before the snapshot time"],
    );
    let o = sluice(&["run", &problem("sod.toml"), "--restart", &g]);
    assert_eq!(o.status.code(), Some(2), "deck and --restart together");
}
