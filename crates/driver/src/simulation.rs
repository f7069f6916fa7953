//! The operator-split time loop, run bookkeeping and the energy ledger.

use crate::deck::{parse_deck, Deck};
use crate::setup;
use crate::stage::{Stage, StageError, StageReport};
use crate::units::Units;
use crate::DriverError;
use sluice_mhd::{Eos, MhdSolver, State, StepReport};
use std::time::{Duration, Instant};

/// Receives the simulation at every output time and (optionally) after every step.
pub trait Observer {
    /// Called at t = 0 (index 0) and at each output time (index 1, 2, …; the last is t_end).
    fn output(&mut self, sim: &Simulation, index: usize) -> Result<(), DriverError>;
    /// Called after every step (progress reporting). The default does nothing.
    fn after_step(&mut self, _sim: &Simulation) {}
}

/// Cumulative counters of a run (code units where dimensional).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Counters {
    /// Steps taken.
    pub steps: u64,
    /// Density floor applications in the MHD step.
    pub rho_floor_hits: u64,
    /// Pressure floor applications in the MHD step.
    pub p_floor_hits: u64,
    /// Faces where HLLD fell back to HLLE.
    pub hlld_fallbacks: u64,
    /// Energy per unit area added by MHD floors.
    pub mhd_floor_energy: f64,
    /// Mass per unit area added by MHD floors.
    pub mhd_floor_mass: f64,
    /// Time-integrated conserved gas fluxes into the domain through x_min (ρ, ρv, E, b̃ order
    /// of [`StepReport::inflow_left`]).
    pub gas_inflow_left: [f64; 7],
    /// Same through x_max.
    pub gas_inflow_right: [f64; 7],
    /// Per stage (in the order added): accumulated reports of all its calls.
    pub stages: Vec<StageReport>,
}

/// End-of-run summary.
#[derive(Debug, Clone, PartialEq)]
pub struct RunSummary {
    /// Steps taken.
    pub steps: u64,
    /// Wall time spent stepping, s.
    pub wall_seconds: f64,
    /// Cell updates per wall second (steps × cells / wall time).
    pub cell_updates_per_second: f64,
    /// Density floor applications (MHD).
    pub rho_floor_hits: u64,
    /// Pressure floor applications (MHD).
    pub p_floor_hits: u64,
    /// Floor applications of each stage, by stage name.
    pub stage_floor_hits: Vec<(String, u64)>,
    /// HLLD → HLLE fallbacks.
    pub hlld_fallbacks: u64,
    /// Energy added by all floors, erg/cm².
    pub floor_energy: f64,
    /// Final time, s.
    pub time: f64,
}

impl RunSummary {
    /// Total floor applications of every kind.
    pub fn floors_hit(&self) -> u64 {
        self.rho_floor_hits
            + self.p_floor_hits
            + self.stage_floor_hits.iter().map(|s| s.1).sum::<u64>()
    }
}

impl std::fmt::Display for RunSummary {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{} steps to t = {:.6e} s in {:.3} s wall, {:.3e} cell-updates/s, floors hit: {} (density {}, pressure {}",
            self.steps,
            self.time,
            self.wall_seconds,
            self.cell_updates_per_second,
            self.floors_hit(),
            self.rho_floor_hits,
            self.p_floor_hits
        )?;
        for (name, n) in &self.stage_floor_hits {
            write!(f, ", {name} {n}")?;
        }
        write!(
            f,
            "; {:.3e} erg/cm² added), HLLD fallbacks: {}",
            self.floor_energy, self.hlld_fallbacks
        )
    }
}

/// One ledger entry: a name, a value in cgs and its unit.
#[derive(Debug, Clone, PartialEq)]
pub struct LedgerEntry {
    /// Column name (see docs/output-format.md).
    pub name: String,
    /// Value, cgs.
    pub value: f64,
    /// Unit, e.g. `erg/cm^2`.
    pub units: &'static str,
}

/// Energy (and mass) bookkeeping at one instant, cgs per unit area.
///
/// `energy_residual` = total − total(t=0) − boundary inflow − floor energy − stage sources:
/// zero to round-off for a conservative scheme (NaN for an isothermal gas, whose energy is
/// not conserved).
#[derive(Debug, Clone, PartialEq)]
pub struct Ledger {
    /// Time, s.
    pub time: f64,
    /// Step.
    pub step: u64,
    /// Entries in a fixed order.
    pub entries: Vec<LedgerEntry>,
}

