//! End-to-end tests of `sluice study` (streaming versus diffusion of one CR pulse) on the
//! shipped deck problems/cr-pulse-study.toml (256 cells, 20 Myr; each variant runs in
//! well under a second in release mode).

mod common;

use common::{problem, sluice, text};
use sluice_driver::snapshot::read;
use std::path::Path;

/// Reduced speed of light set explicitly so that the telegraph time τ = 3κ/c_r² is known.
const C_R: f64 = 1.5e7;
/// κ of the diffusion variant, cm²/s.
const KAPPA: f64 = 1e26;
/// Top-hat half-width L (cm) and height ε0 + background (erg/cm³) of the deck.
const L: f64 = 1.54285e20;
const E0: f64 = 1.0e-13 + 1.0e-16;

fn study(out: &Path, variants: &str, extra: &[&str]) -> serde_json::Value {
    let deck = problem("cr-pulse-study.toml");
    let out_s = out.display().to_string();
    let cr = format!("cosmic_rays.reduced_speed_of_light={C_R:e}");
    let kappa = format!("{KAPPA:e}");
    let mut args = vec![
        "study",
        deck.as_str(),
        "--variants",
        variants,
        "--kappa",
        kappa.as_str(),
        "--set",
        cr.as_str(),
        "--json",
        "--out",
        out_s.as_str(),
    ];
    args.extend_from_slice(extra);
    let o = sluice(&args);
    assert!(o.status.success(), "study failed: {}", text(&o.stderr));
    serde_json::from_str(&text(&o.stdout)).expect("study --json output")
}

fn run<'a>(doc: &'a serde_json::Value, name: &str) -> &'a serde_json::Value {
    doc["runs"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["name"] == name)
        .unwrap_or_else(|| panic!("no run `{name}`"))
}

/// Rows of `<variant>_pulse.csv` as (time, width, front, peak).
fn pulse_rows(path: &str) -> Vec<[f64; 4]> {
    let s = std::fs::read_to_string(path).unwrap();
    let mut lines = s.lines();
    assert_eq!(
        lines.next().unwrap(),
        "time_s,width_cm,front_cm,peak_erg_cm3,excess_energy_erg_cm2,v_eff_cm_s,edge_fraction"
    );
    lines
        .map(|l| {
            let v: Vec<f64> = l.split(',').map(|x| x.parse().unwrap()).collect();
            [v[0], v[1], v[2], v[3]]
        })
        .collect()
}

