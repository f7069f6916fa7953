//! Throughput of the sweep ensemble (`sluice sweep`): the same 8 Sod shock-tube runs (the
//! shipped problems/sod.toml at 400 cells, γ ∈ {1.4, 5/3} × CFL ∈ {0.4, 0.5, 0.6, 0.8}, no
//! files) on a rayon pool of 1 thread and of 2 threads. One element = one run. Target: the
//! 2-thread pool finishes the ensemble ≥ 1.9× as fast as the 1-thread pool on two free cores.
//! The pool is built inside each iteration, as `sluice sweep` does.

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use sluice_driver::sweep::{parse_vary, run_sweep, Shard, SnapshotMode, SweepPlan};
use std::hint::black_box;

const DECK: &str = include_str!("../problems/sod.toml");

fn bench(c: &mut Criterion) {
    let plan = SweepPlan::new(
        DECK,
        &[],
        vec![
            parse_vary("gas.gamma=1.4,1.6666666666666667").expect("vary"),
            parse_vary("mhd.cfl=0.4,0.5,0.6,0.8").expect("vary"),
        ],
    )
    .expect("plan");
    let runs = plan.runs.len() as u64;
    let mut g = c.benchmark_group("ensemble");
    g.throughput(Throughput::Elements(runs));
    g.sample_size(10);
    for threads in [1usize, 2] {
        g.bench_function(format!("sod8_threads_{threads}"), |b| {
            b.iter(|| {
                let rows =
                    run_sweep(&plan, Shard::ALL, threads, None, SnapshotMode::None).expect("sweep");
                assert!(rows.iter().all(|r| r.result.is_ok()));
                black_box(rows)
            })
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
