//! Tests of the physics stages through the driver: energy ledger closure, exact solutions
//! (Gaussian diffusion, power-law cooling), unit invariance and bit-exact checkpoints.

use crate::stage::Stage;
use crate::Simulation;

/// A periodic 1 kpc warm box with a CR pulse; `cr` is the `[cosmic_rays]` body (without init),
/// `extra` is appended (damping, cooling …). `units` selects code units of 1 pc / m_p / km/s.
fn deck(cr: &str, extra: &str, units: bool, cells: usize) -> String {
    let u = if units {
        "[units]\nlength = 3.0857e18\ndensity = 1.6726e-24\nvelocity = 1.0e5\n"
    } else {
        ""
    };
    format!(
        r#"
[run]
name = "t"
t_end = 6.3115e13
max_steps = 100000
{u}
[grid]
cells = {cells}
x_min = 0.0
x_max = 3.0857e21

[gas]
gamma = 1.6666666666666667
mean_molecular_weight = 0.6

[magnetic_field]
x = 3.0e-6

[boundaries]
left = "periodic"
right = "periodic"

[init.background]
density = 1.6726e-24
pressure = 1.1e-12

[cosmic_rays]
{cr}

[cosmic_rays.init]
energy_density = 1.0e-12
[[cosmic_rays.init.profiles]]
shape = "gaussian"
center = 1.54285e21
width = 9.2571e19
amplitude = 1.0e-11

{extra}
"#
    )
}

fn field(sim: &Simulation, stage: usize, name: &str) -> Vec<f64> {
    sim.stages()[stage]
        .fields(sim.state())
        .into_iter()
        .find(|f| f.name == name)
        .unwrap_or_else(|| panic!("no field {name}"))
        .data
}

fn relative_residual(sim: &Simulation) -> f64 {
    let l = sim.ledger();
    l.get("energy_residual").unwrap().abs() / l.get("total").unwrap().abs()
}

#[test]
fn ledger_closes_for_self_confined_crs_with_damping() {
    // Conservation law: gas + CR + wave energy change = boundary inflow + sources + floors
    // (physics-detail §2.5: the CR–wave–gas exchange conserves total energy exactly).
    let text = deck(
        "model = \"self_confined\"\nalfven_density = \"total\"",
        "[damping]\nconstant_rate = 1e-14\n[damping.nonlinear_landau]\n",
        true,
        64,
    );
    let mut sim = Simulation::from_toml_str(&text, &[]).unwrap();
    for _ in 0..300 {
        sim.step(f64::INFINITY).unwrap();
    }
    let r = relative_residual(&sim);
    let l = sim.ledger();
    let waves = l.get("cr_forward_waves").unwrap() + l.get("cr_backward_waves").unwrap();
    assert!(waves > 0.0);
    // The waves must actually have been damped (heating) for the test to mean anything.
    let heat = field(&sim, 0, "wave_heating_rate");
    assert!(heat.iter().any(|&h| h > 0.0));
    assert!(r <= 1e-12, "relative ledger residual {r:e}");
    eprintln!("self-confined + damping: 300 steps, relative residual {r:e}");
}

#[test]
fn ledger_closes_with_cooling_once_radiated_energy_is_booked() {
    let text = deck(
        "model = \"fixed_kappa\"\nkappa = 1e26",
        "[cooling]\nfunction = \"ki02\"\n",
        true,
        64,
    );
    let mut sim = Simulation::from_toml_str(&text, &[]).unwrap();
    for _ in 0..200 {
        sim.step(f64::INFINITY).unwrap();
    }
    let l = sim.ledger();
    let src = l.get("stage_sources").unwrap();
    let res = l.get("energy_residual").unwrap();
    // Cooling changed the energy by far more than the residual: unbooked it would not close.
    assert!(
        src.abs() > 1e6 * res.abs(),
        "sources {src:e}, residual {res:e}"
    );
    let r = relative_residual(&sim);
    assert!(r <= 1e-12, "relative ledger residual {r:e}");
    eprintln!("cooling + CRs: 200 steps, sources {src:e} erg/cm^2, relative residual {r:e}");
}

