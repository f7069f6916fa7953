//! Cell-update throughput of the MHD step, for profiling on a busy machine: run it under
//! `perf stat -e task-clock` and divide the printed cell-updates by the CPU time.
//!
//! Usage: `step_throughput [n] [steps] [hlle|hlld]` (defaults 4096, 2000, hlld).

use sluice_mhd::{Eos, Grid, MhdSolver, Primitive, RiemannKind, SolverConfig, State};

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let n: usize = args.get(1).and_then(|s| s.parse().ok()).unwrap_or(4096);
    let steps: usize = args.get(2).and_then(|s| s.parse().ok()).unwrap_or(2000);
    let riemann = if args.get(3).map(String::as_str) == Some("hlle") {
        RiemannKind::Hlle
    } else {
        RiemannKind::Hlld
    };
    let eos = Eos::Ideal { gamma: 5.0 / 3.0 };
    let grid = Grid::new(n, 0.0, 1.0).expect("grid");
    let mut s = State::zeros(grid, 0.8);
    for j in 0..grid.len() {
        let x = grid.x_center(j) * 2.0 * std::f64::consts::PI;
        let w = Primitive {
            rho: 1.0 + 0.3 * x.sin(),
            vx: 0.2 * x.cos(),
            vy: 0.1 * (2.0 * x).sin(),
            vz: 0.05 * x.cos(),
            p: 1.0 + 0.2 * (3.0 * x).cos(),
            by: 0.7 + 0.2 * x.sin(),
            bz: 0.3 * x.cos(),
        };
        s.set_primitive(j, &w, &eos);
    }
    let cfg = SolverConfig {
        eos,
        riemann,
        ..SolverConfig::default()
    };
    let mut sol = MhdSolver::new(cfg, grid).expect("solver");
    let t0 = std::time::Instant::now();
    let mut fallbacks = 0;
    for _ in 0..steps {
        let dt = sol.max_dt(&s);
        fallbacks += sol.step(&mut s, dt).expect("step").hlld_fallbacks;
    }
    let wall = t0.elapsed().as_secs_f64();
    let updates = (n * steps) as f64;
    println!("{riemann:?} n={n} steps={steps} cell_updates={updates:e} wall={wall:.3}s wall_rate={:.3e}/s fallbacks={fallbacks}", updates / wall);
}
