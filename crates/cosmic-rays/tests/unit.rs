//! Unit tests of the public API: label symmetry, validation, oblique-field rejection, local
//! exchange conservation and positivity, auto c_r, step limits.

use sluice_cosmic_rays::*;
use sluice_mhd::{Eos, Grid, Primitive, State};

const EOS: Eos = Eos::Ideal { gamma: 5.0 / 3.0 };

fn gas(grid: Grid, bx: f64) -> State {
    let mut g = State::zeros(grid, bx);
    let tau = 2.0 * std::f64::consts::PI;
    for j in 0..grid.len() {
        let x = grid.x_center(j);
        let w = Primitive {
            rho: 1.0 + 0.3 * (tau * x).sin(),
            vx: 0.1 * (tau * x).cos(),
            p: 1.0,
            ..Primitive::default()
        };
        g.set_primitive(j, &w, &EOS);
    }
    g
}

fn cr_state(grid: &Grid, eb: f64, swap: bool) -> CrState {
    let tau = 2.0 * std::f64::consts::PI;
    let mut cr = CrState::zeros(grid);
    for j in 0..grid.len() {
        let x = grid.x_center(j);
        cr.e_c[j] = 1.0 + 0.5 * (tau * x).cos();
        cr.f[j] = 0.2 * (tau * x).sin();
        let a = 1e-2 * eb * (1.0 + 0.5 * (2.0 * tau * x).sin());
        let b = 3e-3 * eb * (1.0 + 0.3 * (tau * x).cos());
        if swap {
            cr.e_plus[j] = b;
            cr.e_minus[j] = a;
        } else {
            cr.e_plus[j] = a;
            cr.e_minus[j] = b;
        }
    }
    cr
}

/// Physics-detail §2.2: (s, e_+, e_−) → (−s, e_−, e_+) leaves the x-equations invariant; the
/// discrete update must be bit-identical.
#[test]
fn label_symmetry_is_bit_identical() {
    let grid = Grid::new(64, 0.0, 1.0).unwrap();
    let damp = QuadraticDamping(0.7);
    let mut results = Vec::new();
    for (bx, swap) in [(0.3, false), (-0.3, true)] {
        let mut g = gas(grid, bx);
        let eb = 0.5 * bx * bx;
        let mut cr = cr_state(&grid, eb, swap);
        let p = CrParams {
            asymptotic_preserving: true,
            ..CrParams::new(5.0, 5.0, 40.0)
        };
        let mut s = CrSolver::new(p, grid).unwrap();
        for _ in 0..20 {
            let dt = 3.0 * s.max_dt_cr(&g);
            s.transport(&mut cr, &mut g, &damp, dt).unwrap();
        }
        results.push((cr, g));
    }
    let (a, ga) = &results[0];
    let (b, gb) = &results[1];
    assert_eq!(a.e_c, b.e_c);
    assert_eq!(a.f, b.f);
    assert_eq!(a.e_plus, b.e_minus);
    assert_eq!(a.e_minus, b.e_plus);
    assert_eq!(ga.mx, gb.mx);
    assert_eq!(ga.en, gb.en);
    // and something happened
    assert!(a
        .e_plus
        .iter()
        .zip(cr_state(&grid, 0.045, false).e_plus.iter())
        .any(|(x, y)| x != y));
}

#[test]
fn validation_names_key_value_and_range() {
    let bad = CrParams::new(-1.0, 10.0, 1.0);
    match bad.validate() {
        Err(CrError::InvalidParameter { key, value, .. }) => {
            assert_eq!(key, "c_r");
            assert_eq!(value, "-1");
        }
        other => panic!("expected an error, got {other:?}"),
    }
    let bad = CrParams {
        model: TransportModel::FixedKappa { kappa: 0.0 },
        ..CrParams::new(1.0, 10.0, 1.0)
    };
    assert!(matches!(
        bad.validate(),
        Err(CrError::InvalidParameter { key: "kappa", .. })
    ));
    let bad = CrParams {
        boundaries: CrBoundaryPair {
            left: CrBoundary::Periodic,
            right: CrBoundary::Outflow,
        },
        ..CrParams::new(1.0, 10.0, 1.0)
    };
    assert!(matches!(
        bad.validate(),
        Err(CrError::InvalidParameter {
            key: "boundaries",
            ..
        })
    ));
    let bad = CrParams::new(10.0, 1.0, 1.0);
    assert!(matches!(
        bad.validate(),
        Err(CrError::InvalidParameter { key: "c", .. })
    ));
    let bad = CrParams {
        wave_floor: 0.0,
        ..CrParams::new(1.0, 10.0, 1.0)
    };
    assert!(matches!(
        bad.validate(),
        Err(CrError::InvalidParameter {
            key: "wave_floor",
            ..
        })
    ));
    assert!(CrSolver::new(
        CrParams::new(f64::NAN, 1.0, 1.0),
        Grid::new(4, 0.0, 1.0).unwrap()
    )
    .is_err());
    let msg = CrParams::new(-1.0, 10.0, 1.0)
        .validate()
        .unwrap_err()
        .to_string();
    assert!(
        msg.contains("c_r") && msg.contains("-1") && msg.contains("> 0"),
        "{msg}"
    );
}

