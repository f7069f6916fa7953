//! Cost per cell of the cgs source physics of `sluice-damping` for N = 4096 cells: CIE
//! ionisation, ion Alfvén speed, full wave-damping coefficients (ion–neutral + NLL + turbulent)
//! and the heat Q_+ + Q_−, plus one cooling step (Townsend exact scheme with the piecewise
//! power-law table, or the implicit KI02 update). One element = one cell.
//! Structure of arrays, no allocation inside the measured loop.

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use sluice_damping::constants::{K_BOLTZMANN, PARSEC};
use sluice_damping::{
    alfven_speed, CharacteristicCr, Composition, CoolingIntegrator, DampingModel, DensityPrefactor,
    Ionisation, Ki02Cooler, LocalConditions, PowerLawTable, TownsendCooler, TurbulenceAmplitude,
    Turbulent,
};
use std::hint::black_box;

const N: usize = 4096;

/// Cell inputs (cgs) spanning cold neutral to hot ionised gas.
struct Cells {
    n_h: Vec<f64>,
    temperature: Vec<f64>,
    b_field: Vec<f64>,
    e_plus: Vec<f64>,
    e_minus: Vec<f64>,
}

/// Outputs of one pass.
struct Out {
    linear: Vec<f64>,
    quadratic: Vec<f64>,
    heat: Vec<f64>,
    temperature: Vec<f64>,
    radiated: Vec<f64>,
}

fn cells() -> Cells {
    let f = |j: usize| j as f64 / (N - 1) as f64;
    Cells {
        n_h: (0..N).map(|j| 10f64.powf(-3.0 + 4.0 * f(j))).collect(),
        temperature: (0..N)
            .map(|j| 10f64.powf(7.0 - 5.0 * f((j * 7) % N)))
            .collect(),
        b_field: (0..N)
            .map(|j| 1e-6 * (1.0 + 4.0 * f((j * 3) % N)))
            .collect(),
        e_plus: (0..N).map(|j| 1e-17 * (1.0 + f(j))).collect(),
        e_minus: (0..N).map(|j| 1e-19 * (1.0 + f(j))).collect(),
    }
}

fn out() -> Out {
    Out {
        linear: vec![0.0; N],
        quadratic: vec![0.0; N],
        heat: vec![0.0; N],
        temperature: vec![0.0; N],
        radiated: vec![0.0; N],
    }
}

/// One source pass over all cells with cooling integrator `cool`.
fn pass<C: CoolingIntegrator>(
    model: &DampingModel,
    ion: &Ionisation,
    cool: &C,
    c: &Cells,
    o: &mut Out,
    dt: f64,
) {
    let comp = Composition::default();
    let cr = CharacteristicCr::default();
    let gamma = 5.0 / 3.0;
    let inputs = c
        .n_h
        .iter()
        .zip(&c.temperature)
        .zip(&c.b_field)
        .zip(&c.e_plus)
        .zip(&c.e_minus);
    let outputs = o
        .linear
        .iter_mut()
        .zip(&mut o.quadratic)
        .zip(&mut o.heat)
        .zip(&mut o.temperature)
        .zip(&mut o.radiated);
    for (((((&n_h, &t), &b), &ep), &em), ((((lin, quad), heat), t_new), rad)) in inputs.zip(outputs)
    {
        let x_i = ion.ion_fraction(t);
        let lc = LocalConditions {
            n_h,
            temperature: t,
            b_field: b,
            neutral_fraction: 1.0 - x_i,
            alfven_speed: alfven_speed(b, comp.ion_mass_density(n_h, x_i)),
            gyro_radius: cr.gyro_radius(b),
        };
        let r = model.rates(&lc);
        *lin = r.linear;
        *quad = r.quadratic;
        *heat = r.energy_loss(ep) + r.energy_loss(em);
        let s = cool.step(t, n_h, n_h * comp.particles_per_h(x_i), gamma, dt);
        *t_new = s.temperature;
        *rad = s.energy_loss;
    }
}

fn bench(cr: &mut Criterion) {
    let model = DampingModel {
        turbulent: Some(Turbulent {
            outer_scale: 100.0 * PARSEC,
            amplitude: TurbulenceAmplitude::Velocity(1e6),
            ..Default::default()
        }),
        ..DampingModel::default()
    };
    let ion = Ionisation::default();
    let table = PowerLawTable::rosen_bregman_1995();
    let townsend =
        TownsendCooler::new(&table, 300.0, DensityPrefactor::HydrogenSquared).expect("valid");
    let ki02 = Ki02Cooler::default();
    let c = cells();
    let mut o = out();
    // dt ≈ cooling time of a 1e6 K, n_H = 1 cell: cells cross several table segments.
    let dt = 1.0e6 * K_BOLTZMANN * 2.3 / (2.0 / 3.0 * 2.2e-22);
    let mut g = cr.benchmark_group("source_step");
    g.throughput(Throughput::Elements(N as u64));
    g.bench_function("damping_plus_townsend_4096", |bch| {
        bch.iter(|| {
            pass(
                black_box(&model),
                &ion,
                &townsend,
                black_box(&c),
                &mut o,
                dt,
            );
            black_box(o.temperature[N / 2])
        })
    });
    g.bench_function("damping_plus_ki02_4096", |bch| {
        bch.iter(|| {
            pass(black_box(&model), &ion, &ki02, black_box(&c), &mut o, dt);
            black_box(o.temperature[N / 2])
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
