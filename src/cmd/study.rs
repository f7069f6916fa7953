//! `sluice study`: streaming versus diffusion of one CR pulse under several transport models.
//!
//! Every variant is the deck with its transport keys removed
//! (`sluice_driver::study::TRANSPORT_KEYS`), then the `--set` overrides, then the variant's
//! own overrides, all applied by the deck's override machinery (the one `sluice run --set`
//! uses). The variants run in parallel (rayon) and are reported in the order given, so the
//! numbers do not depend on the thread count. The pulse is measured in-process after every
//! step. Definitions and a worked example: docs/streaming-vs-diffusion.md.

use crate::Failure;
use rayon::prelude::*;
use sluice_driver::output::OutputWriter;
use sluice_driver::study::{
    fit_pulse, mean_alfven_speed, reference_damping_rate, strip_transport, FlankDrift, PulseFit,
    PulseObserver, PulseSample, Variant,
};
use sluice_driver::Simulation;
use std::path::{Path, PathBuf};
use std::time::Instant;

/// Names of the built-in variants, in their default order.
const BUILT_IN: [&str; 4] = [
    "diffusion",
    "streaming",
    "self-confined-weak",
    "self-confined-strong",
];

/// Arguments of `sluice study`.
#[derive(clap::Args)]
pub struct StudyArgs {
    /// The deck: a CR pulse (`[cosmic_rays]` with `[[cosmic_rays.init.profiles]]`), e.g.
    /// problems/cr-pulse-study.toml. Its transport keys are replaced per variant.
    pub deck: PathBuf,
    /// Built-in variants to run, comma-separated, from `diffusion`, `streaming`,
    /// `self-confined-weak`, `self-confined-strong` (default `diffusion,streaming`), or `none`.
    #[arg(long, value_name = "LIST")]
    pub variants: Option<String>,
    /// An extra variant NAME:key=value,key=value,... (repeatable), e.g.
    /// `nll:cosmic_rays.model=self_confined,damping.nonlinear_landau.coefficient=0.22`.
    /// Values may not contain commas.
    #[arg(long = "variant", value_name = "NAME:OVERRIDES")]
    pub variant: Vec<String>,
    /// Override a deck value for every variant: key.path=value (repeatable), as in
    /// `sluice run --set`. Applied after the transport keys are removed.
    #[arg(long = "set", value_name = "KEY=VALUE")]
    pub set: Vec<String>,
    /// κ of the `diffusion` variant, cm²/s (default v_a² t_end / 2: the diffusive spread
    /// sqrt(2κ t_end) then equals the streaming distance v_a t_end).
    #[arg(long, value_name = "CM2_PER_S")]
    pub kappa: Option<f64>,
    /// Residual κ of the `streaming` variant, cm²/s (default 0.01 × the diffusion κ).
    #[arg(long, value_name = "CM2_PER_S")]
    pub streaming_kappa: Option<f64>,
    /// Constant wave damping rate Γ_0 of `self-confined-weak`, s⁻¹ (default 0.01 Γ*, Γ* the
    /// rate at which the linear-damping drift excess equals v_a at the pulse peak).
    #[arg(long, value_name = "PER_S")]
    pub weak_damping: Option<f64>,
    /// Constant wave damping rate Γ_0 of `self-confined-strong`, s⁻¹ (default 0.1 Γ*: the
    /// flank drift then stays well below the free-streaming bound of the default c_r).
    #[arg(long, value_name = "PER_S")]
    pub strong_damping: Option<f64>,
    /// Initial forward and backward wave energies of the self-confined variants, as a
    /// fraction of e_B (default 1e-6).
    #[arg(long, value_name = "FRACTION", default_value_t = 1e-6)]
    pub wave_energy: f64,
    /// Fit window LO,HI as fractions of t_end (default 0.25,1): α and the front speed are
    /// fitted on the samples with LO·t_end ≤ t ≤ HI·t_end.
    #[arg(long, value_name = "LO,HI", default_value = "0.25,1")]
    pub fit_window: String,
    /// Output folder for `<variant>_pulse.csv` (and the snapshots); default
    /// out/<deck file stem>-study.
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Also write each variant's snapshots and ledger into <out>/<variant>/.
    #[arg(long)]
    pub snapshots: bool,
    /// Print the report as JSON instead of a table.
    #[arg(long)]
    pub json: bool,
}

