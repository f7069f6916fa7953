//! End-to-end checks of compare and convergence against analytic expectations.

use sluice_analysis::*;
use std::f64::consts::PI;

/// Exact cell averages of sin(2πx) on `edges`: (cos 2πa − cos 2πb) / (2π (b − a)).
fn sin_averages(edges: &[f64]) -> Vec<f64> {
    edges
        .windows(2)
        .map(|w| ((2.0 * PI * w[0]).cos() - (2.0 * PI * w[1]).cos()) / (2.0 * PI * (w[1] - w[0])))
        .collect()
}

/// Exact cell averages of g(x) = 1 + cos(2πx)/2 (positive, mean 1 over [0, 1]).
fn g_averages(edges: &[f64]) -> Vec<f64> {
    edges
        .windows(2)
        .map(|w| {
            1.0 + ((2.0 * PI * w[1]).sin() - (2.0 * PI * w[0]).sin()) / (4.0 * PI * (w[1] - w[0]))
        })
        .collect()
}

/// Reference (exact averages of sin) and OTHER (plus C h^p g) on N cells of [0, 1].
fn perturbed_pair(n: usize, c: f64, p: i32) -> (Profile, Profile) {
    let grid = Profile::uniform("reference", Sampling::CellAverage, 0.0, 1.0, n).unwrap();
    let edges = grid.cell_edges().unwrap();
    let exact = sin_averages(&edges);
    let h = 1.0 / n as f64;
    let pert: Vec<f64> = exact
        .iter()
        .zip(g_averages(&edges))
        .map(|(u, g)| u + c * h.powi(p) * g)
        .collect();
    let reference = grid.clone().with_field("density", exact).unwrap();
    let other = Profile::new(
        "other",
        Sampling::CellAverage,
        grid.centres().to_vec(),
        Some(edges),
    )
    .unwrap()
    .with_field("density", pert)
    .unwrap();
    (reference, other)
}

#[test]
fn first_and_second_order_perturbations_give_orders_one_and_two() {
    // OTHER = exact + C h^p ḡ with ḡ > 0 of mean 1, so the L1 error is C h^p exactly and the
    // observed order is p (common practice: method of manufactured errors).
    for p in [1, 2] {
        let points: Vec<(usize, f64)> = [32, 64, 128, 256, 512]
            .iter()
            .map(|&n| {
                let (r, o) = perturbed_pair(n, 0.3, p);
                let rep = compare(&r, &o, &CompareOptions::default()).unwrap();
                let err = rep.fields[0].absolute.l1;
                assert!((err - 0.3 / (n as f64).powi(p)).abs() < 1e-12, "{err}");
                (n, err)
            })
            .collect();
        let s = convergence_series("density (l1)", &points).unwrap();
        for row in &s.rows[1..] {
            assert!((row.order.unwrap() - p as f64).abs() < 1e-3, "{row:?}");
        }
        assert!((s.fitted_order.unwrap() - p as f64).abs() < 1e-3);
        assert_eq!(
            s.clone().with_expected_order(p as f64, 0.1).pass,
            Some(true)
        );
        assert_eq!(s.with_expected_order(p as f64 + 1.0, 0.1).pass, Some(false));
    }
}

#[test]
fn l2_and_linf_orders_of_a_second_order_perturbation() {
    // The L2 and L∞ norms of ḡ change with N only by O(h²), so their orders approach 2.
    let points = |norm: Norm| -> Vec<(usize, f64)> {
        [64, 128, 256, 512]
            .iter()
            .map(|&n| {
                let (r, o) = perturbed_pair(n, 1.0, 2);
                let rep = compare(&r, &o, &CompareOptions::default()).unwrap();
                (n, rep.fields[0].absolute.get(norm))
            })
            .collect()
    };
    for norm in [Norm::L2, Norm::Linf] {
        let s = convergence_series(norm.name(), &points(norm)).unwrap();
        assert!(
            (s.fitted_order.unwrap() - 2.0).abs() < 1e-3,
            "{norm:?} {s:?}"
        );
    }
}

