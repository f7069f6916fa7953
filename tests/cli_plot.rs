//! `sluice plot`: the drawn curves are the data. A profile plot of a small bottleneck-slab run
//! is read back from the SVG: the density curve (linear axis) has one vertex per cell whose
//! pixel height is an affine function of the cell value, the CR-pressure curve (spanning
//! decades, so drawn on a log axis) is affine in log10 of the value; labels carry the units
//! of the snapshot's `units` attributes. Time series of the ledger and of the slab series
//! are drawn from their CSVs, PNG output decodes, and bad input exits 2 naming the culprit.
//!
//! The reference is the data itself: a faithful line plot maps (x, y) by a monotone affine map
//! of x and of y (or of log10 y) to pixels (common practice); plotters rounds pixels to
//! integers, so residuals up to one pixel are allowed.

mod common;

use common::{problem, sluice, text};
use sluice_driver::snapshot;
use std::path::Path;

fn ok(args: &[&str]) -> String {
    let o = sluice(args);
    assert!(
        o.status.success(),
        "sluice {args:?} failed: {}",
        text(&o.stderr)
    );
    text(&o.stdout)
}

/// Points of every data polyline (stroke width 2, more than `min` vertices) in document order.
fn curves(svg: &str, min: usize) -> Vec<Vec<(f64, f64)>> {
    let mut out = Vec::new();
    for chunk in svg.split("<polyline").skip(1) {
        let tag = &chunk[..chunk.find("/>").unwrap()];
        if !tag.contains("stroke-width=\"2\"") {
            continue;
        }
        let pts = tag.split("points=\"").nth(1).unwrap();
        let pts = &pts[..pts.find('"').unwrap()];
        let v: Vec<(f64, f64)> = pts
            .split_whitespace()
            .map(|p| {
                let (a, b) = p.split_once(',').unwrap();
                (a.parse().unwrap(), b.parse().unwrap())
            })
            .collect();
        if v.len() > min {
            out.push(v);
        }
    }
    out
}

/// Largest residual (pixels) of the least-squares affine fit pixel ≈ a + b·value, and b.
fn affine_residual(values: &[f64], pixels: &[f64]) -> (f64, f64) {
    let n = values.len() as f64;
    let mv = values.iter().sum::<f64>() / n;
    let mp = pixels.iter().sum::<f64>() / n;
    let sxy: f64 = values
        .iter()
        .zip(pixels)
        .map(|(v, p)| (v - mv) * (p - mp))
        .sum();
    let sxx: f64 = values.iter().map(|v| (v - mv) * (v - mv)).sum();
    let b = sxy / sxx;
    let a = mp - b * mv;
    let r = values
        .iter()
        .zip(pixels)
        .map(|(v, p)| (a + b * v - p).abs())
        .fold(0.0, f64::max);
    (r, b)
}

fn small_run(dir: &Path) {
    ok(&[
        "run",
        &problem("bottleneck-slab.toml"),
        "--set",
        "grid.cells=96",
        "--set",
        "run.t_end=1e15",
        "--set",
        "run.output_interval=5e14",
        "--set",
        &format!("run.output_dir={}", dir.display()),
    ]);
}