fn bad(msg: impl Into<String>) -> Failure {
    Failure(msg.into(), 2)
}

fn valid_name(s: &str) -> bool {
    !s.is_empty()
        && s.chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_' || c == '.')
}

fn parse_window(s: &str) -> Result<(f64, f64), Failure> {
    let err = || {
        bad(format!(
            "invalid `--fit-window` = `{s}`: allowed LO,HI with 0 <= LO < HI <= 1 (fractions of t_end), e.g. 0.25,1"
        ))
    };
    let (a, b) = s.split_once(',').ok_or_else(err)?;
    let lo: f64 = a.trim().parse().map_err(|_| err())?;
    let hi: f64 = b.trim().parse().map_err(|_| err())?;
    if !(lo >= 0.0 && lo < hi && hi <= 1.0) {
        return Err(err());
    }
    Ok((lo, hi))
}

fn parse_custom(arg: &str) -> Result<Variant, Failure> {
    let err = |why: &str| {
        bad(format!(
            "invalid `--variant` = `{arg}`: {why}; allowed NAME:key=value,key=value,... with NAME of letters, digits, `-`, `_`, `.`"
        ))
    };
    let (name, rest) = arg.split_once(':').ok_or_else(|| err("no `:`"))?;
    let name = name.trim();
    if !valid_name(name) {
        return Err(err("bad name"));
    }
    let overrides: Vec<String> = rest
        .split(',')
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .collect();
    if overrides.is_empty() || overrides.iter().any(|o| !o.contains('=')) {
        return Err(err("each override must be key=value"));
    }
    Ok(Variant {
        name: name.to_string(),
        overrides,
    })
}

/// Positive finite flag value or an error naming the flag.
fn positive(flag: &str, v: Option<f64>) -> Result<Option<f64>, Failure> {
    match v {
        Some(x) if !(x.is_finite() && x > 0.0) => Err(bad(format!(
            "invalid `{flag}` = {x}: allowed a finite number > 0"
        ))),
        other => Ok(other),
    }
}

/// Reference numbers of the deck at t = 0 (cgs).
struct Reference {
    v_a: f64,
    t_end: f64,
    background: f64,
    peak_enthalpy: f64,
    gamma_star: f64,
    initial_width: f64,
}

fn reference(text: &str, set: &[String]) -> Result<Reference, Failure> {
    let mut probe = set.to_vec();
    probe.push("cosmic_rays.model=\"fixed_kappa\"".into());
    probe.push("cosmic_rays.kappa=1.0".into());
    let sim = Simulation::from_toml_str(text, &probe).map_err(|e| bad(e.to_string()))?;
    let sec = sim
        .deck()
        .cosmic_rays
        .as_ref()
        .ok_or_else(|| bad("the study needs a deck with [cosmic_rays]"))?;
    if sec.init.profiles.is_empty() {
        return Err(bad(
            "the study needs a CR pulse: add a [[cosmic_rays.init.profiles]] entry to the deck",
        ));
    }
    let background = sec.init.energy_density;
    let gamma_c = sec.adiabatic_index;
    let v_a = mean_alfven_speed(&sim);
    let s0 = sluice_driver::study::measure_pulse(&sim, background).ok_or_else(|| {
        bad("the CR profiles make no pulse above cosmic_rays.init.energy_density")
    })?;
    let h = gamma_c * s0.peak;
    let gamma_star = reference_damping_rate(&sim, v_a, h).unwrap_or(f64::NAN);
    Ok(Reference {
        v_a,
        t_end: sim.deck().run.t_end,
        background,
        peak_enthalpy: h,
        gamma_star,
        initial_width: s0.width,
    })
}