#[test]
fn gaussian_pulse_diffuses_with_variance_sigma2_plus_2_kappa_t() {
    // Exact solution of ∂_t e = κ ∂_x² e (physics-detail §4.3): a Gaussian keeps its area and
    // its variance grows as σ² + 2κt. The two-moment model approaches it for t ≫ κ/c_r²
    // (here κ/c_r² ≈ 1e12 s ≪ t = 6.3e13 s). The pulse is far from the edges.
    let kappa = 1e26;
    let text = deck(
        &format!("model = \"fixed_kappa\"\nkappa = {kappa:e}"),
        "",
        true,
        256,
    );
    // A weak pulse (P_c ≪ p_gas) so that the gas stays at rest and pure diffusion remains.
    let weak = ["cosmic_rays.init.profiles[0].amplitude=1e-14".to_string()];
    let mut sim = Simulation::from_toml_str(&text, &weak).unwrap();
    sim.advance_to(sim.t_end()).unwrap();
    let e = field(&sim, 0, "cr_energy_density");
    let g = sim.state().grid;
    let lu = sim.units().length;
    let (mut m0, mut m1, mut m2) = (0.0, 0.0, 0.0);
    for (k, j) in g.interior().enumerate() {
        let x = g.x_center(j) * lu;
        let w = e[k] - 1e-12;
        m0 += w;
        m1 += w * x;
        m2 += w * x * x;
    }
    let mean = m1 / m0;
    let var = m2 / m0 - mean * mean;
    let t = sim.time_seconds();
    let expect = 9.2571e19f64.powi(2) + 2.0 * kappa * t;
    let rel = (var / expect - 1.0).abs();
    eprintln!("diffusion: variance {var:e} vs {expect:e} (rel {rel:e})");
    assert!(rel < 0.03, "variance {var:e} vs {expect:e}");
    assert!((mean / 1.54285e21 - 1.0).abs() < 1e-3);
}

#[test]
fn cgs_and_scaled_code_units_give_the_same_cgs_answer() {
    // Dimensional invariance: the deck is cgs; the choice of code units must not matter
    // beyond round-off (tests every conversion factor of the CR stage and the damping adapter).
    let mk = |units| {
        deck(
            "model = \"self_confined\"\nalfven_density = \"total\"",
            "[damping]\n[damping.nonlinear_landau]\n",
            units,
            64,
        )
    };
    let mut a = Simulation::from_toml_str(&mk(false), &[]).unwrap();
    let mut b = Simulation::from_toml_str(&mk(true), &[]).unwrap();
    let dt = 1e12;
    for _ in 0..20 {
        a.step_exact(dt / a.units().time()).unwrap();
        b.step_exact(dt / b.units().time()).unwrap();
    }
    for name in [
        "cr_energy_density",
        "cr_flux",
        "forward_wave_energy",
        "backward_wave_energy",
        "kappa_effective",
        "wave_heating_rate",
    ] {
        let (fa, fb) = (field(&a, 0, name), field(&b, 0, name));
        let scale = fa.iter().fold(0.0f64, |m, x| m.max(x.abs()));
        let err = fa
            .iter()
            .zip(&fb)
            .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()));
        assert!(err <= 1e-8 * scale, "{name}: max diff {err:e} of {scale:e}");
    }
}

