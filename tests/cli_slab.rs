//! End-to-end tests of the dense-slab bottleneck builder through the `sluice` binary:
//! `sluice check` prints the steady-streaming plateau, `sluice run` writes the slab series
//! (CSV + HDF5, units stated) with sensible values, and the late-time run agrees with the
//! direct steady solution and with the published bottleneck relations
//! (Skilling 1971, ApJ 170, 265; Wiener, Oh & Zweibel 2017, MNRAS 467, 646, §2:
//! P_c (v + v_a)^{γ_c} constant where P_c falls, P_c flat upstream of the Alfvén-speed minimum).

mod common;

use common::{problem, sluice, text};
use sluice_driver::snapshot::{read, Snapshot};
use std::path::{Path, PathBuf};

const GAMMA_C: f64 = 4.0 / 3.0;
/// Injected CR flux of problems/bottleneck-slab.toml, erg/cm²/s.
const F_IN: f64 = 2.08e-9;
/// Background density, field and contrast of that deck (cgs).
const RHO_BG: f64 = 1.6726e-25;
const B_X: f64 = 3.0e-6;
const CHI: f64 = 16.0;

fn out_dir(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("sluice-cli-slab-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    d
}

fn field<'a>(s: &'a Snapshot, name: &str) -> &'a [f64] {
    &s.dataset(&format!("/fields/{name}"))
        .unwrap_or_else(|| panic!("snapshot lacks /fields/{name}"))
        .data
}

fn snapshots(dir: &Path) -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| {
            p.file_name()
                .and_then(|f| f.to_str())
                .is_some_and(|f| f.ends_with(".h5") && !f.ends_with("_slab.h5"))
        })
        .collect();
    v.sort();
    v
}

/// The number after `key` on the line starting with `line` of `sluice check` output.
fn number_after(out: &str, line: &str, key: &str) -> f64 {
    let l = out
        .lines()
        .find(|l| l.starts_with(line))
        .unwrap_or_else(|| panic!("no line `{line}` in:\n{out}"));
    let rest = &l[l.find(key).unwrap_or_else(|| panic!("no `{key}` in `{l}`")) + key.len()..];
    rest.split_whitespace()
        .next()
        .and_then(|t| t.trim_end_matches(',').parse().ok())
        .unwrap_or_else(|| panic!("no number after `{key}` in `{l}`"))
}

/// v_a,min = B/√(4π χ ρ_bg) (cgs) and the bottleneck plateau P_0 = (γ_c − 1) F / (γ_c v_a,min)
/// for static gas: the steady streaming flux through the Alfvén-speed minimum is
/// γ_c/(γ_c − 1) v_a P_c (Wiener, Oh & Zweibel 2017, MNRAS 467, 646, §2).
fn published_plateau() -> (f64, f64) {
    // Density at the slab centre: ρ_bg [1 + (χ − 1) tanh(w/(2δ))] (the tanh edges do not quite
    // saturate: w/(2δ) = 3.33 for the deck's width 100 pc and edge 15 pc).
    let s = (3.0857e20f64 / (2.0 * 4.6286e19)).tanh();
    let rho = RHO_BG * (1.0 + (CHI - 1.0) * s);
    let va_min = B_X / (4.0 * std::f64::consts::PI * rho).sqrt();
    (va_min, (GAMMA_C - 1.0) * F_IN / (GAMMA_C * va_min))
}

