//! Regression tests of the local CR–wave–gas exchange on a cell that used to stall it: a
//! non-realizable entry flux (|F| ≫ c_r e_c) left by the explicit transport next to a fixed
//! boundary CR energy density 3000 times the interior one (the dense-slab bottleneck deck with
//! `left = "fixed_energy_density"`). The exchange must finish with bounded work and conserve
//! the total energy e_c + e_+ + e_− + E and the reduced momentum ρv + F/c_r² to round-off
//! (physics-detail §2.5 and §2.6 e–g [derived]; Thomas & Pfrommer 2019, MNRAS 485, 2977,
//! whose equations conserve both).

use sluice_cosmic_rays::exchange::{
    exchange_cell, substep, Cell, CellCtx, Stall, StallReason, Transfer,
};
use sluice_cosmic_rays::*;
use sluice_mhd::{Eos, Grid, Primitive, State};

/// The cell that stalled `exchange_cell` (second SSP-RK stage of the first step of
/// problems/bottleneck-slab.toml at 128 cells with `left = "fixed_energy_density"`,
/// `left_energy_density = 3e-15` erg/cm³ over 1e-18 erg/cm³; code units 1 pc,
/// 1.6726e-24 g/cm³, 1 km/s), as printed by the solver at the stall.
const STALLED: Cell = Cell {
    ec: 6.190848388231297e-4,
    f: 11.954431618867508,
    er: 0.0,
    el: 0.0,
    m: 1.9655610430528263e-3,
    en: 42.07826909956966,
};
const VA: f64 = 20.6926732520356;
const C_R: f64 = 500.0;
const RHO: f64 = 0.10000169306480904;
const DT: f64 = 1.312420657960633e-2;
/// κ = 1e24 cm²/s in code units (pc km/s = 3.0857e23 cm²/s).
const KAPPA: f64 = 1e24 / 3.0857e23;
const GAMMA_C: f64 = 4.0 / 3.0;

fn ctx(model: TransportModel, sigma_hat: f64, floor: f64) -> CellCtx {
    let tol = ExchangeTolerances::default();
    CellCtx {
        rho: RHO,
        va: VA,
        cr2: C_R * C_R,
        sigma_hat,
        gamma_c: GAMMA_C,
        floor,
        grad_pc: 0.0,
        work_form: WorkForm::Scattering,
        model,
        ratio_lo: (-tol.tol_a).exp(),
        ratio_hi: tol.tol_a.exp(),
    }
}

fn streaming() -> TransportModel {
    TransportModel::Streaming {
        kappa: KAPPA,
        kappa_decoupled: f64::INFINITY,
    }
}

fn energy(c: &Cell) -> f64 {
    c.ec + c.er + c.el + c.en
}

fn momentum(c: &Cell) -> f64 {
    c.m + c.f / (C_R * C_R)
}

/// Energy and momentum closure of one call and the report's own bookkeeping
/// (Δe_c = −W − work, ΔE = work + heat − floor, Δ(e_+ + e_−) = W − heat + floor).
fn assert_conserves(c0: &Cell, c1: &Cell, tr: &Transfer) {
    let eps = f64::EPSILON;
    let scale = c0.en.abs() + c0.ec + c1.ec;
    let de = energy(c1) - energy(c0);
    assert!(
        de.abs() <= 8.0 * eps * scale,
        "energy not conserved: {de:e}"
    );
    let dm = momentum(c1) - momentum(c0);
    let mscale = c0.m.abs() + c0.f.abs() / (C_R * C_R);
    assert!(
        dm.abs() <= 8.0 * eps * mscale,
        "momentum not conserved: {dm:e}"
    );
    let dec = c1.ec - c0.ec + tr.cr_to_waves + tr.work_on_gas;
    assert!(dec.abs() <= 8.0 * eps * scale, "e_c ledger off by {dec:e}");
    let den = c1.en - c0.en - tr.work_on_gas - tr.waves_to_heat + tr.floor;
    assert!(den.abs() <= 8.0 * eps * scale, "gas ledger off by {den:e}");
}

