//! Coupled checks: full Sluice runs through the driver (`sluice_driver::Simulation` built
//! from a deck) with MHD, cosmic rays, Alfvén waves, wave damping and cooling together,
//! compared with exact or analytic results from outside the project
//! (`crate::reference`, docs/references.md).
//!
//! Every deck is in cgs (the driver's deck schema); the checks read the gas state from the
//! driver (code units, converted with `Simulation::units`) and the CR fields from the CR
//! stage's snapshot fields (cgs). Each check names its source beside it.

use std::f64::consts::PI;
use std::sync::OnceLock;

use crate::reference::complex::Complex;
use crate::reference::dispersion::{cr_sound_mode, GasForce, SoundBackground};
use crate::reference::drift::{steady_drift, DampingLaw, DriftInputs};
use crate::reference::riemann::{TwoFluidRiemann, TwoFluidState, Wave};
use crate::{max_check, rel_check, Check, CheckResult};
use sluice_damping::constants::{C_LIGHT, E_CHARGE, K_BOLTZMANN, M_PROTON, M_PROTON_C2};
use sluice_driver::Simulation;

// ---------------------------------------------------------------------------------------------
// Sources.

const SRC_SOUND_SPEED: &str = "CR-modified sound speed c_eff² = (γ P_g + γ_c P_c)/ρ in the strong-coupling limit κk²/ω ≪ 1 (Drury & Völk 1981, ApJ 248, 344; physics-detail §4.5): fixed κ = 1e-4 cm²/s (κk²/ω = 4e-4), c_r = 30 cm/s, ρ = 1, P_g = 0.6, P_c = 0.75, k = 2π cm⁻¹, N = 256, amplitude 1e-6; phase speed from a fit of the Fourier phase of δρ over two periods; bound 0.5% relative";
const SRC_SOUND_DAMP: &str = "Dispersion relation of CR-modified sound waves, fixed κ, finite c_r, gas force S_+ + S_− (Sluice's momentum equation; docs/references.md §2, derived from physics-detail §4.5; limits Drury & Völk 1981, ApJ 248, 344 and Ptuskin 1981): κ = 0.1 cm²/s, c_r = 30 cm/s, k = 2π cm⁻¹, c_g = c_c = 1 cm/s, ω = 8.61811 − 0.93145 i s⁻¹ (reference::dispersion); eigenmode of reference::dispersion::cr_sound_mode, amplitude 1e-6, N = 256; decay rate from a fit of ln|δρ_k| (bound 3% relative), Re ω from the Fourier phase (bound 1% relative)";
const SRC_SHOCK: &str = "Two-fluid (gas + advected CR) shock tube, CRs not shock-accelerated (Pfrommer, Springel, Enßlin & Jubelgas 2006, MNRAS 367, 113); exact solution reference::riemann::TwoFluidRiemann (docs/references.md §1): left (ρ, u, P_g, P_c) = (1, 0, 1, 2), right (0.2, 0, 0.1, 0.1), γ = 5/3, γ_c = 4/3, x0 = 0.45, t = 0.2, N = 400; fixed κ = 1e-6 cm²/s (advected CRs), c_r = 50 cm/s; average over the middle 60% of each star plateau; bound 1% relative";
const SRC_CONS: &str = "Total energy E + e_c + e_+ + e_− and reduced momentum ρv + F/c_r² are conserved by the coupled gas–CR–wave system (Thomas & Pfrommer 2019, MNRAS 485, 2977; physics-detail §2.5; discrete proof docs/equations.md §5): periodic box, MHD + self-confined CRs + waves + ion–neutral and nonlinear Landau damping, CR pulse + gas density pulse + velocity wave, 1000 steps; bound 1e-12 relative (energy: ledger residual / total; momentum: |ΔP| / Σ(|ρv| + |F|/c_r²))";
const SRC_DRIFT_IN: &str = "Steady drift from streaming-instability growth = ion–neutral damping (Kulsrud & Pearce 1969, ApJ 156, 445; Wiener, Zweibel & Oh 2013, ApJ 767, 87; Wiener, Oh & Guo 2013, MNRAS 434, 2209; physics-detail §4.1): F − v_a h = 2Γ c² e_B/(α_ν Ω v_a), Γ = n_n ⟨σv⟩/2 (reference::drift::steady_drift); CR ramp between fixed energy densities, B = 10 μG, v_a = 10 km/s, P_c ≤ 0.06 e_B (gas static to 0.3% of v_a), interior cells 0.3–0.7 of the box after 2Γt ≈ 50; bound 2% relative in every interior cell";
const SRC_DRIFT_NLL: &str = "Steady drift from streaming-instability growth = nonlinear Landau damping (Kulsrud 2005, Plasma Physics for Astrophysics; Wiener, Oh & Guo 2013, MNRAS 434, 2209; physics-detail §§3.2, 4.1): F − v_a h = (c²/(α_ν Ω)) √(C_nll k v_i e_B |∂x P_c|/v_a), k = 1/r_g, v_i = √(k_B T/m_p) (reference::drift::steady_drift with the local measured ∂x P_c and T); CR ramp between fixed energy densities, B = 10 μG, v_a = 10 km/s, interior cells 0.3–0.7 of the box; bound 2% relative in every interior cell";
const SRC_WIDTH_WEAK: &str = "Self-confinement with weak damping: the waves grow until the CRs stream at v_a and the fronts of a top hat move at v_a, half-width x_f = L + v_a t, width ∝ t^α with α → 1 (Wiener, Oh & Guo 2013, MNRAS 434, 2209; streaming limit physics-detail §§2.4, 4.4): top-hat CR pulse of half-width L = 0.02 (box 1, N = 512), P_c = 0.1 e_B, initial waves 1e-3 e_B, constant damping Γ0 = 1 v_a/L_box, gas 10× the ion mass (x_i = 0.1), c_r = 30 v_a; width = half-width at half maximum above the far-field level; α = log–log least-squares slope for t = 0.1–0.3 L_box/v_a; bound |α − 1| ≤ 0.15 (for x_f = L + v t the local slope is v t/(L + v t) ≈ 0.9 here: the finite initial half-width lowers α by ≈ 0.1)";
const SRC_WIDTH_STRONG: &str = "Self-confinement with strong damping: the waves stay at their floor f e_B, κ = c²/(3 α_ν Ω · 2f) is constant and the pulse diffuses, width ∝ √(w0² + 2κt), α → 1/2 (heat kernel, Morse & Feshbach 1953, §7.4; physics-detail §§2.4, 4.3): the same top-hat pulse and gas, Γ0 = 1e6 v_a/L_box, floor f giving κ = 0.3 v_a L_box, c_r = 100 v_a (telegraph delay 3κ/c_r² = 0.09 t_min); width = half-width at half maximum above the far-field level; α = log–log least-squares slope for t = 0.0025–0.01 L_box/v_a (2κt/L² from 4 to 15); bound |α − 0.5| ≤ 0.1 (the finite initial width lowers α by a few hundredths over this range)";
const SRC_GAL: &str = "Galilean invariance of the coupled equations (physics-detail §2.2; exact up to O(u v/c_r²)): streaming CR pulse (strong-coupling model, c_r = 40 v_a) in gas moving uniformly at u = 0.5 v_a in a periodic box, N = 200, equals the static run shifted by u t (20 cells); measured: L1 difference relative to ∫(e_c − e_bg); bound (truncation level): the static run's own discretisation error, estimated as its L1 difference from the static run at N = 400 (cell pairs averaged), computed in the check";
const SRC_COOL: &str = "Energy ledger with radiative cooling (Koyama & Inutsuka 2002, ApJ 564, L97 cooling and heating, exact integration Townsend 2009, ApJS 181, 391; physics-detail §5): total (gas + CR + waves) − initial − radiated − boundary − floors = 0 to round-off; warm gas n_H = 1 cm⁻³, T = 2e4 K with a density pulse, self-confined CRs with nonlinear Landau damping; bound 1e-10 relative (and the radiated energy must be ≥ 1% of the total so the ledger is exercised)";

