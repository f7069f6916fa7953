//! Throughput of one full MHD step (PLM-MC + SSP-RK2) with HLLE and HLLD at N = 4096 and
//! N = 65536. One element = one cell advanced one full time step (cell-update).
//! Target: ≥ 1e7 cell-updates/s per core for PLM + HLLD + SSP-RK2 at N = 4096.

use criterion::{criterion_group, criterion_main, BatchSize, BenchmarkId, Criterion, Throughput};
use sluice_mhd::{
    Boundary, BoundaryPair, Eos, Grid, Integrator, Limiter, MhdSolver, Primitive, Reconstruction,
    RiemannKind, SolverConfig, State,
};
use std::hint::black_box;

/// A smooth but nonlinear periodic MHD state (all seven variables vary).
fn setup(n: usize, riemann: RiemannKind) -> (MhdSolver, State, f64) {
    let grid = Grid::new(n, 0.0, 1.0).expect("grid");
    let eos = Eos::Ideal { gamma: 5.0 / 3.0 };
    let cfg = SolverConfig {
        eos,
        riemann,
        reconstruction: Reconstruction::Plm(Limiter::Mc),
        integrator: Integrator::SspRk2,
        cfl: 0.8,
        boundaries: BoundaryPair {
            left: Boundary::Periodic,
            right: Boundary::Periodic,
        },
        ..SolverConfig::default()
    };
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
    let sol = MhdSolver::new(cfg, grid).expect("solver");
    let dt = sol.max_dt(&s);
    (sol, s, dt)
}

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("mhd_step_plm_rk2");
    for n in [4096usize, 65536] {
        for (name, kind) in [("hlle", RiemannKind::Hlle), ("hlld", RiemannKind::Hlld)] {
            let (mut sol, state, dt) = setup(n, kind);
            g.throughput(Throughput::Elements(n as u64));
            g.bench_with_input(BenchmarkId::new(name, n), &n, |b, _| {
                // Every measured step starts from the same state (the clone is not timed).
                b.iter_batched_ref(
                    || state.clone(),
                    |s| black_box(sol.step(black_box(s), dt).expect("step")),
                    BatchSize::LargeInput,
                );
            });
        }
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