impl Ledger {
    /// Value of the entry `name`.
    pub fn get(&self, name: &str) -> Option<f64> {
        self.entries
            .iter()
            .find(|e| e.name == name)
            .map(|e| e.value)
    }
}

/// A running simulation: deck, units, MHD solver, gas state, stages, time and counters.
pub struct Simulation {
    deck: Deck,
    deck_text: String,
    overrides: Vec<String>,
    units: Units,
    solver: MhdSolver,
    state: State,
    stages: Vec<Box<dyn Stage>>,
    time: f64,
    counters: Counters,
    wall: Duration,
    initial_energy: f64,
    initial_mass: f64,
    /// Output index of the snapshot this run was restarted from (None for a fresh run).
    restart_index: Option<usize>,
}

impl std::fmt::Debug for Simulation {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Simulation")
            .field("name", &self.deck.run.name)
            .field("time", &self.time)
            .field("steps", &self.counters.steps)
            .field(
                "stages",
                &self
                    .stages
                    .iter()
                    .map(|s| s.name().to_string())
                    .collect::<Vec<_>>(),
            )
            .finish()
    }
}

fn totals_energy(state: &State, eos: &Eos) -> (f64, f64, f64) {
    let g = state.grid;
    let dx = g.dx();
    let r = g.interior();
    let bx2 = state.bx * state.bx;
    let (mut th, mut kin, mut mag) = (0.0, 0.0, 0.0);
    let it = state
        .rho
        .slice(ndarray::s![r.clone()])
        .into_iter()
        .zip(state.mx.slice(ndarray::s![r.clone()]))
        .zip(state.my.slice(ndarray::s![r.clone()]))
        .zip(state.mz.slice(ndarray::s![r.clone()]));
    let it2 = state
        .en
        .slice(ndarray::s![r.clone()])
        .into_iter()
        .zip(state.by.slice(ndarray::s![r.clone()]))
        .zip(state.bz.slice(ndarray::s![r]));
    for ((((&d, &mx), &my), &mz), ((&e, &by), &bz)) in it.zip(it2) {
        let k = 0.5 * (mx * mx + my * my + mz * mz) / d;
        let m = 0.5 * (bx2 + by * by + bz * bz);
        kin += k;
        mag += m;
        if matches!(eos, Eos::Ideal { .. }) {
            th += e - k - m;
        }
    }
    (th * dx, kin * dx, mag * dx)
}

impl Simulation {
    /// Builds the simulation (t = 0) from a validated deck; `deck_text` is stored in snapshots.
    pub fn from_deck(deck: Deck, deck_text: String) -> Result<Self, DriverError> {
        deck.validate()?;
        let units = Units::from(&deck.units);
        let grid = setup::grid(&deck, &units)?;
        let config = setup::solver_config(&deck, &units);
        let solver = MhdSolver::new(config, grid)?;
        let mut state = setup::initial_state(&deck, &units, &grid)?;
        solver.apply_boundaries(&mut state);
        let mut sim = Self {
            deck,
            deck_text,
            overrides: Vec::new(),
            units,
            solver,
            state,
            stages: Vec::new(),
            time: 0.0,
            counters: Counters::default(),
            wall: Duration::ZERO,
            initial_energy: 0.0,
            initial_mass: 0.0,
            restart_index: None,
        };
        sim.reset_ledger_origin();
        for stage in crate::physics::build_stages(&sim.deck, &sim.units, &sim.state, &sim.solver)
            .map_err(DriverError::Setup)?
        {
            sim.add_stage(stage)?;
        }
        Ok(sim)
    }

    /// Parses deck text (with `--set` style overrides) and builds the simulation.
    pub fn from_toml_str(text: &str, overrides: &[String]) -> Result<Self, DriverError> {
        let deck = parse_deck(text, overrides)?;
        let mut sim = Self::from_deck(deck, text.to_string())?;
        sim.set_overrides(overrides.to_vec());
        Ok(sim)
    }

    /// Records the `--set` overrides the deck was parsed with (written to snapshots).
    pub fn set_overrides(&mut self, overrides: Vec<String>) {
        self.overrides = overrides;
    }

    /// The `--set` overrides recorded with [`Simulation::set_overrides`].
    pub fn overrides(&self) -> &[String] {
        &self.overrides
    }

    /// Ledger origin: (total energy, total mass) at t = 0 in code units per unit area.
    pub(crate) fn ledger_origin(&self) -> (f64, f64) {
        (self.initial_energy, self.initial_mass)
    }