/// The checks of this module.
pub fn checks() -> Vec<Check> {
    vec![
        Check {
            name: "cr.sound_wave.phase_speed",
            source: SRC_SOUND_SPEED,
            run: sound_phase_speed,
        },
        Check {
            name: "cr.sound_wave.damping",
            source: SRC_SOUND_DAMP,
            run: sound_damping,
        },
        Check {
            name: "cr.sound_wave.damping_frequency",
            source: SRC_SOUND_DAMP,
            run: sound_damping_frequency,
        },
        Check {
            name: "cr.two_fluid_shock.density",
            source: SRC_SHOCK,
            run: shock_density,
        },
        Check {
            name: "cr.two_fluid_shock.gas_pressure",
            source: SRC_SHOCK,
            run: shock_gas_pressure,
        },
        Check {
            name: "cr.two_fluid_shock.cr_pressure",
            source: SRC_SHOCK,
            run: shock_cr_pressure,
        },
        Check {
            name: "cr.two_fluid_shock.velocity",
            source: SRC_SHOCK,
            run: shock_velocity,
        },
        Check {
            name: "cr.two_fluid_shock.star_left_max_error",
            source: SRC_SHOCK,
            run: shock_star_left,
        },
        Check {
            name: "cr.coupled.energy_conservation",
            source: SRC_CONS,
            run: conservation_energy,
        },
        Check {
            name: "cr.coupled.momentum_conservation",
            source: SRC_CONS,
            run: conservation_momentum,
        },
        Check {
            name: "damping.steady_drift.ion_neutral",
            source: SRC_DRIFT_IN,
            run: drift_ion_neutral,
        },
        Check {
            name: "damping.steady_drift.nll",
            source: SRC_DRIFT_NLL,
            run: drift_nll,
        },
        Check {
            name: "damping.width_exponent.weak",
            source: SRC_WIDTH_WEAK,
            run: width_weak,
        },
        Check {
            name: "damping.width_exponent.strong",
            source: SRC_WIDTH_STRONG,
            run: width_strong,
        },
        Check {
            name: "cr.coupled.galilean",
            source: SRC_GAL,
            run: galilean,
        },
        Check {
            name: "cr.cooling.ledger",
            source: SRC_COOL,
            run: cooling_ledger,
        },
    ]
}

// ---------------------------------------------------------------------------------------------
// Helpers.

/// γ_c of the checks (the deck default 4/3).
const GAMMA_C: f64 = 4.0 / 3.0;
/// α_ν of the checks (the deck default 3π/16, from memory: an input, not an asserted fact).
const ALPHA_NU: f64 = 3.0 * PI / 16.0;
/// Atomic mass unit [g] (CODATA 2018), for T = μ m_u p/(ρ k_B) (docs/deck.md).
const M_U: f64 = 1.660_539_066_60e-24;
/// 1 GeV [erg] (the characteristic CR momentum p c of the deck default `cr_momentum = 1`).
const GEV: f64 = 1.0e9 * 1.602_176_634e-12;

/// A failed check with the reason on stderr (measured = NaN).
fn failed(name: &str, source: &str, expected: f64, tolerance: f64, why: &str) -> CheckResult {
    eprintln!("{name}: {why}");
    CheckResult {
        name: name.into(),
        source: source.into(),
        measured: f64::NAN,
        expected,
        tolerance,
        pass: false,
    }
}

fn build(deck: &str) -> Result<Simulation, String> {
    Simulation::from_toml_str(deck, &[]).map_err(|e| format!("deck/set-up: {e}"))
}

fn advance(sim: &mut Simulation, t_code: f64) -> Result<(), String> {
    sim.advance_to(t_code).map_err(|e| format!("run: {e}"))
}

/// The first stage field (cgs, interior cells) named one of `names`.
fn stage_field(sim: &Simulation, names: &[&str]) -> Result<Vec<f64>, String> {
    let mut available = Vec::new();
    for s in sim.stages() {
        for f in s.fields(sim.state()) {
            if names.contains(&f.name.as_str()) {
                return Ok(f.data);
            }
            available.push(f.name);
        }
    }
    Err(format!(
        "no stage field named any of {names:?}; available: {available:?}"
    ))
}

/// CR energy density e_c [erg/cm³] per interior cell.
fn cr_energy(sim: &Simulation) -> Result<Vec<f64>, String> {
    stage_field(
        sim,
        &["cr_energy_density", "cosmic_ray_energy_density", "e_c"],
    )
}

/// Comoving CR energy flux F [erg/cm²/s] per interior cell.
fn cr_flux(sim: &Simulation) -> Result<Vec<f64>, String> {
    stage_field(sim, &["cr_flux", "cr_energy_flux", "cosmic_ray_flux", "f"])
}

/// The gas in cgs, interior cells.
struct Gas {
    x: Vec<f64>,
    rho: Vec<f64>,
    v: Vec<f64>,
    p: Vec<f64>,
    /// |B_x| [G].
    b: f64,
    dx: f64,
}

fn gas_cgs(sim: &Simulation) -> Gas {
    let u = sim.units();
    let st = sim.state();
    let eos = sim.solver().config().eos;
    let n = st.grid.n;
    let (mut x, mut rho, mut v, mut p) = (
        Vec::with_capacity(n),
        Vec::with_capacity(n),
        Vec::with_capacity(n),
        Vec::with_capacity(n),
    );
    for j in st.grid.interior() {
        let w = st.primitive(j, &eos);
        x.push(st.grid.x_center(j) * u.length);
        rho.push(w.rho * u.density);
        v.push(w.vx * u.velocity);
        p.push(w.p * u.pressure());
    }
    Gas {
        x,
        rho,
        v,
        p,
        b: u.field_to_gauss(st.bx).abs(),
        dx: st.grid.dx() * u.length,
    }
}

