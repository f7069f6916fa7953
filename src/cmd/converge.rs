//! `sluice converge`: run a resolution series and report errors and orders.
//!
//! Each resolution is the deck with `grid.cells = N` (plus the user's `--set` overrides), run
//! in-process to `run.t_end`; the runs go in parallel (rayon) and are reported in the order
//! given, so the output does not depend on the thread count.
//!
//! The errors are measured against an exact solution when the deck is one of these problems
//! (detection from the deck, `--reference exact|self` overrides it):
//!
//! * **hydro Riemann problem**: exactly two `[[init.regions]]` that meet at one point and
//!   cover the domain, an ideal gas, no magnetic field (B_x = 0 and no transverse field),
//!   no `[init.wave]`, no `[[init.profiles]]`, no cosmic rays, damping, ionisation or
//!   cooling, outflow boundaries: exact solver of Toro 2009 (Riemann Solvers and Numerical
//!   Methods for Fluid Dynamics, 3rd ed., ch. 4), compared as exact cell averages of
//!   (ρ, ρu, E) turned into (ρ, u, p) as the code does;
//! * **linear MHD wave**: `[init.wave]` on `[init.background]`, no regions, no profiles, no
//!   extra physics, periodic boundaries: the initial profile (point values at cell centres,
//!   as the deck sets them up) translated by the eigen phase speed × t, i.e. each field's
//!   single Fourier harmonic fitted on the t = 0 state and shifted by k λ t.
//!
//! Anything else is a self-convergence study (sluice-analysis `self_convergence`: each run
//! restricted conservatively onto the next coarser grid; needs ≥ 3 resolutions with one
//! refinement ratio).

use super::profile_io::{profile_from_snapshot, LoadedProfile};
use crate::Failure;
use rayon::prelude::*;
use sluice_analysis::{
    convergence_series, norms, parse_field_list, self_convergence, ConvergenceReport,
    ConvergenceSeries, Norm, Profile,
};
use sluice_driver::deck::{read_deck, BoundaryChoice, Deck};
use sluice_driver::output::build_snapshot;
use sluice_driver::Simulation;
use sluice_verify::mhd_checks::exact_riemann::{EulerState, ExactRiemann};
use std::path::PathBuf;

/// Arguments of `sluice converge`.
#[derive(clap::Args)]
pub struct ConvergeArgs {
    /// The deck (TOML, see docs/deck.md).
    pub deck: PathBuf,
    /// Numbers of cells, comma-separated and increasing, e.g. 64,128,256.
    #[arg(long, value_name = "N,N,...")]
    pub resolutions: String,
    /// Fields to measure (snapshot names; default: the solution's fields for an exact
    /// reference, `density` (and `cr_energy_density` with cosmic rays) for self-convergence).
    #[arg(long, value_name = "LIST")]
    pub fields: Option<String>,
    /// Override a deck value: key.path=value (repeatable); `grid.cells` is set per run.
    #[arg(long = "set", value_name = "KEY=VALUE")]
    pub set: Vec<String>,
    /// Error norm: l1 (default), l2 or linf (Δx-weighted, units of the field).
    #[arg(long, default_value = "l1")]
    pub norm: String,
    /// `auto` (default: exact if the deck is a recognised problem, else self), `exact` or
    /// `self`.
    #[arg(long, value_name = "KIND", default_value = "auto")]
    pub reference: String,
    /// Check the fitted order of every series: pass when it is at least ORDER − tolerance
    /// (exit 1 otherwise).
    #[arg(long, value_name = "ORDER")]
    pub expect_order: Option<f64>,
    /// Allowed shortfall of the fitted order under --expect-order (default 0.1).
    #[arg(long, value_name = "TOL", default_value_t = 0.1)]
    pub order_tolerance: f64,
    /// Print the report as JSON instead of a table.
    #[arg(long)]
    pub json: bool,
}

fn bad(e: impl std::fmt::Display) -> Failure {
    Failure(e.to_string(), 2)
}

/// An exact solution the deck was recognised as.
enum Exact {
    /// Hydro Riemann problem: solver, discontinuity position (cm), γ.
    Riemann(ExactRiemann, f64, f64),
    /// Linear wave: phase speed (cm/s), wavenumber (1/cm), x_min (cm).
    Wave { speed: f64, k: f64, x_min: f64 },
}