#[test]
fn diffusion_and_streaming_follow_the_published_relations() {
    let dir = tempfile::tempdir().unwrap();
    let doc = study(dir.path(), "diffusion,streaming", &["--snapshots"]);
    let v_a = doc["alfven_speed_cm_s"].as_f64().unwrap();
    let t_end = doc["t_end_s"].as_f64().unwrap();

    // --- Fixed-κ diffusion. Heat kernel: the variance of any initial profile grows as
    // σ² = σ0² + 2κt (Morse & Feshbach 1953, Methods of Theoretical Physics; physics-detail
    // §4.3). With a finite c_r the telegraph equation ε_tt + ε_t/τ = (c_r²/3) ε_xx, τ = 3κ/c_r²,
    // and F(0) = 0 give exactly σ² − σ0² = 2κ[t − τ(1 − e^{−t/τ})] (second moment of the
    // telegraph equation, derived from physics-detail §2.4/§4.3).
    let d = run(&doc, "diffusion");
    let alpha = d["alpha_width"].as_f64().unwrap();
    // Measured 0.5022 (256 cells, window 0.25–1 t_end): the variance law is exact, so only the
    // telegraph correction (τ/t < 0.4% in the window) and the 0.7% excess below move it.
    assert!((alpha - 0.5).abs() < 0.02, "diffusion alpha_W = {alpha}");
    let tau = 3.0 * KAPPA / (C_R * C_R);
    let rows = pulse_rows(d["csv"].as_str().unwrap());
    let w0 = rows[0][1];
    let mut worst: f64 = 0.0;
    for r in rows.iter().filter(|r| r[0] > 0.1 * t_end) {
        let exact = 2.0 * KAPPA * (r[0] - tau * (1.0 - (-r[0] / tau).exp()));
        worst = worst.max(((r[1] * r[1] - w0 * w0) / exact - 1.0).abs());
    }
    // Measured worst 0.72% (256 cells; 0.65% at 512): numerical diffusion of the HLL flux and
    // the gas the CR pressure pushes (P_c/P_g = 3%). Bound 2%.
    assert!(worst < 0.02, "diffusion variance vs 2κt: worst {worst}");

    // --- Strong-coupling streaming of a top-hat (physics-detail §4.4 [derived]; Sharma,
    // Colella & Martin 2010, SIAM J. Sci. Comput. 32, 3564 for the problem; Jiang & Oh 2018,
    // ApJ 854, 5 for the two-moment treatment): x_front = L + v_a t, so the front displacement
    // has exponent 1, and the plateau ε_p = ε0 (1 + v_a t/L)^{-4/3}.
    let s = run(&doc, "streaming");
    let af = s["alpha_front"].as_f64().unwrap();
    // Measured 0.980 (256 cells), 0.990 (512).
    assert!((af - 1.0).abs() < 0.05, "streaming alpha_front = {af}");
    let speed = s["front_speed_over_alfven"].as_f64().unwrap();
    // Measured 1.135 v_a at L/Δx = 12.8 (1.112 at 25.6): the half-maximum point of the smeared
    // discontinuous edge runs ahead of L + v_a t (known limitation in docs/cosmic-rays.md);
    // the test below checks that the excess shrinks with resolution. Bound 16%.
    assert!(
        (speed - 1.0).abs() < 0.16,
        "streaming front speed / v_a = {speed}"
    );
    let rows = pulse_rows(s["csv"].as_str().unwrap());
    let last = rows.last().unwrap();
    let plateau = E0 * (1.0 + v_a * last[0] / L).powf(-4.0 / 3.0);
    let err = last[3] / plateau - 1.0;
    // Measured −4.0% at 256 cells (−1.7% at 512). Bound 6%.
    assert!(err.abs() < 0.06, "plateau {} vs {plateau}: {err}", last[3]);

    // --- Regime map. Streaming run: the flux of the pulse is carried by streaming
    // (measured pulse fraction 0.998); fixed κ has no streaming part at all (exactly 0).
    let fs = s["streaming_fraction"].as_f64().unwrap();
    assert!(fs > 0.99, "streaming run fraction {fs}");
    assert_eq!(d["streaming_fraction"].as_f64().unwrap(), 0.0);
    let snap = |variant: &str| {
        let p = dir.path().join(variant).join("cr-pulse-study_0004.h5");
        read(&p).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
    };
    let get = |s: &sluice_driver::snapshot::Snapshot, f: &str| -> Vec<f64> {
        let ds = s.dataset(&format!("/fields/{f}")).unwrap();
        ds.data.clone()
    };
    let ss = snap("streaming");
    let e = get(&ss, "cr_energy_density");
    let phi = get(&ss, "cr_streaming_fraction");
    let regime = get(&ss, "cr_regime");
    let emax = e.iter().cloned().fold(0.0, f64::max);
    let mut fronts = 0;
    for ((&ei, &p), &r) in e.iter().zip(&phi).zip(&regime) {
        // Front cells: between 10% and 90% of the plateau. Measured smallest fraction 0.93:
        // the residual κ of the streaming model across the numerically resolved edge,
        // κ/(2 γ_c v_a Δx) ≈ 0.065 of the streaming flux.
        if ei > 0.1 * emax && ei < 0.9 * emax {
            fronts += 1;
            assert!(p > 0.9, "front cell streaming fraction {p}");
            assert_eq!(r, 2.0);
        }
    }
    assert!(fronts >= 2, "found {fronts} front cells");
    let sd = snap("diffusion");
    for (&p, &r) in get(&sd, "cr_streaming_fraction")
        .iter()
        .zip(&get(&sd, "cr_regime"))
    {
        assert!(p == 0.0 || p.is_nan(), "fixed-kappa fraction {p}");
        assert!(r == 1.0 || (r == 0.0 && p.is_nan()));
    }
    let units = ss
        .dataset("/fields/cr_streaming_fraction")
        .and_then(|d| d.attr("units"))
        .and_then(|a| a.as_str().map(str::to_string));
    assert_eq!(units.as_deref(), Some("1"));
}

#[test]
fn streaming_front_excess_shrinks_with_resolution() {
    // Same relations as above (physics-detail §4.4): at twice the resolution the front speed
    // is closer to v_a and the plateau closer to ε0 (1 + v_a t/L)^{-4/3}.
    let d256 = tempfile::tempdir().unwrap();
    let d512 = tempfile::tempdir().unwrap();
    let a = study(d256.path(), "streaming", &[]);
    let b = study(d512.path(), "streaming", &["--set", "grid.cells=512"]);
    let sa = run(&a, "streaming")["front_speed_over_alfven"]
        .as_f64()
        .unwrap();
    let sb = run(&b, "streaming")["front_speed_over_alfven"]
        .as_f64()
        .unwrap();
    // Measured 1.135 → 1.112.
    assert!((sb - 1.0).abs() < (sa - 1.0).abs(), "{sa} → {sb}");
    let v_a = b["alfven_speed_cm_s"].as_f64().unwrap();
    let rows = pulse_rows(run(&b, "streaming")["csv"].as_str().unwrap());
    let last = rows.last().unwrap();
    let plateau = E0 * (1.0 + v_a * last[0] / L).powf(-4.0 / 3.0);
    // Measured −1.7%. Bound 3%.
    assert!((last[3] / plateau - 1.0).abs() < 0.03);
}

