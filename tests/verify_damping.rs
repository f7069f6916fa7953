//! One test per damping/cooling check of `sluice-verify` (crates/verify/src/damping_checks.rs).
//! Each runs the check by name and asserts that it passes; the sources are beside the checks.

fn assert_check(name: &str) {
    let r = sluice_verify::run_named(name).unwrap_or_else(|| panic!("unknown check {name}"));
    println!("{r:?}");
    assert!(
        r.pass,
        "{name}: measured {} expected {} tolerance {} ({})",
        r.measured, r.expected, r.tolerance, r.source
    );
}

macro_rules! check_tests {
    ($($test:ident => $name:literal),* $(,)?) => {
        $( #[test] fn $test() { assert_check($name); } )*

        /// Every registered damping check has a test above (and no test names a missing check).
        #[test]
        fn every_damping_check_has_a_test() {
            let mut tested: Vec<&str> = vec![$($name),*];
            tested.sort_unstable();
            let mut registered: Vec<&str> = sluice_verify::damping_checks::checks().iter().map(|c| c.name).collect();
            registered.sort_unstable();
            assert_eq!(tested, registered);
        }
    };
}

check_tests! {
    ion_neutral_wnm_rate => "damping.ion_neutral.wnm.rate",
    ion_neutral_wnm_wave_energy => "damping.ion_neutral.wnm.wave_energy",
    ion_neutral_wnm_streaming_excess => "damping.ion_neutral.wnm.streaming_excess_kms",
    ion_neutral_cool_cloud_rate => "damping.ion_neutral.cool_cloud.rate",
    ion_neutral_cool_cloud_wave_energy => "damping.ion_neutral.cool_cloud.wave_energy",
    ion_neutral_cool_cloud_streaming_excess => "damping.ion_neutral.cool_cloud.streaming_excess_kms",
    nll_wnm_rate => "damping.nll.wnm.rate",
    nll_wnm_wave_energy => "damping.nll.wnm.wave_energy",
    nll_wnm_streaming_excess => "damping.nll.wnm.streaming_excess_kms",
    nll_wim_rate => "damping.nll.wim.rate",
    nll_wim_wave_energy => "damping.nll.wim.wave_energy",
    nll_wim_streaming_excess => "damping.nll.wim.streaming_excess_kms",
    nll_hot_cgm_rate => "damping.nll.hot_cgm.rate",
    nll_hot_cgm_wave_energy => "damping.nll.hot_cgm.wave_energy",
    nll_hot_cgm_streaming_excess => "damping.nll.hot_cgm.streaming_excess_kms",
    turbulent_wim_rate => "damping.turbulent.wim.rate",
    turbulent_wim_wave_energy => "damping.turbulent.wim.wave_energy",
    turbulent_wim_streaming_excess => "damping.turbulent.wim.streaming_excess_kms",
    turbulent_wim_super_alfvenic_rate => "damping.turbulent.wim_super_alfvenic.rate",
    cie_cen1992_row => "damping.cie.cen1992.neutral_fraction_row",
    cie_hui_gnedin_a_row => "damping.cie.hui_gnedin_a.neutral_fraction_row",
    cie_hui_gnedin_b_row => "damping.cie.hui_gnedin_b.neutral_fraction_row",
    cie_cen1992_half_neutral => "damping.cie.cen1992.half_neutral_temperature",
    cie_hui_gnedin_a_half_neutral => "damping.cie.hui_gnedin_a.half_neutral_temperature",
    cie_hui_gnedin_b_half_neutral => "damping.cie.hui_gnedin_b.half_neutral_temperature",
    cie_hui_gnedin_a_recombination => "damping.cie.hui_gnedin_a.recombination_1e4K",
    townsend_single_power_law_exact => "damping.townsend.single_power_law_exact",
    townsend_multi_segment_composition => "damping.townsend.multi_segment_composition",
    townsend_multi_segment_vs_quadrature => "damping.townsend.multi_segment_vs_quadrature",
    townsend_hot_box_cooling_time => "damping.townsend.hot_box_cooling_time",
    ki02_lambda_100k => "damping.ki02.lambda_100K",
    ki02_lambda_1e3k => "damping.ki02.lambda_1e3K",
    ki02_lambda_8e3k => "damping.ki02.lambda_8e3K",
    ki02_lambda_1e4k => "damping.ki02.lambda_1e4K",
    ki02_equilibrium_n0_1 => "damping.ki02.equilibrium_n0.1",
    ki02_equilibrium_n1 => "damping.ki02.equilibrium_n1",
    ki02_equilibrium_n10 => "damping.ki02.equilibrium_n10",
    ki02_implicit_no_overshoot => "damping.ki02.implicit_no_overshoot",
    ki02_implicit_first_order => "damping.ki02.implicit_first_order",
}