impl Exact {
    fn describe(&self) -> String {
        match self {
            Exact::Riemann(r, x0, g) => format!(
                "hydro Riemann problem at x0 = {x0} cm (gamma = {g}, p* = {:.6e} erg/cm^3, \
                 u* = {:.6e} cm/s): exact solver, Toro 2009 ch. 4; exact cell averages",
                r.p_star, r.u_star
            ),
            Exact::Wave { speed, k, .. } => format!(
                "linear wave (phase speed {speed:.6e} cm/s, wavelength {:.6e} cm): the initial \
                 profile translated by the phase speed x t (point values at cell centres)",
                2.0 * std::f64::consts::PI / k
            ),
        }
    }

    fn default_fields(&self) -> Vec<String> {
        match self {
            Exact::Riemann(..) => vec!["density".into(), "velocity_x".into(), "pressure".into()],
            Exact::Wave { .. } => Vec::new(), // decided from the perturbed fields
        }
    }
}

/// Recognises the deck's problem (see the module documentation); `None` if none applies,
/// with the reason.
fn detect(deck: &Deck, sim0: &Simulation) -> Result<Exact, String> {
    let extra = [
        (deck.cosmic_rays.is_some(), "[cosmic_rays]"),
        (deck.damping.is_some(), "[damping]"),
        (deck.ionisation.is_some(), "[ionisation]"),
        (deck.cooling.is_some(), "[cooling]"),
    ];
    if let Some((_, s)) = extra.iter().find(|(p, _)| *p) {
        return Err(format!(
            "the deck has {s}; exact solutions are known here only for pure MHD problems"
        ));
    }
    if !deck.init.profiles.is_empty() {
        return Err("the deck has [[init.profiles]]".into());
    }
    if let Some(wave) = &deck.init.wave {
        if !deck.init.regions.is_empty() {
            return Err("the deck has both [init.wave] and [[init.regions]]".into());
        }
        if deck.boundaries.left != BoundaryChoice::Periodic {
            return Err("a linear wave needs periodic boundaries".into());
        }
        let speed = sluice_driver::setup::wave_speed(deck, sim0.units())
            .ok_or("the wave has no background")?
            * sim0.units().velocity;
        let l = deck.grid.x_max - deck.grid.x_min;
        return Ok(Exact::Wave {
            speed,
            k: 2.0 * std::f64::consts::PI * wave.wavelengths as f64 / l,
            x_min: deck.grid.x_min,
        });
    }
    let r = &deck.init.regions;
    if r.len() != 2 {
        return Err(format!(
            "{} [[init.regions]] (a Riemann problem has 2) and no [init.wave]",
            r.len()
        ));
    }
    let (a, b) = if r[0].x_min <= r[1].x_min {
        (&r[0], &r[1])
    } else {
        (&r[1], &r[0])
    };
    let (lo, hi) = (deck.grid.x_min, deck.grid.x_max);
    if a.x_max != b.x_min || a.x_min > lo || b.x_max < hi {
        return Err("the two regions do not meet at one point and cover the grid".into());
    }
    let Some(gamma) = deck.gas.gamma else {
        return Err("the gas is isothermal (the exact solver is for an ideal gas)".into());
    };
    let magnetised = deck.magnetic_field.x != 0.0
        || [a, b]
            .iter()
            .any(|s| s.magnetic_field_y != 0.0 || s.magnetic_field_z != 0.0);
    if magnetised {
        return Err("the gas is magnetised (no exact MHD Riemann solver here)".into());
    }
    if [a, b]
        .iter()
        .any(|s| s.velocity_y != 0.0 || s.velocity_z != 0.0)
    {
        return Err("a region has a transverse velocity".into());
    }
    if deck.boundaries.left != BoundaryChoice::Outflow
        || deck.boundaries.right != BoundaryChoice::Outflow
    {
        return Err("a Riemann problem needs outflow boundaries".into());
    }
    let state = |s: &sluice_driver::deck::Region| EulerState {
        rho: s.density,
        u: s.velocity_x,
        p: s.pressure.unwrap_or(f64::NAN),
    };
    let solver = ExactRiemann::solve(state(a), state(b), gamma)
        .ok_or("the exact solution has a vacuum region")?;
    Ok(Exact::Riemann(solver, a.x_max, gamma))
}