/// The stall condition itself: the exact strong-coupling relaxation of F towards v_a h costs
/// the CRs Δe_c = v_a D_0/(c_r² − γ_c v_a²), D_0 = F − γ_c v_a e_c (derived in the exchange
/// module docs from physics-detail §2.6 b, f), which exceeds e_c here, so no substep size
/// keeps e_c ≥ 0. The former loop (halve up to 30 times, then accept failing substeps at
/// dt/2^30 forever) is replayed for 200 000 substeps: it has covered well under 1 % of the call
/// and sits at the smallest substep with e_c < 0, i.e. it would need ~2^30 substeps.
#[test]
fn the_stalled_cell_has_no_positive_exact_solution_and_stalled_the_former_loop() {
    let c = STALLED;
    let d0 = c.f - GAMMA_C * VA * c.ec;
    let drain = VA * d0 / (C_R * C_R - GAMMA_C * VA * VA);
    assert!(drain > c.ec, "drain {drain:e} vs e_c {:e}", c.ec);
    assert!(
        c.f > 30.0 * C_R * c.ec,
        "F/(c_r e_c) = {}",
        c.f / (C_R * c.ec)
    );

    let x = ctx(streaming(), 0.0, 0.0);
    let tol = ExchangeTolerances::default();
    let (mut cell, mut remaining, mut h, mut halvings) = (c, DT, DT, 0u32);
    for _ in 0..200_000 {
        let sub = h.min(remaining);
        let (c1, _, ok) = substep(&x, cell, sub, (0.0, 0.0), (0.0, 0.0), &tol);
        if ok || halvings >= tol.max_halvings {
            cell = c1;
            remaining -= sub;
            if ok && halvings > 0 {
                h = 2.0 * sub;
                halvings -= 1;
            }
        } else {
            h = 0.5 * sub;
            halvings += 1;
        }
    }
    assert!(
        remaining > 0.99 * DT,
        "covered {:e} of {DT:e}",
        DT - remaining
    );
    assert_eq!(halvings, tol.max_halvings);
    assert!(cell.ec < 0.0, "{cell:?}");
}

/// After the fix the same cell finishes in a few substeps: the entry flux is brought back to
/// c_r e_c (CR momentum to the gas, its kinetic energy from the CRs), then relaxed; e_c stays
/// positive and energy and momentum are conserved to round-off.
#[test]
fn the_stalled_cell_now_finishes_with_bounded_work_and_conserves() {
    let x = ctx(streaming(), 0.0, 0.0);
    let tol = ExchangeTolerances::default();
    let (c1, tr) = exchange_cell(&x, STALLED, DT, &tol, |_, _| (0.0, 0.0)).unwrap();
    let work = tr.substeps + tr.rejected;
    println!(
        "streaming: {} substeps, {} rejected, {c1:?}",
        tr.substeps, tr.rejected
    );
    // Measured: 1 substep (the former loop: ~2^30).
    assert!(work <= 16, "{tr:?}");
    assert_eq!(tr.flux_limited, 1);
    assert_eq!(tr.tol_failures, 0);
    assert!(c1.ec > 0.0 && c1.ec < STALLED.ec, "{c1:?}");
    // F relaxed to the streaming flux v_a h within the residual diffusion:
    // |F − v_a h| ≤ c_r e_c / (1 + c_r² Δt/(3κ)) after one implicit relaxation.
    let vh = VA * GAMMA_C * c1.ec;
    assert!(
        c1.f >= vh * (1.0 - 1e-12) && c1.f < C_R * STALLED.ec,
        "{c1:?}"
    );
    assert_conserves(&STALLED, &c1, &tr);
}

/// The self-confined model on the same cell (waves 1e-6 e_B, scattering as strong as the
/// streaming deck's residual diffusion): bounded, positive, conservative.
#[test]
fn self_confined_exchange_of_the_stalled_cell_is_bounded_and_conservative() {
    let ew = 1e-6;
    let sigma_hat = 1.0 / (3.0 * KAPPA * ew);
    let x = ctx(TransportModel::SelfConfined, sigma_hat, 1e-12);
    let c0 = Cell {
        er: ew,
        el: ew,
        ..STALLED
    };
    let tol = ExchangeTolerances::default();
    let (c1, tr) = exchange_cell(&x, c0, DT, &tol, |_, _| (10.0, 0.0)).unwrap();
    println!(
        "self-confined: {} substeps, {} rejected, {c1:?}",
        tr.substeps, tr.rejected
    );
    assert!(tr.substeps + tr.rejected <= 2_000, "{tr:?}");
    assert_eq!(tr.flux_limited, 1);
    assert!(c1.ec > 0.0 && c1.er >= 1e-12 && c1.el >= 1e-12, "{c1:?}");
    assert_conserves(&c0, &c1, &tr);
}