#[test]
fn profile_curves_reproduce_the_snapshot_data() {
    let dir = tempfile::tempdir().unwrap();
    small_run(dir.path());
    let snap = dir.path().join("bottleneck-slab_0002.h5");
    let svg_path = dir.path().join("p.svg");
    let out = ok(&[
        "plot",
        snap.to_str().unwrap(),
        "--fields",
        "density,cr_pressure",
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    assert!(out.contains("2 panels"), "{out}");
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    // Units come from the snapshot attributes; the density axis is drawn in 1e-24 g/cm^3,
    // the CR pressure (from the plateau down to the far background) on a log axis.
    for label in [
        "density [g/cm^3] (×1e-24)",
        "cr_pressure [erg/cm^3] (log)",
        "x [cm] (×1e21)",
        "t = 1.0000e15 s",
    ] {
        assert!(svg.contains(label), "SVG lacks `{label}`");
    }
    let s = snapshot::read(&snap).unwrap();
    let field = |n: &str| s.dataset(&format!("/fields/{n}")).unwrap().data.clone();
    let x = s.dataset("/grid/x_center").unwrap().data.clone();
    let rho = field("density");
    let pc = field("cr_pressure");
    assert!(pc.iter().cloned().fold(0.0, f64::max) / pc.iter().cloned().fold(1.0, f64::min) > 1e3);
    let c = curves(&svg, 10);
    assert_eq!(c.len(), 2, "one data curve per panel");
    for (curve, (values, log)) in c.iter().zip([(&rho, false), (&pc, true)]) {
        assert_eq!(curve.len(), x.len(), "one vertex per cell");
        let px: Vec<f64> = curve.iter().map(|p| p.0).collect();
        let py: Vec<f64> = curve.iter().map(|p| p.1).collect();
        let (rx, bx) = affine_residual(&x, &px);
        assert!(rx <= 1.0 && bx > 0.0, "x map residual {rx} px, slope {bx}");
        let v: Vec<f64> = if log {
            values.iter().map(|v| v.log10()).collect()
        } else {
            values.to_vec()
        };
        let (ry, by) = affine_residual(&v, &py);
        // SVG y grows downwards: larger values sit higher.
        assert!(ry <= 1.0 && by < 0.0, "y map residual {ry} px, slope {by}");
    }
}

#[test]
fn time_series_and_png() {
    let dir = tempfile::tempdir().unwrap();
    small_run(dir.path());
    let ledger = dir.path().join("ledger.csv");
    let svg_path = dir.path().join("l.svg");
    ok(&[
        "plot",
        "--ledger",
        ledger.to_str().unwrap(),
        "--columns",
        "total,mass",
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    assert!(svg.contains("total [erg/cm^2]"), "ledger energies per area");
    assert!(svg.contains("mass [g/cm^2]"));
    assert!(svg.contains("time [s]"));
    // One vertex per ledger row (snapshots at 0, 5e14, 1e15 s).
    let rows = std::fs::read_to_string(&ledger).unwrap().lines().count() - 1;
    for c in curves(&svg, 1) {
        assert_eq!(c.len(), rows);
    }
    // The slab series: units from its `# units:` line; PNG of the figure's size.
    let slab = dir.path().join("bottleneck-slab_slab.csv");
    let png_path = dir.path().join("s.png");
    ok(&[
        "plot",
        "--csv",
        slab.to_str().unwrap(),
        "--columns",
        "slab0_velocity,slab0_cr_pressure_jump",
        "-o",
        png_path.to_str().unwrap(),
    ]);
    let dec = png::Decoder::new(std::fs::File::open(&png_path).unwrap());
    let reader = dec.read_info().unwrap();
    let info = reader.info();
    assert!(
        info.width >= 600 && info.height >= 400,
        "{}x{}",
        info.width,
        info.height
    );
    let svg_path = dir.path().join("s.svg");
    ok(&[
        "plot",
        "--csv",
        slab.to_str().unwrap(),
        "--columns",
        "slab0_velocity",
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    assert!(std::fs::read_to_string(&svg_path)
        .unwrap()
        .contains("slab0_velocity [cm/s]"));
}

#[test]
fn bad_input_names_the_culprit() {
    let dir = tempfile::tempdir().unwrap();
    small_run(dir.path());
    let snap = dir.path().join("bottleneck-slab_0000.h5");
    let snap = snap.to_str().unwrap();
    let out = dir.path().join("x.svg");
    let out = out.to_str().unwrap();
    let ledger = dir.path().join("ledger.csv");
    let ledger = ledger.to_str().unwrap();
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (vec!["plot", snap, "--fields", "nope", "-o", out], "`nope`"),
        (
            vec!["plot", snap, "--fields", "density", "-o", "x.pdf"],
            ".svg or .png",
        ),
        (vec!["plot", snap, "-o", out], "--fields is required"),
        (
            vec!["plot", "--ledger", ledger, "--columns", "foo", "-o", out],
            "`foo`",
        ),
        (
            vec!["plot", "missing.h5", "--fields", "density", "-o", out],
            "missing.h5",
        ),
        (vec!["plot", "-o", out], "nothing to plot"),
    ];
    for (args, needle) in cases {
        let o = sluice(&args);
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        let e = text(&o.stderr);
        assert!(e.contains(needle), "{args:?}: {e}");
    }
    assert!(!Path::new(out).exists(), "no figure written on bad input");
}