/// Least-squares slope of y(x).
fn slope(x: &[f64], y: &[f64]) -> f64 {
    let n = x.len() as f64;
    let mx = x.iter().sum::<f64>() / n;
    let my = y.iter().sum::<f64>() / n;
    let sxy: f64 = x.iter().zip(y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = x.iter().map(|a| (a - mx) * (a - mx)).sum();
    sxy / sxx
}

/// Gyro-frequency Ω = e B/(γ_L m_p c) [s⁻¹] of a proton with p c = 1 GeV (physics-detail §2.1).
fn gyro_frequency(b_gauss: f64) -> f64 {
    let gamma_l = (1.0 + (GEV / M_PROTON_C2).powi(2)).sqrt();
    E_CHARGE * b_gauss / (gamma_l * M_PROTON * C_LIGHT)
}

/// Gyro-radius r_g = p c/(e B) [cm] of a proton with p c = 1 GeV (physics-detail §2.1).
fn gyro_radius(b_gauss: f64) -> f64 {
    GEV / (E_CHARGE * b_gauss)
}

/// A TOML float (always with an exponent, so never read as an integer).
fn f(x: f64) -> String {
    format!("{x:e}")
}

/// An ISM-like unit system for the self-confined checks: B = 10 μG, v_a = 10 km/s on the
/// total density, box 100 pc. Code density ρ_u = B²/(4π u²) gives v_a = 1 and e_B = 1/2 code.
#[derive(Clone, Copy)]
struct Ism {
    b: f64,
    u: f64,
    l: f64,
    rho: f64,
}

impl Ism {
    fn new() -> Self {
        let b = 1e-5;
        let u = 1e6;
        Self {
            b,
            u,
            l: 3.085_677_581_491_367e20,
            rho: b * b / (4.0 * PI * u * u),
        }
    }
    /// Code pressure [erg/cm³].
    fn pres(&self) -> f64 {
        self.rho * self.u * self.u
    }
    /// Code time [s].
    fn time(&self) -> f64 {
        self.l / self.u
    }
    fn units(&self) -> String {
        format!(
            "[units]\nlength = {}\ndensity = {}\nvelocity = {}\n",
            f(self.l),
            f(self.rho),
            f(self.u)
        )
    }
}

// ---------------------------------------------------------------------------------------------
// 1. CR-modified sound waves.

/// Result of a sound-wave run: fitted ω and the reference ω.
#[derive(Debug, Clone, Copy)]
struct SoundFit {
    measured: Complex,
    expected: Complex,
}

/// Runs the fixed-κ eigenmode (cr_sound_mode, Scattering force) and fits ω from the Fourier
/// coefficient of δρ at k: δρ_k(t) ∝ e^{−iωt} (so Re ω = −d arg/dt, Im ω = d ln|δρ_k|/dt).
fn sound_run(kappa: f64, c_r: f64, t_end: f64) -> Result<SoundFit, String> {
    let (rho0, p0, gamma, pc0) = (1.0, 0.6, 5.0 / 3.0, 0.75);
    let n = 256;
    let k = 2.0 * PI;
    let amp = 1e-6;
    let bg = SoundBackground {
        rho0,
        p0,
        gamma,
        pc0,
    };
    let mode =
        cr_sound_mode(&bg, k, kappa, c_r, GasForce::Scattering).map_err(|e| e.to_string())?;
    // A Re[δq e^{ikx}] = A|δq| sin(kx + arg δq + π/2).
    let sine = |table: &str, field: &str, z: Complex| -> String {
        if z.abs() == 0.0 {
            return String::new();
        }
        format!(
            "[[{table}]]\nshape = \"sine\"\nfield = \"{field}\"\namplitude = {}\nwavelength = 1e0\nphase = {}\n",
            f(amp * z.abs()),
            f(z.im.atan2(z.re) + 0.5 * PI)
        )
    };
    let e_c0 = pc0 / (GAMMA_C - 1.0);
    let deck = format!(
        "[run]\nname = \"coupled_sound\"\nt_end = {t}\n[grid]\ncells = {n}\nx_min = 0e0\nx_max = 1e0\n\
         [gas]\ngamma = {g}\n[magnetic_field]\nx = 1e-3\n[boundaries]\nleft = \"periodic\"\nright = \"periodic\"\n\
         [init.background]\ndensity = {r}\npressure = {p}\n{pd}{pv}{pp}\
         [cosmic_rays]\nmodel = \"fixed_kappa\"\nkappa = {kap}\nreduced_speed_of_light = {cr}\nleft = \"periodic\"\nright = \"periodic\"\n\
         [cosmic_rays.init]\nenergy_density = {ec}\n{ce}{cf}",
        t = f(t_end),
        g = f(gamma),
        r = f(rho0),
        p = f(p0),
        pd = sine("init.profiles", "density", mode.drho),
        pv = sine("init.profiles", "velocity_x", mode.dv),
        pp = sine("init.profiles", "pressure", mode.dp),
        kap = f(kappa),
        cr = f(c_r),
        ec = f(e_c0),
        ce = sine("cosmic_rays.init.profiles", "energy_density", mode.de_c),
        cf = sine("cosmic_rays.init.profiles", "flux", mode.dflux),
    );
    let mut sim = build(&deck)?;
    let coeff = |sim: &Simulation| -> Complex {
        let g = gas_cgs(sim);
        let (mut re, mut im) = (0.0, 0.0);
        for (x, r) in g.x.iter().zip(&g.rho) {
            let d = r - rho0;
            re += d * (k * x).cos();
            im -= d * (k * x).sin();
        }
        Complex::new(re, im).scale(2.0 / (n as f64 * amp * rho0))
    };
    let samples = 60;
    let (mut ts, mut phase, mut lnamp) = (Vec::new(), Vec::new(), Vec::new());
    let mut prev: Option<f64> = None;
    for i in 0..=samples {
        let t = t_end * i as f64 / samples as f64;
        advance(&mut sim, t)?;
        let a = coeff(&sim);
        let mut ph = a.im.atan2(a.re);
        if let Some(pv) = prev {
            while ph - pv > PI {
                ph -= 2.0 * PI;
            }
            while ph - pv < -PI {
                ph += 2.0 * PI;
            }
        }
        prev = Some(ph);
        ts.push(t);
        phase.push(ph);
        lnamp.push(a.abs().ln());
    }
    Ok(SoundFit {
        measured: Complex::new(-slope(&ts, &phase), slope(&ts, &lnamp)),
        expected: mode.omega,
    })
}

fn sound_phase_speed() -> CheckResult {
    let name = "cr.sound_wave.phase_speed";
    // Drury & Völk (1981): c_eff² = (γ P_g + γ_c P_c)/ρ = (5/3·0.6 + 4/3·0.75)/1 = 2.
    let expected = 2.0_f64.sqrt();
    match sound_run(1e-4, 30.0, 1.5) {
        Ok(fit) => rel_check(
            name,
            SRC_SOUND_SPEED,
            fit.measured.re / (2.0 * PI),
            expected,
            0.005,
        ),
        Err(e) => failed(name, SRC_SOUND_SPEED, expected, 0.005, &e),
    }
}

fn sound_damped() -> &'static Result<SoundFit, String> {
    static RUN: OnceLock<Result<SoundFit, String>> = OnceLock::new();
    RUN.get_or_init(|| sound_run(0.1, 30.0, 1.5))
}

