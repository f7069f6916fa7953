//! Cost of the CR module at N = 4096 (one element = one cell):
//! * `cr/subcycle_exchange`: one transport subcycle (two SSP-RK2 stages, each with PLM + HLL
//!   fluxes and the implicit local exchange) of the self-confined model with damping;
//! * `coupled/mhd_only` vs `coupled/mhd_plus_cr`: one full MHD step (PLM-MC, HLLD, SSP-RK2) alone
//!   and followed by the subcycled CR transport at c_r = 10 v_max (auto_c_r). Target: the
//!   coupled step costs ≤ 3× the MHD step.

use criterion::{criterion_group, criterion_main, BatchSize, Criterion, Throughput};
use sluice_cosmic_rays::{auto_c_r, ConstantDamping, CrParams, CrSolver, CrState};
use sluice_mhd::{
    Boundary, BoundaryPair, Eos, Grid, Integrator, Limiter, MhdSolver, Primitive, Reconstruction,
    RiemannKind, SolverConfig, State,
};
use std::hint::black_box;

const N: usize = 4096;
const EOS: Eos = Eos::Ideal { gamma: 5.0 / 3.0 };

fn setup() -> (MhdSolver, State, CrSolver, CrState) {
    let grid = Grid::new(N, 0.0, 1.0).expect("grid");
    let cfg = SolverConfig {
        eos: EOS,
        riemann: RiemannKind::Hlld,
        reconstruction: Reconstruction::Plm(Limiter::Mc),
        integrator: Integrator::SspRk2,
        cfl: 0.8,
        boundaries: BoundaryPair {
            left: Boundary::Periodic,
            right: Boundary::Periodic,
        },
        ..SolverConfig::default()
    };
    let mut gas = State::zeros(grid, 0.8);
    let tau = 2.0 * std::f64::consts::PI;
    for j in 0..grid.len() {
        let x = grid.x_center(j) * tau;
        let w = Primitive {
            rho: 1.0 + 0.3 * x.sin(),
            vx: 0.2 * x.cos(),
            p: 1.0 + 0.2 * (3.0 * x).cos(),
            ..Primitive::default()
        };
        gas.set_primitive(j, &w, &EOS);
    }
    let mhd = MhdSolver::new(cfg, grid).expect("mhd");
    let c_r = auto_c_r(&gas, &EOS, 10.0).expect("auto c_r").c_r;
    let p = CrParams {
        asymptotic_preserving: true,
        ..CrParams::new(c_r, c_r, 200.0)
    };
    let crs = CrSolver::new(p, grid).expect("cr");
    let mut cr = CrState::zeros(&grid);
    let eb = 0.5 * gas.bx * gas.bx;
    for j in 0..grid.len() {
        let x = grid.x_center(j) * tau;
        cr.e_c[j] = 1.0 + 0.5 * x.cos();
        cr.f[j] = 0.1 * x.sin();
        cr.e_plus[j] = 1e-3 * eb * (1.0 + 0.5 * (2.0 * x).sin());
        cr.e_minus[j] = 1e-4 * eb;
    }
    (mhd, gas, crs, cr)
}

fn bench(c: &mut Criterion) {
    let damp = ConstantDamping(1.0);
    let (mut mhd, gas0, mut crs, cr0) = setup();
    let dt_cr = crs.max_dt_cr(&gas0);
    let mut g = c.benchmark_group("cr");
    g.throughput(Throughput::Elements(N as u64));
    g.bench_function("subcycle_exchange", |b| {
        b.iter_batched_ref(
            || (cr0.clone(), gas0.clone()),
            |(cr, gas)| black_box(crs.transport(cr, gas, &damp, dt_cr).expect("cr")),
            BatchSize::LargeInput,
        )
    });
    g.finish();
    let mut g = c.benchmark_group("coupled");
    g.throughput(Throughput::Elements(N as u64));
    let dt = mhd.max_dt(&gas0);
    eprintln!(
        "MHD dt = {dt:.3e}, CR subcycle dt = {dt_cr:.3e}, subcycles per step = {}",
        (dt / dt_cr).ceil()
    );
    g.bench_function("mhd_only", |b| {
        b.iter_batched_ref(
            || gas0.clone(),
            |gas| black_box(mhd.step(gas, dt).expect("mhd")),
            BatchSize::LargeInput,
        )
    });
    g.bench_function("mhd_plus_cr", |b| {
        b.iter_batched_ref(
            || (cr0.clone(), gas0.clone()),
            |(cr, gas)| {
                mhd.step(gas, dt).expect("mhd");
                mhd.apply_boundaries(gas);
                black_box(crs.transport(cr, gas, &damp, dt).expect("cr"))
            },
            BatchSize::LargeInput,
        )
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
