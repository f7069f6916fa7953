//! Checks of the MHD core (`sluice-mhd`) against exact solutions, published tests and
//! conservation laws. Every check states its source next to it.

use crate::{abs_check, max_check, min_check, Check, CheckResult};
use sluice_mhd::eigen::WaveFamily;
use sluice_mhd::{
    linear_wave, Boundary, BoundaryPair, Eos, Grid, Integrator, Limiter, MhdError, MhdSolver,
    Primitive, Reconstruction, RiemannKind, SolverConfig, State,
};

#[path = "exact_riemann.rs"]
pub mod exact_riemann;

use exact_riemann::{EulerState, ExactRiemann};

const SRC_TORO: &str = "Toro 2009, Riemann Solvers and Numerical Methods for Fluid Dynamics, 3rd ed., ch. 4, Test 1 (Sod): p* = 0.30313, u* = 0.92745";
const SRC_SOD_L1: &str = "Sod shock tube vs the exact solution of Toro 2009 ch. 4 (Test 1, t = 0.2, N = 400); bound: smearing of the shock and contact over ~3 cells each (see code)";
const SRC_SOD_ORDER: &str = "Sod shock tube, L1(ρ) vs exact (Toro 2009 ch. 4) for N = 100…1600: first-order convergence expected for discontinuous solutions (common practice; e.g. Stone et al. 2008, ApJS 178, 137, §8)";
const SRC_BW_POS: &str = "Brio & Wu 1988, J. Comput. Phys. 75, 400 (γ = 2, B_x = 0.75, t = 0.1): positions of fast heads, compound wave, contact, slow shock vs a converged N = 2048 HLLE reference and the fast heads vs x0 ∓ c_f t (characteristic theory), in cells of the N = 256 HLLD run (bound 3)";
const SRC_BW_POSITIVE: &str = "Brio & Wu 1988, J. Comput. Phys. 75, 400: the shock tube must run without NaN or non-positive ρ, p (count of bad cells)";
const SRC_LW: &str = "Stone et al. 2008, ApJS 178, 137, §8.1 (linear-wave convergence, amplitude 1e-6, one period): second-order L1 convergence of PLM (van Leer limiter) + HLLD + SSP-RK2, fitted over N = 32…512";
const SRC_CONS: &str = "Conservation of mass, momentum, energy and transverse flux by a finite-volume scheme in a periodic box to round-off (LeVeque 2002, Finite Volume Methods for Hyperbolic Problems, §4.1)";
const SRC_GAL: &str = "Galilean invariance of the ideal-MHD equations: a boosted Riemann problem equals the rest-frame one shifted by V t, up to the discretisation error (bound: Richardson estimate 2·L1|ρ_N − ρ_2N| of the rest-frame error for first-order convergence)";

/// The checks of this module.
pub fn checks() -> Vec<Check> {
    vec![
        Check {
            name: "mhd.exact_riemann.toro_test1_pstar",
            source: SRC_TORO,
            run: exact_pstar,
        },
        Check {
            name: "mhd.exact_riemann.toro_test1_ustar",
            source: SRC_TORO,
            run: exact_ustar,
        },
        Check {
            name: "mhd.sod.l1_density_n400",
            source: SRC_SOD_L1,
            run: sod_l1,
        },
        Check {
            name: "mhd.sod.convergence_order",
            source: SRC_SOD_ORDER,
            run: sod_order,
        },
        Check {
            name: "mhd.brio_wu.positivity",
            source: SRC_BW_POSITIVE,
            run: brio_wu_positive,
        },
        Check {
            name: "mhd.brio_wu.feature_positions",
            source: SRC_BW_POS,
            run: brio_wu_positions,
        },
        Check {
            name: "mhd.linear_wave.fast_order",
            source: SRC_LW,
            run: lw_fast,
        },
        Check {
            name: "mhd.linear_wave.alfven_order",
            source: SRC_LW,
            run: lw_alfven,
        },
        Check {
            name: "mhd.linear_wave.slow_order",
            source: SRC_LW,
            run: lw_slow,
        },
        Check {
            name: "mhd.linear_wave.entropy_order",
            source: SRC_LW,
            run: lw_entropy,
        },
        Check {
            name: "mhd.conservation.periodic_1000_steps",
            source: SRC_CONS,
            run: conservation,
        },
        Check {
            name: "mhd.galilean.boosted_riemann",
            source: SRC_GAL,
            run: galilean,
        },
    ]
}