#[test]
fn relative_norms_tolerances_and_verdict() {
    let grid = Profile::uniform("ref.h5", Sampling::CellAverage, 0.0, 2.0, 8).unwrap();
    let rho: Vec<f64> = (0..8).map(|i| 1.0 + i as f64).collect();
    let reference = grid
        .clone()
        .with_field("density", rho.clone())
        .unwrap()
        .with_field("velocity", vec![0.0; 8])
        .unwrap()
        .with_field("only_in_reference", vec![1.0; 8])
        .unwrap();
    // OTHER: density 0.5 % high everywhere, velocity 1e-9 everywhere.
    let other = Profile::uniform("other.csv", Sampling::CellAverage, 0.0, 2.0, 8)
        .unwrap()
        .with_field("velocity", vec![1e-9; 8])
        .unwrap()
        .with_field("density", rho.iter().map(|r| r * 1.005).collect())
        .unwrap();
    let rep = compare(&reference, &other, &CompareOptions::default()).unwrap();
    // Fields in common, in the reference's order.
    let names: Vec<&str> = rep.fields.iter().map(|f| f.field.as_str()).collect();
    assert_eq!(names, vec!["density", "velocity"]);
    let d = &rep.fields[0];
    // Weighted mean of |0.005 ρ| with equal widths: 0.005 × mean(1..8) = 0.0225.
    assert!((d.absolute.l1 - 0.0225).abs() < 1e-15);
    assert!((d.absolute.linf - 0.04).abs() < 1e-15);
    let l2_ref = ((1..=8).map(|i| (i * i) as f64).sum::<f64>() / 8.0).sqrt();
    assert!((d.reference_norms.l2 - l2_ref).abs() < 1e-13);
    for norm in Norm::ALL {
        assert!(
            (d.relative.get(norm).unwrap() - 0.005).abs() < 1e-15,
            "{norm:?}"
        );
    }
    assert!(d.pass);
    // Velocity: zero reference → relative undefined → fail with a note.
    let v = &rep.fields[1];
    assert_eq!(v.relative.l1, None);
    assert!(!v.pass);
    assert!(v.note.as_ref().unwrap().contains("velocity=abs:l1:1e-8"));
    assert!(!rep.pass);
    // Per-field absolute tolerance fixes it; a tighter density tolerance fails it.
    let mut opts = CompareOptions {
        field_tolerances: parse_field_tolerances("velocity=abs:linf:1e-8").unwrap(),
        ..CompareOptions::default()
    };
    let rep = compare(&reference, &other, &opts).unwrap();
    assert!(rep.pass, "{}", rep.to_table());
    opts.tolerance = "linf:1e-3".parse().unwrap();
    let rep = compare(&reference, &other, &opts).unwrap();
    assert!(!rep.fields[0].pass);
    assert_eq!(rep.fields[0].checked, rep.fields[0].relative.linf);
    assert!(!rep.pass);
    // Explicit field list with a missing field.
    opts.fields = Some(vec!["density".into(), "only_in_reference".into()]);
    let e = compare(&reference, &other, &opts).unwrap_err().to_string();
    assert_eq!(
        e,
        "other.csv: no field `only_in_reference`; available fields: velocity, density"
    );
    // A per-field tolerance for a field not compared is an error.
    let opts = CompareOptions {
        fields: Some(vec!["density".into()]),
        field_tolerances: parse_field_tolerances("pressure=1e-3").unwrap(),
        ..CompareOptions::default()
    };
    let e = compare(&reference, &other, &opts).unwrap_err().to_string();
    assert_eq!(
        e,
        "invalid `field tolerances` = `pressure`: one of the compared fields: density"
    );
}

#[test]
fn point_samples_are_interpolated_and_weighted_by_the_reference_cells() {
    // OTHER: a linear function sampled at 5 irregular points; linear interpolation onto the
    // reference cell centres is exact, so every norm vanishes to round-off.
    let xs = vec![0.0, 0.1, 0.45, 0.8, 1.0];
    let other = Profile::new("pts.csv", Sampling::PointSample, xs.clone(), None)
        .unwrap()
        .with_field("p", xs.iter().map(|x| 3.0 * x - 1.0).collect())
        .unwrap();
    let grid = Profile::uniform("ref", Sampling::CellAverage, 0.0, 1.0, 10).unwrap();
    let p_ref = grid.centres().iter().map(|x| 3.0 * x - 1.0).collect();
    let reference = grid.with_field("p", p_ref).unwrap();
    let rep = compare(&reference, &other, &CompareOptions::default()).unwrap();
    assert_eq!(rep.method, RemapMethod::Linear);
    assert!(rep.fields[0].absolute.linf < 1e-15, "{:?}", rep.fields[0]);
    assert!(rep.pass);
}