    /// Output index of the snapshot this run was restarted from, if it was.
    pub fn restart_index(&self) -> Option<usize> {
        self.restart_index
    }

    /// Puts back the run bookkeeping of a snapshot (see [`crate::restart`]): time (code
    /// units), counters, ledger origin (code units) and the snapshot's output index.
    pub(crate) fn restore_run(
        &mut self,
        time: f64,
        counters: Counters,
        origin: (f64, f64),
        index: usize,
    ) {
        self.time = time;
        self.counters = counters;
        self.initial_energy = origin.0;
        self.initial_mass = origin.1;
        self.restart_index = Some(index);
    }

    /// The MHD solver, the stages and the gas state, the latter two mutably (for restoring a
    /// checkpoint).
    pub(crate) fn parts_mut(&mut self) -> (&MhdSolver, &mut [Box<dyn Stage>], &mut State) {
        (&self.solver, &mut self.stages, &mut self.state)
    }

    fn reset_ledger_origin(&mut self) {
        let (th, kin, mag) = totals_energy(&self.state, &self.solver.config().eos);
        let stage_e: f64 = self
            .stages
            .iter()
            .flat_map(|s| s.energy_terms(&self.state))
            .map(|t| t.1)
            .sum();
        self.initial_energy = th + kin + mag + stage_e;
        self.initial_mass = self.state.totals()[0];
    }

    /// Adds a stage (only before the first step). Stages run in the order added (see
    /// [`crate::stage`]).
    pub fn add_stage(&mut self, stage: Box<dyn Stage>) -> Result<(), DriverError> {
        if self.counters.steps > 0 {
            return Err(DriverError::Setup(format!(
                "stage `{}` added after the run started (step {})",
                stage.name(),
                self.counters.steps
            )));
        }
        if self.stages.iter().any(|s| s.name() == stage.name()) {
            return Err(DriverError::Setup(format!(
                "two stages are named `{}`",
                stage.name()
            )));
        }
        self.stages.push(stage);
        self.counters.stages.push(StageReport::default());
        self.reset_ledger_origin();
        Ok(())
    }

    /// The deck.
    pub fn deck(&self) -> &Deck {
        &self.deck
    }
    /// The deck text as read (before overrides).
    pub fn deck_text(&self) -> &str {
        &self.deck_text
    }
    /// Code units.
    pub fn units(&self) -> &Units {
        &self.units
    }
    /// The MHD solver.
    pub fn solver(&self) -> &MhdSolver {
        &self.solver
    }
    /// The gas state (code units).
    pub fn state(&self) -> &State {
        &self.state
    }
    /// Mutable gas state (code units), e.g. for set-ups beyond the deck generators. Call
    /// before the first step; the ledger origin is reset by [`Simulation::add_stage`] only.
    pub fn state_mut(&mut self) -> &mut State {
        &mut self.state
    }
    /// The stages.
    pub fn stages(&self) -> &[Box<dyn Stage>] {
        &self.stages
    }
    /// Current time, code units.
    pub fn time(&self) -> f64 {
        self.time
    }
    /// Current time, s.
    pub fn time_seconds(&self) -> f64 {
        self.time * self.units.time()
    }
    /// End time of the deck, code units.
    pub fn t_end(&self) -> f64 {
        self.deck.run.t_end / self.units.time()
    }
    /// Counters so far.
    pub fn counters(&self) -> &Counters {
        &self.counters
    }
    /// Steps so far.
    pub fn steps(&self) -> u64 {
        self.counters.steps
    }

    /// Stable step (code units): min of the MHD CFL step and every stage's `max_dt`.
    pub fn stable_dt(&self) -> f64 {
        let mut dt = self.solver.max_dt(&self.state);
        for s in &self.stages {
            dt = dt.min(s.max_dt(&self.state));
        }
        dt
    }

    fn record_stage(&mut self, i: usize, rep: &StageReport) {
        self.counters.stages[i].accumulate(rep);
    }

    fn record_mhd(&mut self, rep: &StepReport) {
        let c = &mut self.counters;
        c.rho_floor_hits += rep.rho_floor_hits;
        c.p_floor_hits += rep.p_floor_hits;
        c.hlld_fallbacks += rep.hlld_fallbacks;
        c.mhd_floor_energy += rep.floor_energy;
        c.mhd_floor_mass += rep.floor_mass;
        for k in 0..7 {
            c.gas_inflow_left[k] += rep.inflow_left[k];
            c.gas_inflow_right[k] += rep.inflow_right[k];
        }
    }

