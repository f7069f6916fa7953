//! `sluice check`: derived quantities of a deck and a run-time estimate.

use crate::deck::Deck;
use crate::simulation::Simulation;
use crate::DriverError;
use std::time::Instant;

/// Derived quantities of a deck at t = 0, cgs.
#[derive(Debug, Clone, PartialEq)]
pub struct CheckReport {
    /// Cells.
    pub cells: usize,
    /// Cell width, cm.
    pub dx: f64,
    /// Largest fast magnetosonic speed c_f over the grid and boundary states, cm/s.
    pub max_fast_speed: f64,
    /// Largest Alfvén speed |B_x|/√(4πρ), cm/s.
    pub max_alfven_speed: f64,
    /// Largest sound speed, cm/s.
    pub max_sound_speed: f64,
    /// Largest |v_x| + c_f, cm/s.
    pub max_signal_speed: f64,
    /// Initial time step, s.
    pub initial_dt: f64,
    /// t_end / min(initial Δt, cfl Δx / max signal speed), rounded up (Δt changes as the flow
    /// evolves: an estimate).
    pub estimated_steps: u64,
    /// Measured wall time per cell update, s (from `timing_steps` steps).
    pub seconds_per_cell_update: f64,
    /// Steps timed.
    pub timing_steps: u64,
    /// estimated_steps × cells × seconds_per_cell_update, s.
    pub estimated_wall_seconds: f64,
    /// Snapshots the run will write (including t = 0).
    pub outputs: usize,
    /// Derived quantities of the physics stages at t = 0 (c_r, c_r/v_max, CR subcycles per
    /// step, κ range, Alfvén speed), one line each; see [`crate::physics::check_lines`];
    /// then the slab lines of [`crate::slab::check_lines`] (Alfvén speeds inside/outside,
    /// time scales, the steady bottleneck plateau).
    pub physics: Vec<String>,
}

/// Builds the problem, measures signal speeds and Δt, and times a few steps (at most 20 steps
/// or about 0.2 s of wall time, never past t_end).
pub fn check_deck(deck: &Deck, text: &str) -> Result<CheckReport, DriverError> {
    let mut sim = Simulation::from_deck(deck.clone(), text.to_string())?;
    let u = *sim.units();
    let eos = sim.solver().config().eos;
    let st = sim.state();
    let (mut cf, mut ca, mut cs, mut sig) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    // Ghost cells are included so that an inflow state counts (it enters the domain).
    for j in 0..st.grid.len() {
        let w = st.primitive(j, &eos);
        let f = sluice_mhd::fast_speed(&w, st.bx, &eos);
        cf = cf.max(f);
        ca = ca.max(sluice_mhd::alfven_speed(&w, st.bx));
        cs = cs.max(sluice_mhd::sound_speed(&w, &eos));
        sig = sig.max(w.vx.abs() + f);
    }
    let mut physics = crate::physics::check_lines(sim.deck(), &u, st, sim.solver());
    physics.extend(crate::slab::check_lines(&sim));
    let dt0 = sim.stable_dt();
    if !(dt0.is_finite() && dt0 > 0.0) {
        return Err(DriverError::TimeStep {
            time: 0.0,
            dt: dt0 * u.time(),
        });
    }
    let t_end = sim.t_end();
    // The step the fastest signal anywhere (inflow included) allows; the estimate uses the
    // smaller of that and the solver's step.
    let dt_sig = sim.solver().config().cfl * st.grid.dx() / sig;
    let est_steps = (t_end / dt0.min(dt_sig)).ceil().max(1.0) as u64;
    let n = st.grid.n;
    let dx = st.grid.dx() * u.length;
    let start = Instant::now();
    let mut k = 0u64;
    while k < 20 && sim.time() < t_end && (k < 2 || start.elapsed().as_secs_f64() < 0.2) {
        sim.step(t_end)?;
        k += 1;
    }
    let per = start.elapsed().as_secs_f64() / (k.max(1) as f64 * n as f64);
    Ok(CheckReport {
        cells: n,
        dx,
        max_fast_speed: cf * u.velocity,
        max_alfven_speed: ca * u.velocity,
        max_sound_speed: cs * u.velocity,
        max_signal_speed: sig * u.velocity,
        initial_dt: dt0 * u.time(),
        estimated_steps: est_steps,
        seconds_per_cell_update: per,
        timing_steps: k,
        estimated_wall_seconds: per * est_steps as f64 * n as f64,
        outputs: deck.output_times().len() + 1,
        physics,
    })
}

impl std::fmt::Display for CheckReport {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        writeln!(f, "cells                    {}", self.cells)?;
        writeln!(f, "dx                       {:.6e} cm", self.dx)?;
        writeln!(
            f,
            "max fast speed           {:.6e} cm/s",
            self.max_fast_speed
        )?;
        writeln!(
            f,
            "max Alfven speed         {:.6e} cm/s",
            self.max_alfven_speed
        )?;
        writeln!(
            f,
            "max sound speed          {:.6e} cm/s",
            self.max_sound_speed
        )?;
        writeln!(
            f,
            "max |v_x| + c_f          {:.6e} cm/s",
            self.max_signal_speed
        )?;
        writeln!(f, "initial dt               {:.6e} s", self.initial_dt)?;
        writeln!(
            f,
            "estimated steps          {} (t_end / initial dt, inflow included; dt varies)",
            self.estimated_steps
        )?;
        writeln!(
            f,
            "cost per cell-update     {:.3e} s (timed over {} steps)",
            self.seconds_per_cell_update, self.timing_steps
        )?;
        writeln!(
            f,
            "estimated run time       {:.3} s",
            self.estimated_wall_seconds
        )?;
        write!(f, "snapshots                {}", self.outputs)?;
        for line in &self.physics {
            write!(f, "\n{line}")?;
        }
        Ok(())
    }
}