fn built_in(name: &str, a: &StudyArgs, r: &Reference) -> Result<Variant, Failure> {
    let kappa = a.kappa.unwrap_or(0.5 * r.v_a * r.v_a * r.t_end);
    let ks = a.streaming_kappa.unwrap_or(0.01 * kappa);
    let weak = a.weak_damping.unwrap_or(0.01 * r.gamma_star);
    let strong = a.strong_damping.unwrap_or(0.1 * r.gamma_star);
    let w = a.wave_energy;
    let sc = |rate: f64| {
        vec![
            "cosmic_rays.model=\"self_confined\"".to_string(),
            format!("cosmic_rays.init.forward_wave_energy={w:e}"),
            format!("cosmic_rays.init.backward_wave_energy={w:e}"),
            format!("damping.constant_rate={rate:e}"),
        ]
    };
    let overrides = match name {
        "diffusion" => vec![
            "cosmic_rays.model=\"fixed_kappa\"".to_string(),
            format!("cosmic_rays.kappa={kappa:e}"),
        ],
        "streaming" => vec![
            "cosmic_rays.model=\"streaming\"".to_string(),
            format!("cosmic_rays.kappa={ks:e}"),
        ],
        "self-confined-weak" => sc(weak),
        "self-confined-strong" => sc(strong),
        other => {
            return Err(bad(format!(
                "invalid `--variants` entry `{other}`: allowed {} or `none`",
                BUILT_IN.join(", ")
            )))
        }
    };
    Ok(Variant {
        name: name.to_string(),
        overrides,
    })
}

/// The outcome of one variant.
struct Outcome {
    variant: Variant,
    samples: Vec<PulseSample>,
    fractions: Vec<(f64, f64)>,
    drifts: Vec<FlankDrift>,
    fit: PulseFit,
    flank: FlankSummary,
    /// The variant runs the self-confined model.
    self_confined: bool,
    steps: u64,
    wall: f64,
}

fn run_variant(
    text: &str,
    set: &[String],
    v: &Variant,
    r: &Reference,
    window: (f64, f64),
    snap_dir: Option<PathBuf>,
) -> Result<Outcome, Failure> {
    let mut overrides = set.to_vec();
    overrides.extend(v.overrides.iter().cloned());
    let ctx = |e: &dyn std::fmt::Display| bad(format!("variant `{}`: {e}", v.name));
    let mut sim = Simulation::from_toml_str(text, &overrides).map_err(|e| ctx(&e))?;
    let writer = match snap_dir {
        Some(d) => Some(OutputWriter::new(&d, &sim, false).map_err(|e| ctx(&e))?),
        None => None,
    };
    let self_confined =
        sim.deck().cosmic_rays.as_ref().is_some_and(|c| {
            c.model == sluice_driver::physics::sections::CrModelChoice::SelfConfined
        });
    let mut obs = PulseObserver::new(r.background, writer);
    let start = Instant::now();
    let result = sim.run(&mut obs);
    if let Some(w) = obs.writer() {
        w.finish();
    }
    let summary = result.map_err(|e| ctx(&e))?;
    let wall = start.elapsed().as_secs_f64();
    let fit = fit_pulse(&obs.samples, window.0 * r.t_end, window.1 * r.t_end);
    let flank = summarise_flanks(&obs.drifts, window.0 * r.t_end, window.1 * r.t_end);
    Ok(Outcome {
        variant: v.clone(),
        samples: obs.samples,
        fractions: obs.fractions,
        drifts: obs.drifts,
        fit,
        flank,
        self_confined,
        steps: summary.steps,
        wall,
    })
}

/// Flank drift over the output times t > 0 in the fit window.
#[derive(Default)]
struct FlankSummary {
    /// Median of the per-output flank medians of v_st/v_a.
    v_st_over_v_a: Option<f64>,
    /// Median of the per-output WZO13 ratios.
    wzo_ratio: Option<f64>,
    /// Largest |ratio − 1| over those outputs.
    wzo_worst: Option<f64>,
    /// Largest |F|/(c_r e_c) on the flanks over those outputs.
    free_streaming: Option<f64>,
    /// Outputs used.
    outputs: usize,
}

