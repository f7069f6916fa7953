//! The slab time series `<run name>_slab.csv` and `<run name>_slab.h5` (layout:
//! docs/output-format.md, "Slab series").
//!
//! One row at every snapshot time and, with `diagnostics_every`, after the first step at or
//! past every multiple of that interval. The CR heating of each slab is integrated after every
//! step (heating rate of the step × its length, over the cells that are slab members at the end
//! of the step). Rows are kept in memory and both files are rewritten atomically (temporary
//! file, then rename) at every snapshot time, so the files always end at a snapshot time and
//! a restart from any snapshot can continue them ([`SlabSeries::resume`]).

use crate::simulation::Simulation;
use crate::slab::{measure_columns, SlabTracker};
use crate::snapshot::{write_atomic, AttrValue, Dataset, Snapshot};
use crate::DriverError;
use std::io::Write as _;
use std::path::{Path, PathBuf};

/// Columns of one slab after its `slab{k}_` prefix, with units, in file order (the last,
/// `cr_heating`, is the time integral of `cr_heating_rate`).
pub fn slab_column_names() -> Vec<(&'static str, &'static str)> {
    let mut v: Vec<(&str, &str)> = measure_columns(None, 0.0)
        .into_iter()
        .map(|(n, u, _)| (n, u))
        .collect();
    v.push(("cr_heating", "erg/cm^2"));
    v
}

/// The slab series of a run.
#[derive(Debug)]
pub struct SlabSeries {
    csv: PathBuf,
    h5: PathBuf,
    run_name: String,
    columns: Vec<(String, String)>,
    rows: Vec<Vec<f64>>,
    tracker: SlabTracker,
    initial_momentum: Vec<f64>,
    heating: Vec<f64>,
    rates: Vec<f64>,
    last_time: f64,
    every: Option<f64>,
    next_due: f64,
}

fn io_err(path: &Path, e: impl std::fmt::Display) -> DriverError {
    DriverError::Io {
        path: path.display().to_string(),
        message: e.to_string(),
    }
}