fn sound_damping() -> CheckResult {
    let name = "cr.sound_wave.damping";
    match sound_damped() {
        Ok(fit) => rel_check(name, SRC_SOUND_DAMP, fit.measured.im, fit.expected.im, 0.03),
        Err(e) => failed(name, SRC_SOUND_DAMP, f64::NAN, 0.03, e),
    }
}

fn sound_damping_frequency() -> CheckResult {
    let name = "cr.sound_wave.damping_frequency";
    match sound_damped() {
        Ok(fit) => rel_check(name, SRC_SOUND_DAMP, fit.measured.re, fit.expected.re, 0.01),
        Err(e) => failed(name, SRC_SOUND_DAMP, f64::NAN, 0.01, e),
    }
}

// ---------------------------------------------------------------------------------------------
// 2. Two-fluid shock tube.

/// Plateau averages (measured, exact) of the star-left and star-right regions.
struct ShockResult {
    left: (TwoFluidState, TwoFluidState),
    right: (TwoFluidState, TwoFluidState),
}

// Measured (N = 400 and N = 1600 alike, i.e. not a resolution effect): post-shock P_c +0.70%,
// P_g −0.41%, total pressure −0.03%, ρ +0.13%; the CR entropy P_c ρ^{−γ_c} rises by 0.5% across
// the captured shock, whereas the exact two-fluid solution advects it unchanged. The CR energy
// equation is not in conservation form, so its shock jump depends on the scheme's path through
// the shock; the published 1% bound holds with a margin of ≈ 0.3%.
fn shock_run() -> Result<ShockResult, String> {
    let (x0, t, n) = (0.45, 0.2, 400);
    let left = TwoFluidState {
        rho: 1.0,
        u: 0.0,
        pg: 1.0,
        pc: 2.0,
    };
    let right = TwoFluidState {
        rho: 0.2,
        u: 0.0,
        pg: 0.1,
        pc: 0.1,
    };
    let exact =
        TwoFluidRiemann::solve(left, right, 5.0 / 3.0, GAMMA_C).map_err(|e| e.to_string())?;
    let ec = |pc: f64| pc / (GAMMA_C - 1.0);
    let deck = format!(
        "[run]\nname = \"coupled_shock\"\nt_end = {t}\n[grid]\ncells = {n}\nx_min = 0e0\nx_max = 1e0\n\
         [gas]\ngamma = {g}\n[magnetic_field]\nx = 1e-3\n[boundaries]\nleft = \"outflow\"\nright = \"outflow\"\n\
         [init.background]\ndensity = {rr}\npressure = {pr}\n\
         [[init.regions]]\nx_min = 0e0\nx_max = {x0}\ndensity = {rl}\npressure = {pl}\n\
         [cosmic_rays]\nmodel = \"fixed_kappa\"\nkappa = 1e-6\nreduced_speed_of_light = 5e1\nleft = \"outflow\"\nright = \"outflow\"\n\
         [cosmic_rays.init]\nenergy_density = {ecr}\n\
         [[cosmic_rays.init.profiles]]\nshape = \"top_hat\"\nfield = \"energy_density\"\ncenter = {c}\nwidth = {c}\namplitude = {a}\n",
        t = f(t),
        g = f(5.0 / 3.0),
        rr = f(right.rho),
        pr = f(right.pg),
        x0 = f(x0),
        rl = f(left.rho),
        pl = f(left.pg),
        ecr = f(ec(right.pc)),
        c = f(0.5 * x0),
        a = f(ec(left.pc) - ec(right.pc)),
    );
    let mut sim = build(&deck)?;
    advance(&mut sim, t)?;
    let g = gas_cgs(&sim);
    let e = cr_energy(&sim)?;
    let tail = match exact.left_wave {
        Wave::Rarefaction { tail, .. } => tail,
        Wave::Shock { speed } => speed,
    };
    let shock = match exact.right_wave {
        Wave::Shock { speed } => speed,
        Wave::Rarefaction { head, .. } => head,
    };
    let xc = x0 + exact.u_star * t;
    let average = |a: f64, b: f64| -> Result<TwoFluidState, String> {
        let (lo, hi) = (a + 0.2 * (b - a), b - 0.2 * (b - a));
        let mut s = TwoFluidState {
            rho: 0.0,
            u: 0.0,
            pg: 0.0,
            pc: 0.0,
        };
        let mut m = 0.0;
        for (j, (&x, &ec)) in g.x.iter().zip(e.iter()).enumerate() {
            if x > lo && x < hi {
                s.rho += g.rho[j];
                s.u += g.v[j];
                s.pg += g.p[j];
                s.pc += (GAMMA_C - 1.0) * ec;
                m += 1.0;
            }
        }
        if m < 10.0 {
            return Err(format!("plateau [{lo}, {hi}] has {m} cells"));
        }
        Ok(TwoFluidState {
            rho: s.rho / m,
            u: s.u / m,
            pg: s.pg / m,
            pc: s.pc / m,
        })
    };
    Ok(ShockResult {
        left: (average(x0 + tail * t, xc)?, exact.star_left),
        right: (average(xc, x0 + shock * t)?, exact.star_right),
    })
}

fn shock() -> &'static Result<ShockResult, String> {
    static RUN: OnceLock<Result<ShockResult, String>> = OnceLock::new();
    RUN.get_or_init(shock_run)
}

fn shock_quantity(name: &str, q: fn(&TwoFluidState) -> f64) -> CheckResult {
    match shock() {
        Ok(r) => rel_check(name, SRC_SHOCK, q(&r.right.0), q(&r.right.1), 0.01),
        Err(e) => failed(name, SRC_SHOCK, f64::NAN, 0.01, e),
    }
}

fn shock_density() -> CheckResult {
    shock_quantity("cr.two_fluid_shock.density", |s| s.rho)
}
fn shock_gas_pressure() -> CheckResult {
    shock_quantity("cr.two_fluid_shock.gas_pressure", |s| s.pg)
}
fn shock_cr_pressure() -> CheckResult {
    shock_quantity("cr.two_fluid_shock.cr_pressure", |s| s.pc)
}
fn shock_velocity() -> CheckResult {
    shock_quantity("cr.two_fluid_shock.velocity", |s| s.u)
}