fn fail(name: &str, source: &str, expected: f64, err: MhdError) -> CheckResult {
    eprintln!("{name}: solver error: {err}");
    CheckResult {
        name: name.into(),
        source: source.into(),
        measured: f64::NAN,
        expected,
        tolerance: 0.0,
        pass: false,
    }
}

/// Sets up a state on `[x_min, x_max]` with `n` cells from `init(x)` (ghosts too).
fn init_state(grid: Grid, bx: f64, eos: &Eos, init: &dyn Fn(f64) -> Primitive) -> State {
    let mut s = State::zeros(grid, bx);
    for j in 0..grid.len() {
        s.set_primitive(j, &init(grid.x_center(j)), eos);
    }
    s
}

/// Runs to `t_end` with the CFL step (last step shortened). Returns the state and the number of
/// steps taken.
fn run_to(sol: &mut MhdSolver, s: &mut State, t_end: f64) -> Result<usize, MhdError> {
    let mut t = 0.0;
    let mut steps = 0;
    while t < t_end * (1.0 - 1e-14) {
        let dt = sol.max_dt(s).min(t_end - t);
        sol.step(s, dt)?;
        t += dt;
        steps += 1;
    }
    Ok(steps)
}

fn cfg(eos: Eos, riemann: RiemannKind, limiter: Limiter, boundaries: BoundaryPair) -> SolverConfig {
    SolverConfig {
        eos,
        riemann,
        reconstruction: Reconstruction::Plm(limiter),
        integrator: Integrator::SspRk2,
        cfl: 0.8,
        boundaries,
        ..SolverConfig::default()
    }
}

const OUTFLOW: BoundaryPair = BoundaryPair {
    left: Boundary::Outflow,
    right: Boundary::Outflow,
};
const PERIODIC: BoundaryPair = BoundaryPair {
    left: Boundary::Periodic,
    right: Boundary::Periodic,
};

/// Least-squares slope of log(err) vs log(N), returned as a positive order.
fn fitted_order(ns: &[usize], errs: &[f64]) -> f64 {
    let xs: Vec<f64> = ns.iter().map(|&n| (n as f64).ln()).collect();
    let ys: Vec<f64> = errs.iter().map(|e| e.ln()).collect();
    let m = xs.len() as f64;
    let (mx, my) = (xs.iter().sum::<f64>() / m, ys.iter().sum::<f64>() / m);
    let sxy: f64 = xs.iter().zip(&ys).map(|(x, y)| (x - mx) * (y - my)).sum();
    let sxx: f64 = xs.iter().map(|x| (x - mx) * (x - mx)).sum();
    -sxy / sxx
}

// ---------------------------------------------------------------------------------------
// 1. Exact Riemann solver and Sod shock tube.

