//! Snapshots (layout: docs/output-format.md), the `ledger.csv` time series and progress.

use crate::simulation::{Ledger, Observer, Simulation};
use crate::snapshot::{write_atomic, AttrValue, Dataset, Snapshot};
use crate::units::{ATOMIC_MASS_UNIT, K_BOLTZMANN};
use crate::DriverError;
use sluice_mhd::Eos;
use std::io::Write as _;
use std::path::{Path, PathBuf};

/// Version of the snapshot layout written here; bump on incompatible change.
pub const LAYOUT_VERSION: i64 = 1;

fn field(path: &str, data: Vec<f64>, units: &str) -> Dataset {
    Dataset::new(path, data).with_attr("units", AttrValue::Str(units.to_string()))
}

/// Builds the snapshot of the current state: root attributes, `/grid`, `/fields`, `/ledger`
/// and `/restart` (see docs/output-format.md).
pub fn build_snapshot(sim: &Simulation, index: usize) -> Snapshot {
    let u = sim.units();
    let st = sim.state();
    let g = st.grid;
    let eos = sim.solver().config().eos;
    let r = g.interior();
    let n = g.n;
    let (mut rho, mut vx, mut vy, mut vz, mut p, mut by, mut bz) = (
        Vec::with_capacity(n),
        Vec::with_capacity(n),
        Vec::with_capacity(n),
        Vec::with_capacity(n),
        Vec::with_capacity(n),
        Vec::with_capacity(n),
        Vec::with_capacity(n),
    );
    for j in r.clone() {
        let w = st.primitive(j, &eos);
        rho.push(w.rho * u.density);
        vx.push(w.vx * u.velocity);
        vy.push(w.vy * u.velocity);
        vz.push(w.vz * u.velocity);
        p.push(w.p * u.pressure());
        by.push(u.field_to_gauss(w.by));
        bz.push(u.field_to_gauss(w.bz));
    }
    let bx_g = u.field_to_gauss(st.bx);
    let deck = sim.deck();
    let mut attrs = vec![
        ("program".to_string(), AttrValue::Str("sluice".into())),
        (
            "program_version".into(),
            AttrValue::Str(env!("CARGO_PKG_VERSION").into()),
        ),
        ("layout_version".into(), AttrValue::I64(LAYOUT_VERSION)),
        ("run_name".into(), AttrValue::Str(deck.run.name.clone())),
        ("output_index".into(), AttrValue::I64(index as i64)),
        ("step".into(), AttrValue::I64(sim.steps() as i64)),
        ("time".into(), AttrValue::F64(sim.time_seconds())),
        ("time_units".into(), AttrValue::Str("s".into())),
        ("time_code".into(), AttrValue::F64(sim.time())),
        (
            "unit_system".into(),
            AttrValue::Str("cgs; magnetic field in gauss".into()),
        ),
        ("code_unit_length".into(), AttrValue::F64(u.length)),
        ("code_unit_density".into(), AttrValue::F64(u.density)),
        ("code_unit_velocity".into(), AttrValue::F64(u.velocity)),
        ("magnetic_field_x".into(), AttrValue::F64(bx_g)),
        ("cells".into(), AttrValue::I64(n as i64)),
        ("deck".into(), AttrValue::Str(sim.deck_text().to_string())),
        (
            "deck_overrides".into(),
            AttrValue::Str(sim.overrides().join("\n")),
        ),
    ];
    match eos {
        Eos::Ideal { gamma } => {
            attrs.push(("equation_of_state".into(), AttrValue::Str("ideal".into())));
            attrs.push(("gamma".into(), AttrValue::F64(gamma)));
        }
        Eos::Isothermal { cs } => {
            attrs.push((
                "equation_of_state".into(),
                AttrValue::Str("isothermal".into()),
            ));
            attrs.push((
                "isothermal_sound_speed".into(),
                AttrValue::F64(cs * u.velocity),
            ));
        }
    }
    let mut ds = vec![
        field(
            "/grid/x_center",
            g.centers().into_iter().map(|x| x * u.length).collect(),
            "cm",
        ),
        field(
            "/grid/x_face",
            g.faces().into_iter().map(|x| x * u.length).collect(),
            "cm",
        ),
    ];
    if let Some(mu) = deck.gas.mean_molecular_weight {
        let t: Vec<f64> = rho
            .iter()
            .zip(&p)
            .map(|(&d, &pp)| mu * ATOMIC_MASS_UNIT * pp / (d * K_BOLTZMANN))
            .collect();
        ds.push(field("/fields/temperature", t, "K"));
    }
    ds.push(field("/fields/magnetic_field_x", vec![bx_g; n], "G"));
    ds.push(field("/fields/density", rho, "g/cm^3"));
    ds.push(field("/fields/velocity_x", vx, "cm/s"));
    ds.push(field("/fields/velocity_y", vy, "cm/s"));
    ds.push(field("/fields/velocity_z", vz, "cm/s"));
    ds.push(field("/fields/pressure", p, "erg/cm^3"));
    ds.push(field("/fields/magnetic_field_y", by, "G"));
    ds.push(field("/fields/magnetic_field_z", bz, "G"));
    for s in sim.stages() {
        for f in s.fields(st) {
            ds.push(field(&format!("/fields/{}", f.name), f.data, &f.units));
        }
    }
    for e in sim.ledger().entries {
        ds.push(field(
            &format!("/ledger/{}", e.name),
            vec![e.value],
            e.units,
        ));
    }
    // Restart data: conserved gas variables of the interior cells in code units, bit-exact.
    let sl = |a: &ndarray::Array1<f64>| a.slice(ndarray::s![r.clone()]).to_vec();
    for (name, a) in [
        ("density", &st.rho),
        ("momentum_x", &st.mx),
        ("momentum_y", &st.my),
        ("momentum_z", &st.mz),
        ("energy", &st.en),
        ("field_y", &st.by),
        ("field_z", &st.bz),
    ] {
        ds.push(field(&format!("/restart/gas/{name}"), sl(a), "code"));
    }
    ds.push(field("/restart/gas/field_x", vec![st.bx], "code"));
    ds.extend(crate::restart::driver_datasets(sim));
    for s in sim.stages() {
        for f in s.checkpoint() {
            ds.push(field(
                &format!("/restart/{}/{}", s.name(), f.name),
                f.data,
                &f.units,
            ));
        }
    }
    Snapshot {
        attrs,
        datasets: ds,
    }
}