/// Typed failures instead of loops: a negative entry e_c stops at once, and a cell needing
/// more than `max_substeps` substeps stops there, both with the entry values.
#[test]
fn hard_limits_return_a_stall_with_the_values() {
    let x = ctx(streaming(), 0.0, 0.0);
    let tol = ExchangeTolerances::default();
    let bad = Cell {
        ec: -1e-9,
        ..STALLED
    };
    let e = exchange_cell(&x, bad, DT, &tol, |_, _| (0.0, 0.0)).unwrap_err();
    assert_eq!(e.reason, StallReason::BadEntry);
    assert_eq!((e.substeps, e.entry), (0, bad));
    // Wave growth by e^{Γ Δt} with Γ Δt ≈ 60 needs ≥ 60/0.5 substeps at tol_a = 0.5.
    let ew = 1e-9;
    let xs = ctx(TransportModel::SelfConfined, 1.0, 1e-12);
    let c0 = Cell {
        ec: 1.0,
        f: 0.5 * C_R,
        er: ew,
        el: ew,
        m: 0.0,
        en: 10.0,
    };
    let growth = VA * 1.0 * (c0.f - VA * GAMMA_C * c0.ec);
    let dt = 60.0 / growth;
    let few = ExchangeTolerances {
        max_substeps: 20,
        ..tol
    };
    let e: Stall = exchange_cell(&xs, c0, dt, &few, |_, _| (0.0, 0.0)).unwrap_err();
    assert_eq!(e.reason, StallReason::SubstepLimit);
    assert_eq!(e.substeps, 20);
    assert!(e.done > 0.0 && e.done < dt && e.dt == dt, "{e:?}");
    // With the default limit the same call completes.
    let (c1, tr) = exchange_cell(&xs, c0, dt, &tol, |_, _| (0.0, 0.0)).unwrap();
    assert!(tr.substeps > 20 && c1.er > ew, "{tr:?}");
    assert_conserves(&c0, &c1, &tr);
}

/// A few cells through the solver: streaming CRs, asymptotic-preserving transport, a fixed
/// boundary energy density 3000 × the interior, the deck's numbers. `jump_at` interior cells
/// start at the reservoir value (0: the deck's start; 4: a 3000 × jump inside the grid, where
/// the reduced e_c dissipation and F = 0 at t = 0 still produce non-realizable cells). Before
/// the fix the first `transport` call did not return; now it returns with a bounded number of
/// exchange substeps, e_c ≥ 0 everywhere and the energy ledger closed to round-off:
/// Δ(E + e_c + e_+ + e_−) = boundary inflow (physics-detail §2.5).
#[test]
fn fixed_energy_density_boundary_jump_runs_with_bounded_work() {
    for jump_at in [0, 4] {
        boundary_jump_case(jump_at);
    }
}

fn boundary_jump_case(jump_at: usize) {
    let n = 16;
    let dx = 3.0857e3 / 128.0; // pc
    let grid = Grid::new(n, 0.0, n as f64 * dx).unwrap();
    let eos = Eos::Ideal { gamma: 5.0 / 3.0 };
    let bx = VA * 0.1f64.sqrt();
    let mut g = State::zeros(grid, bx);
    for j in 0..grid.len() {
        let w = Primitive {
            rho: 0.1,
            p: 2.3e-13 / (1.6726e-24 * 1e10),
            ..Primitive::default()
        };
        g.set_primitive(j, &w, &eos);
    }
    let e_unit = 1.6726e-24 * 1e10; // erg/cm³
    let p = CrParams {
        model: streaming(),
        alfven_density: AlfvenDensity::Total,
        asymptotic_preserving: true,
        boundaries: CrBoundaryPair {
            left: CrBoundary::FixedEnergyDensity(3e-15 / e_unit),
            right: CrBoundary::Outflow,
        },
        ..CrParams::new(C_R, 2.99792458e5, 1.0)
    };
    let mut s = CrSolver::new(p, grid).unwrap();
    let mut cr = CrState::zeros(&grid);
    cr.e_c.fill(1e-18 / e_unit);
    for j in grid.ng..grid.ng + jump_at {
        cr.e_c[j] = 3e-15 / e_unit;
    }
    let tot = |cr: &CrState, g: &State| {
        let c = cr.totals(&grid);
        g.totals()[4] + c[0] + c[2] + c[3]
    };
    let dt = 2.0 * DT;
    let mut substeps = 0;
    let mut limited = 0;
    for _ in 0..20 {
        let e0 = tot(&cr, &g);
        let r = s.transport(&mut cr, &mut g, &NoDamping, dt).unwrap();
        let e1 = tot(&cr, &g);
        let inflow = r.energy_in_left + r.energy_in_right;
        assert!(
            (e1 - e0 - inflow).abs() <= 1e-13 * e0,
            "ledger: {e0} -> {e1}, inflow {inflow}"
        );
        substeps += r.exchange_substeps + r.exchange_rejected;
        limited += r.flux_limited;
        assert!(grid.interior().all(|j| cr.e_c[j] >= 0.0));
    }
    println!(
        "jump at cell {jump_at}, 20 steps: {substeps} exchange substeps, {limited} limited cell exchanges"
    );
    // 20 calls × 1 subcycle × 2 stages × 16 cells = 640 cell exchanges; a few substeps each
    // (the former loop: ~2^30 in one cell).
    assert!(substeps < 5_000, "{substeps}");
    if jump_at > 0 {
        assert!(
            limited > 0,
            "the interior jump should produce non-realizable cells"
        );
    }
    // The reservoir fills the first cell (no CR pressure jump left at the boundary face).
    let first = cr.e_c[grid.ng] * e_unit;
    assert!(first > 0.5 * 3e-15, "first cell e_c = {first:e} erg/cm^3");
}