    /// One Strang-split step of size `dt` (code units), taken as given.
    ///
    /// `source(dt/2)` of every stage in order, the MHD step, `transport(dt)` of every stage,
    /// `source(dt/2)` of every stage in reverse order.
    pub fn step_exact(&mut self, dt: f64) -> Result<(), DriverError> {
        if !(dt.is_finite() && dt > 0.0) {
            return Err(DriverError::TimeStep {
                time: self.time_seconds(),
                dt: dt * self.units.time(),
            });
        }
        let start = Instant::now();
        let half = 0.5 * dt;
        for i in 0..self.stages.len() {
            let rep = self.stages[i]
                .source(&mut self.state, half)
                .map_err(|e| at_time(e, self.time_seconds()))?;
            self.record_stage(i, &rep);
        }
        let rep = self.solver.step(&mut self.state, dt)?;
        self.record_mhd(&rep);
        for i in 0..self.stages.len() {
            let rep = self.stages[i]
                .transport(&mut self.state, dt)
                .map_err(|e| at_time(e, self.time_seconds()))?;
            self.record_stage(i, &rep);
        }
        for i in (0..self.stages.len()).rev() {
            let rep = self.stages[i]
                .source(&mut self.state, half)
                .map_err(|e| at_time(e, self.time_seconds()))?;
            self.record_stage(i, &rep);
        }
        self.time += dt;
        self.counters.steps += 1;
        self.wall += start.elapsed();
        Ok(())
    }

    /// One step of the stable size, shortened so as not to pass `t_stop` (code units).
    /// Returns the step taken.
    pub fn step(&mut self, t_stop: f64) -> Result<f64, DriverError> {
        let stable = self.stable_dt();
        if !(stable.is_finite() && stable > 0.0) {
            return Err(DriverError::TimeStep {
                time: self.time_seconds(),
                dt: stable * self.units.time(),
            });
        }
        let remaining = t_stop - self.time;
        // Land exactly on t_stop; avoid a sliver step by splitting the last two evenly.
        let dt = if stable >= remaining {
            remaining
        } else if stable > 0.5 * remaining {
            0.5 * remaining
        } else {
            stable
        };
        if self.counters.steps >= self.deck.run.max_steps {
            return Err(DriverError::MaxSteps {
                max: self.deck.run.max_steps,
                time: self.time_seconds(),
            });
        }
        if dt < 1e-14 * self.t_end().max(self.time) {
            return Err(DriverError::TimeStep {
                time: self.time_seconds(),
                dt: dt * self.units.time(),
            });
        }
        self.step_exact(dt)?;
        if stable >= remaining {
            self.time = t_stop;
        }
        Ok(dt)
    }

    /// Advances to code time `t` (no-op if already there).
    pub fn advance_to(&mut self, t: f64) -> Result<(), DriverError> {
        self.advance_observed(t, &mut None::<&mut dyn Observer>)
    }

    fn advance_observed(
        &mut self,
        t: f64,
        obs: &mut Option<&mut dyn Observer>,
    ) -> Result<(), DriverError> {
        while self.time < t {
            self.step(t)?;
            if let Some(o) = obs.as_mut() {
                o.after_step(self);
            }
        }
        Ok(())
    }

    /// Output times in code units (excluding t = 0; the last is t_end).
    pub fn output_times(&self) -> Vec<f64> {
        let tu = self.units.time();
        self.deck
            .output_times()
            .into_iter()
            .map(|t| t / tu)
            .collect()
    }

    /// Runs from the current time to t_end, calling `observer.output` at t = 0 (if the run has
    /// not started) and at every output time.
    pub fn run(&mut self, observer: &mut dyn Observer) -> Result<RunSummary, DriverError> {
        let times = self.output_times();
        if self.counters.steps == 0 && self.time == 0.0 && self.restart_index.is_none() {
            observer.output(self, 0)?;
        }
        // After a restart, outputs are numbered on from the snapshot's index (so a changed
        // output cadence neither overwrites nor leaves gaps); otherwise by position in the list.
        let mut next = self.restart_index.map(|k| k + 1);
        for (i, t) in times.into_iter().enumerate() {
            if t <= self.time {
                continue;
            }
            self.advance_observed(t, &mut Some(observer))?;
            let index = next.unwrap_or(i + 1);
            observer.output(self, index)?;
            next = next.map(|k| k + 1);
        }
        Ok(self.summary())
    }