#[test]
fn oblique_field_and_zero_bx_are_rejected() {
    let grid = Grid::new(16, 0.0, 1.0).unwrap();
    let mut g = gas(grid, 0.3);
    g.by[5] = 0.1;
    let mut cr = cr_state(&grid, 0.045, false);
    let mut s = CrSolver::new(CrParams::new(5.0, 5.0, 1.0), grid).unwrap();
    let e = s.transport(&mut cr, &mut g, &NoDamping, 1e-3).unwrap_err();
    assert!(
        matches!(e, CrError::FieldNotAlongX { cell: Some(3), .. }),
        "{e:?}"
    );
    let mut g0 = gas(grid, 0.0);
    assert!(matches!(
        s.transport(&mut cr, &mut g0, &NoDamping, 1e-3),
        Err(CrError::FieldNotAlongX { cell: None, .. })
    ));
    let mut g1 = gas(grid, 0.3);
    assert!(matches!(
        s.transport(&mut cr, &mut g1, &NoDamping, -1.0),
        Err(CrError::InvalidParameter { key: "dt", .. })
    ));
}

#[test]
fn step_limit_is_enforced() {
    let grid = Grid::new(16, 0.0, 1.0).unwrap();
    let mut g = gas(grid, 0.3);
    let mut cr = cr_state(&grid, 0.045, false);
    let p = CrParams {
        max_subcycles: 3,
        ..CrParams::new(5.0, 5.0, 1.0)
    };
    let mut s = CrSolver::new(p, grid).unwrap();
    let too_big = 1.5 * s.max_dt(&g);
    assert!(matches!(
        s.transport(&mut cr, &mut g, &NoDamping, too_big),
        Err(CrError::StepTooLarge { .. })
    ));
    let dtm = s.max_dt(&g);
    let r = s.transport(&mut cr, &mut g, &NoDamping, dtm).unwrap();
    assert_eq!(r.subcycles, 3);
}

/// The local exchange conserves E + e_c + e_+ + e_− and ρv + F/c_r² per cell to round-off and
/// keeps the wave energies ≥ the floor, for stiff and non-stiff steps, in every model.
#[test]
fn local_exchange_conserves_and_stays_positive() {
    let grid = Grid::new(32, 0.0, 1.0).unwrap();
    let models = [
        TransportModel::SelfConfined,
        TransportModel::FixedKappa { kappa: 1e-3 },
        TransportModel::Streaming {
            kappa: 1e-4,
            kappa_decoupled: 10.0,
        },
    ];
    for model in models {
        for dt in [1e-4, 1e-2, 1.0] {
            let mut g = gas(grid, 0.3);
            let mut cr = cr_state(&grid, 0.045, false);
            for j in 0..grid.len() {
                cr.f[j] *= 20.0; // far from equilibrium
            }
            let p = CrParams {
                model,
                coupling: Coupling::Split,
                ..CrParams::new(5.0, 5.0, 1e3)
            };
            let mut s = CrSolver::new(p, grid).unwrap();
            let tot = |cr: &CrState, g: &State| {
                let c = cr.totals(&grid);
                let t = g.totals();
                (t[4] + c[0] + c[2] + c[3], t[1] + c[1] / 25.0)
            };
            let (e0, m0) = tot(&cr, &g);
            let rep = s
                .exchange(&mut cr, &mut g, &ConstantDamping(3.0), dt)
                .unwrap();
            let (e1, m1) = tot(&cr, &g);
            assert!(
                (e1 - e0).abs() <= 1e-13 * e0.abs(),
                "{model:?} dt={dt}: energy {e0} -> {e1}"
            );
            assert!(
                (m1 - m0).abs() <= 1e-13,
                "{model:?} dt={dt}: momentum {m0} -> {m1}"
            );
            let floor = 1e-10 * 0.045;
            for j in grid.interior() {
                assert!(cr.e_c[j] >= 0.0);
                if model == TransportModel::SelfConfined {
                    assert!(
                        cr.e_plus[j] >= floor * (1.0 - 1e-12)
                            && cr.e_minus[j] >= floor * (1.0 - 1e-12)
                    );
                }
            }
            assert!(rep.exchange_substeps >= grid.n as u64);
            if !matches!(model, TransportModel::FixedKappa { .. }) {
                assert!(rep.waves_to_heat > 0.0, "{model:?}: damping heat {rep:?}");
            }
        }
    }
}