#[test]
fn overlap_comparison_reports_the_compared_range() {
    let (reference, _) = perturbed_pair(16, 0.0, 1);
    let part = Profile::uniform("part", Sampling::CellAverage, 0.25, 0.75, 8).unwrap();
    let vals = sin_averages(&part.cell_edges().unwrap());
    let part = part.with_field("density", vals).unwrap();
    assert!(matches!(
        compare(&reference, &part, &CompareOptions::default()),
        Err(AnalysisError::Uncovered { .. })
    ));
    let opts = CompareOptions {
        coverage: Coverage::Overlap,
        ..CompareOptions::default()
    };
    let rep = compare(&reference, &part, &opts).unwrap();
    assert_eq!(rep.compared_cells, 8);
    assert_eq!(rep.reference_cells, 16);
    assert_eq!(rep.compared_range, [0.28125, 0.71875]);
    // Nested grids: the conservative remap reproduces the exact averages.
    assert!(rep.fields[0].absolute.linf < 1e-15);
}

#[test]
fn self_convergence_recovers_the_order_and_the_richardson_estimate_is_exact() {
    // u_N = exact averages + C h^p ḡ on nested grids: restriction by cell averaging is exact,
    // so d_i = C (1 − 2^-p) h_i^p (L1 of ḡ is 1), the order is p, and the Richardson estimate
    // d_last / (2^p − 1) equals the true L1 error C h_finest^p of the finest run.
    for p in [1, 2] {
        let c = 0.7;
        let ns = [32usize, 64, 128, 256];
        let profiles: Vec<Profile> = ns.iter().map(|&n| perturbed_pair(n, c, p).1).collect();
        let s = self_convergence(&profiles, "density", Norm::L1).unwrap();
        assert_eq!(s.kind, ConvergenceKind::SelfConvergence);
        assert_eq!(s.rows.len(), 3);
        for row in &s.rows[1..] {
            assert!((row.order.unwrap() - p as f64).abs() < 1e-9, "{row:?}");
        }
        let d0 = c * (1.0 - 0.5f64.powi(p)) / 32f64.powi(p);
        assert!((s.rows[0].error - d0).abs() < 1e-13 * d0.max(1.0));
        let finest = c / 256f64.powi(p);
        let est = s.richardson_error_estimate.unwrap();
        assert!((est - finest).abs() < 1e-6 * finest, "{est} vs {finest}");
    }
}

#[test]
fn self_convergence_rejects_bad_series() {
    let ps: Vec<Profile> = [16usize, 32]
        .iter()
        .map(|&n| perturbed_pair(n, 1.0, 1).1)
        .collect();
    let e = self_convergence(&ps, "density", Norm::L1)
        .unwrap_err()
        .to_string();
    assert!(e.contains("needs at least 3"), "{e}");
    let ps: Vec<Profile> = [16usize, 32, 96]
        .iter()
        .map(|&n| perturbed_pair(n, 1.0, 1).1)
        .collect();
    let e = self_convergence(&ps, "density", Norm::L1)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("refinement ratio 3 from N = 32 to N = 96 differs"),
        "{e}"
    );
    let ps: Vec<Profile> = [32usize, 16, 8]
        .iter()
        .map(|&n| perturbed_pair(n, 1.0, 1).1)
        .collect();
    let e = self_convergence(&ps, "density", Norm::L1)
        .unwrap_err()
        .to_string();
    assert!(e.contains("order the profiles from coarse to fine"), "{e}");
    let ps: Vec<Profile> = [8usize, 16, 32]
        .iter()
        .map(|&n| perturbed_pair(n, 1.0, 1).1)
        .collect();
    let e = self_convergence(&ps, "pressure", Norm::L1)
        .unwrap_err()
        .to_string();
    assert!(e.contains("no field `pressure`"), "{e}");
}