/// Star-left (behind the rarefaction): the largest relative error of ρ, u, P_g, P_c.
fn shock_star_left() -> CheckResult {
    let name = "cr.two_fluid_shock.star_left_max_error";
    match shock() {
        Ok(r) => {
            let (m, x) = r.left;
            let err = [(m.rho, x.rho), (m.u, x.u), (m.pg, x.pg), (m.pc, x.pc)]
                .iter()
                .map(|(a, b)| ((a - b) / b).abs())
                .fold(0.0, f64::max);
            max_check(name, SRC_SHOCK, err, 0.0, 0.01)
        }
        Err(e) => failed(name, SRC_SHOCK, 0.0, 0.01, e),
    }
}

// ---------------------------------------------------------------------------------------------
// 3. Energy and momentum conservation with everything on.

struct ConsResult {
    energy: f64,
    momentum: f64,
}

fn conservation_run() -> Result<ConsResult, String> {
    let s = Ism::new();
    let c_r = 20.0; // code velocity (= 20 v_a)
    let pu = s.pres();
    let deck = format!(
        "[run]\nname = \"coupled_conservation\"\nt_end = {te}\n{units}\
         [grid]\ncells = 128\nx_min = 0e0\nx_max = {l}\n\
         [gas]\ngamma = {g}\n[magnetic_field]\nx = {b}\n[boundaries]\nleft = \"periodic\"\nright = \"periodic\"\n\
         [init.background]\ndensity = {rho}\npressure = {p}\n\
         [[init.profiles]]\nshape = \"gaussian\"\nfield = \"density\"\ncenter = {c1}\nwidth = {w}\namplitude = {drho}\n\
         [[init.profiles]]\nshape = \"sine\"\nfield = \"velocity_x\"\nwavelength = {l}\namplitude = {dv}\n\
         [cosmic_rays]\nmodel = \"self_confined\"\nreduced_speed_of_light = {cr}\nleft = \"periodic\"\nright = \"periodic\"\n\
         [cosmic_rays.init]\nenergy_density = {ec}\nforward_wave_energy = 1e-4\nbackward_wave_energy = 1e-4\n\
         [[cosmic_rays.init.profiles]]\nshape = \"gaussian\"\nfield = \"energy_density\"\ncenter = {c2}\nwidth = {w}\namplitude = {dec}\n\
         [damping]\n[damping.ion_neutral]\nsigma_v = 2e-12\n[damping.nonlinear_landau]\n\
         [ionisation]\nmodel = \"fixed\"\nion_fraction = 5e-1\n",
        te = f(1e3 * s.time()),
        units = s.units(),
        l = f(s.l),
        g = f(5.0 / 3.0),
        b = f(s.b),
        rho = f(s.rho),
        p = f(0.6 * pu),
        c1 = f(0.3 * s.l),
        w = f(0.05 * s.l),
        drho = f(0.5 * s.rho),
        dv = f(0.2 * s.u),
        cr = f(c_r * s.u),
        ec = f(0.05 * pu),
        c2 = f(0.6 * s.l),
        dec = f(0.2 * pu),
    );
    let mut sim = build(&deck)?;
    let momentum = |sim: &Simulation| -> Result<(f64, f64), String> {
        let st = sim.state();
        let u = sim.units();
        let fl = cr_flux(sim)?;
        let fu = u.pressure() * u.velocity; // erg/cm²/s per code flux
        let (mut p, mut base) = (0.0, 0.0);
        for (j, fc) in st.grid.interior().zip(&fl) {
            let m = st.mx[j];
            let fm = fc / fu / (c_r * c_r);
            p += m + fm;
            base += m.abs() + fm.abs();
        }
        Ok((p, base))
    };
    let (p0, base0) = momentum(&sim)?;
    let t_stop = sim.t_end();
    for _ in 0..1000 {
        sim.step(t_stop).map_err(|e| format!("run: {e}"))?;
    }
    let (p1, base1) = momentum(&sim)?;
    let led = sim.ledger();
    let res = led
        .get("energy_residual")
        .ok_or("ledger has no energy_residual")?;
    let tot = led.get("total").ok_or("ledger has no total")?;
    Ok(ConsResult {
        energy: (res / tot).abs(),
        momentum: (p1 - p0).abs() / base0.max(base1),
    })
}

fn conservation() -> &'static Result<ConsResult, String> {
    static RUN: OnceLock<Result<ConsResult, String>> = OnceLock::new();
    RUN.get_or_init(conservation_run)
}

fn conservation_energy() -> CheckResult {
    let name = "cr.coupled.energy_conservation";
    match conservation() {
        Ok(r) => max_check(name, SRC_CONS, r.energy, 0.0, 1e-12),
        Err(e) => failed(name, SRC_CONS, 0.0, 1e-12, e),
    }
}

fn conservation_momentum() -> CheckResult {
    let name = "cr.coupled.momentum_conservation";
    match conservation() {
        Ok(r) => max_check(name, SRC_CONS, r.momentum, 0.0, 1e-12),
        Err(e) => failed(name, SRC_CONS, 0.0, 1e-12, e),
    }
}

// ---------------------------------------------------------------------------------------------
// 4. Steady drift.

#[derive(Clone, Copy, PartialEq)]
enum DriftDamping {
    IonNeutral,
    Nll,
}

/// Ion–neutral set-up: ion fraction and ⟨σv⟩ [cm³/s] giving Γ = n_n⟨σv⟩/2 = 530 code (the
/// excess 2Γ/(σ̂ v_a) is then ≈ half of v_a h). ⟨σv⟩ is a configurable constant (from memory in
/// the spec); its value here only sets the regime.
const DRIFT_ION_FRACTION: f64 = 0.5;
const DRIFT_GAMMA_CODE: f64 = 530.0;
/// n_He/n_H of the deck default (for n_H = ρ/(m_p (1 + 4y)), physics-detail §3.5).
const HELIUM_PER_H: f64 = 0.1;
/// μ for the NLL run (T = μ m_u p/(ρ k_B)).
const DRIFT_MU: f64 = 0.6;
/// NLL coefficient √π/8 (deck default, from memory: an input).
const C_NLL: f64 = 0.221_556_7;

