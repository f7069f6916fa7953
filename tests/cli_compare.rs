//! End-to-end tests of `sluice compare`: a Sluice snapshot against text and HDF5 profiles
//! of "another code", verdicts and exit codes, units, bad input.

mod common;

use common::{problem, sluice, text};
use serde_json::Value;
use sluice_driver::snapshot;
use std::path::{Path, PathBuf};
use std::process::Command;

/// Runs the Sod deck at `n` cells to t = 0.2 s in `dir` and returns the final snapshot.
fn sod_snapshot(dir: &Path, n: usize) -> PathBuf {
    let out = dir.join(format!("sod{n}"));
    let o = sluice(&[
        "run",
        &problem("sod.toml"),
        "--quiet",
        "--out",
        out.to_str().unwrap(),
        "--set",
        &format!("grid.cells={n}"),
        "--set",
        "run.output_interval=0.2",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    out.join("sod_0001.h5")
}

/// (x_face, [(name, values)]) of a snapshot for the given fields.
fn fields_of(snap: &Path, names: &[&str]) -> (Vec<f64>, Vec<(String, Vec<f64>)>) {
    let s = snapshot::read(snap).unwrap();
    let faces = s.dataset("/grid/x_face").unwrap().data.clone();
    let f = names
        .iter()
        .map(|n| {
            (
                n.to_string(),
                s.dataset(&format!("/fields/{n}")).unwrap().data.clone(),
            )
        })
        .collect();
    (faces, f)
}

/// Writes the reference's cells split in two halves of equal value (the reference grid
/// refined 2×, nested) as CSV with cell edges; `perturb(field, cell) -> factor`.
fn write_refined_csv(
    path: &Path,
    faces: &[f64],
    fields: &[(String, Vec<f64>)],
    perturb: impl Fn(&str, usize) -> f64,
) {
    let mut s = String::from("# another code, t = 0.2 s, cell averages along x\n");
    s.push_str("x, x_lo, x_hi");
    for (n, _) in fields {
        s.push_str(&format!(", {n}"));
    }
    s.push('\n');
    for i in 0..faces.len() - 1 {
        let mid = 0.5 * (faces[i] + faces[i + 1]);
        for (lo, hi) in [(faces[i], mid), (mid, faces[i + 1])] {
            s.push_str(&format!("{:e}, {lo:e}, {hi:e}", 0.5 * (lo + hi)));
            for (n, v) in fields {
                s.push_str(&format!(", {:e}", v[i] * perturb(n, i)));
            }
            s.push('\n');
        }
    }
    std::fs::write(path, s).unwrap();
}

fn json_of(o: &std::process::Output) -> Value {
    serde_json::from_str(&text(&o.stdout)).unwrap_or_else(|e| {
        panic!(
            "stdout is not JSON ({e}):\n{}\n{}",
            text(&o.stdout),
            text(&o.stderr)
        )
    })
}

fn field<'a>(v: &'a Value, name: &str) -> &'a Value {
    v["fields"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["field"] == name)
        .unwrap_or_else(|| panic!("no field {name} in {v}"))
}

const FIELDS: [&str; 3] = ["density", "pressure", "velocity_x"];