#[test]
fn convergence_series_orders_and_validation() {
    // e = 3 N^-1.5 exactly: every pairwise order and the fit are 1.5.
    let pts: Vec<(usize, f64)> = [10usize, 20, 40, 80]
        .iter()
        .map(|&n| (n, 3.0 * (n as f64).powf(-1.5)))
        .collect();
    let s = convergence_series("x", &pts).unwrap();
    assert_eq!(s.rows[0].order, None);
    assert!(s.rows[1..]
        .iter()
        .all(|r| (r.order.unwrap() - 1.5).abs() < 1e-12));
    assert!((s.fitted_order.unwrap() - 1.5).abs() < 1e-12);
    // Least squares of ln e on ln N by hand: points (ln 1, 0), (ln 2, -ln 2), (ln 4, -ln 16)
    // give slope −(Σ dx dy)/(Σ dx²) with x̄ = ln 2, ȳ = −5 ln2 /3: dx = (−1, 0, 1) ln2,
    // dy = (5/3, 2/3, −7/3) ln2 → slope = −4 ln²2 / (2 ln²2) = −2, order 2.
    let s = convergence_series("fit", &[(1, 1.0), (2, 0.5), (4, 1.0 / 16.0)]).unwrap();
    assert!((s.fitted_order.unwrap() - 2.0).abs() < 1e-12);
    assert!((s.rows[1].order.unwrap() - 1.0).abs() < 1e-12);
    assert!((s.rows[2].order.unwrap() - 3.0).abs() < 1e-12);
    // Zero error: order undefined, not a panic or an infinity.
    let s = convergence_series("z", &[(8, 1e-3), (16, 0.0)]).unwrap();
    assert_eq!(s.rows[1].order, None);
    assert_eq!(s.fitted_order, None);
    assert_eq!(s.with_expected_order(1.0, 0.1).pass, Some(false));
    let e = |p: &[(usize, f64)]| convergence_series("d", p).unwrap_err().to_string();
    assert!(e(&[(8, 1.0)]).contains("1 resolution(s): an order needs at least 2"));
    assert!(e(&[(8, 1.0), (8, 0.5)]).contains("N = 8 follows N = 8"));
    assert!(e(&[(0, 1.0), (8, 0.5)]).contains("N = 0"));
    assert!(e(&[(4, f64::NAN), (8, 0.5)]).contains("error NaN at N = 4"));
    assert!(e(&[(4, -1.0), (8, 0.5)]).contains("finite and >= 0"));
}

#[test]
fn reports_render_as_aligned_tables_and_round_trip_through_json() {
    let (r, o) = perturbed_pair(16, 0.01, 2);
    let rep = compare(&r, &o, &CompareOptions::default()).unwrap();
    let table = rep.to_table();
    assert!(
        table.contains("verdict: PASS (1 of 1 fields within tolerance)"),
        "{table}"
    );
    let lines: Vec<&str> = table
        .lines()
        .filter(|l| {
            l.contains(" l1 ")
                || l.contains(" l2 ")
                || l.contains(" linf ")
                || l.starts_with("field")
        })
        .collect();
    assert_eq!(lines.len(), 4, "{table}");
    // Columns aligned: the `norm` column starts at the same offset on every row.
    let col = lines[0].find("norm").unwrap();
    for l in &lines[1..] {
        assert!(l[col..].starts_with('l'), "{table}");
    }
    assert!(
        lines[1].contains("rel <= 1.000e-2") && lines[1].ends_with("yes"),
        "{table}"
    );
    let json = rep.to_json();
    // serde_json parses floats to within one ulp: compare the re-serialised text and the
    // structure instead of bit-exact floats.
    let back: CompareReport = serde_json::from_str(&json).unwrap();
    assert_eq!(back.fields[0].field, rep.fields[0].field);
    assert_eq!(back.fields[0].tolerance, rep.fields[0].tolerance);
    assert!(
        (back.fields[0].absolute.l2 - rep.fields[0].absolute.l2).abs()
            <= 1e-15 * rep.fields[0].absolute.l2
    );
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert_eq!(v["fields"][0]["field"], "density");
    assert_eq!(v["fields"][0]["tolerance"]["norm"], "l1");
    assert_eq!(v["fields"][0]["tolerance"]["kind"], "relative");
    assert_eq!(v["method"], "conservative");
    assert_eq!(v["pass"], true);

    let s = convergence_series("density (l1)", &[(64, 4e-3), (128, 1e-3), (256, 2.5e-4)])
        .unwrap()
        .with_expected_order(2.0, 0.1);
    let cr = ConvergenceReport::new(vec![s]);
    let t = cr.to_table();
    assert!(
        t.contains("fitted order 2.000 (expected >= 1.900: pass)"),
        "{t}"
    );
    assert!(t.contains("verdict: PASS"), "{t}");
    let back: ConvergenceReport = serde_json::from_str(&cr.to_json()).unwrap();
    assert_eq!(back, cr);
}