/// Gauss–Legendre 3-point rule on 8 sub-intervals (as `ExactRiemann::cell_average_density`).
fn riemann_cell_average(r: &ExactRiemann, g: f64, xa: f64, xb: f64, x0: f64, t: f64) -> [f64; 3] {
    const GL: [(f64, f64); 3] = [
        (-0.774_596_669_241_483_4, 5.0 / 9.0),
        (0.0, 8.0 / 9.0),
        (0.774_596_669_241_483_4, 5.0 / 9.0),
    ];
    let m = 8;
    let h = (xb - xa) / m as f64;
    let (mut rho, mut mom, mut en) = (0.0, 0.0, 0.0);
    for i in 0..m {
        let c = xa + (i as f64 + 0.5) * h;
        for (q, w) in GL {
            let s = r.sample((c + 0.5 * h * q - x0) / t);
            let wt = 0.5 * w / m as f64;
            rho += wt * s.rho;
            mom += wt * s.rho * s.u;
            en += wt * (s.p / (g - 1.0) + 0.5 * s.rho * s.u * s.u);
        }
    }
    let u = mom / rho;
    [rho, u, (g - 1.0) * (en - 0.5 * rho * u * u)]
}

/// One finished run: the final profile and, for a linear wave, the initial one.
struct RunOut {
    n: usize,
    end: LoadedProfile,
    start: Option<Profile>,
    time: f64,
}

fn run_one(
    text: &str,
    set: &[String],
    n: usize,
    source: &str,
    keep_start: bool,
) -> Result<RunOut, Failure> {
    let mut overrides = set.to_vec();
    overrides.push(format!("grid.cells={n}"));
    let mut sim = Simulation::from_toml_str(text, &overrides).map_err(bad)?;
    let name = format!("{source} (N = {n})");
    let start = if keep_start {
        Some(profile_from_snapshot(&build_snapshot(&sim, 0), &name)?.profile)
    } else {
        None
    };
    let t_end = sim.t_end();
    sim.advance_to(t_end)
        .map_err(|e| Failure(format!("run at N = {n}: {e}"), 2))?;
    Ok(RunOut {
        n,
        end: profile_from_snapshot(&build_snapshot(&sim, 1), &name)?,
        start,
        time: sim.time_seconds(),
    })
}

/// The linear wave's exact field on the centres: single harmonic fitted on the t = 0 point
/// values, shifted by k λ t. Returns (values, relative amplitude).
fn wave_exact(start: &Profile, field: &str, k: f64, x_min: f64, shift: f64) -> (Vec<f64>, f64) {
    let x = start.centres();
    let f = start.field(field).unwrap_or(&[]);
    let n = x.len() as f64;
    let mean = f.iter().sum::<f64>() / n;
    let (mut a, mut b) = (0.0, 0.0);
    for (xi, fi) in x.iter().zip(f) {
        let th = k * (xi - x_min);
        a += 2.0 / n * (fi - mean) * th.cos();
        b += 2.0 / n * (fi - mean) * th.sin();
    }
    let vals = x
        .iter()
        .map(|xi| {
            let th = k * (xi - x_min) - shift;
            mean + a * th.cos() + b * th.sin()
        })
        .collect();
    (vals, (a * a + b * b).sqrt())
}

/// Scale of a field's perturbation for deciding which fields a linear wave perturbs.
fn wave_field_scale(start: &Profile, field: &str) -> Option<f64> {
    let mean = |name: &str| {
        start
            .field(name)
            .map(|v| v.iter().sum::<f64>() / v.len() as f64)
    };
    let rho = mean("density")?;
    let p = mean("pressure")?;
    Some(match field {
        "density" => rho,
        "pressure" => p,
        f if f.starts_with("velocity_") => (p / rho).sqrt(),
        f if f.starts_with("magnetic_field_") => {
            let b2: f64 = ["magnetic_field_x", "magnetic_field_y", "magnetic_field_z"]
                .iter()
                .filter_map(|c| mean(c))
                .map(|b| b * b)
                .sum();
            b2.sqrt()
        }
        _ => return None,
    })
}

