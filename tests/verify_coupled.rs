//! One test per coupled check of `sluice_verify::coupled_checks`: full driver runs with MHD,
//! cosmic rays, waves, damping and cooling (physics-detail §§2–5; sources in each check).

fn assert_check(name: &str) {
    let r =
        sluice_verify::run_named(name).unwrap_or_else(|| panic!("check {name} is not registered"));
    assert!(r.pass, "{name} failed: {r:?}");
}

#[test]
fn cr_sound_wave_phase_speed() {
    assert_check("cr.sound_wave.phase_speed");
}

#[test]
fn cr_sound_wave_damping() {
    assert_check("cr.sound_wave.damping");
}

#[test]
fn cr_sound_wave_damping_frequency() {
    assert_check("cr.sound_wave.damping_frequency");
}

#[test]
fn cr_two_fluid_shock_density() {
    assert_check("cr.two_fluid_shock.density");
}

#[test]
fn cr_two_fluid_shock_gas_pressure() {
    assert_check("cr.two_fluid_shock.gas_pressure");
}

#[test]
fn cr_two_fluid_shock_cr_pressure() {
    assert_check("cr.two_fluid_shock.cr_pressure");
}

#[test]
fn cr_two_fluid_shock_velocity() {
    assert_check("cr.two_fluid_shock.velocity");
}

#[test]
fn cr_two_fluid_shock_star_left_max_error() {
    assert_check("cr.two_fluid_shock.star_left_max_error");
}

#[test]
fn cr_coupled_energy_conservation() {
    assert_check("cr.coupled.energy_conservation");
}

#[test]
fn cr_coupled_momentum_conservation() {
    assert_check("cr.coupled.momentum_conservation");
}

#[test]
fn damping_steady_drift_ion_neutral() {
    assert_check("damping.steady_drift.ion_neutral");
}

#[test]
fn damping_steady_drift_nll() {
    assert_check("damping.steady_drift.nll");
}

#[test]
fn damping_width_exponent_weak() {
    assert_check("damping.width_exponent.weak");
}

#[test]
fn damping_width_exponent_strong() {
    assert_check("damping.width_exponent.strong");
}

#[test]
fn cr_coupled_galilean() {
    assert_check("cr.coupled.galilean");
}

#[test]
fn cr_cooling_ledger() {
    assert_check("cr.cooling.ledger");
}