/// Worst relative deviation of the measured excess F − v_a h from steady_drift over the
/// interior cells 0.3–0.7 of the box.
fn drift_run(kind: DriftDamping) -> Result<f64, String> {
    let s = Ism::new();
    let pu = s.pres();
    let n = 256;
    let c_r = 30.0;
    let t_end = 0.05;
    // e_c = bg + A ½[1 + tanh((x − L/2)/(2L))]: e_c(0) = 0.09, e_c(L) = 0.03 code.
    let th = (0.25_f64).tanh();
    let a = -0.06 / th;
    let bg = 0.06 - 0.5 * a;
    let e_at = |x: f64| bg + 0.5 * a * (1.0 + ((x - 0.5) / 2.0).tanh());
    let n_h = s.rho / (M_PROTON * (1.0 + 4.0 * HELIUM_PER_H));
    let (damping, extra) = match kind {
        DriftDamping::IonNeutral => {
            let gamma = DRIFT_GAMMA_CODE / s.time();
            let n_n = (1.0 - DRIFT_ION_FRACTION) * n_h;
            let sigma_v = 2.0 * gamma / n_n;
            (
                format!("[damping]\n[damping.ion_neutral]\nsigma_v = {}\nt_ref = 1e4\nt_exponent = 0e0\n", f(sigma_v)),
                format!("[ionisation]\nmodel = \"fixed\"\nion_fraction = {}\n", f(DRIFT_ION_FRACTION)),
            )
        }
        DriftDamping::Nll => (
            format!(
                "[damping]\n[damping.nonlinear_landau]\ncoefficient = {}\nion_speed_factor = 1e0\n",
                f(C_NLL)
            ),
            String::new(),
        ),
    };
    let mu_line = match kind {
        DriftDamping::Nll => format!("mean_molecular_weight = {}\n", f(DRIFT_MU)),
        DriftDamping::IonNeutral => String::new(),
    };
    // Forward waves (B_x > 0: along +x, down the gradient) start near their balance value
    // ε ≈ v_a|∂x P_c|/(2Γ) ~ 2e-5 e_B; backward waves at the floor.
    let deck = format!(
        "[run]\nname = \"coupled_drift\"\nt_end = {te}\n{units}\
         [grid]\ncells = {n}\nx_min = 0e0\nx_max = {l}\n\
         [gas]\ngamma = {g}\n{mu_line}[magnetic_field]\nx = {b}\n[boundaries]\nleft = \"outflow\"\nright = \"outflow\"\n\
         [init.background]\ndensity = {rho}\npressure = {p}\n\
         [cosmic_rays]\nmodel = \"self_confined\"\nreduced_speed_of_light = {cr}\nalfven_density = \"total\"\n\
         left = \"fixed_energy_density\"\nleft_energy_density = {el}\nright = \"fixed_energy_density\"\nright_energy_density = {er}\n\
         [cosmic_rays.init]\nenergy_density = {ebg}\nforward_wave_energy = 2e-5\n\
         [[cosmic_rays.init.profiles]]\nshape = \"tanh_step\"\nfield = \"energy_density\"\ncenter = {c}\nwidth = {w}\namplitude = {amp}\n\
         {damping}{extra}",
        te = f(t_end * s.time()),
        units = s.units(),
        l = f(s.l),
        g = f(5.0 / 3.0),
        b = f(s.b),
        rho = f(s.rho),
        p = f(0.6 * pu),
        cr = f(c_r * s.u),
        el = f(e_at(0.0) * pu),
        er = f(e_at(1.0) * pu),
        ebg = f(bg * pu),
        c = f(0.5 * s.l),
        w = f(2.0 * s.l),
        amp = f(a * pu),
    );
    let mut sim = build(&deck)?;
    advance(&mut sim, t_end)?;
    let g = gas_cgs(&sim);
    let e = cr_energy(&sim)?;
    let fl = cr_flux(&sim)?;
    let e_b = g.b * g.b / (8.0 * PI);
    let omega = gyro_frequency(g.b);
    let k_res = 1.0 / gyro_radius(g.b);
    let v_max = g.v.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
    let v_a0 = g.b / (4.0 * PI * g.rho[g.rho.len() / 2]).sqrt();
    eprintln!("steady drift: max |v_gas|/v_a = {:.2e}", v_max / v_a0);
    let mut worst: f64 = 0.0;
    let mut count = 0;
    for j in 1..g.x.len() - 1 {
        let xr = g.x[j] / s.l;
        if !(0.3..=0.7).contains(&xr) {
            continue;
        }
        let v_a = g.b / (4.0 * PI * g.rho[j]).sqrt();
        let grad_pc = (GAMMA_C - 1.0) * (e[j + 1] - e[j - 1]) / (2.0 * g.dx);
        let law = match kind {
            DriftDamping::IonNeutral => {
                let n_n =
                    (1.0 - DRIFT_ION_FRACTION) * g.rho[j] / (M_PROTON * (1.0 + 4.0 * HELIUM_PER_H));
                let gamma = DRIFT_GAMMA_CODE / s.time() * n_n / ((1.0 - DRIFT_ION_FRACTION) * n_h);
                DampingLaw::linear(gamma)
            }
            DriftDamping::Nll => {
                let t = DRIFT_MU * M_U * g.p[j] / (g.rho[j] * K_BOLTZMANN);
                let v_i = (K_BOLTZMANN * t / M_PROTON).sqrt();
                DampingLaw::nll(C_NLL, k_res, v_i, e_b)
            }
        };
        let inp = DriftInputs {
            grad_pc,
            v_a,
            omega,
            e_b,
            alpha_nu: ALPHA_NU,
            c: C_LIGHT,
        };
        let sd = steady_drift(&inp, &law).map_err(|e| e.to_string())?;
        // Comoving flux: the gas moves at ≲ 0.3% of v_a; F is already the comoving flux.
        let measured = fl[j] - sd.direction * v_a * GAMMA_C * e[j];
        let dev = (measured / sd.flux_excess - 1.0).abs();
        if !dev.is_finite() {
            return Err(format!(
                "non-finite deviation in cell {j}: F = {}, excess {}",
                fl[j], sd.flux_excess
            ));
        }
        worst = worst.max(dev);
        count += 1;
    }
    if count < 20 {
        return Err(format!("only {count} interior cells"));
    }
    Ok(worst)
}

fn drift_ion_neutral() -> CheckResult {
    let name = "damping.steady_drift.ion_neutral";
    match drift_run(DriftDamping::IonNeutral) {
        Ok(d) => max_check(name, SRC_DRIFT_IN, d, 0.0, 0.02),
        Err(e) => failed(name, SRC_DRIFT_IN, 0.0, 0.02, &e),
    }
}

fn drift_nll() -> CheckResult {
    let name = "damping.steady_drift.nll";
    match drift_run(DriftDamping::Nll) {
        Ok(d) => max_check(name, SRC_DRIFT_NLL, d, 0.0, 0.02),
        Err(e) => failed(name, SRC_DRIFT_NLL, 0.0, 0.02, &e),
    }
}

// ---------------------------------------------------------------------------------------------
// 5. Width exponent.