/// Appends ledger rows to a CSV file, writing the header with the first row.
#[derive(Debug)]
pub struct LedgerCsv {
    path: PathBuf,
    header: Option<Vec<String>>,
}

impl LedgerCsv {
    /// A CSV at `path` (truncated when the first row is written).
    pub fn new(path: PathBuf) -> Self {
        Self { path, header: None }
    }

    /// A CSV at `path` that already holds the header `time,step,<names>` (and rows): rows
    /// are appended, and a row with other columns is refused.
    pub fn resume(path: PathBuf, names: Vec<String>) -> Self {
        Self {
            path,
            header: Some(names),
        }
    }

    /// Path of the file.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Writes one row (time in s, step, then every ledger entry in cgs).
    pub fn append(&mut self, l: &Ledger) -> Result<(), DriverError> {
        let io = |e: std::io::Error| DriverError::Io {
            path: self.path.display().to_string(),
            message: e.to_string(),
        };
        let names: Vec<String> = l.entries.iter().map(|e| e.name.clone()).collect();
        let mut text = String::new();
        let mut f = match &self.header {
            None => {
                text.push_str("time,step,");
                text.push_str(&names.join(","));
                text.push('\n');
                self.header = Some(names.clone());
                std::fs::File::create(&self.path).map_err(io)?
            }
            Some(h) => {
                if *h != names {
                    return Err(DriverError::Setup(format!(
                        "ledger columns changed during the run ({} → {})",
                        h.join(","),
                        names.join(",")
                    )));
                }
                std::fs::OpenOptions::new()
                    .append(true)
                    .open(&self.path)
                    .map_err(io)?
            }
        };
        text.push_str(&format!("{:e},{}", l.time, l.step));
        for e in &l.entries {
            text.push_str(&format!(",{:e}", e.value));
        }
        text.push('\n');
        f.write_all(text.as_bytes()).map_err(io)?;
        Ok(())
    }
}

/// The standard observer: writes `<dir>/<name>_NNNN.h5` and `<dir>/ledger.csv` at every output
/// and drives a progress bar (hidden when `progress` is false).
pub struct OutputWriter {
    dir: PathBuf,
    name: String,
    ledger: LedgerCsv,
    written: Vec<PathBuf>,
    bar: indicatif::ProgressBar,
    t_end: f64,
    slab: Option<crate::slab_series::SlabSeries>,
}

impl std::fmt::Debug for OutputWriter {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("OutputWriter")
            .field("dir", &self.dir)
            .field("written", &self.written.len())
            .finish()
    }
}