#[test]
fn check_prints_alfven_speeds_time_scales_and_the_plateau() {
    let o = sluice(&["check", &problem("bottleneck-slab.toml")]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let s = text(&o.stdout);
    let (va_min, p0) = published_plateau();
    let va_out = B_X / (4.0 * std::f64::consts::PI * RHO_BG).sqrt();
    let vin = number_after(&s, "slab CR Alfven speed", "speed");
    let vout = number_after(&s, "slab CR Alfven speed", "inside,");
    // The slab centre cell sits on the tanh plateau: its density is χ ρ_bg to 1e-6.
    assert!(
        (vin / va_min - 1.0).abs() < 1e-5,
        "inside {vin} vs {va_min}"
    );
    assert!(
        (vout / va_out - 1.0).abs() < 1e-6, // 7 printed digits
        "outside {vout} vs {va_out}"
    );
    let plateau = number_after(&s, "bottleneck plateau", "P_c =");
    assert!(
        (plateau / p0 - 1.0).abs() < 1e-5,
        "plateau {plateau} vs published relation {p0}"
    );
    // Far downstream P_c = P_0 (v_a,min / v_a,out)^{γ_c} (≈ P_0 χ^{-γ_c/2}).
    let down = number_after(&s, "bottleneck plateau", "cm/s),");
    let want = p0 * (va_min / va_out).powf(GAMMA_C);
    assert!(
        (down / want - 1.0).abs() < 1e-4,
        "downstream {down} vs {want}"
    );
    for needle in [
        "slab time scales",
        "box streaming crossing",
        "plateau filling time",
    ] {
        assert!(s.contains(needle), "check lacks `{needle}`:\n{s}");
    }
}

#[test]
fn bad_slab_input_exits_2_and_names_the_key() {
    for (set, key) in [
        ("slab.contrast=0.5", "slab.contrast"),
        ("slab.edge=1e21", "slab.edge"),
        ("slab.center=1e19", "slab.center"),
        ("slab.neutral_fraction=0.3", "slab.neutral_fraction"),
        ("slab.magnetic_field_y=1e-6", "slab.magnetic_field_y"),
    ] {
        let o = sluice(&["check", &problem("bottleneck-slab.toml"), "--set", set]);
        assert_eq!(o.status.code(), Some(2), "{set}: {}", text(&o.stderr));
        let e = text(&o.stderr);
        assert!(e.contains(key), "{set}: stderr does not name `{key}`: {e}");
    }
}

/// Runs problems/bottleneck-slab.toml to 300 Myr (≈ 6 plateau filling times, 6 box streaming
/// crossings) and compares the last snapshot with the direct steady solution through the
/// run's own final gas, and the slab series with the same numbers.
#[test]
fn late_time_run_agrees_with_the_steady_bottleneck_and_writes_the_series() {
    let dir = out_dir("steady");
    let o = sluice(&[
        "run",
        &problem("bottleneck-slab.toml"),
        "--out",
        dir.to_str().unwrap(),
        "--quiet",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let snaps = snapshots(&dir);
    let last = read(snaps.last().unwrap()).unwrap();
    let prev = read(&snaps[snaps.len() - 2]).unwrap();
    let x = &last.dataset("/grid/x_center").unwrap().data;
    let pc = field(&last, "cr_pressure");
    let va = field(&last, "alfven_speed");
    let v = field(&last, "velocity_x");
    let rho = field(&last, "density");
    let steady = sluice_cosmic_rays::steady::bottleneck_from_flux(x, va, v, F_IN, GAMMA_C).unwrap();
    let n = x.len();
    // Position of the Alfvén-speed minimum (density maximum).
    let imin = (0..n).min_by(|&a, &b| va[a].total_cmp(&va[b])).unwrap();
    let dx = x[1] - x[0];
    // Regions: the plateau well upstream (first 5 cells excluded: the injection boundary),
    // the coupled region downstream beyond the slab edge, the last 5 cells excluded.
    let edge = 4.6286e19;
    let x_up_end = 1.23428e21 - 0.5 * 3.0857e20 - 3.0 * edge;
    let x_down_start = 1.23428e21 + 0.5 * 3.0857e20 + 3.0 * edge;
    let mut e_up: f64 = 0.0;
    let mut e_down: f64 = 0.0;
    let mut e_l1 = 0.0;
    let mut norm = 0.0;
    for i in 5..n - 5 {
        let r = pc[i] / steady.pc[i] - 1.0;
        if x[i] < x_up_end {
            e_up = e_up.max(r.abs());
        }
        if x[i] > x_down_start {
            e_down = e_down.max(r.abs());
        }
        e_l1 += (pc[i] - steady.pc[i]).abs() * dx;
        norm += steady.pc[i] * dx;
    }
    let l1 = e_l1 / norm;
    println!(
        "steady bottleneck: max rel. error upstream {e_up:.3e}, downstream {e_down:.3e}, L1 {l1:.3e}; v_a min at x = {:.4e} cm",
        x[imin]
    );
    // Published relations, independent of the solver module: flat plateau at
    // (γ_c − 1) F/(γ_c v_a,min) upstream; P_c v_a^{γ_c} = const downstream.
    let (_, p0) = published_plateau();
    let va_min = va[imin];
    let p0_run = (GAMMA_C - 1.0) * F_IN / (GAMMA_C * va_min);
    assert!((p0_run / p0 - 1.0).abs() < 0.02, "v_a,min moved: {va_min}");
    let i_up = n / 4;
    let plateau_err = pc[i_up] / p0_run - 1.0;
    let inv: Vec<f64> = (0..n)
        .filter(|&i| x[i] > x_down_start && i < n - 5)
        .map(|i| pc[i] * va[i].powf(GAMMA_C))
        .collect();
    let inv_ref = p0_run * va_min.powf(GAMMA_C);
    let inv_err = inv
        .iter()
        .map(|c| (c / inv_ref - 1.0).abs())
        .fold(0.0, f64::max);
    println!("plateau error {plateau_err:.3e}, P_c v_a^(4/3) downstream error {inv_err:.3e}");
    // Tolerances: measured at 256 cells (Δx = 3.9 pc, edge 15 pc = 3.8 Δx): max relative
    // error 0.43 % upstream, 0.42 % downstream, L1 0.48 %, plateau −0.73 %, P_c v_a^{4/3}
    // 0.50 %; the bounds leave several times headroom. The residual comes from
    // the residual diffusion κ = 1e24 cm²/s (κ/(v_a,min × edge) ≈ 4 %) and the PLM
    // smearing of the steep P_c drop on the downstream edge.
    assert!(e_up < 0.03, "upstream plateau off by {e_up}");
    assert!(e_down < 0.05, "downstream off by {e_down}");
    assert!(l1 < 0.03, "L1 {l1}");
    assert!(plateau_err.abs() < 0.03, "plateau {plateau_err}");
    assert!(inv_err < 0.05, "P_c v_a^(4/3) {inv_err}");
    // Late time: the last two snapshots (50 Myr apart) agree in L1 and on the plateau, so
    // the state is steady to the accuracy asserted above. (Cell by cell the steep downstream
    // edge moves by a fraction of a cell as the heated slab expands: the comparison above
    // therefore uses the run's own final gas.)
    let pc_prev = field(&prev, "cr_pressure");
    let drift_l1 = (5..n - 5).map(|i| (pc[i] - pc_prev[i]).abs()).sum::<f64>()
        / (5..n - 5).map(|i| pc[i]).sum::<f64>();
    let drift_plateau = (pc[i_up] / pc_prev[i_up] - 1.0).abs();
    println!("change over the last 50 Myr: L1 {drift_l1:.3e}, plateau {drift_plateau:.3e}");
    assert!(
        drift_l1 < 0.02 && drift_plateau < 0.01,
        "not steady: {drift_l1}, {drift_plateau}"
    );

    // The slab series.
    let csv = std::fs::read_to_string(dir.join("bottleneck-slab_slab.csv")).unwrap();
    let mut lines = csv.lines();
    let units = lines.next().unwrap();
    assert!(
        units.starts_with("# units: time [s], step [1], slab0_mass [g/cm^2]"),
        "{units}"
    );
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let rows: Vec<Vec<f64>> = lines
        .map(|l| l.split(',').map(|v| v.parse().unwrap()).collect())
        .collect();
    // 7 snapshot rows + rows every 10 Myr in between (30 in all, 300 Myr / 10 Myr + t = 0,
    // and the snapshot times coincide with multiples of 10 Myr).
    assert!(rows.len() >= 31, "{} rows", rows.len());
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let r0 = &rows[0];
    let rl = rows.last().unwrap();
    assert_eq!(r0[0], 0.0);
    assert!((rl[0] - 9.4671e15).abs() < 1e3, "{}", rl[0]);
    // t = 0 mass of the member cells: Σ ρ Δx over cells with ρ > ρ_bg (1 + (χ−1)/2).
    let thr = RHO_BG * (1.0 + 0.5 * (CHI - 1.0));
    let first = read(&snaps[0]).unwrap();
    let m0: f64 = field(&first, "density")
        .iter()
        .filter(|&&r| r > thr)
        .map(|r| r * dx)
        .sum();
    assert!((r0[col("slab0_mass")] / m0 - 1.0).abs() < 1e-12);
    assert_eq!(r0[col("slab0_momentum_gained")], 0.0);
    // CR pressure jump at late time: the steady value between the sample points.
    let jump = rl[col("slab0_cr_pressure_jump")];
    let (jl, jr) = sample_points(x, rho, thr, edge);
    let jump_ref = steady.pc[jl] - steady.pc[jr];
    println!("pressure jump {jump:.4e} vs steady {jump_ref:.4e}");
    // Measured 0.47 %.
    assert!((jump / jump_ref - 1.0).abs() < 0.02, "{jump} vs {jump_ref}");
    // Momentum gained ≈ ∫ jump dt (the gas pressure is uniform; the CR force is the only
    // net force on the slab to the extent the slab boundaries move little): positive and
    // of the order of jump × t.
    let pg = rl[col("slab0_momentum_gained")];
    assert!(pg > 0.0 && pg < jump * rl[0], "momentum gained {pg}");
    // CR heating: the integral grows monotonically and its late-time rate is the streaming
    // heating v_a |∂_x P_c| over the member cells, with the steady P_c.
    let h = col("slab0_cr_heating");
    assert!(rows.windows(2).all(|w| w[1][h] >= w[0][h]));
    let rate = rl[col("slab0_cr_heating_rate")];
    let (lo, hi) = members(rho, thr);
    // Cell-wise v_a |∂_x P_c| with the central difference (as the solver's cell heating),
    // summed over the member cells.
    let rate_ref: f64 = (lo..=hi)
        .map(|i| va[i] * (steady.pc[i - 1] - steady.pc[i + 1]) * 0.5)
        .sum::<f64>()
        .abs();
    println!("slab heating rate {rate:.4e} vs steady {rate_ref:.4e}");
    // Measured 2.7 % (the solver heats with its own reconstructed gradient).
    assert!((rate / rate_ref - 1.0).abs() < 0.06, "{rate} vs {rate_ref}");
    // HDF5 copy: same rows, units attributes.
    let h5 = read(&dir.join("bottleneck-slab_slab.h5")).unwrap();
    let ds = h5.dataset("/slab0/cr_pressure_jump").unwrap();
    assert_eq!(ds.data.len(), rows.len());
    assert_eq!(*ds.data.last().unwrap(), jump);
    assert_eq!(ds.attr("units").and_then(|a| a.as_str()), Some("erg/cm^3"));
    assert_eq!(
        h5.dataset("/time")
            .unwrap()
            .attr("units")
            .and_then(|a| a.as_str()),
        Some("s")
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// First and last member cells (ρ > thr) as a half-open index range end (hi = last).
fn members(rho: &[f64], thr: f64) -> (usize, usize) {
    let lo = rho.iter().position(|&r| r > thr).unwrap();
    let hi = rho.iter().rposition(|&r| r > thr).unwrap();
    (lo, hi)
}

/// The CR pressure sample cells of the series: 3 edge thicknesses outside the member cells.
fn sample_points(x: &[f64], rho: &[f64], thr: f64, edge: f64) -> (usize, usize) {
    let (lo, hi) = members(rho, thr);
    let dx = x[1] - x[0];
    let off = (3.0 * edge / dx).ceil() as usize;
    (lo - off, hi + off)
}

/// Two slabs (contrast 16, then 4): the late-time run agrees with the direct steady solution,
/// which has a second flat stretch on the approach to the shallower second minimum
/// (P_c cannot rise along the flux; Wiener, Oh & Zweibel 2017, MNRAS 467, 646, §2), and the
/// series has one column block per slab.
#[test]
fn two_slabs_agree_with_the_steady_solution() {
    let dir = out_dir("two");
    let o = sluice(&[
        "run",
        &problem("bottleneck-two-slabs.toml"),
        "--out",
        dir.to_str().unwrap(),
        "--quiet",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let snaps = snapshots(&dir);
    let last = read(snaps.last().unwrap()).unwrap();
    let x = &last.dataset("/grid/x_center").unwrap().data;
    let pc = field(&last, "cr_pressure");
    let va = field(&last, "alfven_speed");
    let v = field(&last, "velocity_x");
    let steady = sluice_cosmic_rays::steady::bottleneck_from_flux(x, va, v, F_IN, GAMMA_C).unwrap();
    let n = x.len();
    let (mut e, mut norm) = (0.0, 0.0);
    for (a, b) in pc[5..n - 5].iter().zip(&steady.pc[5..n - 5]) {
        e += (a - b).abs();
        norm += b;
    }
    let l1 = e / norm;
    // A decoupled (flat) stretch exists between the two slabs in the steady solution.
    let flat = (0..n).any(|i| x[i] > 1.5e21 && x[i] < 2.0e21 && !steady.coupled[i]);
    println!("two slabs: L1 {l1:.3e}, flat stretch between slabs: {flat}");
    assert!(flat);
    // Measured L1 1.65e-3 at 256 cells.
    assert!(l1 < 0.03, "L1 {l1}");
    let csv = std::fs::read_to_string(dir.join("bottleneck-two-slabs_slab.csv")).unwrap();
    let header = csv.lines().nth(1).unwrap();
    assert!(header.contains("slab0_cr_heating") && header.contains("slab1_cr_pressure_jump"));
    let _ = std::fs::remove_dir_all(&dir);
}

/// Reservoir CR source: problems/bottleneck-slab-fixed-energy.toml holds e_c = 3e-15 erg/cm³
/// in the left ghost cells over a 1e-18 erg/cm³ background (the start that used to stall the
/// CR exchange). `sluice check` prints the plateau P_0 = (γ_c − 1) e_boundary, and at 200 Myr
/// the run agrees with the direct steady solution started from that P_0
/// (`steady::bottleneck_from_speeds`) and with the published relations: P_c flat at P_0 up to
/// the Alfvén-speed minimum, P_c v_a^{γ_c} constant beyond it, transmitted flux
/// γ_c/(γ_c − 1) v_a,min P_0 (Skilling 1971, ApJ 170, 265; Wiener, Oh & Zweibel 2017,
/// MNRAS 467, 646, §2; Wiener, Zweibel & Oh 2017, ApJ 843, 82).
#[test]
fn fixed_energy_density_source_fills_the_plateau_and_agrees_with_the_steady_solution() {
    const E_B: f64 = 3.0e-15;
    let p0 = (GAMMA_C - 1.0) * E_B;
    let deck = problem("bottleneck-slab-fixed-energy.toml");
    let o = sluice(&["check", &deck]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let s = text(&o.stdout);
    let plateau = number_after(&s, "bottleneck plateau", "P_c =");
    assert!((plateau / p0 - 1.0).abs() < 1e-6, "{plateau} vs {p0}");
    let (va_min0, _) = published_plateau();
    let f_pred = number_after(&s, "bottleneck flux", "transmitted");
    let f_pub = GAMMA_C / (GAMMA_C - 1.0) * va_min0 * p0;
    assert!((f_pred / f_pub - 1.0).abs() < 1e-5, "{f_pred} vs {f_pub}");
    assert!(s.contains("plateau filling time"), "{s}");

    let dir = out_dir("fixed-energy");
    let o = sluice(&["run", &deck, "--out", dir.to_str().unwrap(), "--quiet"]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let snaps = snapshots(&dir);
    let last = read(snaps.last().unwrap()).unwrap();
    let prev = read(&snaps[snaps.len() - 2]).unwrap();
    let x = &last.dataset("/grid/x_center").unwrap().data;
    let pc = field(&last, "cr_pressure");
    let va = field(&last, "alfven_speed");
    let v = field(&last, "velocity_x");
    let f = field(&last, "cr_flux");
    let steady = sluice_cosmic_rays::steady::bottleneck_from_speeds(x, va, v, p0, GAMMA_C).unwrap();
    let n = x.len();
    let edge = 4.6286e19;
    let x_up_end = 1.23428e21 - 0.5 * 3.0857e20 - 3.0 * edge;
    let x_down_start = 1.23428e21 + 0.5 * 3.0857e20 + 3.0 * edge;
    let (mut e_up, mut e_down, mut e_max, mut l1, mut norm) = (0.0f64, 0.0f64, 0.0f64, 0.0, 0.0);
    for i in 5..n - 5 {
        let r = (pc[i] / steady.pc[i] - 1.0).abs();
        if x[i] < x_up_end {
            e_up = e_up.max(r);
        }
        if x[i] > x_down_start {
            e_down = e_down.max(r);
        }
        e_max = e_max.max(r);
        l1 += (pc[i] - steady.pc[i]).abs();
        norm += steady.pc[i];
    }
    let l1 = l1 / norm;
    println!(
        "fixed e_c source: max rel. error upstream {e_up:.3e}, downstream {e_down:.3e}, anywhere {e_max:.3e}, L1 {l1:.3e}"
    );
    // Published relations without the solver module: plateau at P_0 (the first cells sit
    // next to the reservoir), P_c v_a^{γ_c} downstream = P_0 v_a,min^{γ_c}, and the lab-frame
    // flux v h + F along the upstream plateau (decoupled, no losses) = the flux the bottleneck
    // lets through, γ_c/(γ_c − 1) (v + v_a)_min P_0.
    let imin = (0..n).min_by(|&a, &b| va[a].total_cmp(&va[b])).unwrap();
    let va_min = va[imin];
    let plateau_err = pc[n / 4] / p0 - 1.0;
    let first_err = pc[0] / p0 - 1.0;
    let inv_err = (0..n)
        .filter(|&i| x[i] > x_down_start && i < n - 5)
        .map(|i| (pc[i] * (va[i] / va_min).powf(GAMMA_C) / p0 - 1.0).abs())
        .fold(0.0, f64::max);
    let i_up = n / 4;
    let lab = f[i_up] + v[i_up] * GAMMA_C / (GAMMA_C - 1.0) * pc[i_up];
    let flux_err = lab / (GAMMA_C / (GAMMA_C - 1.0) * (va_min + v[imin]) * p0) - 1.0;
    println!(
        "plateau {plateau_err:.3e}, first cell {first_err:.3e}, P_c v_a^(4/3) {inv_err:.3e}, transmitted flux {flux_err:.3e}"
    );
    // Measured at 256 cells: upstream 3.1e-4, downstream 1.7e-3, L1 1.2e-3, anywhere 2.1e-2
    // (the steep upstream slab edge, PLM-smeared over ~3 cells), plateau 2.9e-4, first cell
    // 4.5e-6, P_c v_a^{4/3} 6.8e-3 (v neglected there), flux −6.4e-3; bounds with headroom.
    assert!(e_up < 0.01, "upstream {e_up}");
    assert!(e_down < 0.02, "downstream {e_down}");
    assert!(l1 < 0.01, "L1 {l1}");
    assert!(e_max < 0.06, "anywhere {e_max}");
    assert!(
        plateau_err.abs() < 0.01 && first_err.abs() < 1e-3,
        "{plateau_err} {first_err}"
    );
    assert!(inv_err < 0.03, "P_c v_a^(4/3) {inv_err}");
    assert!(flux_err.abs() < 0.03, "transmitted flux {flux_err}");
    // Steady: the last two snapshots (50 Myr apart) agree.
    let pc_prev = field(&prev, "cr_pressure");
    let drift = (5..n - 5).map(|i| (pc[i] - pc_prev[i]).abs()).sum::<f64>()
        / (5..n - 5).map(|i| pc[i]).sum::<f64>();
    println!("change over the last 50 Myr: L1 {drift:.3e}");
    assert!(drift < 0.01, "not steady: {drift}");
    let _ = std::fs::remove_dir_all(&dir);
}