#[test]
fn power_law_cooling_follows_the_exact_solution() {
    // Isochoric cooling with Λ = Λ0 (T/T0)^α: dT/dt = −(γ−1) n_H² Λ0 (T/T0)^α/(n_tot k_B), so
    // T^{1−α} = T_i^{1−α} − (1−α)(γ−1) n_H² Λ0 T0^{−α} t/(n_tot k_B) (separation of variables).
    // Uniform gas at rest: the MHD step is the identity, so the Townsend (2009) stage must
    // reproduce this to round-off whatever the step.
    let text = r#"
[run]
name = "c"
t_end = 1.5e12
[grid]
cells = 8
x_min = 0.0
x_max = 1.0e20
[gas]
gamma = 1.6666666666666667
mean_molecular_weight = 0.6
[boundaries]
left = "periodic"
right = "periodic"
[init.background]
density = 1.0e-24
pressure = 1.0e-11
[ionisation]
model = "fixed"
ion_fraction = 1.0
[cooling]
function = "table"
temperature_floor = 1.0e4
[[cooling.table]]
t_min = 1.0e4
lambda = 1.0e-23
exponent = 0.5
"#;
    let mut sim = Simulation::from_toml_str(text, &[]).unwrap();
    sim.advance_to(sim.t_end()).unwrap();
    let kb = crate::units::K_BOLTZMANN;
    let mu = 0.6 * crate::units::ATOMIC_MASS_UNIT;
    let t0 = mu * 1e-11 / (1e-24 * kb);
    let n_tot = 1e-24 / mu;
    let n_h = 1e-24 / (sluice_damping::constants::M_PROTON * 1.4);
    let (lam0, tref, a, g): (f64, f64, f64, f64) = (1e-23, 1e4, 0.5, 5.0 / 3.0);
    let t = sim.time_seconds();
    let y = t0.powf(1.0 - a)
        - (1.0 - a) * (g - 1.0) * n_h * n_h * lam0 * tref.powf(-a) * t / (n_tot * kb);
    let t_exact = y.powf(1.0 / (1.0 - a));
    assert!(
        t_exact > 2e4 && t_exact < 0.8 * t0,
        "choose a test that cools: {t_exact}"
    );
    let temp = field(&sim, 0, "cooling_rate");
    assert_eq!(temp.len(), 8);
    let st = sim.state();
    let eos = sim.solver().config().eos;
    let j = st.grid.interior().start;
    let p = st.primitive(j, &eos).p * sim.units().pressure();
    let t_num = mu * p / (1e-24 * kb);
    assert!(
        (t_num / t_exact - 1.0).abs() < 1e-10,
        "{t_num} vs {t_exact}"
    );
    assert!(relative_residual(&sim) < 1e-13);
}

#[test]
fn cr_checkpoint_restores_bit_exactly() {
    let text = deck(
        "model = \"self_confined\"\nalfven_density = \"total\"",
        "[damping]\n[damping.nonlinear_landau]\n",
        true,
        32,
    );
    let mut sim = Simulation::from_toml_str(&text, &[]).unwrap();
    for _ in 0..10 {
        sim.step(f64::INFINITY).unwrap();
    }
    let cp = sim.stages()[0].checkpoint();
    // A fresh stage from the same deck, restored, must hold the same CR state bit for bit.
    let fresh = Simulation::from_toml_str(&text, &[]).unwrap();
    let deck = fresh.deck().clone();
    let mut gas = sim.state().clone();
    let mhd = sluice_mhd::MhdSolver::new(*sim.solver().config(), gas.grid).unwrap();
    let mut st = super::CosmicRayStage::new(
        &deck,
        sim.units(),
        fresh.state(),
        &mhd,
        super::thermo(&deck),
        deck.damping.as_ref().map(super::damping_model),
    )
    .unwrap();
    st.restore(&cp).unwrap();
    let cp2 = st.checkpoint();
    for (a, b) in cp.iter().zip(&cp2) {
        assert_eq!(a.name, b.name);
        assert!(
            a.data
                .iter()
                .zip(&b.data)
                .all(|(x, y)| x.to_bits() == y.to_bits()),
            "{}",
            a.name
        );
    }
    // Bad restart data is an error naming the dataset, not a panic.
    let mut short = cp.clone();
    short[0].data.pop();
    assert!(st.restore(&short).is_err());
    // And the restored stage continues exactly like the original.
    let mut gas2 = gas.clone();
    let mut orig = super::CosmicRayStage::new(
        &deck,
        sim.units(),
        fresh.state(),
        &mhd,
        super::thermo(&deck),
        deck.damping.as_ref().map(super::damping_model),
    )
    .unwrap();
    orig.restore(&cp).unwrap();
    let dt = 0.5 * sim.stable_dt();
    st.transport(&mut gas, dt).unwrap();
    orig.transport(&mut gas2, dt).unwrap();
    let (c1, c2) = (st.checkpoint(), orig.checkpoint());
    assert!(c1.iter().zip(&c2).all(|(a, b)| a
        .data
        .iter()
        .zip(&b.data)
        .all(|(x, y)| x.to_bits() == y.to_bits())));
    assert!(gas
        .en
        .iter()
        .zip(gas2.en.iter())
        .all(|(x, y)| x.to_bits() == y.to_bits()));
}

