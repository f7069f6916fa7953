//! One test per MHD verification check (`crates/verify/src/mhd_checks.rs`); each runs the
//! check through the registry and asserts that it passes. Sources are stated in the checks.

fn run(name: &str) {
    let r = sluice_verify::run_named(name)
        .unwrap_or_else(|| panic!("check `{name}` is not registered"));
    assert!(r.pass, "check failed: {r:#?}");
    println!("{r:?}");
}

#[test]
fn exact_riemann_toro_test1_pstar() {
    run("mhd.exact_riemann.toro_test1_pstar");
}

#[test]
fn exact_riemann_toro_test1_ustar() {
    run("mhd.exact_riemann.toro_test1_ustar");
}

#[test]
fn sod_l1_density_n400() {
    run("mhd.sod.l1_density_n400");
}

#[test]
fn sod_convergence_order() {
    run("mhd.sod.convergence_order");
}

#[test]
fn brio_wu_positivity() {
    run("mhd.brio_wu.positivity");
}

#[test]
fn brio_wu_feature_positions() {
    run("mhd.brio_wu.feature_positions");
}

#[test]
fn linear_wave_fast_order() {
    run("mhd.linear_wave.fast_order");
}

#[test]
fn linear_wave_alfven_order() {
    run("mhd.linear_wave.alfven_order");
}

#[test]
fn linear_wave_slow_order() {
    run("mhd.linear_wave.slow_order");
}

#[test]
fn linear_wave_entropy_order() {
    run("mhd.linear_wave.entropy_order");
}

#[test]
fn conservation_periodic_1000_steps() {
    run("mhd.conservation.periodic_1000_steps");
}

#[test]
fn galilean_boosted_riemann() {
    run("mhd.galilean.boosted_riemann");
}