#[test]
fn weak_and_strong_damping_drift_at_the_growth_damping_balance() {
    // Self-confined CRs with constant linear wave damping Γ_0: where the streaming
    // instability balances the damping, the CRs drift at
    //   v_st = v_a + f_E Γ_0 c² e_B / (α_ν Ω v_a h)
    // (Wiener, Zweibel & Oh 2013, ApJ 767, 87; physics-detail §4.1, here with f_E = 2),
    // independent of the gradient. Weak damping (0.01 Γ*) must stream close to v_a, strong
    // damping (0.1 Γ*, Γ* the rate of a drift excess v_a at the initial peak) must drift
    // markedly faster, and both must sit on the relation on the confined pulse flanks.
    let dir = tempfile::tempdir().unwrap();
    let doc = study(
        dir.path(),
        "self-confined-weak,self-confined-strong",
        // Window 0.25–0.75 t_end: later, the CRs that escaped the strongly damped pulse
        // fill the periodic box (edge excess > 50% of the peak) and single outputs of the
        // strong variant leave the relation (measured up to 17% at 0.85 t_end).
        &[
            "--set",
            "run.output_interval=3.15e13",
            "--fit-window",
            "0.25,0.75",
        ],
    );
    let weak = run(&doc, "self-confined-weak");
    let strong = run(&doc, "self-confined-strong");
    let f = |r: &serde_json::Value, k: &str| {
        r[k].as_f64()
            .unwrap_or_else(|| panic!("{}: `{k}` missing or null", r["name"]))
    };
    for r in [weak, strong] {
        // 10 outputs in the window.
        assert!(r["flank_outputs"].as_u64().unwrap() >= 8, "{r}");
        // Not set by the reduced speed of light: |F| well below c_r e_c on the flanks.
        assert!(f(r, "flank_max_free_streaming") < 0.3, "{r}");
        // Measured median 1.012 (weak) and 1.000 (strong), worst single output 1.5% and
        // 0.8% (explicit c_r = 1.5e7 cm/s). Bounds 3% and 6%.
        assert!((f(r, "flank_wzo13_ratio") - 1.0).abs() < 0.03, "{r}");
        assert!(f(r, "flank_wzo13_worst_deviation") < 0.06, "{r}");
    }
    // Weak damping streams: flank drift within 20% of v_a (measured 1.09), front at v_a
    // within 15% (measured 1.11, the smeared-edge excess of the streaming variant).
    assert!(f(weak, "flank_v_st_over_alfven") < 1.2, "{weak}");
    assert!(
        (f(weak, "front_speed_over_alfven") - 1.0).abs() < 0.15,
        "{weak}"
    );
    // Strong damping drifts faster than v_a (measured 1.91 v_a on the flanks) and carries the
    // pulse faster (energy-weighted speed measured 1.90× the weak one).
    assert!(f(strong, "flank_v_st_over_alfven") > 1.6, "{strong}");
    assert!(
        f(strong, "v_eff_cm_s") > 1.5 * f(weak, "v_eff_cm_s"),
        "{strong}"
    );

    // At 10 Γ* the wave growth rate of the streaming instability is at most v_a σ̂ c_r e_c
    // (free-streaming flux; physics-detail §2.6), with the deck's c_r ≈ 1.0e7 cm/s only 1.2×
    // the damping rate 2Γ_0 at the initial peak and below it once the peak has dropped by a
    // fifth: the waves stay at the floor, the CRs decouple, and the study must say so
    // instead of reporting a drift.
    let gamma_star = f(&doc, "reference_damping_rate_s");
    let rate = format!("{:e}", 10.0 * gamma_star);
    let deck = problem("cr-pulse-study.toml");
    let out = dir.path().join("decoupled").display().to_string();
    let o = sluice(&[
        "study",
        deck.as_str(),
        "--variants",
        "self-confined-strong",
        "--strong-damping",
        rate.as_str(),
        "--out",
        out.as_str(),
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let err = text(&o.stderr);
    assert!(
        err.contains("variant `self-confined-strong`: no confined flank cells"),
        "{err}"
    );
}

#[test]
fn bad_input_names_the_flag_and_what_is_allowed() {
    let deck = problem("cr-pulse-study.toml");
    let cases: [(&[&str], &str); 5] = [
        (&["--fit-window", "1,0.5"], "--fit-window"),
        (&["--variants", "ballistic"], "allowed diffusion, streaming"),
        (&["--variant", "x=1"], "--variant"),
        (&["--kappa=-1"], "--kappa"),
        (&["--variants", "none"], "--variant NAME:OVERRIDES"),
    ];
    for (extra, want) in cases {
        let mut args = vec!["study", deck.as_str()];
        args.extend_from_slice(extra);
        let o = sluice(&args);
        assert_eq!(o.status.code(), Some(2), "{extra:?}");
        let err = text(&o.stderr);
        assert!(err.contains(want), "{extra:?}: {err}");
    }
    let sod = problem("sod.toml");
    let o = sluice(&["study", sod.as_str()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("[cosmic_rays]"));
}