#[test]
fn tolerance_syntax() {
    let t: Tolerance = "abs:linf:1e-6".parse().unwrap();
    assert_eq!(
        t,
        Tolerance {
            value: 1e-6,
            norm: Norm::Linf,
            kind: ToleranceKind::Absolute
        }
    );
    assert_eq!("1e-2".parse::<Tolerance>().unwrap(), Tolerance::default());
    assert_eq!("l2:0.5".parse::<Tolerance>().unwrap().norm, Norm::L2);
    let e = |s: &str| s.parse::<Tolerance>().unwrap_err().to_string();
    assert_eq!(
        e("-1"),
        "invalid `tolerance` = `-1`: a finite number >= 0 as the bound, found `-1`"
    );
    assert!(e("l3:1").contains("norm `l1`, `l2` or `linf`, found `l3`"));
    assert!(e("pct:l1:1").contains("kind `rel` or `abs`, found `pct`"));
    assert!(e("a:b:c:d").contains("VALUE, NORM:VALUE or KIND:NORM:VALUE"));
    assert!(parse_field_tolerances("density")
        .unwrap_err()
        .to_string()
        .contains("has no `=`"));
    assert!(parse_field_tolerances("d=1,d=2")
        .unwrap_err()
        .to_string()
        .contains("named once"));
    assert_eq!(t.to_string(), "abs:linf:1e-6");
}

#[test]
fn remap_accuracy_on_non_nested_grids() {
    // Exact averages of sin(2πx) on OTHER with 3N/2 cells, remapped onto N reference cells.
    // The piecewise-constant overlap average is first order on non-nested grids (the partial
    // overlaps at the two ends of each reference cell err by O(h) each); the unlimited linear
    // reconstruction is at least second order (common practice); on this 3:2 grid pair the
    // quadratic reconstruction errors of complementary partial overlaps cancel between
    // neighbouring reference cells and 3.00 is observed. Fitted orders from N = 32 to 512.
    let mut pts_const = Vec::new();
    let mut pts_lin = Vec::new();
    for n in [32usize, 64, 128, 256, 512] {
        let reference = Profile::uniform("r", Sampling::CellAverage, 0.0, 1.0, n).unwrap();
        let exact = sin_averages(&reference.cell_edges().unwrap());
        let reference = reference.with_field("u", exact).unwrap();
        let other = Profile::uniform("o", Sampling::CellAverage, 0.0, 1.0, 3 * n / 2).unwrap();
        let vals = sin_averages(&other.cell_edges().unwrap());
        let other = other.with_field("u", vals).unwrap();
        for (method, pts) in [
            (RemapMethod::Conservative, &mut pts_const),
            (RemapMethod::ConservativeLinear, &mut pts_lin),
        ] {
            let opts = CompareOptions {
                method: Some(method),
                ..CompareOptions::default()
            };
            let rep = compare(&reference, &other, &opts).unwrap();
            pts.push((n, rep.fields[0].absolute.l1));
        }
    }
    let p_const = convergence_series("constant", &pts_const)
        .unwrap()
        .fitted_order
        .unwrap();
    let p_lin = convergence_series("linear", &pts_lin)
        .unwrap()
        .fitted_order
        .unwrap();
    assert!((p_const - 1.0).abs() < 0.01, "{p_const}");
    assert!(p_lin > 1.95, "{p_lin}");
    // Linear reconstruction is far more accurate at every resolution.
    for (c, l) in pts_const.iter().zip(&pts_lin) {
        assert!(l.1 < 0.1 * c.1, "{c:?} {l:?}");
    }
}