/// In-transport coupling makes `exchange` a no-op.
#[test]
fn exchange_is_noop_with_in_transport_coupling() {
    let grid = Grid::new(8, 0.0, 1.0).unwrap();
    let mut g = gas(grid, 0.3);
    let mut cr = cr_state(&grid, 0.045, false);
    let before = cr.clone();
    let mut s = CrSolver::new(CrParams::new(5.0, 5.0, 1.0), grid).unwrap();
    let r = s.exchange(&mut cr, &mut g, &NoDamping, 0.1).unwrap();
    assert_eq!(r, CrReport::default());
    assert_eq!(cr, before);
}

/// c_r = factor × max(|v| + c_f); for B along x, c_f = max(c_s, v_a).
#[test]
fn auto_c_r_uses_fast_speed() {
    let grid = Grid::new(8, 0.0, 1.0).unwrap();
    let mut g = State::zeros(grid, 2.0);
    for j in 0..grid.len() {
        g.set_primitive(
            j,
            &Primitive {
                rho: 1.0,
                vx: -0.5,
                p: 0.6,
                ..Primitive::default()
            },
            &EOS,
        );
    }
    let a = auto_c_r(&g, &EOS, 10.0).unwrap();
    // c_s = 1, v_a = 2 → v_max = 2.5
    assert!((a.v_max - 2.5).abs() < 1e-12, "{a:?}");
    assert!((a.c_r - 25.0).abs() < 1e-11 && a.ratio == 10.0);
    assert!(matches!(
        auto_c_r(&g, &EOS, 5.0),
        Err(CrError::InvalidParameter {
            key: "c_r_factor",
            ..
        })
    ));
}

/// Fixed-flux boundary: the energy entering is exactly F_in Δt, and the report's ledger closes:
/// Δ(total energy) = inflow left + inflow right.
#[test]
fn boundary_ledger_closes() {
    let grid = Grid::new(50, 0.0, 1.0).unwrap();
    let mut g = gas(grid, 0.3);
    let mut cr = cr_state(&grid, 0.045, false);
    let p = CrParams {
        boundaries: CrBoundaryPair {
            left: CrBoundary::FixedFlux(0.7),
            right: CrBoundary::Outflow,
        },
        ..CrParams::new(5.0, 5.0, 30.0)
    };
    let mut s = CrSolver::new(p, grid).unwrap();
    let tot = |cr: &CrState, g: &State| {
        let c = cr.totals(&grid);
        g.totals()[4] + c[0] + c[2] + c[3]
    };
    let e0 = tot(&cr, &g);
    let dt = 5.0 * s.max_dt_cr(&g);
    let r = s
        .transport(&mut cr, &mut g, &ConstantDamping(1.0), dt)
        .unwrap();
    let e1 = tot(&cr, &g);
    assert_eq!(r.subcycles, 5);
    let waves_left = r.energy_in_left - 0.7 * dt;
    assert!(
        waves_left.abs() < 0.1 * 0.7 * dt,
        "CR part of the left inflow is 0.7 dt: {r:?}"
    );
    assert!(
        (e1 - e0 - r.energy_in_left - r.energy_in_right).abs() < 1e-13 * e0,
        "{e0} {e1} {r:?}"
    );
}

#[test]
fn diagnostics_are_consistent() {
    let grid = Grid::new(32, 0.0, 1.0).unwrap();
    let mut g = gas(grid, 0.3);
    let mut cr = cr_state(&grid, 0.045, false);
    let mut s = CrSolver::new(CrParams::new(5.0, 5.0, 30.0), grid).unwrap();
    let dtc = s.max_dt_cr(&g);
    s.transport(&mut cr, &mut g, &ConstantDamping(1.0), dtc)
        .unwrap();
    let d = s.diagnostics(&cr, &g, &ConstantDamping(1.0));
    assert_eq!(d.v_st.len(), grid.n);
    for i in 0..grid.n {
        let j = i + grid.ng;
        let h = 4.0 / 3.0 * cr.e_c[j];
        assert!((d.v_st[i] - cr.f[j] / h).abs() < 1e-14);
        let ke = d.kappa_plus[i] * d.kappa_minus[i] / (d.kappa_plus[i] + d.kappa_minus[i]);
        assert!((d.kappa_eff[i] / ke - 1.0).abs() < 1e-12);
        assert!(
            (d.damping_heating[i] - 2.0 * (cr.e_plus[j] + cr.e_minus[j])).abs()
                < 1e-12 * d.damping_heating[i]
        );
    }
}