/// Writes `text` to `path` atomically (temporary file beside it, fsync, rename).
fn write_text_atomic(path: &Path, text: &str) -> Result<(), DriverError> {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "slab.csv".into());
    let tmp = path.with_file_name(format!(".{name}.tmp-{}", std::process::id()));
    let res = (|| {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(text.as_bytes())?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if let Err(e) = res {
        let _ = std::fs::remove_file(&tmp);
        return Err(io_err(path, e));
    }
    Ok(())
}

impl SlabSeries {
    /// The series of `sim` in `dir` (`None` without `[slab]`): a new series when the run
    /// starts at t = 0, else [`SlabSeries::resume`] at the current time.
    pub fn for_run(dir: &Path, sim: &Simulation) -> Result<Option<Self>, DriverError> {
        if sim.time() > 0.0 {
            Self::resume(dir, sim, sim.time_seconds())
        } else {
            Ok(Self::new(dir, sim))
        }
    }

    /// A new, empty series for `sim` writing `<dir>/<run name>_slab.{csv,h5}` (`None`
    /// without `[slab]`). Momentum gained is measured against the deck's initial state.
    pub fn new(dir: &Path, sim: &Simulation) -> Option<Self> {
        let tracker = SlabTracker::new(sim)?;
        let deck = sim.deck();
        let name = deck.run.name.clone();
        let n = tracker.len();
        let mut columns = vec![
            ("time".to_string(), "s".to_string()),
            ("step".into(), "1".into()),
        ];
        for k in 0..n {
            for (c, u) in slab_column_names() {
                columns.push((format!("slab{k}_{c}"), u.to_string()));
            }
        }
        let every = deck
            .slab
            .as_ref()
            .and_then(|s| {
                s.0.iter()
                    .filter_map(|s| s.diagnostics_every)
                    .reduce(f64::min)
            })
            .map(|t| t / sim.units().time());
        let mut initial = crate::slab::initial_momenta_of(sim);
        initial.resize(n, f64::NAN);
        Some(Self {
            csv: dir.join(format!("{name}_slab.csv")),
            h5: dir.join(format!("{name}_slab.h5")),
            run_name: name,
            columns,
            rows: Vec::new(),
            tracker,
            initial_momentum: initial,
            heating: vec![0.0; n],
            rates: vec![0.0; n],
            last_time: sim.time(),
            every,
            next_due: every.map_or(f64::INFINITY, |e| ((sim.time() / e).floor() + 1.0) * e),
        })
    }

    /// Continues the series of a run restarted at `t0` s: the rows of
    /// `<dir>/<run name>_slab.csv` with time ≤ t0 are kept (the files are rewritten without
    /// the later rows), the heating integral and the tracked centres continue from the last
    /// kept row and momentum gained stays relative to the t = 0 row. Without that file a new
    /// series starts at t0 (heating integrated from t0 on). A file whose columns differ is
    /// an error.
    pub fn resume(dir: &Path, sim: &Simulation, t0: f64) -> Result<Option<Self>, DriverError> {
        let Some(mut s) = Self::new(dir, sim) else {
            return Ok(None);
        };
        if !s.csv.is_file() {
            return Ok(Some(s));
        }
        let text = std::fs::read_to_string(&s.csv).map_err(|e| io_err(&s.csv, e))?;
        let bad = |m: String| {
            DriverError::Setup(format!(
                "cannot continue the slab series `{}`: {m}",
                s.csv.display()
            ))
        };
        let mut lines = text
            .lines()
            .filter(|l| !l.trim().is_empty() && !l.starts_with('#'));
        let header = lines.next().ok_or_else(|| bad("no header line".into()))?;
        let want: Vec<&str> = s.columns.iter().map(|c| c.0.as_str()).collect();
        let got: Vec<&str> = header.split(',').map(str::trim).collect();
        if got != want {
            return Err(bad(format!(
                "its columns ({}) are not those of this deck ({})",
                got.join(","),
                want.join(",")
            )));
        }
        for (i, l) in lines.enumerate() {
            let row: Result<Vec<f64>, _> = l.split(',').map(|v| v.trim().parse::<f64>()).collect();
            let row = row.map_err(|e| bad(format!("data row {}: {e}", i + 1)))?;
            if row.len() != want.len() {
                return Err(bad(format!(
                    "data row {} has {} values, expected {}",
                    i + 1,
                    row.len(),
                    want.len()
                )));
            }
            if row[0] > t0 * (1.0 + 1e-12) {
                break;
            }
            s.rows.push(row);
        }
        let names = slab_column_names();
        let w = names.len();
        let at = |c: &str| names.iter().position(|n| n.0 == c).expect("slab column");
        let (ip, ig, ic, ih) = (
            at("momentum"),
            at("momentum_gained"),
            at("center_of_mass"),
            at("cr_heating"),
        );
        if let Some(first) = s.rows.first() {
            for k in 0..s.tracker.len() {
                let b = 2 + k * w;
                let p0 = first[b + ip] - first[b + ig];
                if p0.is_finite() {
                    s.initial_momentum[k] = p0;
                }
            }
        }
        if let Some(last) = s.rows.last().cloned() {
            let u = *sim.units();
            for k in 0..s.tracker.len() {
                let b = 2 + k * w;
                s.heating[k] = last[b + ih];
                s.tracker.set_center_cm(k, last[b + ic], &u);
            }
        }
        s.flush()?;
        Ok(Some(s))
    }

    /// Paths of the CSV and HDF5 files.
    pub fn paths(&self) -> (&Path, &Path) {
        (&self.csv, &self.h5)
    }

    /// Column names and units (time, step, then `slab{k}_…`).
    pub fn columns(&self) -> &[(String, String)] {
        &self.columns
    }

    /// Rows recorded so far (values in the column units).
    pub fn rows(&self) -> &[Vec<f64>] {
        &self.rows
    }

    /// Integrates the heating of the step just taken and records a row when
    /// `diagnostics_every` is due. Call after every step.
    pub fn after_step(&mut self, sim: &Simulation) {
        let dt = sim.time() - self.last_time;
        self.last_time = sim.time();
        if dt > 0.0 {
            self.tracker.heating_rates(sim, &mut self.rates);
            let u = sim.units();
            // code rate (energy/(area·time)) × code time → erg/cm².
            let s = dt * u.energy_per_area();
            for (h, r) in self.heating.iter_mut().zip(&self.rates) {
                *h += r * s;
            }
        }
        if sim.time() >= self.next_due * (1.0 - 1e-12) {
            self.record(sim);
            if let Some(e) = self.every {
                while self.next_due <= sim.time() * (1.0 + 1e-12) {
                    self.next_due += e;
                }
            }
        }
    }

    /// Records a row for the current state (no duplicate for the same step).
    pub fn record(&mut self, sim: &Simulation) {
        let t = sim.time_seconds();
        if let Some(last) = self.rows.last() {
            if last[1] == sim.steps() as f64 && last[0] == t {
                return;
            }
        }
        let m = self.tracker.measure(sim);
        let mut row = vec![t, sim.steps() as f64];
        for (k, mk) in m.iter().enumerate() {
            for (_, _, v) in measure_columns(mk.as_ref(), self.initial_momentum[k]) {
                row.push(v);
            }
            row.push(self.heating[k]);
        }
        self.rows.push(row);
    }

    /// The latest slab scalars `(name, unit, value)`, including the heating integral
    /// (empty before the first row).
    pub fn scalars(&self) -> Vec<(String, String, f64)> {
        match self.rows.last() {
            Some(r) => self
                .columns
                .iter()
                .zip(r)
                .skip(2)
                .map(|((n, u), v)| (n.clone(), u.clone(), *v))
                .collect(),
            None => Vec::new(),
        }
    }

    /// Rewrites both files atomically with every row so far.
    pub fn flush(&self) -> Result<(), DriverError> {
        let mut text = String::from("# units: ");
        text.push_str(
            &self
                .columns
                .iter()
                .map(|(n, u)| format!("{n} [{u}]"))
                .collect::<Vec<_>>()
                .join(", "),
        );
        text.push('\n');
        text.push_str(
            &self
                .columns
                .iter()
                .map(|c| c.0.as_str())
                .collect::<Vec<_>>()
                .join(","),
        );
        text.push('\n');
        for r in &self.rows {
            let v: Vec<String> = r
                .iter()
                .enumerate()
                .map(|(i, x)| {
                    if i == 1 {
                        format!("{}", *x as u64)
                    } else {
                        format!("{x:e}")
                    }
                })
                .collect();
            text.push_str(&v.join(","));
            text.push('\n');
        }
        write_text_atomic(&self.csv, &text)?;
        let mut ds = Vec::new();
        for (i, (n, u)) in self.columns.iter().enumerate() {
            let data: Vec<f64> = self.rows.iter().map(|r| r[i]).collect();
            let path = match n.split_once('_') {
                Some((slab, rest)) if slab.starts_with("slab") => format!("/{slab}/{rest}"),
                _ => format!("/{n}"),
            };
            ds.push(Dataset::new(path, data).with_attr("units", AttrValue::Str(u.clone())));
        }
        let snap = Snapshot {
            attrs: vec![
                ("program".into(), AttrValue::Str("sluice".into())),
                ("content".into(), AttrValue::Str("slab time series".into())),
                ("run_name".into(), AttrValue::Str(self.run_name.clone())),
                ("slabs".into(), AttrValue::I64(self.tracker.len() as i64)),
                ("rows".into(), AttrValue::I64(self.rows.len() as i64)),
                (
                    "membership".into(),
                    AttrValue::Str("connected cells around the last centre of mass with density > background (1 + threshold (contrast - 1))".into()),
                ),
            ],
            datasets: ds,
        };
        write_atomic(&self.h5, &snap)?;
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The bottleneck-slab demo deck on 96 cells, short.
    fn sim() -> Simulation {
        let text = include_str!("../../../problems/bottleneck-slab.toml");
        Simulation::from_toml_str(text, &["grid.cells=96".into(), "run.t_end=1.2e15".into()])
            .unwrap()
    }

    /// A series recorded at three "snapshot" times, then resumed at the middle one: the kept
    /// rows are the recorded ones to the last bit (the CSV prints shortest round-trip
    /// decimals), the later rows are gone from both files, and the heating integral and the
    /// momentum origin continue from the file, so the next row equals the uninterrupted one.
    /// Reference: the uninterrupted series itself (common practice for restart testing).
    #[test]
    fn resume_keeps_the_rows_up_to_the_restart_and_continues_the_integrals() {
        let dir = std::env::temp_dir().join(format!("sluice-slab-resume-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let mut sim = sim();
        let mut a = SlabSeries::new(&dir, &sim).unwrap();
        a.record(&sim);
        let u = *sim.units();
        let stops = [4.0e14, 8.0e14, 1.2e15].map(|t| t / u.time());
        for &t in &stops {
            while sim.time() < t * (1.0 - 1e-14) {
                sim.step(t).unwrap();
                a.after_step(&sim);
            }
            a.record(&sim);
            if t == stops[0] {
                a.flush().unwrap();
            }
        }
        // The file as a run stopped after the second snapshot would have left it, plus the
        // later rows that a restart from the first snapshot has to drop.
        a.flush().unwrap();
        let t_restart = stops[0] * u.time();
        let kept = a.rows().iter().filter(|r| r[0] <= t_restart).count();
        assert!(
            kept >= 2 && kept < a.rows().len(),
            "{kept} of {}",
            a.rows().len()
        );
        let b = SlabSeries::resume(&dir, &sim, t_restart).unwrap().unwrap();
        assert_eq!(b.rows().len(), kept);
        for (x, y) in b.rows().iter().zip(a.rows()) {
            let bits = |r: &[f64]| r.iter().map(|v| v.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(x), bits(y));
        }
        let csv = std::fs::read_to_string(b.paths().0).unwrap();
        assert_eq!(
            csv.lines().count(),
            2 + kept,
            "units line, header, kept rows"
        );
        let h5 = crate::snapshot::read(b.paths().1).unwrap();
        assert_eq!(h5.dataset("/time").unwrap().data.len(), kept);
        // Integrals continue from the last kept row.
        let w = slab_column_names().len();
        let last = &a.rows()[kept - 1];
        assert_eq!(b.heating[0].to_bits(), last[2 + w - 1].to_bits());
        let col = |c: &str| 2 + slab_column_names().iter().position(|n| n.0 == c).unwrap();
        let p0 = a.rows()[0][col("momentum")] - a.rows()[0][col("momentum_gained")];
        assert_eq!(b.initial_momentum[0], p0);
        // A file of another deck (different columns) is refused, naming the file.
        std::fs::write(b.paths().0, csv.replace("slab0_mass", "slab0_masses")).unwrap();
        let e = SlabSeries::resume(&dir, &sim, t_restart).unwrap_err();
        let m = e.to_string();
        assert!(m.contains("_slab.csv") && m.contains("columns"), "{m}");
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