/// Half-width at half maximum of the pulse above the far-field level, in units of `l`.
///
/// The far-field level e_far is the mean of the outer 5% of the box on each side (the
/// unperturbed background, which the initial waves heat uniformly by second-order Fermi
/// acceleration, physics-detail §2.4); the half-width is half the distance between the
/// outermost crossings of e_far + ½(e_max − e_far), linearly interpolated between cells. Unlike
/// the second moment it is insensitive to the low-level precursor ahead of a streaming front
/// and to the uniform background change. For a Gaussian it is σ√(2 ln 2).
fn pulse_halfwidth(x: &[f64], e: &[f64], l: f64) -> Result<f64, String> {
    let n = e.len();
    let m = (n / 20).max(1);
    let far = (e[..m].iter().sum::<f64>() + e[n - m..].iter().sum::<f64>()) / (2 * m) as f64;
    let max = e.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    let level = far + 0.5 * (max - far);
    let jr = (0..n)
        .rev()
        .find(|&j| e[j] >= level)
        .ok_or("no cell above half maximum")?;
    let jl = (0..n)
        .find(|&j| e[j] >= level)
        .ok_or("no cell above half maximum")?;
    if jr + 1 >= n - m || jl <= m {
        return Err("the pulse reached the far-field zone".into());
    }
    let cross = |a: usize, b: usize| x[a] + (x[b] - x[a]) * (e[a] - level) / (e[a] - e[b]);
    Ok(0.5 * (cross(jr, jr + 1) - cross(jl, jl - 1)) / l)
}

/// Runs the pulse and returns the fitted α of width ∝ t^α over `times` (code units).
fn width_run(strong: bool) -> Result<f64, String> {
    let s = Ism::new();
    let pu = s.pres();
    let n = 512;
    // Top-hat pulse of half-width 0.02 L (10 cells) on a background 1e-3 of its height. A
    // top hat, not a Gaussian: under streaming the flat-top plateau of a Gaussian runs into its
    // own low tail and its edge outruns v_a (reference::topha), while a top hat's fronts move at
    // exactly v_a (physics-detail §4.4); the diffusive second moment grows by 2κt for any shape.
    let (amp, e_bg, half) = (0.15, 1.5e-4, 0.02);
    // σ̂ e_B in code units: α_ν Ω/c² (κ = 1/(3 σ̂ ε)).
    let omega_code = gyro_frequency(s.b) * s.time();
    let c_code = C_LIGHT / s.u;
    let sh_eb = ALPHA_NU * omega_code / (c_code * c_code);
    let (c_r, gamma0, floor, waves, times): (f64, f64, f64, f64, Vec<f64>) = if strong {
        // waves at the floor f (each family): κ_eff = 1/(3 σ̂ e_B · 2f) = 0.3 code.
        let f_floor = 1.0 / (3.0 * sh_eb * 2.0 * 0.3);
        (
            100.0,
            1e6,
            f_floor,
            f_floor,
            (0..=6).map(|i| 0.0025 + 0.00125 * i as f64).collect(),
        )
    } else {
        (
            30.0,
            1.0,
            1e-10,
            1e-3,
            (0..=8).map(|i| 0.1 + 0.025 * i as f64).collect(),
        )
    };
    let t_end = *times.last().unwrap();
    let deck = format!(
        "[run]\nname = \"coupled_width\"\nt_end = {te}\n{units}\
         [grid]\ncells = {n}\nx_min = 0e0\nx_max = {l}\n\
         [gas]\ngamma = {g}\n[magnetic_field]\nx = {b}\n[boundaries]\nleft = \"outflow\"\nright = \"outflow\"\n\
         [init.background]\ndensity = {rho}\npressure = {p}\n\
         [cosmic_rays]\nmodel = \"self_confined\"\nreduced_speed_of_light = {cr}\nalfven_density = \"ion\"\nwave_floor = {fl}\n\
         left = \"outflow\"\nright = \"outflow\"\n\
         [cosmic_rays.init]\nenergy_density = {ebg}\nforward_wave_energy = {wv}\nbackward_wave_energy = {wv}\n\
         [[cosmic_rays.init.profiles]]\nshape = \"top_hat\"\nfield = \"energy_density\"\ncenter = {c}\nwidth = {w}\namplitude = {a}\n\
         [damping]\nconstant_rate = {g0}\n[ionisation]\nmodel = \"fixed\"\nion_fraction = 1e-1\n",
        te = f(t_end * s.time()),
        units = s.units(),
        l = f(s.l),
        g = f(5.0 / 3.0),
        b = f(s.b),
        rho = f(10.0 * s.rho),
        p = f(6.0 * pu),
        cr = f(c_r * s.u),
        fl = f(floor),
        ebg = f(e_bg * pu),
        wv = f(waves),
        c = f(0.5 * s.l),
        w = f(half * s.l),
        a = f(amp * pu),
        g0 = f(gamma0 / s.time()),
    );
    let mut sim = build(&deck)?;
    let (mut lt, mut lw) = (Vec::new(), Vec::new());
    for &t in &times {
        advance(&mut sim, t)?;
        let g = gas_cgs(&sim);
        let e = cr_energy(&sim)?;
        let w = pulse_halfwidth(&g.x, &e, s.l)?;
        if !(w.is_finite() && w > 0.0) {
            return Err(format!("pulse width {w} at t = {t}"));
        }
        eprintln!(
            "width {} t = {t:.4}: w = {w:.5}",
            if strong { "strong" } else { "weak" }
        );
        lt.push(t.ln());
        lw.push(w.ln());
    }
    Ok(slope(&lt, &lw))
}

fn width_weak() -> CheckResult {
    let name = "damping.width_exponent.weak";
    match width_run(false) {
        Ok(a) => crate::abs_check(name, SRC_WIDTH_WEAK, a, 1.0, 0.15),
        Err(e) => failed(name, SRC_WIDTH_WEAK, 1.0, 0.15, &e),
    }
}

fn width_strong() -> CheckResult {
    let name = "damping.width_exponent.strong";
    match width_run(true) {
        Ok(a) => crate::abs_check(name, SRC_WIDTH_STRONG, a, 0.5, 0.1),
        Err(e) => failed(name, SRC_WIDTH_STRONG, 0.5, 0.1, &e),
    }
}

// ---------------------------------------------------------------------------------------------
// 6. Galilean invariance.

fn galilean_run(u: f64, cells: usize) -> Result<Vec<f64>, String> {
    // code = cgs; ρ = 1, B = √(4π) G → v_a = 1 cm/s.
    let deck = format!(
        "[run]\nname = \"coupled_galilean\"\nt_end = 2e-1\n[grid]\ncells = {cells}\nx_min = 0e0\nx_max = 1e0\n\
         [gas]\ngamma = {g}\n[magnetic_field]\nx = {b}\n[boundaries]\nleft = \"periodic\"\nright = \"periodic\"\n\
         [init.background]\ndensity = 1e0\npressure = 1e0\nvelocity_x = {u}\n\
         [cosmic_rays]\nmodel = \"streaming\"\nkappa = 1e-3\nreduced_speed_of_light = 4e1\nalfven_density = \"total\"\nleft = \"periodic\"\nright = \"periodic\"\n\
         [cosmic_rays.init]\nenergy_density = 1e-3\n\
         [[cosmic_rays.init.profiles]]\nshape = \"gaussian\"\nfield = \"energy_density\"\ncenter = 5e-1\nwidth = 5e-2\namplitude = 1e-1\n",
        g = f(5.0 / 3.0),
        b = f((4.0 * PI).sqrt()),
        u = f(u),
    );
    let mut sim = build(&deck)?;
    advance(&mut sim, 0.2)?;
    cr_energy(&sim)
}