impl OutputWriter {
    /// Creates `dir` (and parents) for the run of `sim`.
    pub fn new(dir: &Path, sim: &Simulation, progress: bool) -> Result<Self, DriverError> {
        std::fs::create_dir_all(dir).map_err(|e| DriverError::Io {
            path: dir.display().to_string(),
            message: e.to_string(),
        })?;
        let bar = if progress {
            let b = indicatif::ProgressBar::new(1000);
            if let Ok(style) = indicatif::ProgressStyle::with_template(
                "{spinner} [{elapsed_precise}] {bar:40} {percent:>3}% {msg}",
            ) {
                b.set_style(style);
            }
            b
        } else {
            indicatif::ProgressBar::hidden()
        };
        Ok(Self {
            dir: dir.to_path_buf(),
            name: sim.deck().run.name.clone(),
            ledger: LedgerCsv::new(dir.join("ledger.csv")),
            written: Vec::new(),
            bar,
            t_end: sim.t_end(),
            slab: crate::slab_series::SlabSeries::for_run(dir, sim)?,
        })
    }

    /// Like [`OutputWriter::new`] for a run restarted from a snapshot (`sim` as built by
    /// [`Simulation::from_snapshot`]): `<dir>/ledger.csv` keeps its rows with time ≤ the
    /// restart time and new rows are appended. When `<dir>` has no ledger yet, the rows are
    /// taken from `previous_ledger` (the ledger beside the snapshot), else a new ledger
    /// starts with the row of the restart time. The cut file is written atomically. The slab
    /// series continues through [`crate::slab_series::SlabSeries::resume`] (its CSV is first
    /// copied from beside the snapshot when `<dir>` has none).
    pub fn resume(
        dir: &Path,
        sim: &Simulation,
        progress: bool,
        previous_ledger: Option<&Path>,
    ) -> Result<Self, DriverError> {
        // A restart into a new folder continues the slab series beside the snapshot.
        let slab_csv = format!("{}_slab.csv", sim.deck().run.name);
        if let Some(prev) = previous_ledger.and_then(Path::parent) {
            let (from, to) = (prev.join(&slab_csv), dir.join(&slab_csv));
            if from.is_file() && !to.exists() && std::fs::create_dir_all(dir).is_ok() {
                std::fs::copy(&from, &to).map_err(|e| DriverError::Io {
                    path: to.display().to_string(),
                    message: e.to_string(),
                })?;
            }
        }
        let mut w = Self::new(dir, sim, progress)?;
        let target = dir.join("ledger.csv");
        let names: Vec<String> = sim.ledger().entries.into_iter().map(|e| e.name).collect();
        let header = format!("time,step,{}", names.join(","));
        let source = if target.is_file() {
            Some(target.clone())
        } else {
            previous_ledger
                .filter(|p| p.is_file())
                .map(Path::to_path_buf)
        };
        match source {
            Some(src) => {
                let text = std::fs::read_to_string(&src).map_err(|e| DriverError::Io {
                    path: src.display().to_string(),
                    message: e.to_string(),
                })?;
                let kept = crate::restart::ledger_rows_until(&text, &header, sim.time_seconds())
                    .map_err(|m| {
                        DriverError::Setup(format!(
                            "cannot continue the ledger `{}`: {m}",
                            src.display()
                        ))
                    })?;
                crate::restart::write_text_atomic(&target, &kept)?;
                w.ledger = LedgerCsv::resume(target, names);
            }
            None => w.ledger.append(&sim.ledger())?,
        }
        Ok(w)
    }

    /// The slab series (`<name>_slab.csv`, `<name>_slab.h5`) of a deck with `[slab]`.
    pub fn slab_series(&self) -> Option<&crate::slab_series::SlabSeries> {
        self.slab.as_ref()
    }

    /// Snapshot files written so far.
    pub fn written(&self) -> &[PathBuf] {
        &self.written
    }

    /// The ledger CSV path.
    pub fn ledger_path(&self) -> &Path {
        self.ledger.path()
    }

    /// The output folder.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Removes the progress bar.
    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }
}

impl Observer for OutputWriter {
    fn output(&mut self, sim: &Simulation, index: usize) -> Result<(), DriverError> {
        let path = self.dir.join(format!("{}_{index:04}.h5", self.name));
        write_atomic(&path, &build_snapshot(sim, index))?;
        self.ledger.append(&sim.ledger())?;
        if let Some(s) = self.slab.as_mut() {
            s.record(sim);
            s.flush()?;
        }
        self.written.push(path);
        Ok(())
    }

    fn after_step(&mut self, sim: &Simulation) {
        if let Some(s) = self.slab.as_mut() {
            s.after_step(sim);
        }
        if self.bar.is_hidden() {
            return;
        }
        let frac = if self.t_end > 0.0 {
            (sim.time() / self.t_end).clamp(0.0, 1.0)
        } else {
            1.0
        };
        self.bar.set_position((frac * 1000.0) as u64);
        if sim.steps() % 16 == 0 {
            self.bar.set_message(format!(
                "step {} t = {:.4e} s",
                sim.steps(),
                sim.time_seconds()
            ));
        }
    }
}
