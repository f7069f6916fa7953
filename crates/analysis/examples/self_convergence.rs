//! Prints a self-convergence study and an analytic convergence series (table, or `--json`).
//!
//! `cargo run -p sluice-analysis --example self_convergence [-- --json]`
//!
//! Scenario of our own: "runs" at N = 32, 64, 128, 256 are the exact cell averages of
//! sin(2πx) on [0, 1] plus a second-order error 0.7 h² (1 + cos(2πx)/2). The self-convergence
//! order is 2, and the Richardson estimate of the finest run's error equals its true error
//! 0.7/256² ≈ 1.068e-5.

use sluice_analysis::{
    compare, convergence_series, self_convergence, CompareOptions, ConvergenceReport, Norm,
    Profile, Sampling,
};
use std::f64::consts::PI;

fn run(n: usize, error: f64) -> Profile {
    let p = Profile::uniform(format!("run-{n}"), Sampling::CellAverage, 0.0, 1.0, n).unwrap();
    let e = p.cell_edges().unwrap();
    let h = 1.0 / n as f64;
    let u = e
        .windows(2)
        .map(|w| {
            let (a, b) = (2.0 * PI * w[0], 2.0 * PI * w[1]);
            let sin_avg = (a.cos() - b.cos()) / (b - a);
            let g_avg = 1.0 + 0.5 * (b.sin() - a.sin()) / (b - a);
            sin_avg + error * h * h * g_avg
        })
        .collect();
    p.with_field("density", u).unwrap()
}

fn main() {
    let ns = [32usize, 64, 128, 256];
    let runs: Vec<Profile> = ns.iter().map(|&n| run(n, 0.7)).collect();
    let selfc = self_convergence(&runs, "density", Norm::L1)
        .unwrap()
        .with_expected_order(2.0, 0.1);
    let analytic: Vec<(usize, f64)> = ns
        .iter()
        .zip(&runs)
        .map(|(&n, r)| {
            let exact = run(n, 0.0);
            let rep = compare(&exact, r, &CompareOptions::default()).unwrap();
            (n, rep.fields[0].absolute.l1)
        })
        .collect();
    let analytic = convergence_series("density (l1)", &analytic)
        .unwrap()
        .with_expected_order(2.0, 0.1);
    let report = ConvergenceReport::new(vec![analytic, selfc]);
    if std::env::args().any(|a| a == "--json") {
        println!("{}", report.to_json());
    } else {
        print!("{}", report.to_table());
    }
}