fn toro_test1() -> ExactRiemann {
    ExactRiemann::solve(
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
    .expect("no vacuum in Toro test 1")
}

/// Toro 2009 ch. 4, Test 1: p* = 0.30313 (published to 5 decimals, tolerance 1e-5).
fn exact_pstar() -> CheckResult {
    abs_check(
        "mhd.exact_riemann.toro_test1_pstar",
        SRC_TORO,
        toro_test1().p_star,
        0.30313,
        1e-5,
    )
}

/// Toro 2009 ch. 4, Test 1: u* = 0.92745 (published to 5 decimals, tolerance 1e-5).
fn exact_ustar() -> CheckResult {
    abs_check(
        "mhd.exact_riemann.toro_test1_ustar",
        SRC_TORO,
        toro_test1().u_star,
        0.92745,
        1e-5,
    )
}

/// L1 density error of the Sod problem (γ = 1.4, x0 = 0.5 on [0, 1], t = 0.2, B = 0,
/// PLM-MC + HLLD + SSP-RK2, C = 0.8) against cell averages of the exact solution.
fn sod_l1_error(n: usize) -> Result<f64, MhdError> {
    let eos = Eos::Ideal { gamma: 1.4 };
    let grid = Grid::new(n, 0.0, 1.0)?;
    let init = |x: f64| {
        if x < 0.5 {
            Primitive {
                rho: 1.0,
                p: 1.0,
                ..Primitive::default()
            }
        } else {
            Primitive {
                rho: 0.125,
                p: 0.1,
                ..Primitive::default()
            }
        }
    };
    let mut s = init_state(grid, 0.0, &eos, &init);
    let mut sol = MhdSolver::new(cfg(eos, RiemannKind::Hlld, Limiter::Mc, OUTFLOW), grid)?;
    let t = 0.2;
    run_to(&mut sol, &mut s, t)?;
    let ex = toro_test1();
    let dx = grid.dx();
    let mut l1 = 0.0;
    for j in grid.interior() {
        let xa = grid.x_center(j) - 0.5 * dx;
        l1 += (s.rho[j] - ex.cell_average_density(xa, xa + dx, 0.5, t)).abs() * dx;
    }
    Ok(l1)
}

/// Bound 3e-3: at N = 400 the contact (Δρ = 0.4263 − 0.2656 = 0.161) and the shock
/// (Δρ = 0.2656 − 0.125 = 0.141) are each smeared over ~3 cells and the rarefaction corners
/// over ~2, giving L1 ≈ (0.16·3 + 0.14·3 + 0.1·2)·Δx/2 ≈ 1.4e-3 (measured 1.55e-3 with HLLD,
/// 1.66e-3 with HLLE); 3e-3 leaves a margin of ≈ 2 while failing a first-order scheme
/// (measured 8.3e-3 at N = 400 with FirstOrder reconstruction, fitted order 0.66).
fn sod_l1() -> CheckResult {
    let name = "mhd.sod.l1_density_n400";
    match sod_l1_error(400) {
        Ok(e) => max_check(name, SRC_SOD_L1, e, 3e-3, 0.0),
        Err(err) => fail(name, SRC_SOD_L1, 3e-3, err),
    }
}

/// Order of the Sod L1 density error fitted over N = 100, 200, 400, 800, 1600; ≥ 0.8.
fn sod_order() -> CheckResult {
    let name = "mhd.sod.convergence_order";
    let ns = [100, 200, 400, 800, 1600];
    let mut errs = Vec::new();
    for &n in &ns {
        match sod_l1_error(n) {
            Ok(e) => errs.push(e),
            Err(err) => return fail(name, SRC_SOD_ORDER, 1.0, err),
        }
    }
    min_check(name, SRC_SOD_ORDER, fitted_order(&ns, &errs), 1.0, 0.2)
}

// ---------------------------------------------------------------------------------------
// 2. Brio & Wu (1988) shock tube.
//
// Units: Brio & Wu write the equations with the magnetic pressure B²/2 (the 4π absorbed into
// B, i.e. Heaviside–Lorentz-like units (from memory)), so their B_x = 0.75, B_y = ±1 are our
// b̃ directly. Published structure at t = 0.1 (from memory, not asserted): left fast
// rarefaction, slow compound wave near x ≈ 0.48, contact near x ≈ 0.55, slow shock near
// x ≈ 0.6, right fast rarefaction reaching x ≈ 0.9.

/// Grid and interior profiles (ρ, b̃_y, p) of a Brio–Wu run.
type BrioWuProfiles = (Grid, Vec<f64>, Vec<f64>, Vec<f64>);

/// Brio–Wu profiles (ρ, b̃_y, p) at t = 0.1 on [0, 1] with `n` cells.
fn brio_wu(n: usize, riemann: RiemannKind) -> Result<BrioWuProfiles, MhdError> {
    let eos = Eos::Ideal { gamma: 2.0 };
    let grid = Grid::new(n, 0.0, 1.0)?;
    let init = |x: f64| {
        if x < 0.5 {
            Primitive {
                rho: 1.0,
                p: 1.0,
                by: 1.0,
                ..Primitive::default()
            }
        } else {
            Primitive {
                rho: 0.125,
                p: 0.1,
                by: -1.0,
                ..Primitive::default()
            }
        }
    };
    let mut s = init_state(grid, 0.75, &eos, &init);
    let mut sol = MhdSolver::new(cfg(eos, riemann, Limiter::Mc, OUTFLOW), grid)?;
    run_to(&mut sol, &mut s, 0.1)?;
    let r = grid.interior();
    let p: Vec<f64> = r.clone().map(|j| s.primitive(j, &eos).p).collect();
    Ok((
        grid,
        s.rho.as_slice().unwrap_or(&[])[r.clone()].to_vec(),
        s.by.as_slice().unwrap_or(&[])[r].to_vec(),
        p,
    ))
}

/// Positions of (left fast head, compound wave, contact, slow shock, right fast head).
fn brio_wu_features(grid: &Grid, rho: &[f64], by: &[f64]) -> [f64; 5] {
    let xs = grid.centers();
    let dx = grid.dx();
    let n = rho.len();
    // Fast rarefaction heads: first deviation of ρ from the undisturbed state by 1 %.
    let left_head = (0..n)
        .find(|&i| (rho[i] - 1.0).abs() > 0.01)
        .map_or(f64::NAN, |i| xs[i]);
    let right_head = (0..n)
        .rev()
        .find(|&i| (rho[i] - 0.125).abs() > 0.01 * 0.125)
        .map_or(f64::NAN, |i| xs[i]);
    // Compound wave: where b̃_y changes sign (linear interpolation).
    let compound = (0..n - 1)
        .find(|&i| by[i] > 0.0 && by[i + 1] <= 0.0)
        .map_or(f64::NAN, |i| xs[i] + dx * by[i] / (by[i] - by[i + 1]));
    // Steepest density jump within a window [a, b] (face position).
    let steepest = |a: f64, b: f64| {
        let mut best = (0.0, f64::NAN);
        for i in 0..n - 1 {
            let xf = xs[i] + 0.5 * dx;
            if xf >= a && xf <= b {
                let d = (rho[i + 1] - rho[i]).abs();
                if d > best.0 {
                    best = (d, xf);
                }
            }
        }
        best.1
    };
    // Contact and slow shock: the two steepest ρ jumps right of the compound wave, separated
    // by the b̃_y plateau (b̃_y is continuous at the contact and jumps at the slow shock).
    let shock = {
        // slow shock: steepest b̃_y change right of the compound wave + 0.03
        let mut best = (0.0, f64::NAN);
        for i in 0..n - 1 {
            let xf = xs[i] + 0.5 * dx;
            if xf > compound + 0.03 && xf < 0.8 {
                let d = (by[i + 1] - by[i]).abs();
                if d > best.0 {
                    best = (d, xf);
                }
            }
        }
        best.1
    };
    let contact = steepest(compound + 0.02, shock - 0.02);
    [left_head, compound, contact, shock, right_head]
}

fn brio_wu_positive() -> CheckResult {
    let name = "mhd.brio_wu.positivity";
    let mut bad = 0.0;
    for riemann in [RiemannKind::Hlld, RiemannKind::Hlle] {
        match brio_wu(400, riemann) {
            Ok((_, rho, by, p)) => {
                bad += rho
                    .iter()
                    .zip(&p)
                    .zip(&by)
                    .filter(|((r, p), b)| {
                        !(r.is_finite() && p.is_finite() && b.is_finite() && **r > 0.0 && **p > 0.0)
                    })
                    .count() as f64;
            }
            Err(err) => return fail(name, SRC_BW_POSITIVE, 0.0, err),
        }
    }
    abs_check(name, SRC_BW_POSITIVE, bad, 0.0, 0.0)
}

/// Largest deviation (in coarse cells) of the five feature positions of an N = 256 HLLD run
/// from those of an N = 2048 HLLE run, and of its fast heads from the exact head speeds;
/// bound 3 cells ("within a few cells": the 1 % threshold and smearing shift each detected
/// position by ≲ 2 cells). Measured at commit time: 0.4 cells vs the reference, ≈ 2 cells
/// for the right fast head vs x0 + c_f t (a threshold picks the head a little inside the
/// rarefaction).
fn brio_wu_positions() -> CheckResult {
    let name = "mhd.brio_wu.feature_positions";
    let coarse = brio_wu(256, RiemannKind::Hlld);
    let fine = brio_wu(2048, RiemannKind::Hlle);
    match (coarse, fine) {
        (Ok((gc, rc, bc, _)), Ok((gf, rf, bf, _))) => {
            let a = brio_wu_features(&gc, &rc, &bc);
            let b = brio_wu_features(&gf, &rf, &bf);
            // The fast-rarefaction heads move into the undisturbed states at exactly u ∓ c_f of
            // those states (characteristic theory): 0.5 − 0.1 c_f,L and 0.5 + 0.1 c_f,R.
            let eos = Eos::Ideal { gamma: 2.0 };
            let cfl = sluice_mhd::fast_speed(
                &Primitive {
                    rho: 1.0,
                    p: 1.0,
                    by: 1.0,
                    ..Primitive::default()
                },
                0.75,
                &eos,
            );
            let cfr = sluice_mhd::fast_speed(
                &Primitive {
                    rho: 0.125,
                    p: 0.1,
                    by: -1.0,
                    ..Primitive::default()
                },
                0.75,
                &eos,
            );
            let heads = [0.5 - 0.1 * cfl, 0.5 + 0.1 * cfr];
            let mut devs: Vec<f64> = a
                .iter()
                .zip(&b)
                .map(|(x, y)| (x - y).abs() / gc.dx())
                .collect();
            devs.push((a[0] - heads[0]).abs() / gc.dx());
            devs.push((a[4] - heads[1]).abs() / gc.dx());
            let dev = devs.iter().fold(0.0, |m: f64, &d| {
                if d.is_nan() || m.is_nan() {
                    f64::NAN
                } else {
                    m.max(d)
                }
            });
            eprintln!("{name}: coarse {a:?}, reference {b:?}, analytic fast heads {heads:?}");
            max_check(name, SRC_BW_POS, dev, 3.0, 0.0)
        }
        (Err(e), _) | (_, Err(e)) => fail(name, SRC_BW_POS, 3.0, e),
    }
}

// ---------------------------------------------------------------------------------------
// 3. Linear-wave convergence (Stone et al. 2008 §8.1 set-up, our own background values):
// ρ = 1, p = 1/γ (a = 1), γ = 5/3, b̃ = (1, √2, 1/2): c_f = 2, c_a = 1, c_s = 1/2, all
// distinct. Entropy wave with v_x = 1 so that it moves. One wavelength on [0, 1], amplitude
// 1e-6, one period; error = Σ_k L1(U_k − U_k(0)) over all seven conserved variables.

fn linear_wave_error(family: WaveFamily, n: usize) -> Result<f64, MhdError> {
    let gamma = 5.0 / 3.0;
    let eos = Eos::Ideal { gamma };
    let bx = 1.0;
    let vx = if family == WaveFamily::Entropy {
        1.0
    } else {
        0.0
    };
    let bg = Primitive {
        rho: 1.0,
        vx,
        vy: 0.0,
        vz: 0.0,
        p: 1.0 / gamma,
        by: 2f64.sqrt(),
        bz: 0.5,
    };
    let (lam, r) = linear_wave(&bg, bx, &eos, family, 1);
    let amp = 1e-6;
    let grid = Grid::new(n, 0.0, 1.0)?;
    let mut s = init_state(grid, bx, &eos, &|_| bg);
    let u0 = sluice_mhd::conserved(&bg, bx, &eos);
    let dx = grid.dx();
    let k = 2.0 * std::f64::consts::PI;
    for j in 0..grid.len() {
        // Cell average of sin(kx) over the cell (exact), so the initial data are second-order
        // accurate cell averages.
        let xa = grid.x_center(j) - 0.5 * dx;
        let avg = ((k * xa).cos() - (k * (xa + dx)).cos()) / (k * dx);
        let q = |m: usize| u0[m] + amp * r[m] * avg;
        s.rho[j] = q(0);
        s.mx[j] = q(1);
        s.my[j] = q(2);
        s.mz[j] = q(3);
        s.en[j] = q(4);
        s.by[j] = q(5);
        s.bz[j] = q(6);
    }
    let init = s.clone();
    // van Leer limiter: with MC the clipping of the wave extrema keeps the fitted order at
    // 1.85–1.90 over N = 32…512 (local order 1.96 at N = 256→512, errors lower than van
    // Leer's); van Leer gives a cleaner asymptotic slope (measured 1.95–1.98).
    let mut sol = MhdSolver::new(
        cfg(eos, RiemannKind::Hlld, Limiter::VanLeer, PERIODIC),
        grid,
    )?;
    run_to(&mut sol, &mut s, 1.0 / lam.abs())?;
    let arrs = |st: &State| {
        [
            st.rho.clone(),
            st.mx.clone(),
            st.my.clone(),
            st.mz.clone(),
            st.en.clone(),
            st.by.clone(),
            st.bz.clone(),
        ]
    };
    let (a, b) = (arrs(&s), arrs(&init));
    let mut err = 0.0;
    for m in 0..7 {
        err += grid
            .interior()
            .map(|j| (a[m][j] - b[m][j]).abs())
            .sum::<f64>()
            * dx;
    }
    Ok(err)
}

fn lw_order(name: &str, family: WaveFamily) -> CheckResult {
    let ns = [32, 64, 128, 256, 512];
    let mut errs = Vec::new();
    for &n in &ns {
        match linear_wave_error(family, n) {
            Ok(e) => errs.push(e),
            Err(err) => return fail(name, SRC_LW, 2.0, err),
        }
    }
    eprintln!("{name}: N = {ns:?}, L1 = {errs:?}");
    min_check(name, SRC_LW, fitted_order(&ns, &errs), 2.0, 0.1)
}

fn lw_fast() -> CheckResult {
    lw_order("mhd.linear_wave.fast_order", WaveFamily::Fast)
}
fn lw_alfven() -> CheckResult {
    lw_order("mhd.linear_wave.alfven_order", WaveFamily::Alfven)
}
fn lw_slow() -> CheckResult {
    lw_order("mhd.linear_wave.slow_order", WaveFamily::Slow)
}
fn lw_entropy() -> CheckResult {
    lw_order("mhd.linear_wave.entropy_order", WaveFamily::Entropy)
}

// ---------------------------------------------------------------------------------------
// 4. Conservation in a periodic box.

/// Largest relative change, over the seven conserved totals, after 1000 steps of a nonlinear
/// periodic problem (steepening into shocks). Relative to Σ|q|Δx of each variable.
fn conservation() -> CheckResult {
    let name = "mhd.conservation.periodic_1000_steps";
    let eos = Eos::Ideal { gamma: 5.0 / 3.0 };
    let res = (|| -> Result<f64, MhdError> {
        let grid = Grid::new(128, 0.0, 1.0)?;
        let init = |x: f64| {
            let k = 2.0 * std::f64::consts::PI * x;
            Primitive {
                rho: 1.0 + 0.5 * k.sin(),
                vx: 0.8 * k.cos(),
                vy: 0.3 * (2.0 * k).sin(),
                vz: 0.2 * k.cos(),
                p: 1.0 + 0.4 * (3.0 * k).cos(),
                by: 0.7 + 0.5 * k.sin(),
                bz: 0.4 * k.cos(),
            }
        };
        let mut s = init_state(grid, 0.6, &eos, &init);
        let mut sol = MhdSolver::new(cfg(eos, RiemannKind::Hlld, Limiter::Mc, PERIODIC), grid)?;
        let q0 = s.totals();
        let dx = grid.dx();
        let abs_tot =
            |a: &ndarray::Array1<f64>| grid.interior().map(|j| a[j].abs()).sum::<f64>() * dx;
        let scale = [
            abs_tot(&s.rho),
            abs_tot(&s.mx),
            abs_tot(&s.my),
            abs_tot(&s.mz),
            abs_tot(&s.en),
            abs_tot(&s.by),
            abs_tot(&s.bz),
        ];
        for _ in 0..1000 {
            let dt = sol.max_dt(&s);
            let rep = sol.step(&mut s, dt)?;
            if rep.rho_floor_hits + rep.p_floor_hits > 0 {
                return Ok(f64::INFINITY);
            }
        }
        let q1 = s.totals();
        Ok((0..7)
            .map(|m| (q1[m] - q0[m]).abs() / scale[m])
            .fold(0.0, f64::max))
    })();
    match res {
        Ok(e) => max_check(name, SRC_CONS, e, 1e-12, 0.0),
        Err(err) => fail(name, SRC_CONS, 1e-12, err),
    }
}

// ---------------------------------------------------------------------------------------
// 5. Galilean invariance.

/// Periodic double MHD Riemann problem (slab [0.25, 0.75) dense/hot, b̃_y reversed) evolved
/// to t = 0.1 at rest and boosted by V = 1 (V t = 20 cells at N = 200, same fixed Δt for
/// both). Measured: L1(ρ_boost(x + V t) − ρ_rest(x)). Bound: the Richardson estimate of the
/// rest-frame discretisation error, E_N ≈ L1(ρ_N − ρ_2N)/(1 − 2^{−1}) for first-order
/// convergence of a discontinuous solution (2N averaged onto N). The upwind-biased scheme is
/// not exactly Galilean invariant (numerical diffusion depends on the frame), so the two
/// runs may differ by up to their discretisation errors. Measured at commit time:
/// difference 6.2e-3, bound 9.8e-3; a frame-dependent error in a flux would give O(0.1).
fn galilean() -> CheckResult {
    let name = "mhd.galilean.boosted_riemann";
    let eos = Eos::Ideal { gamma: 5.0 / 3.0 };
    let t_end = 0.1;
    let v_boost = 1.0;
    let run = |n: usize, boost: f64, steps: usize| -> Result<Vec<f64>, MhdError> {
        let grid = Grid::new(n, 0.0, 1.0)?;
        let init = |x: f64| {
            if (0.25..0.75).contains(&x) {
                Primitive {
                    rho: 1.0,
                    vx: boost,
                    p: 1.0,
                    by: 1.0,
                    ..Primitive::default()
                }
            } else {
                Primitive {
                    rho: 0.2,
                    vx: boost,
                    p: 0.1,
                    by: -1.0,
                    ..Primitive::default()
                }
            }
        };
        let mut s = init_state(grid, 0.75, &eos, &init);
        let mut sol = MhdSolver::new(cfg(eos, RiemannKind::Hlld, Limiter::Mc, PERIODIC), grid)?;
        let dt = t_end / steps as f64;
        for _ in 0..steps {
            sol.step(&mut s, dt)?;
        }
        Ok(s.rho.as_slice().unwrap_or(&[])[grid.interior()].to_vec())
    };
    let res = (|| -> Result<(f64, f64), MhdError> {
        let n = 200;
        // Fixed Δt from C = 0.5 with the boosted maximum speed (|v| + c_f ≤ 1 + 4.4).
        let steps = (t_end / (0.5 / n as f64 / 5.5)).ceil() as usize;
        let rest = run(n, 0.0, steps)?;
        let boosted = run(n, v_boost, steps)?;
        let shift = (v_boost * t_end * n as f64).round() as usize;
        let dx = 1.0 / n as f64;
        let diff: f64 = (0..n)
            .map(|i| (boosted[(i + shift) % n] - rest[i]).abs())
            .sum::<f64>()
            * dx;
        let fine = run(2 * n, 0.0, 2 * steps)?;
        let self_diff: f64 = (0..n)
            .map(|i| (0.5 * (fine[2 * i] + fine[2 * i + 1]) - rest[i]).abs())
            .sum::<f64>()
            * dx;
        let self_err = 2.0 * self_diff;
        Ok((diff, self_err))
    })();
    match res {
        Ok((diff, bound)) => {
            eprintln!(
                "{name}: L1 boosted − rest = {diff:e}, discretisation error bound = {bound:e}"
            );
            max_check(name, SRC_GAL, diff, bound, 0.0)
        }
        Err(err) => fail(name, SRC_GAL, 0.0, err),
    }
}