fn median(mut v: Vec<f64>) -> Option<f64> {
    v.retain(|x| x.is_finite());
    Some(sluice_driver::study::median(&mut v)).filter(|m| m.is_finite())
}

fn summarise_flanks(drifts: &[FlankDrift], lo: f64, hi: f64) -> FlankSummary {
    let win: Vec<&FlankDrift> = drifts
        .iter()
        .filter(|d| d.time > 0.0 && d.time >= lo * (1.0 - 1e-12) && d.time <= hi * (1.0 + 1e-12))
        .collect();
    let ratios: Vec<f64> = win
        .iter()
        .map(|d| d.wzo_ratio)
        .filter(|x| x.is_finite())
        .collect();
    FlankSummary {
        v_st_over_v_a: median(win.iter().map(|d| d.v_st_over_v_a).collect()),
        wzo_ratio: median(ratios.clone()),
        wzo_worst: ratios.iter().map(|x| (x - 1.0).abs()).reduce(f64::max),
        free_streaming: win
            .iter()
            .map(|d| d.free_streaming)
            .filter(|x| x.is_finite())
            .reduce(f64::max),
        outputs: win.len(),
    }
}

fn write_atomic_text(path: &Path, text: &str) -> Result<(), Failure> {
    let tmp = path.with_extension("csv.tmp");
    std::fs::write(&tmp, text)
        .and_then(|_| std::fs::rename(&tmp, path))
        .map_err(|e| bad(format!("cannot write `{}`: {e}", path.display())))
}

fn pulse_csv(o: &Outcome) -> String {
    let mut s = String::from(
        "time_s,width_cm,front_cm,peak_erg_cm3,excess_energy_erg_cm2,v_eff_cm_s,edge_fraction\n",
    );
    for p in &o.samples {
        s.push_str(&format!(
            "{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.4e}\n",
            p.time, p.width, p.front, p.peak, p.excess_energy, p.v_eff, p.edge_fraction
        ));
    }
    s
}

fn num(x: Option<f64>) -> serde_json::Value {
    match x {
        Some(v) if v.is_finite() => serde_json::json!(v),
        _ => serde_json::Value::Null,
    }
}

fn show(x: Option<f64>, prec: usize) -> String {
    match x {
        Some(v) if v.is_finite() => format!("{v:.prec$}"),
        _ => "-".into(),
    }
}