/// Runs `sluice converge`.
pub fn run(a: ConvergeArgs) -> Result<(), Failure> {
    let norm = Norm::parse(&a.norm).map_err(|_| {
        bad(format!(
            "invalid `--norm` = `{}`: allowed `l1`, `l2` or `linf`",
            a.norm
        ))
    })?;
    let mode = a.reference.to_ascii_lowercase();
    if !["auto", "exact", "self"].contains(&mode.as_str()) {
        return Err(bad(format!(
            "invalid `--reference` = `{}`: allowed `auto`, `exact` or `self`",
            a.reference
        )));
    }
    let ns = parse_resolutions(&a.resolutions)?;
    if let Some(s) = a
        .set
        .iter()
        .find(|s| s.trim_start().starts_with("grid.cells"))
    {
        return Err(bad(format!(
            "invalid `--set` = `{s}`: grid.cells is set by --resolutions"
        )));
    }
    if !(a.order_tolerance.is_finite() && a.order_tolerance >= 0.0) {
        return Err(bad(format!(
            "invalid `--order-tolerance` = `{}`: allowed a finite number >= 0",
            a.order_tolerance
        )));
    }
    if let Some(p) = a.expect_order {
        if !p.is_finite() {
            return Err(bad(format!(
                "invalid `--expect-order` = `{p}`: allowed a finite number"
            )));
        }
    }
    let fields = a
        .fields
        .as_deref()
        .map(parse_field_list)
        .transpose()
        .map_err(bad)?;
    let (deck, text) = read_deck(&a.deck, &a.set).map_err(bad)?;
    let sim0 = Simulation::from_toml_str(&text, &a.set).map_err(bad)?;
    let detected = detect(&deck, &sim0);
    let exact = match (mode.as_str(), detected) {
        ("self", _) => None,
        (_, Ok(e)) => Some(e),
        ("exact", Err(why)) => {
            return Err(bad(format!(
                "--reference exact: no exact solution for {}: {why}; exact solutions are \
                 known for hydro Riemann problems (two regions, ideal gas, B = 0, outflow) \
                 and linear waves ([init.wave], periodic); use --reference self",
                a.deck.display()
            )))
        }
        (_, Err(_)) => None,
    };
    if exact.is_none() && ns.len() < 3 {
        return Err(bad(format!(
            "invalid `--resolutions` = `{}`: self-convergence needs at least 3 resolutions \
             with one refinement ratio, e.g. 64,128,256",
            a.resolutions
        )));
    }
    let keep_start = matches!(exact, Some(Exact::Wave { .. }));
    let source = a.deck.display().to_string();
    let runs: Vec<RunOut> = ns
        .par_iter()
        .map(|&n| run_one(&text, &a.set, n, &source, keep_start))
        .collect::<Result<_, _>>()?;

    let (series, description) = match &exact {
        Some(ex) => measure_exact(ex, &runs, fields, norm)?,
        None => {
            let fields = fields.unwrap_or_else(|| {
                let mut f = vec!["density".to_string()];
                if deck.cosmic_rays.is_some() {
                    f.push("cr_energy_density".into());
                }
                f
            });
            let profiles: Vec<Profile> = runs.iter().map(|r| r.end.profile.clone()).collect();
            let mut series = Vec::new();
            for f in &fields {
                series.push(self_convergence(&profiles, f, norm).map_err(bad)?);
            }
            let why = match detect(&deck, &sim0) {
                Ok(_) => "requested with --reference self".to_string(),
                Err(w) => format!("no exact solution: {w}"),
            };
            (
                series,
                format!("self-convergence ({why}); successive runs restricted conservatively"),
            )
        }
    };
    let series: Vec<ConvergenceSeries> = series
        .into_iter()
        .map(|s| match a.expect_order {
            Some(p) => s.with_expected_order(p, a.order_tolerance),
            None => s,
        })
        .collect();
    let report = ConvergenceReport::new(series);
    let units: serde_json::Map<String, serde_json::Value> = report
        .series
        .iter()
        .filter_map(|s| {
            let f = s.label.split(" (").next()?.to_string();
            let u = runs[0].end.units.get(&f)?.clone();
            Some((f, serde_json::Value::String(u)))
        })
        .collect();
    if a.json {
        let mut v: serde_json::Value =
            serde_json::from_str(&report.to_json()).map_err(|e| Failure(e.to_string(), 101))?;
        v["deck"] = source.clone().into();
        v["reference"] = if exact.is_some() { "exact" } else { "self" }.into();
        v["solution"] = description.clone().into();
        v["norm"] = norm.name().into();
        v["resolutions"] = ns.clone().into();
        v["time"] = runs[0].time.into();
        v["units"] = units.into();
        println!(
            "{}",
            serde_json::to_string_pretty(&v).map_err(|e| Failure(e.to_string(), 101))?
        );
    } else {
        println!(
            "converge {source}: N = {}, t = {:e} s, {} norm (Δx-weighted, units of each field)",
            ns.iter()
                .map(|n| n.to_string())
                .collect::<Vec<_>>()
                .join(", "),
            runs[0].time,
            norm.name()
        );
        println!("reference: {description}");
        if !units.is_empty() {
            let u: Vec<String> = units
                .iter()
                .map(|(k, v)| format!("{k} [{}]", v.as_str().unwrap_or("")))
                .collect();
            println!("units: {}", u.join("; "));
        }
        println!();
        print!("{}", report.to_table());
    }
    if report.pass == Some(false) {
        let failed: Vec<String> = report
            .series
            .iter()
            .filter(|s| s.pass == Some(false))
            .map(|s| {
                format!(
                    "{} (fitted order {})",
                    s.label,
                    s.fitted_order
                        .map_or_else(|| "n/a".into(), |p| format!("{p:.3}"))
                )
            })
            .collect();
        return Err(Failure(
            format!(
                "convergence check failed: expected order >= {:.3}: {}",
                a.expect_order.unwrap_or(0.0) - a.order_tolerance,
                failed.join(", ")
            ),
            1,
        ));
    }
    Ok(())
}