fn galilean() -> CheckResult {
    let name = "cr.coupled.galilean";
    let run = || -> Result<(f64, f64), String> {
        let n = 200;
        let e0 = galilean_run(0.0, n)?;
        let e1 = galilean_run(0.5, n)?;
        let fine = galilean_run(0.0, 2 * n)?;
        let shift = n / 10; // u t / Δx = 0.5 · 0.2 · n
        let (mut num, mut trunc, mut den) = (0.0, 0.0, 0.0);
        for j in 0..n {
            let a = e0[j];
            num += (a - e1[(j + shift) % n]).abs();
            trunc += (a - 0.5 * (fine[2 * j] + fine[2 * j + 1])).abs();
            den += (a - 1e-3).abs();
        }
        Ok((num / den, trunc / den))
    };
    match run() {
        Ok((d, trunc)) => {
            eprintln!("galilean: moving vs shifted static {d:.3e}, static N vs 2N {trunc:.3e}");
            max_check(name, SRC_GAL, d, 0.0, trunc)
        }
        Err(e) => failed(name, SRC_GAL, 0.0, f64::NAN, &e),
    }
}

// ---------------------------------------------------------------------------------------------
// 7. Cooling ledger.

fn cooling_ledger() -> CheckResult {
    let name = "cr.cooling.ledger";
    let run = || -> Result<(f64, f64), String> {
        let pc = 3.085_677_581_491_367e18;
        let (l, u, rho_u) = (pc, 1e5, M_PROTON);
        let n_h = 1.0;
        let rho = n_h * M_PROTON * (1.0 + 4.0 * HELIUM_PER_H);
        let mu = 1.27;
        let t_gas = 2e4;
        let p = rho * K_BOLTZMANN * t_gas / (mu * M_U);
        let tu = l / u;
        let deck = format!(
            "[run]\nname = \"coupled_cooling\"\nt_end = {te}\n[units]\nlength = {l}\ndensity = {ru}\nvelocity = {u}\n\
             [grid]\ncells = 128\nx_min = 0e0\nx_max = {box}\n\
             [gas]\ngamma = {g}\nmean_molecular_weight = {mu}\n[magnetic_field]\nx = 3e-6\n\
             [boundaries]\nleft = \"periodic\"\nright = \"periodic\"\n\
             [init.background]\ndensity = {rho}\npressure = {p}\n\
             [[init.profiles]]\nshape = \"gaussian\"\nfield = \"density\"\ncenter = {c}\nwidth = {w}\namplitude = {drho}\n\
             [cosmic_rays]\nmodel = \"self_confined\"\nleft = \"periodic\"\nright = \"periodic\"\n\
             [cosmic_rays.init]\nenergy_density = 1.6e-12\nforward_wave_energy = 1e-6\nbackward_wave_energy = 1e-6\n\
             [[cosmic_rays.init.profiles]]\nshape = \"gaussian\"\nfield = \"energy_density\"\ncenter = {c}\nwidth = {w}\namplitude = 1.6e-12\n\
             [damping]\n[damping.nonlinear_landau]\n\
             [cooling]\nfunction = \"ki02\"\nheating = 2e-26\ntemperature_floor = 1e1\n",
            te = f(2.0 * tu),
            l = f(l),
            ru = f(rho_u),
            u = f(u),
            box = f(10.0 * pc),
            g = f(5.0 / 3.0),
            mu = f(mu),
            rho = f(rho),
            p = f(p),
            c = f(5.0 * pc),
            w = f(1.0 * pc),
            drho = f(2.0 * rho),
        );
        let mut sim = build(&deck)?;
        let t_end = sim.t_end();
        advance(&mut sim, t_end)?;
        let led = sim.ledger();
        let get = |k: &str| led.get(k).ok_or(format!("ledger has no `{k}`"));
        let (res, tot, src) = (
            get("energy_residual")?,
            get("total")?,
            get("stage_sources")?,
        );
        eprintln!(
            "cooling ledger: residual/total = {:e}, radiated/total = {:e}",
            res / tot,
            src / tot
        );
        Ok(((res / tot).abs(), (src / tot).abs()))
    };
    match run() {
        Ok((r, radiated)) => {
            let mut c = max_check(name, SRC_COOL, r, 0.0, 1e-10);
            if radiated < 0.01 {
                eprintln!("{name}: radiated energy is only {radiated:e} of the total; the ledger is not exercised");
                c.pass = false;
            }
            c
        }
        Err(e) => failed(name, SRC_COOL, 0.0, 1e-10, &e),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn slope_of_a_line() {
        let x = [0.0, 1.0, 2.0, 3.0];
        let y = [1.0, 3.0, 5.0, 7.0];
        assert!((slope(&x, &y) - 2.0).abs() < 1e-14);
    }

    #[test]
    fn halfwidth_of_a_sampled_gaussian() {
        let n = 2000;
        let x: Vec<f64> = (0..n).map(|j| (j as f64 + 0.5) / n as f64).collect();
        let e: Vec<f64> = x
            .iter()
            .map(|x| 1.0 + (-(x - 0.5f64).powi(2) / (2.0 * 0.03f64.powi(2))).exp())
            .collect();
        let w = pulse_halfwidth(&x, &e, 1.0).unwrap();
        let exact = 0.03 * (2.0 * 2f64.ln()).sqrt();
        assert!((w / exact - 1.0).abs() < 1e-4, "{w} vs {exact}");
        // a pulse touching the far-field zone is refused
        let wide: Vec<f64> = x
            .iter()
            .map(|x| if (x - 0.5f64).abs() < 0.48 { 2.0 } else { 1.0 })
            .collect();
        assert!(pulse_halfwidth(&x, &wide, 1.0).is_err());
    }

    #[test]
    fn gyro_numbers_match_the_spec() {
        // physics-detail §2.1: Ω = 6.55e-3 s⁻¹ and r_g = 3.34e12 cm at 1 μG for p = 1 GeV/c.
        assert!((gyro_frequency(1e-6) / 6.55e-3 - 1.0).abs() < 2e-3);
        assert!((gyro_radius(1e-6) / 3.34e12 - 1.0).abs() < 2e-3);
    }

    #[test]
    fn toml_floats_have_exponents() {
        assert_eq!(f(1.0), "1e0");
        assert!(f(3e20).parse::<f64>().is_ok());
    }

    #[test]
    fn names_are_unique_and_sourced() {
        let c = checks();
        for (i, a) in c.iter().enumerate() {
            assert!(!a.source.is_empty());
            assert!(c.iter().skip(i + 1).all(|b| b.name != a.name), "{}", a.name);
        }
    }
}