#[test]
fn snapshot_against_nested_csv_passes_and_a_perturbed_one_fails_naming_the_field() {
    let dir = tempfile::tempdir().unwrap();
    let reference = sod_snapshot(dir.path(), 64);
    let (faces, fields) = fields_of(&reference, &FIELDS);

    // Exactness of the conservative remap: on a 2× nested grid whose halves carry the
    // reference's values, the overlap average of each reference cell is that value
    // (a mean of equal numbers), so every norm of the difference is zero up to rounding.
    let same = dir.path().join("same.csv");
    write_refined_csv(&same, &faces, &fields, |_, _| 1.0);
    let o = sluice(&[
        "compare",
        reference.to_str().unwrap(),
        same.to_str().unwrap(),
        "--edges",
        "x_lo,x_hi",
        "--tolerance",
        "linf:1e-14,velocity_x=abs:linf:1e-14",
        "--json",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let v = json_of(&o);
    assert_eq!(v["pass"], true);
    assert_eq!(v["compared_cells"], 64);
    assert_eq!(v["method"], "conservative");
    for f in FIELDS {
        assert!(field(&v, f)["absolute"]["linf"].as_f64().unwrap() <= 1e-14 * 2.0);
    }
    assert_eq!(v["units"]["density"]["reference"], "g/cm^3");

    // Pressure 5 % high in cells 10..20: the relative L1 error is exactly
    // 0.05 Σ_{10..19} p_i Δx / Σ_all p_i Δx (uniform Δx; definition of the Δx-weighted norm).
    let delta = 0.05;
    let bad = dir.path().join("perturbed.csv");
    write_refined_csv(&bad, &faces, &fields, |n, i| {
        if n == "pressure" && (10..20).contains(&i) {
            1.0 + delta
        } else {
            1.0
        }
    });
    let p = &fields[1].1;
    let expected = delta * p[10..20].iter().sum::<f64>() / p.iter().sum::<f64>();
    assert!(
        expected > 1e-2,
        "the perturbation must exceed the tolerance"
    );
    let o = sluice(&[
        "compare",
        reference.to_str().unwrap(),
        bad.to_str().unwrap(),
        "--edges",
        "x_lo,x_hi",
        "--tolerance",
        "1e-2,velocity_x=abs:l1:1e-12",
        "--json",
    ]);
    assert_eq!(o.status.code(), Some(1), "{}", text(&o.stderr));
    let v = json_of(&o);
    assert_eq!(v["pass"], false);
    let pf = field(&v, "pressure");
    assert_eq!(pf["pass"], false);
    let got = pf["relative"]["l1"].as_f64().unwrap();
    assert!(
        ((got - expected) / expected).abs() < 1e-12,
        "{got} vs {expected}"
    );
    assert_eq!(field(&v, "density")["pass"], true);
    let err = text(&o.stderr);
    assert!(
        err.contains("1 of 3 fields outside tolerance: pressure (rel l1"),
        "{err}"
    );

    // The human table names the failing field and the verdict.
    let o = sluice(&[
        "compare",
        reference.to_str().unwrap(),
        bad.to_str().unwrap(),
        "--edges",
        "x_lo,x_hi",
        "--fields",
        "pressure",
    ]);
    assert_eq!(o.status.code(), Some(1));
    let out = text(&o.stdout);
    assert!(
        out.contains("verdict: FAIL (0 of 1 fields within tolerance)"),
        "{out}"
    );
    assert!(out.contains("pressure"), "{out}");
}

#[test]
fn snapshot_against_an_h5py_file_of_another_code() {
    let dir = tempfile::tempdir().unwrap();
    let reference = sod_snapshot(dir.path(), 64);
    let other = dir.path().join("mycode.h5");
    // Another code's layout: attributes on groups, the density as a (1, 1, N) chunked,
    // gzip-compressed and shuffled array (a line-out kept 3D), the pressure in single
    // precision with a units attribute, the coordinate contiguous float64.
    let script = r#"
import sys, h5py, numpy as np
ref, out = sys.argv[1], sys.argv[2]
with h5py.File(ref, "r") as f:
    x = f["grid/x_center"][:]; rho = f["fields/density"][:]; p = f["fields/pressure"][:]
with h5py.File(out, "w") as g:
    g.attrs["code"] = "mycode"
    d = g.create_group("dump"); d.attrs["time"] = 0.2
    d.create_dataset("x", data=x)
    d.create_dataset("rho", data=rho.reshape(1, 1, -1), chunks=(1, 1, 16),
                     compression="gzip", shuffle=True)
    ds = d.create_dataset("p", data=p.astype(np.float32)); ds.attrs["units"] = "erg/cm^3"
    d.create_dataset("plane", data=np.zeros((4, 4)))
"#;
    let o = Command::new("python3")
        .args([
            "-c",
            script,
            reference.to_str().unwrap(),
            other.to_str().unwrap(),
        ])
        .output()
        .expect("run python3 (h5py is installed by tests/run.sh)");
    assert!(
        o.status.success(),
        "h5py script failed (run the tests with `bash tests/run.sh`, which installs h5py): {}",
        text(&o.stderr)
    );
    let args = |extra: &[&str]| {
        let mut a = vec![
            "compare".to_string(),
            reference.display().to_string(),
            other.display().to_string(),
            "--x-dataset".into(),
            "/dump/x".into(),
        ];
        a.extend(extra.iter().map(|s| s.to_string()));
        a
    };
    let run = |extra: &[&str]| {
        let a = args(extra);
        sluice(&a.iter().map(String::as_str).collect::<Vec<_>>())
    };
    // Density bit-identical through gzip + shuffle: zero error. Pressure rounded to IEEE
    // binary32: relative rounding error at most 2^-24 per value (IEEE 754-2008, round to
    // nearest), so the relative L∞ lies in (0, 2^-24].
    let o = run(&[
        "--dataset",
        "density=/dump/rho",
        "--dataset",
        "pressure=dump/p",
        "--tolerance",
        "density=abs:linf:0,pressure=linf:5.97e-8",
        "--json",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let v = json_of(&o);
    assert_eq!(field(&v, "density")["absolute"]["linf"], 0.0);
    let rel = field(&v, "pressure")["relative"]["linf"].as_f64().unwrap();
    assert!(rel > 0.0 && rel <= 2f64.powi(-24), "{rel}");
    assert_eq!(v["units"]["pressure"]["other"], "erg/cm^3");

    // A 2D dataset, a missing path and a units disagreement are bad input (exit 2).
    let o = run(&["--dataset", "density=/dump/plane"]);
    assert_eq!(o.status.code(), Some(2));
    let e = text(&o.stderr);
    assert!(
        e.contains("`/dump/plane` has shape [4, 4]") && e.contains("allowed"),
        "{e}"
    );
    let o = run(&["--dataset", "density=/dump/nope"]);
    assert_eq!(o.status.code(), Some(2));
    let e = text(&o.stderr);
    assert!(
        e.contains("no dataset `/dump/nope`") && e.contains("/dump/rho, /dump/x"),
        "{e}"
    );
    let o = run(&["--dataset", "pressure=/dump/p", "--units", "pressure=Pa"]);
    assert_eq!(o.status.code(), Some(2));
    let e = text(&o.stderr);
    assert!(
        e.contains("OTHER") && e.contains("`Pa`") && e.contains("--scale pressure="),
        "{e}"
    );
    // Pa = 10 erg/cm^3: with the stated scale the values (here already cgs, so scaled 10×
    // too high) fail by a relative error of 9.
    let o = run(&[
        "--dataset",
        "pressure=/dump/p",
        "--units",
        "pressure=Pa",
        "--scale",
        "pressure=10",
        "--json",
    ]);
    assert_eq!(o.status.code(), Some(1));
    let rel = field(&json_of(&o), "pressure")["relative"]["l1"]
        .as_f64()
        .unwrap();
    assert!((rel - 9.0).abs() < 1e-6, "{rel}");
}

#[test]
fn units_scale_headerless_columns_and_point_samples() {
    let dir = tempfile::tempdir().unwrap();
    let reference = sod_snapshot(dir.path(), 64);
    let (faces, fields) = fields_of(&reference, &["density"]);
    // Headerless whitespace columns: SI density (kg/m^3 = 1e-3 g/cm^3 × 1e6 / 1e3, i.e.
    // 1 g/cm^3 = 1000 kg/m^3) and x in metres (1 m = 100 cm), point samples at the centres.
    let mut s = String::new();
    for i in 0..faces.len() - 1 {
        let x = 0.5 * (faces[i] + faces[i + 1]);
        s.push_str(&format!(
            "{} {:e} {:e}\n",
            i,
            x / 100.0,
            fields[0].1[i] * 1000.0
        ));
    }
    let other = dir.path().join("si.txt");
    std::fs::write(&other, s).unwrap();
    let base = |extra: &[&str]| {
        let mut a = vec![
            "compare",
            reference.to_str().unwrap(),
            other.to_str().unwrap(),
            "--columns",
            "x=2,density=3",
            "--sampling",
            "point",
        ];
        a.extend_from_slice(extra);
        sluice(&a)
    };
    let o = base(&["--units", "density=kg/m^3"]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(text(&o.stderr).contains("nothing is converted silently"));
    // Scaled back: linear interpolation at the reference centres hits the samples exactly
    // (up to the rounding of the two factors).
    let o = base(&[
        "--units",
        "density=kg/m^3,x=m",
        "--scale",
        "density=1e-3,x=100",
        "--tolerance",
        "linf:1e-13",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let out = text(&o.stdout);
    assert!(out.contains("remap: linear"), "{out}");
    assert!(out.contains("density [g/cm^3] (OTHER × 1e-3)"), "{out}");
    assert!(out.contains("verdict: PASS"), "{out}");
}

#[test]
fn overlay_plot_is_written_as_svg() {
    let dir = tempfile::tempdir().unwrap();
    let reference = sod_snapshot(dir.path(), 64);
    let other = sod_snapshot(dir.path(), 128);
    let svg = dir.path().join("overlay.svg");
    let o = sluice(&[
        "compare",
        reference.to_str().unwrap(),
        other.to_str().unwrap(),
        "--fields",
        "density,pressure",
        "--tolerance",
        "2e-2",
        "--plot",
        svg.to_str().unwrap(),
    ]);
    // The 128-cell run differs from the 64-cell one by the 64-cell run's truncation error:
    // relative L1 ≈ 8e-3 (density) and 7e-3 (pressure), below 2e-2.
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let s = std::fs::read_to_string(&svg).unwrap();
    assert!(s.starts_with("<svg") && s.trim_end().ends_with("</svg>"));
    // Per field: reference and other overlaid, the difference below; units of the reference.
    for label in [
        "density: pass",
        "density: other − reference",
        "pressure: pass",
        "pressure [erg/cm^3]",
        "x [cm]",
        "reference ",
        " remap)",
    ] {
        assert!(s.contains(label), "SVG lacks `{label}`");
    }
    // The solid reference curve has one vertex per compared cell (64).
    let solid = s
        .split("<polyline")
        .filter(|t| t.contains("stroke-width=\"2\""))
        .map(|t| {
            t.split("points=\"")
                .nth(1)
                .unwrap_or("")
                .split('"')
                .next()
                .unwrap()
                .split_whitespace()
                .count()
        })
        .filter(|&n| n == 64)
        .count();
    assert!(
        solid >= 4,
        "reference and difference curves of both fields: {solid}"
    );
    assert!(text(&o.stdout).contains("overlay plot:"));
}

#[test]
fn bad_input_names_the_flag_the_value_and_what_is_allowed() {
    let dir = tempfile::tempdir().unwrap();
    let reference = sod_snapshot(dir.path(), 32);
    let other = dir.path().join("o.csv");
    std::fs::write(&other, "x,density\n0.625,0.125\n0.875,0.125\n").unwrap();
    let r = reference.to_str().unwrap();
    let o_ = other.to_str().unwrap();
    let cases: &[(&[&str], &[&str])] = &[
        (
            &["--columns", "x=0,density=2"],
            &["`columns` = `x=0,density=2`", "column numbers start at 1"],
        ),
        (
            &["--columns", "x1,density=2"],
            &["`columns`", "NAME=COLUMN", "`x1` has no `=`"],
        ),
        (
            &["--tolerance", "l3:1e-2"],
            &["`tolerance` = `l3:1e-2`", "`l1`, `l2` or `linf`", "`l3`"],
        ),
        (
            &["--tolerance", "1e-2,2e-2"],
            &["`tolerance`", "at most one global tolerance"],
        ),
        (
            &["--tolerance", "rel:l1:-1"],
            &["`tolerance`", "finite number >= 0", "`-1`"],
        ),
        (
            &["--scale", "density=abc"],
            &["`--scale` entry `density=abc`", "finite non-zero"],
        ),
        (
            &["--sampling", "nodal"],
            &["`--sampling` = `nodal`", "`point`"],
        ),
        (&["--fields", "entropy"], &["no field `entropy`", "density"]),
        (&["--x-dataset", "/x"], &["not an HDF5 file", "--x-dataset"]),
        (
            &["--coverage", "some"],
            &["`coverage` = `some`", "`overlap`"],
        ),
    ];
    for (extra, wanted) in cases {
        let mut a = vec!["compare", r, o_];
        a.extend_from_slice(extra);
        let o = sluice(&a);
        let e = text(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{extra:?}: {e}");
        for w in *wanted {
            assert!(e.contains(w), "{extra:?}: `{w}` not in: {e}");
        }
    }
    // OTHER covering only part of the reference: strict coverage names the uncovered range.
    let o = sluice(&["compare", r, o_]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("uncovered"), "{}", text(&o.stderr));
}

/// `sluice compare` against the exact Sod solution (Toro 2009, Riemann Solvers and Numerical
/// Methods for Fluid Dynamics, 3rd ed., ch. 4, Test 1), exported as cell averages on a grid
/// refined 2× by the independent solver of crates/verify, agrees with the error `sluice
/// converge` measures against its own exact cell averages (the conservative remap of nested
/// cell averages is their exact average). The two quadratures differ only in the few cells
/// holding a discontinuity, hence the 1 % agreement bound.
#[test]
fn compare_against_the_exact_solution_agrees_with_converge() {
    use sluice_verify::mhd_checks::exact_riemann::{EulerState, ExactRiemann};
    let dir = tempfile::tempdir().unwrap();
    let reference = sod_snapshot(dir.path(), 128);
    let ex = ExactRiemann::solve(
        EulerState {
            rho: 1.0,
            u: 0.0,
            p: 1.0,
        },
        EulerState {
            rho: 0.125,
            u: 0.0,
            p: 0.1,
        },
        1.4,
    )
    .unwrap();
    let n = 256;
    let mut s = String::from("x_lo x_hi x density\n");
    for i in 0..n {
        let (a, b) = (i as f64 / n as f64, (i + 1) as f64 / n as f64);
        let rho = ex.cell_average_density(a, b, 0.5, 0.2);
        s.push_str(&format!("{a:e} {b:e} {:e} {rho:e}\n", 0.5 * (a + b)));
    }
    let exact = dir.path().join("exact.txt");
    std::fs::write(&exact, s).unwrap();
    // The run is the reference grid (128 cells), the exact profile is OTHER.
    let o = sluice(&[
        "compare",
        reference.to_str().unwrap(),
        exact.to_str().unwrap(),
        "--edges",
        "x_lo,x_hi",
        "--fields",
        "density",
        "--tolerance",
        "abs:l1:5e-3",
        "--json",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let l1 = field(&json_of(&o), "density")["absolute"]["l1"]
        .as_f64()
        .unwrap();
    let o = sluice(&[
        "converge",
        &problem("sod.toml"),
        "--resolutions",
        "64,128",
        "--fields",
        "density",
        "--json",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let v = json_of(&o);
    let conv = v["series"][0]["rows"][1]["error"].as_f64().unwrap();
    assert!(
        ((l1 - conv) / conv).abs() < 1e-2,
        "compare {l1} vs converge {conv}"
    );
    // The level is that of a second-order shock-capturing scheme: below the bound of
    // `sluice verify` (3e-3 at N = 400) scaled to first order, 3e-3 × 400/128.
    assert!(l1 < 3e-3 * 400.0 / 128.0, "{l1}");
}