fn measure_exact(
    ex: &Exact,
    runs: &[RunOut],
    fields: Option<Vec<String>>,
    norm: Norm,
) -> Result<(Vec<ConvergenceSeries>, String), Failure> {
    let allowed_riemann = ["density", "velocity_x", "pressure"];
    let fields = match (fields, ex) {
        (Some(f), Exact::Riemann(..)) => {
            if let Some(bad_f) = f.iter().find(|f| !allowed_riemann.contains(&f.as_str())) {
                return Err(bad(format!(
                    "invalid `--fields` entry `{bad_f}`: the exact Riemann solution gives {}",
                    allowed_riemann.join(", ")
                )));
            }
            f
        }
        (Some(f), Exact::Wave { .. }) => {
            let start = runs[0].start.as_ref().expect("wave runs keep the start");
            for name in &f {
                if wave_field_scale(start, name).is_none() {
                    return Err(bad(format!(
                        "invalid `--fields` entry `{name}`: the linear-wave solution gives \
                         density, pressure, velocity_x/y/z, magnetic_field_x/y/z"
                    )));
                }
            }
            f
        }
        (None, Exact::Riemann(..)) => ex.default_fields(),
        (None, Exact::Wave { k, x_min, .. }) => {
            // The fields the eigenmode perturbs: relative amplitude within 1e-3 of the largest.
            let start = runs[0].start.as_ref().expect("wave runs keep the start");
            let cands = [
                "density",
                "velocity_x",
                "velocity_y",
                "velocity_z",
                "pressure",
                "magnetic_field_y",
                "magnetic_field_z",
            ];
            let rel: Vec<(String, f64)> = cands
                .iter()
                .filter_map(|c| {
                    let s = wave_field_scale(start, c)?;
                    let (_, amp) = wave_exact(start, c, *k, *x_min, 0.0);
                    (s > 0.0).then(|| (c.to_string(), amp / s))
                })
                .collect();
            let top = rel.iter().map(|r| r.1).fold(0.0, f64::max);
            rel.into_iter()
                .filter(|r| r.1 > 1e-3 * top && top > 0.0)
                .map(|r| r.0)
                .collect()
        }
    };
    let mut out = Vec::new();
    for f in &fields {
        let mut points = Vec::with_capacity(runs.len());
        for r in runs {
            let p = &r.end.profile;
            let got = p.require_field(f).map_err(bad)?;
            let exact: Vec<f64> = match ex {
                Exact::Riemann(sol, x0, g) => {
                    let e = p.cell_edges().map_err(bad)?;
                    let idx = allowed_riemann.iter().position(|a| a == f).unwrap_or(0);
                    e.windows(2)
                        .map(|w| riemann_cell_average(sol, *g, w[0], w[1], *x0, r.time)[idx])
                        .collect()
                }
                Exact::Wave { speed, k, x_min } => {
                    let start = r.start.as_ref().expect("wave runs keep the start");
                    wave_exact(start, f, *k, *x_min, k * speed * r.time).0
                }
            };
            let diff: Vec<f64> = got.iter().zip(&exact).map(|(a, b)| a - b).collect();
            points.push((r.n, norms(&diff, &p.weights().map_err(bad)?).get(norm)));
        }
        out.push(convergence_series(format!("{f} ({})", norm.name()), &points).map_err(bad)?);
    }
    Ok((out, ex.describe()))
}

fn parse_resolutions(spec: &str) -> Result<Vec<usize>, Failure> {
    let err = |why: String| {
        bad(format!(
            "invalid `--resolutions` = `{spec}`: {why}; allowed: increasing cell counts >= 2 \
             separated by commas, e.g. 64,128,256"
        ))
    };
    let mut out: Vec<usize> = Vec::new();
    for t in spec.split(',').map(str::trim) {
        let n: usize = t
            .parse()
            .map_err(|_| err(format!("`{t}` is not a whole number")))?;
        if n < 2 {
            return Err(err(format!("{n} cells is too few")));
        }
        if let Some(&last) = out.last() {
            if n <= last {
                return Err(err(format!("{n} does not exceed {last}")));
            }
        }
        out.push(n);
    }
    if out.len() < 2 {
        return Err(err("one resolution gives no order".into()));
    }
    Ok(out)
}
