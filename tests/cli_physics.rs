//! End-to-end tests of the physics decks through the `sluice` binary: `check` prints the CR
//! derived quantities, short runs write the CR/cooling fields with units and a closed ledger,
//! bad physics input exits with code 2 naming the key.

mod common;

use common::{problem, sluice, text};
use sluice_driver::snapshot::{read, AttrValue};
use std::path::{Path, PathBuf};

const DECKS: [&str; 5] = [
    "cr-pulse-diffusion.toml",
    "cr-pulse-streaming.toml",
    "cr-pulse-self-confined.toml",
    "two-fluid-shock.toml",
    "cr-cooling-slab.toml",
];

#[test]
fn check_prints_cr_derived_quantities_for_every_physics_deck() {
    for deck in DECKS {
        let o = sluice(&["check", &problem(deck)]);
        assert!(o.status.success(), "{deck}: {}", text(&o.stderr));
        let s = text(&o.stdout);
        for needle in [
            "reduced speed of light",
            "c_r / v_max",
            "CR subcycles per step",
            "kappa_effective range",
            "CR Alfven speed",
        ] {
            assert!(
                s.contains(needle),
                "{deck}: `sluice check` lacks `{needle}`:\n{s}"
            );
        }
    }
}

fn last_snapshot(dir: &Path) -> PathBuf {
    let mut files: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "h5"))
        .collect();
    files.sort();
    files.pop().expect("no snapshot written")
}

fn units_of(s: &sluice_driver::snapshot::Snapshot, path: &str) -> String {
    let d = s
        .dataset(path)
        .unwrap_or_else(|| panic!("snapshot lacks {path}"));
    match d.attrs.iter().find(|(n, _)| n == "units").map(|a| &a.1) {
        Some(AttrValue::Str(u)) => u.clone(),
        other => panic!("{path}: units attribute {other:?}"),
    }
}

#[test]
fn short_runs_write_cr_fields_with_units_and_close_the_ledger() {
    let dir = tempfile::tempdir().unwrap();
    for deck in DECKS {
        let out = dir.path().join(deck.trim_end_matches(".toml"));
        // A short run: a tenth of the deck's end time.
        let text_deck = std::fs::read_to_string(problem(deck)).unwrap();
        let t_end: f64 = text_deck
            .lines()
            .find_map(|l| l.trim().strip_prefix("t_end = "))
            .and_then(|v| v.split_whitespace().next())
            .and_then(|v| v.parse().ok())
            .expect("deck has t_end");
        let set_t = format!("run.t_end={:e}", 0.1 * t_end);
        let set_o = format!("run.output_interval={:e}", 0.1 * t_end);
        let o = sluice(&[
            "run",
            &problem(deck),
            "--out",
            out.to_str().unwrap(),
            "--set",
            &set_t,
            "--set",
            &set_o,
            "--quiet",
        ]);
        assert!(o.status.success(), "{deck}: {}", text(&o.stderr));
        let snap = read(&last_snapshot(&out)).unwrap();
        for (name, unit) in [
            ("cr_energy_density", "erg/cm^3"),
            ("cr_pressure", "erg/cm^3"),
            ("cr_flux", "erg/cm^2/s"),
            ("forward_wave_energy", "erg/cm^3"),
            ("backward_wave_energy", "erg/cm^3"),
            ("streaming_speed", "cm/s"),
            ("streaming_speed_over_alfven", "1"),
            ("kappa_forward", "cm^2/s"),
            ("kappa_backward", "cm^2/s"),
            ("kappa_effective", "cm^2/s"),
            ("alfven_speed", "cm/s"),
            ("wave_heating_rate", "erg/cm^3/s"),
            ("streaming_heating", "erg/cm^3/s"),
            ("cr_force", "dyn/cm^3"),
        ] {
            assert_eq!(
                units_of(&snap, &format!("/fields/{name}")),
                unit,
                "{deck}: {name}"
            );
        }
        let e = &snap.dataset("/fields/cr_energy_density").unwrap().data;
        assert!(e.iter().all(|&x| x.is_finite() && x >= 0.0), "{deck}");
        if deck == "cr-cooling-slab.toml" {
            assert_eq!(units_of(&snap, "/fields/cooling_rate"), "erg/cm^3/s");
            assert_eq!(units_of(&snap, "/fields/temperature"), "K");
        }
        // Restart datasets of the CR stage.
        for n in ["e_c", "f", "e_plus", "e_minus"] {
            assert!(
                snap.dataset(&format!("/restart/cr/{n}")).is_some(),
                "{deck}: {n}"
            );
        }
        let res = snap.dataset("/ledger/energy_residual").unwrap().data[0];
        let tot = snap.dataset("/ledger/total").unwrap().data[0];
        assert!(
            (res / tot).abs() < 1e-12,
            "{deck}: ledger residual {res:e} of {tot:e}"
        );
    }
}

fn expect_key_error(sets: &[&str], deck: &str, key: &str) {
    let mut args = vec!["check".to_string(), problem(deck)];
    for s in sets {
        args.push("--set".into());
        args.push(s.to_string());
    }
    let a: Vec<&str> = args.iter().map(|s| s.as_str()).collect();
    let o = sluice(&a);
    assert_eq!(o.status.code(), Some(2), "{sets:?}: {}", text(&o.stdout));
    let err = text(&o.stderr);
    assert!(
        err.contains(key),
        "{sets:?}: error does not name `{key}`: {err}"
    );
    assert!(!err.contains("panicked"), "{err}");
}

#[test]
fn bad_cr_deck_values_exit_2_and_name_the_key() {
    let d = "cr-pulse-diffusion.toml";
    expect_key_error(&["cosmic_rays.kappa=-1e26"], d, "cosmic_rays.kappa");
    // fixed_kappa without kappa: take the self-confined deck and switch the model.
    expect_key_error(
        &["cosmic_rays.model=\"fixed_kappa\""],
        "cr-pulse-self-confined.toml",
        "cosmic_rays.kappa",
    );
    expect_key_error(
        &["damping.turbulent.velocity_typo=1e6"],
        "cr-pulse-self-confined.toml",
        "damping.turbulent.velocity_typo",
    );
    expect_key_error(
        &["init.background.magnetic_field_y=1e-6"],
        d,
        "init.background.magnetic_field_y",
    );
    expect_key_error(&["cosmic_rays.cfl=2.0"], d, "cosmic_rays.cfl");
    expect_key_error(
        &["cosmic_rays.init.energy_density=-1.0"],
        d,
        "cosmic_rays.init.energy_density",
    );
    expect_key_error(
        &["cooling.max_cooling_fraction=-1.0"],
        "cr-cooling-slab.toml",
        "cooling.max_cooling_fraction",
    );
}