/// Runs `sluice study`.
pub fn run(a: StudyArgs) -> Result<(), Failure> {
    let window = parse_window(&a.fit_window)?;
    positive("--kappa", a.kappa)?;
    positive("--streaming-kappa", a.streaming_kappa)?;
    positive("--weak-damping", a.weak_damping)?;
    positive("--strong-damping", a.strong_damping)?;
    if !(a.wave_energy > 0.0 && a.wave_energy < 1.0) {
        return Err(bad(format!(
            "invalid `--wave-energy` = {}: allowed 0 < fraction of e_B < 1",
            a.wave_energy
        )));
    }
    let raw = std::fs::read_to_string(&a.deck)
        .map_err(|e| bad(format!("cannot read deck `{}`: {e}", a.deck.display())))?;
    let text = strip_transport(&raw).map_err(|e| bad(format!("{}: {e}", a.deck.display())))?;
    let r = reference(&text, &a.set)?;
    let mut variants = Vec::new();
    let list = a
        .variants
        .clone()
        .unwrap_or_else(|| BUILT_IN[..2].join(","));
    if list.trim() != "none" {
        for name in list.split(',').map(str::trim) {
            variants.push(built_in(name, &a, &r)?);
        }
    }
    for v in &a.variant {
        variants.push(parse_custom(v)?);
    }
    if variants.is_empty() {
        return Err(bad(
            "no variants: `--variants none` needs at least one `--variant NAME:OVERRIDES`",
        ));
    }
    for (i, v) in variants.iter().enumerate() {
        if variants[..i].iter().any(|w| w.name == v.name) {
            return Err(bad(format!(
                "variant name `{}` given twice (names must be unique)",
                v.name
            )));
        }
    }
    let out = a.out.clone().unwrap_or_else(|| {
        let stem = a
            .deck
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| "deck".into());
        Path::new("out").join(format!("{stem}-study"))
    });
    std::fs::create_dir_all(&out)
        .map_err(|e| bad(format!("cannot create `--out` `{}`: {e}", out.display())))?;
    let start = Instant::now();
    let outcomes: Vec<Result<Outcome, Failure>> = variants
        .par_iter()
        .map(|v| {
            let dir = a.snapshots.then(|| out.join(&v.name));
            run_variant(&text, &a.set, v, &r, window, dir)
        })
        .collect();
    let wall = start.elapsed().as_secs_f64();
    let mut done = Vec::new();
    for o in outcomes {
        done.push(o?);
    }
    for o in &done {
        write_atomic_text(
            &out.join(format!("{}_pulse.csv", o.variant.name)),
            &pulse_csv(o),
        )?;
    }
    let final_fraction = |o: &Outcome| o.fractions.last().map(|f| f.1);
    let edge = |o: &Outcome| {
        o.samples
            .iter()
            .map(|s| s.edge_fraction)
            .fold(0.0, f64::max)
    };
    if a.json {
        let runs: Vec<serde_json::Value> = done
            .iter()
            .map(|o| {
                let last = o.samples.last();
                serde_json::json!({
                    "name": o.variant.name,
                    "overrides": o.variant.overrides,
                    "alpha_width": num(o.fit.alpha_width),
                    "alpha_front": num(o.fit.alpha_front),
                    "front_speed_cm_s": num(o.fit.front_speed),
                    "front_speed_over_alfven": num(o.fit.front_speed.map(|v| v / r.v_a)),
                    "v_eff_cm_s": num(Some(o.fit.v_eff)),
                    "v_eff_over_alfven": num(Some(o.fit.v_eff / r.v_a)),
                    "streaming_fraction": num(final_fraction(o)),
                    "flank_v_st_over_alfven": num(o.flank.v_st_over_v_a),
                    "flank_wzo13_ratio": num(o.flank.wzo_ratio),
                    "flank_wzo13_worst_deviation": num(o.flank.wzo_worst),
                    "flank_outputs": o.flank.outputs,
                    "flank_max_free_streaming": num(o.flank.free_streaming),
                    "flank_series": o.drifts.iter()
                        .map(|d| serde_json::json!({
                            "time_s": d.time,
                            "cells": d.cells,
                            "v_st_over_alfven": num(Some(d.v_st_over_v_a)),
                            "wzo13_ratio": num(Some(d.wzo_ratio)),
                            "free_streaming": num(Some(d.free_streaming)),
                        }))
                        .collect::<Vec<_>>(),
                    "streaming_fraction_series": o.fractions.iter()
                        .map(|f| serde_json::json!({"time_s": f.0, "fraction": num(Some(f.1))}))
                        .collect::<Vec<_>>(),
                    "width_final_cm": num(last.map(|s| s.width)),
                    "front_final_cm": num(last.map(|s| s.front)),
                    "peak_final_erg_cm3": num(last.map(|s| s.peak)),
                    "max_edge_fraction": edge(o),
                    "samples": o.samples.len(),
                    "fit_points": o.fit.points,
                    "steps": o.steps,
                    "wall_s": o.wall,
                    "csv": out.join(format!("{}_pulse.csv", o.variant.name)).display().to_string(),
                })
            })
            .collect();
        let doc = serde_json::json!({
            "deck": a.deck.display().to_string(),
            "alfven_speed_cm_s": r.v_a,
            "t_end_s": r.t_end,
            "background_erg_cm3": r.background,
            "peak_enthalpy_erg_cm3": r.peak_enthalpy,
            "reference_damping_rate_s": num(Some(r.gamma_star)),
            "initial_width_cm": r.initial_width,
            "fit_window": [window.0, window.1],
            "wall_s": wall,
            "runs": runs,
        });
        println!(
            "{}",
            serde_json::to_string_pretty(&doc).map_err(|e| bad(e.to_string()))?
        );
        return Ok(());
    }
    println!(
        "sluice study {}: v_a = {:.4e} cm/s, t_end = {:.4e} s, W(0) = {:.4e} cm, Γ* = {:.3e} 1/s, fit window {}–{} t_end",
        a.deck.display(),
        r.v_a,
        r.t_end,
        r.initial_width,
        r.gamma_star,
        window.0,
        window.1
    );
    println!(
        "{:<22} {:>8} {:>8} {:>12} {:>8} {:>12} {:>8} {:>8} {:>8} {:>8} {:>12} {:>7} {:>7}",
        "variant",
        "alpha_W",
        "alpha_x",
        "v_front",
        "/v_a",
        "v_eff",
        "/v_a",
        "phi_st",
        "flank",
        "/WZO13",
        "W(t_end)",
        "steps",
        "wall"
    );
    println!(
        "{:<22} {:>8} {:>8} {:>12} {:>8} {:>12} {:>8} {:>8} {:>8} {:>8} {:>12} {:>7} {:>7}",
        "", "1", "1", "cm/s", "1", "cm/s", "1", "1", "v_st/v_a", "1", "cm", "", "s"
    );
    for o in &done {
        let last = o.samples.last();
        println!(
            "{:<22} {:>8} {:>8} {:>12} {:>8} {:>12} {:>8} {:>8} {:>8} {:>8} {:>12} {:>7} {:>7.2}",
            o.variant.name,
            show(o.fit.alpha_width, 3),
            show(o.fit.alpha_front, 3),
            o.fit.front_speed.map_or("-".into(), |v| format!("{v:.4e}")),
            show(o.fit.front_speed.map(|v| v / r.v_a), 3),
            format!("{:.4e}", o.fit.v_eff),
            show(Some(o.fit.v_eff / r.v_a), 3),
            show(final_fraction(o), 3),
            show(o.flank.v_st_over_v_a, 3),
            show(o.flank.wzo_ratio, 3),
            last.map_or("-".into(), |s| format!("{:.4e}", s.width)),
            o.steps,
            o.wall
        );
    }
    for o in &done {
        if let Some(fs) = o.flank.free_streaming.filter(|&f| f > 0.3) {
            eprintln!(
                "sluice: warning: variant `{}`: the flank flux reaches {:.0}% of the free-streaming bound c_r e_c; its drift is set by the reduced speed of light, not by the waves (raise cosmic_rays.auto_factor or lower the damping)",
                o.variant.name,
                100.0 * fs
            );
        }
        if o.self_confined && o.flank.outputs == 0 {
            eprintln!(
                "sluice: warning: variant `{}`: no confined flank cells at the outputs in the fit window (waves at the floor): the CRs are decoupled from the waves and the drift relation cannot be checked (lower the damping, or add outputs with run.output_interval)",
                o.variant.name
            );
        }
        let e = edge(o);
        if e > 0.05 {
            eprintln!(
                "sluice: warning: variant `{}`: the pulse reached the boundaries (edge excess {:.1}% of the peak); shorten run.t_end or widen the grid",
                o.variant.name,
                100.0 * e
            );
        }
    }
    println!(
        "alpha_W: sqrt(W^2 - W(0)^2) ~ t^alpha (diffusion 1/2); alpha_x: x_front - x_front(0) ~ t^alpha (streaming 1); phi_st: streaming fraction of the pulse flux at t_end; flank: median |F|/(h v_a) on the pulse flanks over the outputs in the window, /WZO13: over v_a + f_E Gamma c^2 e_B/(alpha_nu Omega v_a h) (constant-rate damping only). CSVs in {} ({:.2} s wall)",
        out.display(),
        wall
    );
    Ok(())
}