#[test]
fn text_files_round_trip_through_the_reader_into_a_comparison() {
    // Reference and OTHER written to disk as a 3D code would export them: OTHER is the same
    // profile on a grid refined 2x, with cell edges, as CSV; the reference is whitespace
    // columns with a `#` header. Nested grids and exact averages: every norm is round-off.
    let dir = std::env::temp_dir().join(format!("sluice-analysis-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let mut reference = String::from("# Sluice reference\n# x density\n");
    let re: Vec<f64> = (0..=8).map(|i| i as f64 / 8.0).collect();
    for (w, u) in re.windows(2).zip(sin_averages(&re)) {
        reference.push_str(&format!("{:.17e} {u:.17e}\n", 0.5 * (w[0] + w[1])));
    }
    let mut other = String::from("x,x_lo,x_hi,density\n");
    let oe: Vec<f64> = (0..=16).map(|i| i as f64 / 16.0).collect();
    for (w, u) in oe.windows(2).zip(sin_averages(&oe)) {
        other.push_str(&format!(
            "{:.17e},{:.17e},{:.17e},{u:.17e}\n",
            0.5 * (w[0] + w[1]),
            w[0],
            w[1]
        ));
    }
    let (rp, op) = (dir.join("reference.dat"), dir.join("other.csv"));
    std::fs::write(&rp, reference).unwrap();
    std::fs::write(&op, other).unwrap();
    let r = read_profile(&rp, &ReadOptions::default()).unwrap();
    let o = read_profile(
        &op,
        &ReadOptions {
            edges: Some(("x_lo".into(), "x_hi".into())),
            ..ReadOptions::default()
        },
    )
    .unwrap();
    let rep = compare(&r, &o, &CompareOptions::default()).unwrap();
    std::fs::remove_dir_all(&dir).unwrap();
    assert_eq!(rep.compared_cells, 8);
    assert!(rep.fields[0].absolute.linf < 1e-15, "{}", rep.to_table());
    assert!(rep.pass);
}

#[test]
fn linear_interpolation_of_point_samples_converges_at_second_order() {
    // OTHER: sin(2πx) sampled at N+1 points including both ends; reference: the exact
    // function at the centres of 1000 cells (point samples). The interpolation error is
    // h²|f''|/8 at most (common practice), so the L∞ error converges at order 2.
    let reference = Profile::uniform("exact", Sampling::PointSample, 0.0, 1.0, 1000).unwrap();
    let exact = reference
        .centres()
        .iter()
        .map(|x| (2.0 * PI * x).sin())
        .collect();
    let reference = reference.with_field("u", exact).unwrap();
    let pts: Vec<(usize, f64)> = [16usize, 32, 64, 128]
        .iter()
        .map(|&n| {
            let xs: Vec<f64> = (0..=n).map(|i| i as f64 / n as f64).collect();
            let us = xs.iter().map(|x| (2.0 * PI * x).sin()).collect();
            let other = Profile::new("pts", Sampling::PointSample, xs, None)
                .unwrap()
                .with_field("u", us)
                .unwrap();
            let rep = compare(&reference, &other, &CompareOptions::default()).unwrap();
            let linf = rep.fields[0].absolute.linf;
            let bound = (2.0 * PI).powi(2) / (8.0 * (n * n) as f64);
            assert!(linf <= bound && linf > 0.5 * bound, "{linf} vs {bound}");
            (n, linf)
        })
        .collect();
    let p = convergence_series("u (linf)", &pts)
        .unwrap()
        .fitted_order
        .unwrap();
    assert!((p - 2.0).abs() < 0.02, "{p}");
}

#[test]
fn single_cell_comparison() {
    let one = |v: f64, name: &str| {
        Profile::new(name, Sampling::CellAverage, vec![0.5], Some(vec![0.0, 1.0]))
            .unwrap()
            .with_field("density", vec![v])
            .unwrap()
    };
    let rep = compare(&one(2.0, "r"), &one(2.01, "o"), &CompareOptions::default()).unwrap();
    assert_eq!(rep.compared_cells, 1);
    let f = &rep.fields[0];
    assert!((f.absolute.l1 - 0.01).abs() < 1e-15 && (f.absolute.linf - 0.01).abs() < 1e-15);
    assert!((f.relative.l2.unwrap() - 0.005).abs() < 1e-15);
    assert!(rep.pass);
}

/// A small deterministic generator (Knuth's MMIX LCG constants, from memory).
struct Lcg(u64);
impl Lcg {
    fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        self.0 >> 33
    }
}

#[test]
fn garbage_input_gives_errors_not_panics() {
    // Text assembled from fragments that exercise every branch of the reader; each parse must
    // return (Ok or Err), and every error message must name the source.
    let pieces = [
        "x", "density", ",", " ", "\t", "#", "\n", "1", "-2.5e3", "nan", "inf", "1D4", "\"",
        "x_lo", "=", "0", "abc", ",,", "\n\n", "1e999",
    ];
    let mut rng = Lcg(12345);
    let options = [
        ReadOptions::default(),
        ReadOptions {
            columns: Some(parse_column_map("x=1,density=2").unwrap()),
            sort: true,
            sampling: Sampling::PointSample,
            ..ReadOptions::default()
        },
        ReadOptions {
            edges: Some(("x_lo".into(), "density".into())),
            ..ReadOptions::default()
        },
    ];
    let mut ok = 0;
    for _ in 0..3000 {
        let len = 1 + rng.next() % 40;
        let text: String = (0..len)
            .map(|_| pieces[(rng.next() % pieces.len() as u64) as usize])
            .collect();
        for opts in &options {
            match parse_profile(&text, "fuzz.txt", opts) {
                Ok(p) => {
                    ok += 1;
                    assert!(p.centres().windows(2).all(|w| w[0] < w[1]));
                    let _ = compare(&p, &p, &CompareOptions::default());
                }
                Err(e) => assert!(e.to_string().contains("fuzz.txt"), "{e}"),
            }
        }
    }
    assert!(ok > 0, "no generated input parsed at all");
}

#[test]
fn combined_tolerance_option_and_field_list() {
    let (g, f) = parse_tolerances("linf:5e-2, velocity=abs:l1:10").unwrap();
    assert_eq!(g, Some("linf:5e-2".parse().unwrap()));
    assert_eq!(f["velocity"], "abs:l1:10".parse().unwrap());
    let (g, f) = parse_tolerances("density=1e-3").unwrap();
    assert_eq!(g, None);
    assert_eq!(f["density"].value, 1e-3);
    assert!(parse_tolerances("1e-2,1e-3")
        .unwrap_err()
        .to_string()
        .contains("at most one global tolerance"));
    assert!(parse_tolerances("x")
        .unwrap_err()
        .to_string()
        .contains("a finite number >= 0"));
    assert_eq!(
        parse_field_list("density, cr_energy_density").unwrap(),
        vec!["density", "cr_energy_density"]
    );
    let e = parse_field_list("density,,x").unwrap_err().to_string();
    assert!(e.starts_with("invalid `fields` = `density,,x`"), "{e}");
    assert!(parse_field_list("a,a").is_err());
}

#[test]
fn a_shock_displaced_by_one_cell_costs_the_jump_in_linf_and_jump_over_n_in_l1() {
    // Step from 4 to 1 (a compression ratio of 4) at x = 1/2 in the reference and one cell
    // later in OTHER: the difference is the jump 3 in exactly one cell of width 1/N.
    for n in [16usize, 64, 256] {
        let grid = Profile::uniform("ref", Sampling::CellAverage, 0.0, 1.0, n).unwrap();
        let step = |shift: usize| -> Vec<f64> {
            (0..n)
                .map(|i| if i < n / 2 + shift { 4.0 } else { 1.0 })
                .collect()
        };
        let reference = grid.clone().with_field("density", step(0)).unwrap();
        let other = grid.with_field("density", step(1)).unwrap();
        let rep = compare(&reference, &other, &CompareOptions::default()).unwrap();
        let a = rep.fields[0].absolute;
        assert!((a.linf - 3.0).abs() < 1e-15);
        assert!((a.l1 - 3.0 / n as f64).abs() < 1e-14, "{a:?}");
        assert!((a.l2 - 3.0 / (n as f64).sqrt()).abs() < 1e-13, "{a:?}");
        // Mean density 2.5: relative L1 = 1.2/N.
        assert!((rep.fields[0].relative.l1.unwrap() - 1.2 / n as f64).abs() < 1e-14);
    }
}
