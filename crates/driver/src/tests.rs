//! Tests of the time loop, stages, ledger, units and snapshots.

use crate::output::{build_snapshot, OutputWriter};
use crate::snapshot::{read, AttrValue};
use crate::stage::{OutputField, Stage, StageError, StageReport};
use crate::{DriverError, Observer, Simulation};
use sluice_mhd::State;
use std::sync::{Arc, Mutex};

const SOD: &str = r#"
[run]
name = "sod"
t_end = 0.2
output_interval = 0.1
[grid]
cells = 200
x_min = 0.0
x_max = 1.0
[gas]
gamma = 1.4
[boundaries]
left = "outflow"
right = "outflow"
[[init.regions]]
x_min = 0.0
x_max = 0.5
density = 1.0
pressure = 1.0
[[init.regions]]
x_min = 0.5
x_max = 1.0
density = 0.125
pressure = 0.1
"#;

const UNIFORM: &str = r#"
[run]
name = "uniform"
t_end = 1.0
[grid]
cells = 32
x_min = 0.0
x_max = 2.0
[gas]
gamma = 1.5
[boundaries]
left = "periodic"
right = "periodic"
[init.background]
density = 1.0
pressure = 1.0
"#;

/// (stage, method, dt) of every call, in order.
type CallLog = Arc<Mutex<Vec<(String, &'static str, f64)>>>;

/// Records every call; `source` heats the gas uniformly at `q` (code energy per volume per
/// time) and books the energy it adds as `energy_source`.
struct Recorder {
    name: String,
    q: f64,
    dt_limit: f64,
    log: CallLog,
    heat: f64,
}

impl Stage for Recorder {
    fn name(&self) -> &str {
        &self.name
    }
    fn max_dt(&self, _gas: &State) -> f64 {
        self.dt_limit
    }
    fn source(&mut self, gas: &mut State, dt: f64) -> Result<StageReport, StageError> {
        self.log
            .lock()
            .unwrap()
            .push((self.name.clone(), "source", dt));
        let r = gas.grid.interior();
        for e in gas.en.slice_mut(ndarray::s![r]).iter_mut() {
            *e += self.q * dt;
        }
        let added = self.q * dt * (gas.grid.x_max - gas.grid.x_min);
        self.heat += added;
        Ok(StageReport {
            energy_source: added,
            substeps: 1,
            ..Default::default()
        })
    }
    fn transport(&mut self, _gas: &mut State, dt: f64) -> Result<StageReport, StageError> {
        self.log
            .lock()
            .unwrap()
            .push((self.name.clone(), "transport", dt));
        Ok(StageReport {
            substeps: 0,
            ..Default::default()
        })
    }
    fn energy_terms(&self, _gas: &State) -> Vec<(String, f64)> {
        vec![("heat_budget".into(), 0.0)]
    }
    fn fields(&self, gas: &State) -> Vec<OutputField> {
        vec![OutputField {
            name: format!("{}_marker", self.name),
            data: vec![self.q; gas.grid.n],
            units: "erg/cm^3/s".into(),
        }]
    }
    fn checkpoint(&self) -> Vec<OutputField> {
        vec![OutputField {
            name: "heat".into(),
            data: vec![self.heat],
            units: "code".into(),
        }]
    }
    fn restore(&mut self, data: &[OutputField]) -> Result<(), StageError> {
        match data.iter().find(|f| f.name == "heat") {
            Some(f) if f.data.len() == 1 => {
                self.heat = f.data[0];
                Ok(())
            }
            _ => Err(StageError::Restore {
                stage: self.name.clone(),
                what: "no `heat`".into(),
            }),
        }
    }
}

fn recorder(name: &str, q: f64, dt_limit: f64, log: &CallLog) -> Box<Recorder> {
    Box::new(Recorder {
        name: name.into(),
        q,
        dt_limit,
        log: log.clone(),
        heat: 0.0,
    })
}

#[test]
fn strang_order_of_two_stages() {
    let log = Arc::new(Mutex::new(Vec::new()));
    let mut sim = Simulation::from_toml_str(UNIFORM, &[]).unwrap();
    sim.add_stage(recorder("a", 0.0, f64::INFINITY, &log))
        .unwrap();
    sim.add_stage(recorder("b", 0.0, f64::INFINITY, &log))
        .unwrap();
    sim.step_exact(0.01).unwrap();
    let got: Vec<(String, &str, f64)> = log.lock().unwrap().clone();
    let want = [
        ("a", "source", 0.005),
        ("b", "source", 0.005),
        ("a", "transport", 0.01),
        ("b", "transport", 0.01),
        ("b", "source", 0.005),
        ("a", "source", 0.005),
    ];
    assert_eq!(got.len(), want.len(), "{got:?}");
    for (g, w) in got.iter().zip(want.iter()) {
        assert_eq!((g.0.as_str(), g.1), (w.0, w.1));
        assert!((g.2 - w.2).abs() < 1e-15, "{g:?} vs {w:?}");
    }
}

#[test]
fn stage_max_dt_limits_the_step() {
    let log = Arc::new(Mutex::new(Vec::new()));
    let mut sim = Simulation::from_toml_str(UNIFORM, &[]).unwrap();
    let mhd_dt = sim.stable_dt();
    sim.add_stage(recorder("slow", 0.0, 0.25 * mhd_dt, &log))
        .unwrap();
    let dt = sim.step(1.0).unwrap();
    assert_eq!(dt, 0.25 * mhd_dt);
}

#[test]
fn heating_source_is_booked_in_the_ledger() {
    // Uniform periodic gas heated at rate q: E_th(t) = E_th(0) + q L t exactly (the MHD step
    // leaves a uniform state uniform), so the thermal energy gain must equal the booked
    // source and the ledger residual must vanish to round-off (energy conservation).
    let log = Arc::new(Mutex::new(Vec::new()));
    let mut sim = Simulation::from_toml_str(UNIFORM, &[]).unwrap();
    let q = 0.3;
    sim.add_stage(recorder("heater", q, f64::INFINITY, &log))
        .unwrap();
    let e0 = sim.ledger().get("gas_thermal").unwrap();
    sim.advance_to(0.5).unwrap();
    assert!((sim.time() - 0.5).abs() < 1e-15);
    let l = sim.ledger();
    let gain = l.get("gas_thermal").unwrap() - e0;
    assert!((gain - q * 2.0 * 0.5).abs() < 1e-12, "gain {gain}");
    assert!((l.get("stage_sources").unwrap() - q * 2.0 * 0.5).abs() < 1e-12);
    assert!(l.get("energy_residual").unwrap().abs() < 1e-12, "{l:?}");
    assert!(l.get("heater_heat_budget").is_some());
}

#[test]
fn sod_ledger_closes_with_boundary_fluxes() {
    // Conservation (finite-volume identity): the change of total energy and mass equals the
    // time-integrated boundary fluxes plus floor additions, to round-off.
    let mut sim = Simulation::from_toml_str(SOD, &["grid.cells=100".into()]).unwrap();
    sim.advance_to(0.2).unwrap();
    let l = sim.ledger();
    let total = l.get("total").unwrap();
    assert!(
        l.get("energy_residual").unwrap().abs() < 1e-12 * total,
        "{l:?}"
    );
    assert!(
        l.get("mass_residual").unwrap().abs() < 1e-12 * l.get("mass").unwrap(),
        "{l:?}"
    );
    let s = sim.summary();
    assert!(s.steps > 10);
    assert_eq!(s.floors_hit(), 0);
}

#[test]
fn periodic_wave_conserves_to_round_off() {
    let deck = format!(
        "{}\n[magnetic_field]\nx = 1.0\n[init.wave]\nfamily = \"fast\"\namplitude = 1e-4\n",
        UNIFORM.replace("pressure = 1.0", "pressure = 1.0\nmagnetic_field_y = 2.0")
    );
    let mut sim = Simulation::from_toml_str(&deck, &[]).unwrap();
    sim.advance_to(0.1).unwrap();
    let l = sim.ledger();
    assert!(
        l.get("energy_residual").unwrap().abs() < 1e-13 * l.get("total").unwrap(),
        "{l:?}"
    );
    assert!(
        l.get("boundary_left").unwrap().abs() + l.get("boundary_right").unwrap().abs() < 1e-12
            || (l.get("boundary_left").unwrap() + l.get("boundary_right").unwrap()).abs() < 1e-13
    );
}

#[test]
fn code_units_do_not_change_the_physics() {
    // Dimensional invariance: a run in scaled code units must give the same cgs result.
    let plain = {
        let mut s = Simulation::from_toml_str(SOD, &["grid.cells=64".into()]).unwrap();
        s.advance_to(s.t_end()).unwrap();
        build_snapshot(&s, 1)
    };
    let scaled = {
        let sets = [
            "grid.cells=64",
            "units.length=0.25",
            "units.density=8.0",
            "units.velocity=3.0",
        ]
        .map(String::from);
        let mut s = Simulation::from_toml_str(SOD, &sets).unwrap();
        s.advance_to(s.t_end()).unwrap();
        build_snapshot(&s, 1)
    };
    for name in [
        "/fields/density",
        "/fields/pressure",
        "/fields/velocity_x",
        "/grid/x_center",
    ] {
        let a = &plain.dataset(name).unwrap().data;
        let b = &scaled.dataset(name).unwrap().data;
        let scale = a.iter().fold(0.0f64, |m, v| m.max(v.abs())).max(1e-30);
        let err = a
            .iter()
            .zip(b)
            .fold(0.0f64, |m, (x, y)| m.max((x - y).abs()));
        assert!(err <= 1e-9 * scale, "{name}: {err}");
    }
    let ta = plain.attr("time").and_then(AttrValue::as_f64).unwrap();
    let tb = scaled.attr("time").and_then(AttrValue::as_f64).unwrap();
    assert!((ta - 0.2).abs() < 1e-14 && (tb - 0.2).abs() < 1e-12);
}

#[test]
fn gauss_in_deck_and_snapshot() {
    // B_y = 3 G in the deck; internally b̃ = B/√(4π); the snapshot must report 3 G again and the
    // magnetic energy (B_x² + B_y²)/(8π) per volume.
    let deck = format!(
        "{}\n[magnetic_field]\nx = 1.5\n",
        UNIFORM.replace("pressure = 1.0", "pressure = 1.0\nmagnetic_field_y = 3.0")
    );
    let sim = Simulation::from_toml_str(&deck, &[]).unwrap();
    let by = sim.state().by[sim.state().grid.ng];
    assert!((by - 3.0 / (4.0 * std::f64::consts::PI).sqrt()).abs() < 1e-15);
    let snap = build_snapshot(&sim, 0);
    let d = snap.dataset("/fields/magnetic_field_y").unwrap();
    assert!(d.data.iter().all(|v| (v - 3.0).abs() < 1e-14));
    assert_eq!(d.attr("units").and_then(AttrValue::as_str), Some("G"));
    let emag = sim.ledger().get("gas_magnetic").unwrap();
    let want = (1.5f64 * 1.5 + 9.0) / (8.0 * std::f64::consts::PI) * 2.0;
    assert!((emag / want - 1.0).abs() < 1e-14, "{emag} vs {want}");
}

#[test]
fn temperature_from_mean_molecular_weight() {
    // T = μ m_u p / (ρ k_B): for ρ = 1e-24 g/cm³, p = 1.380649e-12 erg/cm³, μ = 1:
    // T = 1.66053906660e-24 · 1.380649e-12 / (1e-24 · 1.380649e-16) = 1.66053906660e4 K.
    let deck = UNIFORM.replace("density = 1.0\npressure = 1.0", "density = 1e-24\npressure = 1.380649e-12").replace("gamma = 1.5", "gamma = 1.5\nmean_molecular_weight = 1.0\ndensity_floor = 1e-30\npressure_floor = 1e-30");
    let sim = Simulation::from_toml_str(&deck, &[]).unwrap();
    let snap = build_snapshot(&sim, 0);
    let t = &snap.dataset("/fields/temperature").unwrap().data;
    assert!(
        t.iter()
            .all(|v| (v / 1.660_539_066_60e4 - 1.0).abs() < 1e-12),
        "{:?}",
        t[0]
    );
}

#[test]
fn snapshots_and_ledger_csv_are_written_and_read_back() {
    let dir = std::env::temp_dir().join(format!("sluice-driver-test-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let log = Arc::new(Mutex::new(Vec::new()));
    let mut sim = Simulation::from_toml_str(SOD, &["grid.cells=50".into()]).unwrap();
    sim.add_stage(recorder("probe", 0.0, f64::INFINITY, &log))
        .unwrap();
    let mut w = OutputWriter::new(&dir, &sim, false).unwrap();
    let summary = sim.run(&mut w).unwrap();
    assert_eq!(w.written().len(), 3);
    assert!(summary.steps > 0 && summary.cell_updates_per_second > 0.0);
    let snap = read(&dir.join("sod_0002.h5")).unwrap();
    assert_eq!(
        snap.attr("step").and_then(AttrValue::as_i64),
        Some(summary.steps as i64)
    );
    assert!((snap.attr("time").and_then(AttrValue::as_f64).unwrap() - 0.2).abs() < 1e-14);
    assert!(snap
        .attr("deck")
        .and_then(AttrValue::as_str)
        .unwrap()
        .contains("[grid]"));
    let rho = snap.dataset("/fields/density").unwrap();
    assert_eq!(rho.data.len(), 50);
    assert_eq!(
        rho.attr("units").and_then(AttrValue::as_str),
        Some("g/cm^3")
    );
    assert!(snap.dataset("/fields/probe_marker").is_some());
    assert_eq!(snap.dataset("/restart/probe/heat").unwrap().data, vec![0.0]);
    // Bit-exact restart data equals the live state.
    let st = sim.state();
    let live: Vec<f64> = st.en.slice(ndarray::s![st.grid.interior()]).to_vec();
    assert_eq!(snap.dataset("/restart/gas/energy").unwrap().data, live);
    let csv = std::fs::read_to_string(dir.join("ledger.csv")).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines.len(), 4, "{csv}");
    assert!(lines[0]
        .starts_with("time,step,gas_thermal,gas_kinetic,gas_magnetic,probe_heat_budget,total,"));
    let ncol = lines[0].split(',').count();
    assert!(lines[1..].iter().all(|l| l.split(',').count() == ncol));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn add_stage_after_start_is_an_error() {
    let log = Arc::new(Mutex::new(Vec::new()));
    let mut sim = Simulation::from_toml_str(UNIFORM, &[]).unwrap();
    sim.step(1.0).unwrap();
    assert!(matches!(
        sim.add_stage(recorder("late", 0.0, 1.0, &log)),
        Err(DriverError::Setup(_))
    ));
}

#[test]
fn max_steps_is_reported_not_hung() {
    let mut sim = Simulation::from_toml_str(SOD, &["run.max_steps=3".into()]).unwrap();
    let e = sim.advance_to(sim.t_end()).unwrap_err();
    assert!(matches!(e, DriverError::MaxSteps { max: 3, .. }), "{e}");
}

#[test]
fn observer_sees_every_output_time() {
    struct Times(Vec<(usize, f64)>);
    impl Observer for Times {
        fn output(&mut self, sim: &Simulation, index: usize) -> Result<(), DriverError> {
            self.0.push((index, sim.time_seconds()));
            Ok(())
        }
    }
    let mut sim = Simulation::from_toml_str(
        SOD,
        &[
            "grid.cells=40".into(),
            "run.output_times=[0.05, 0.13]".into(),
            "run.output_interval=false".into(),
        ],
    )
    .err();
    // `output_interval = false` is a type error naming the key.
    assert!(sim
        .take()
        .map(|e| e.to_string().contains("run.output_interval"))
        .unwrap_or(false));
    let text = SOD.replace("output_interval = 0.1", "output_times = [0.05, 0.13]");
    let mut sim = Simulation::from_toml_str(&text, &["grid.cells=40".into()]).unwrap();
    let mut obs = Times(Vec::new());
    sim.run(&mut obs).unwrap();
    let idx: Vec<usize> = obs.0.iter().map(|x| x.0).collect();
    assert_eq!(idx, vec![0, 1, 2, 3]);
    for (got, want) in obs.0.iter().map(|x| x.1).zip([0.0, 0.05, 0.13, 0.2]) {
        assert!((got - want).abs() < 1e-14, "{got} vs {want}");
    }
}

#[test]
fn inflow_and_profiles_build() {
    let text = format!(
        "{}\n[[init.profiles]]\nshape = \"gaussian\"\nfield = \"density\"\namplitude = 0.5\ncenter = 1.0\nwidth = 0.1\n[[init.profiles]]\nshape = \"sine\"\nfield = \"velocity_y\"\namplitude = 0.01\nwavelength = 2.0\n",
        UNIFORM
    );
    let sim = Simulation::from_toml_str(&text, &[]).unwrap();
    let st = sim.state();
    let jmid = st.grid.ng + 16; // centre at x = 1.03125
    let x = st.grid.x_center(jmid);
    assert!((st.rho[jmid] - (1.0 + 0.5 * (-(x - 1.0) * (x - 1.0) / 0.02f64).exp())).abs() < 1e-14);
    let bad = text.replace("amplitude = 0.5", "amplitude = -2.0");
    let e = Simulation::from_toml_str(&bad, &[]).unwrap_err();
    assert!(e.to_string().contains("init.profiles[0]"), "{e}");
}

#[test]
fn isothermal_and_reflecting_runs() {
    // Isothermal gas between reflecting walls: mass is conserved exactly (no flux through a
    // wall), the energy residual is NaN by definition (no energy equation).
    let text = SOD
        .replace("gamma = 1.4", "isothermal_sound_speed = 1.0")
        .replace("pressure = 1.0\n", "")
        .replace("pressure = 0.1\n", "")
        .replace("\"outflow\"", "\"reflecting\"");
    let mut sim = Simulation::from_toml_str(&text, &["grid.cells=64".into()]).unwrap();
    sim.advance_to(sim.t_end()).unwrap();
    let l = sim.ledger();
    assert!(l.get("energy_residual").unwrap().is_nan());
    assert!(l.get("mass_residual").unwrap().abs() < 1e-14, "{l:?}");
    assert!((l.get("mass").unwrap() - 0.5625).abs() < 1e-14);
    let snap = build_snapshot(&sim, 1);
    let p = &snap.dataset("/fields/pressure").unwrap().data;
    let r = &snap.dataset("/fields/density").unwrap().data;
    assert!(
        p.iter().zip(r).all(|(p, r)| (p - r).abs() < 1e-14 * r),
        "p = c_s² ρ with c_s = 1"
    );
    assert_eq!(
        snap.attr("deck_overrides").and_then(AttrValue::as_str),
        Some("grid.cells=64")
    );
}

/// Norm of the L1 error vector, √(Σ_k L1(δU_k)²) over the seven conserved variables (the
/// error measure of Stone et al. 2008, §8.1), after one wave period.
fn wave_period_error(cells: u64, family: &str, direction: &str) -> f64 {
    // Background of the linear-wave test of Stone et al. 2008 (ApJS 178, 137, §8.1) in the
    // B²/2 normalisation: ρ = 1, p = 3/5, γ = 5/3, b̃ = (1, √2, 1/2); here in gauss (× √(4π)).
    let s4p = (4.0 * std::f64::consts::PI).sqrt();
    let text = format!(
        r#"
[run]
name = "wave"
t_end = 1.0
[grid]
cells = {cells}
x_min = -0.5
x_max = 0.5
[gas]
gamma = 1.6666666666666667
[mhd]
integrator = "rk3"
[magnetic_field]
x = {bx}
[boundaries]
left = "periodic"
right = "periodic"
[init.background]
density = 1.0
pressure = 0.6
magnetic_field_y = {by}
magnetic_field_z = {bz}
[init.wave]
family = "{family}"
amplitude = 1e-6
direction = "{direction}"
"#,
        bx = s4p,
        by = 2f64.sqrt() * s4p,
        bz = 0.5 * s4p
    );
    let deck = crate::deck::parse_deck(&text, &[]).unwrap();
    let u = crate::Units::default();
    let speed = crate::setup::wave_speed(&deck, &u).unwrap();
    let period = 1.0 / speed.abs();
    let mut sim = Simulation::from_toml_str(&text, &[format!("run.t_end={period}")]).unwrap();
    let u0 = sim.state().clone();
    sim.advance_to(sim.t_end()).unwrap();
    let st = sim.state();
    let g = st.grid;
    let l1 = |a: &ndarray::Array1<f64>, b: &ndarray::Array1<f64>| {
        g.interior().map(|j| (a[j] - b[j]).abs()).sum::<f64>() / g.n as f64
    };
    let comps = [
        l1(&st.rho, &u0.rho),
        l1(&st.mx, &u0.mx),
        l1(&st.my, &u0.my),
        l1(&st.mz, &u0.mz),
        l1(&st.en, &u0.en),
        l1(&st.by, &u0.by),
        l1(&st.bz, &u0.bz),
    ];
    comps.iter().map(|c| c * c).sum::<f64>().sqrt()
}

#[test]
fn deck_linear_waves_return_after_one_period_at_second_order() {
    // Stone et al. 2008 (ApJS 178, 137, §8.1): with second-order reconstruction the L1 error
    // of a linear wave after one period falls as N⁻²; we require an observed order ≥ 1.8 and an
    // error far below the amplitude. A wrong wavenumber, phase speed or eigenvector in the
    // generator breaks both.
    for (family, dir) in [("fast", "right"), ("alfven", "left"), ("slow", "right")] {
        let e_lo = wave_period_error(64, family, dir);
        let e_hi = wave_period_error(128, family, dir);
        let order = (e_lo / e_hi).log2();
        assert!(
            order >= 1.8,
            "{family}/{dir}: order {order} (errors {e_lo:e}, {e_hi:e})"
        );
        assert!(
            e_hi < 1e-7,
            "{family}/{dir}: error {e_hi:e} vs amplitude 1e-6"
        );
    }
}