    /// Summary of the run so far.
    pub fn summary(&self) -> RunSummary {
        let c = &self.counters;
        let wall = self.wall.as_secs_f64();
        let updates = c.steps as f64 * self.state.grid.n as f64;
        let stage_floor_energy: f64 = c.stages.iter().map(|s| s.floor_energy).sum();
        RunSummary {
            steps: c.steps,
            wall_seconds: wall,
            cell_updates_per_second: if wall > 0.0 { updates / wall } else { 0.0 },
            rho_floor_hits: c.rho_floor_hits,
            p_floor_hits: c.p_floor_hits,
            stage_floor_hits: self
                .stages
                .iter()
                .zip(&c.stages)
                .map(|(s, r)| (s.name().to_string(), r.floor_hits))
                .collect(),
            hlld_fallbacks: c.hlld_fallbacks,
            floor_energy: (c.mhd_floor_energy + stage_floor_energy) * self.units.energy_per_area(),
            time: self.time_seconds(),
        }
    }

    /// The energy ledger now (cgs, per unit area).
    pub fn ledger(&self) -> Ledger {
        let eu = self.units.energy_per_area();
        let mu = self.units.mass_per_area();
        let eos = self.solver.config().eos;
        let isothermal = matches!(eos, Eos::Isothermal { .. });
        let (th, kin, mag) = totals_energy(&self.state, &eos);
        let c = &self.counters;
        let mut entries = Vec::new();
        let mut e = |name: String, value: f64, units: &'static str| {
            entries.push(LedgerEntry { name, value, units })
        };
        let erg = "erg/cm^2";
        e("gas_thermal".into(), th * eu, erg);
        e("gas_kinetic".into(), kin * eu, erg);
        e("gas_magnetic".into(), mag * eu, erg);
        let mut total = th + kin + mag;
        for s in &self.stages {
            for (name, v) in s.energy_terms(&self.state) {
                total += v;
                e(format!("{}_{}", s.name(), name), v * eu, erg);
            }
        }
        e("total".into(), total * eu, erg);
        let st_left: f64 = c.stages.iter().map(|s| s.boundary_energy_left).sum();
        let st_right: f64 = c.stages.iter().map(|s| s.boundary_energy_right).sum();
        let (bl, br) = if isothermal {
            (0.0, 0.0)
        } else {
            (c.gas_inflow_left[4], c.gas_inflow_right[4])
        };
        let boundary_left = bl + st_left;
        let boundary_right = br + st_right;
        let floors = c.mhd_floor_energy + c.stages.iter().map(|s| s.floor_energy).sum::<f64>();
        let sources: f64 = c.stages.iter().map(|s| s.energy_source).sum();
        e("boundary_left".into(), boundary_left * eu, erg);
        e("boundary_right".into(), boundary_right * eu, erg);
        e("floor_energy".into(), floors * eu, erg);
        e("stage_sources".into(), sources * eu, erg);
        let residual = if isothermal {
            f64::NAN
        } else {
            total - self.initial_energy - boundary_left - boundary_right - floors - sources
        };
        e("energy_residual".into(), residual * eu, erg);
        let mass = self.state.totals()[0];
        e("mass".into(), mass * mu, "g/cm^2");
        e(
            "mass_boundary_left".into(),
            c.gas_inflow_left[0] * mu,
            "g/cm^2",
        );
        e(
            "mass_boundary_right".into(),
            c.gas_inflow_right[0] * mu,
            "g/cm^2",
        );
        e("floor_mass".into(), c.mhd_floor_mass * mu, "g/cm^2");
        let mres = mass
            - self.initial_mass
            - c.gas_inflow_left[0]
            - c.gas_inflow_right[0]
            - c.mhd_floor_mass;
        e("mass_residual".into(), mres * mu, "g/cm^2");
        Ledger {
            time: self.time_seconds(),
            step: c.steps,
            entries,
        }
    }
}

/// Adds the simulation time of the failing step (the step's start, s) to a stage error, so the
/// run reports the cell, its values (from the stage) and the time together.
fn at_time(e: StageError, time: f64) -> StageError {
    match e {
        StageError::Unphysical { stage, cell, what } => StageError::Unphysical {
            stage,
            cell,
            what: format!("{what} (step starting at t = {time:e} s)"),
        },
        StageError::Failed { stage, what } => StageError::Failed {
            stage,
            what: format!("{what} (step starting at t = {time:e} s)"),
        },
        other => other,
    }
}