#[test]
fn deck_errors_name_the_physics_keys() {
    let base = deck("model = \"fixed_kappa\"\nkappa = 1e26", "", true, 16);
    let err = |sets: &[&str]| {
        let s: Vec<String> = sets.iter().map(|x| x.to_string()).collect();
        crate::deck::parse_deck(&base, &s).unwrap_err()
    };
    let e = err(&["cosmic_rays.kappa=-1.0"]);
    assert_eq!(e.key(), Some("cosmic_rays.kappa"), "{e}");
    let e = err(&[
        "cosmic_rays.model=\"streaming\"",
        "cosmic_rays.kappa_decoupled=0.0",
    ]);
    assert_eq!(e.key(), Some("cosmic_rays.kappa_decoupled"), "{e}");
    let e = err(&["init.background.magnetic_field_y=1e-6"]);
    assert_eq!(e.key(), Some("init.background.magnetic_field_y"), "{e}");
    let e = err(&["magnetic_field.x=0.0"]);
    assert_eq!(e.key(), Some("magnetic_field.x"), "{e}");
    let e = err(&["cosmic_rays.left=\"outflow\""]);
    assert_eq!(e.key(), Some("cosmic_rays.left"), "{e}");
    let e = err(&["damping.constant_rate=1e-10"]);
    assert_eq!(e.key(), Some("cosmic_rays.model"), "{e}");
    let e = err(&["cosmic_rays.reduced_speed_of_light=\"fast\""]);
    assert_eq!(e.key(), Some("cosmic_rays.reduced_speed_of_light"), "{e}");
    let e = err(&["cosmic_rays.auto_factor=0.5"]);
    assert_eq!(e.key(), Some("cosmic_rays.auto_factor"), "{e}");
    let e = err(&["cooling.function=\"table\""]);
    assert_eq!(e.key(), Some("cooling.table"), "{e}");
    let e = err(&["ionisation.model=\"fixed\""]);
    assert_eq!(e.key(), Some("ionisation.ion_fraction"), "{e}");
}

#[test]
fn ion_alfven_speed_uses_the_ion_mass_fraction() {
    // Definition (docs/deck.md): v_a = |B_x|/sqrt(4π ρ_i), ρ_i/ρ = x_i/(1 + 4y); here x_i = 0.05,
    // y = 0.1, B = 3 μG, ρ = m_p-ish 1.6726e-24 g/cm³.
    let text = deck(
        "model = \"streaming\"\nkappa = 1e24\nalfven_density = \"ion\"",
        "[ionisation]\nmodel = \"fixed\"\nion_fraction = 0.05\n",
        true,
        16,
    );
    let sim = Simulation::from_toml_str(&text, &[]).unwrap();
    let va = field(&sim, 0, "alfven_speed");
    let expect = 3e-6 / (4.0 * std::f64::consts::PI * 1.6726e-24 * 0.05 / 1.4).sqrt();
    for v in va {
        assert!((v / expect - 1.0).abs() < 1e-12, "{v} vs {expect}");
    }
}
