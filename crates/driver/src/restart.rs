//! Restarting a run from a snapshot, bit-identically to a run that was never stopped.
//!
//! A snapshot (docs/output-format.md) holds the deck text, the `--set` overrides it was run
//! with, and under `/restart` the exact internal state in code units: the conserved gas
//! variables, every stage's [`crate::Stage::checkpoint`], and the run bookkeeping written by
//! [`driver_datasets`] (time, step counter, MHD counters, boundary inflows, per-stage reports
//! and the ledger origin). [`Simulation::from_snapshot`] rebuilds the simulation from the
//! embedded deck, then overwrites everything that evolves with the stored bits.
//!
//! Only the keys in [`RESTART_KEYS`] may be changed with `--set` on restart (end time, output
//! cadence, output folder, step limit); anything else would change the physics or the grid
//! and is refused with [`RestartError::Forbidden`] naming the key.

use crate::simulation::{Counters, Simulation};
use crate::snapshot::{self, AttrValue, Dataset, Snapshot};
use crate::stage::{OutputField, StageReport};
use crate::DriverError;
use std::io::Write as _;
use std::path::Path;

/// Deck keys that may change on restart (exact key or, for arrays, `key[i]`).
pub const RESTART_KEYS: &[&str] = &[
    "run.t_end",
    "run.output_interval",
    "run.output_times",
    "run.output_dir",
    "run.max_steps",
];

/// Group of the run bookkeeping inside `/restart` (no stage may use this name).
pub const DRIVER_GROUP: &str = "driver";

/// Names of the 6 values of one stage report in `/restart/driver/stage_<name>`.
const REPORT_LEN: usize = 6;

/// Errors of restarting. Every variant names the snapshot (or the offending `--set`).
#[derive(Debug, thiserror::Error)]
pub enum RestartError {
    /// The file is an HDF5 file but not a Sluice snapshot (or of an unknown layout).
    #[error("`{source_name}` is not a Sluice snapshot that can be restarted from: {what}")]
    NotSnapshot {
        /// File path or label of the snapshot.
        source_name: String,
        /// What is missing or wrong.
        what: String,
    },
    /// A restart dataset is missing or has the wrong length.
    #[error("snapshot `{source_name}`: restart data {what}")]
    Corrupt {
        /// File path or label of the snapshot.
        source_name: String,
        /// Which dataset and what is wrong.
        what: String,
    },
    /// A `--set` override touches a key that must not change on restart.
    #[error("--set `{arg}`: `{key}` cannot change on restart (it would change the physics, the grid or the initial state); only {} may", RESTART_KEYS.join(", "))]
    Forbidden {
        /// The override as given.
        arg: String,
        /// Its key path.
        key: String,
    },
    /// The end time lies before the snapshot time.
    #[error("run.t_end = {t_end:e} s is before the snapshot time {time:e} s; raise it with --set run.t_end=...")]
    EndBeforeSnapshot {
        /// End time, s.
        t_end: f64,
        /// Snapshot time, s.
        time: f64,
    },
}

/// Checks that every override only touches [`RESTART_KEYS`].
pub fn check_restart_overrides(overrides: &[String]) -> Result<(), RestartError> {
    for arg in overrides {
        // A malformed override (no `=`) is left to the deck parser, which names it.
        let Some((key, _)) = arg.split_once('=') else {
            continue;
        };
        let key = key.trim();
        let base = key.split('[').next().unwrap_or(key);
        if !RESTART_KEYS.contains(&base) {
            return Err(RestartError::Forbidden {
                arg: arg.clone(),
                key: key.to_string(),
            });
        }
    }
    Ok(())
}

fn ds(name: &str, data: Vec<f64>) -> Dataset {
    Dataset::new(format!("/restart/{DRIVER_GROUP}/{name}"), data)
        .with_attr("units", AttrValue::Str("code".into()))
}

/// Run bookkeeping datasets for `/restart/driver/` (code units; counts stored as exact f64,
/// valid below 2⁵³): `time`, `steps`, `mhd_counters` = [ρ floor hits, p floor hits, HLLD
/// fallbacks, floor energy, floor mass], `gas_inflow_left`/`gas_inflow_right` (7 each),
/// `ledger_origin` = [energy, mass at t = 0] and `stage_<name>` = [floor hits, floor energy,
/// energy source, boundary energy left, right, substeps] per stage.
pub fn driver_datasets(sim: &Simulation) -> Vec<Dataset> {
    let c = sim.counters();
    let (e0, m0) = sim.ledger_origin();
    let mut v = vec![
        ds("time", vec![sim.time()]),
        ds("steps", vec![c.steps as f64]),
        ds(
            "mhd_counters",
            vec![
                c.rho_floor_hits as f64,
                c.p_floor_hits as f64,
                c.hlld_fallbacks as f64,
                c.mhd_floor_energy,
                c.mhd_floor_mass,
            ],
        ),
        ds("gas_inflow_left", c.gas_inflow_left.to_vec()),
        ds("gas_inflow_right", c.gas_inflow_right.to_vec()),
        ds("ledger_origin", vec![e0, m0]),
    ];
    for (s, r) in sim.stages().iter().zip(&c.stages) {
        v.push(ds(
            &format!("stage_{}", s.name()),
            vec![
                r.floor_hits as f64,
                r.floor_energy,
                r.energy_source,
                r.boundary_energy_left,
                r.boundary_energy_right,
                r.substeps as f64,
            ],
        ));
    }
    v
}

struct Reader<'a> {
    snap: &'a Snapshot,
    source_name: &'a str,
}

impl Reader<'_> {
    fn corrupt(&self, what: String) -> RestartError {
        RestartError::Corrupt {
            source_name: self.source_name.to_string(),
            what,
        }
    }

    fn data(&self, path: &str, len: usize) -> Result<&[f64], RestartError> {
        let d = self.snap.dataset(path).ok_or_else(|| {
            self.corrupt(format!(
                "`{path}` is missing (snapshot written by an older Sluice or damaged)"
            ))
        })?;
        if d.data.len() != len {
            return Err(self.corrupt(format!(
                "`{path}` has {} values, expected {len}",
                d.data.len()
            )));
        }
        Ok(&d.data)
    }

    fn count(&self, x: f64, path: &str) -> Result<u64, RestartError> {
        if x >= 0.0 && x.fract() == 0.0 && x < 9.007_199_254_740_992e15 {
            Ok(x as u64)
        } else {
            Err(self.corrupt(format!("`{path}` holds {x}, not a count")))
        }
    }
}

impl Simulation {
    /// Reads the snapshot file at `path` and rebuilds the run from it (see
    /// [`Simulation::from_snapshot`]).
    pub fn from_snapshot_file(path: &Path, overrides: &[String]) -> Result<Self, DriverError> {
        let snap = snapshot::read(path)?;
        Self::from_snapshot(&snap, &path.display().to_string(), overrides)
    }

    /// Rebuilds the run stored in `snap` (named `source_name` in errors) so that stepping it
    /// on gives bit-for-bit what the uninterrupted run gives: deck text and embedded overrides
    /// plus `overrides` (only [`RESTART_KEYS`]), gas state, every stage, time, step counter,
    /// counters, ledger origin and the output index.
    pub fn from_snapshot(
        snap: &Snapshot,
        source_name: &str,
        overrides: &[String],
    ) -> Result<Self, DriverError> {
        let not = |what: String| RestartError::NotSnapshot {
            source_name: source_name.to_string(),
            what,
        };
        if snap.attr("program").and_then(AttrValue::as_str) != Some("sluice") {
            return Err(not("root attribute `program` is not \"sluice\"".into()).into());
        }
        let layout = snap.attr("layout_version").and_then(AttrValue::as_i64);
        if layout != Some(crate::output::LAYOUT_VERSION) {
            return Err(not(format!(
                "layout_version {layout:?}, this Sluice reads {}",
                crate::output::LAYOUT_VERSION
            ))
            .into());
        }
        let deck_text = snap
            .attr("deck")
            .and_then(AttrValue::as_str)
            .ok_or_else(|| not("no `deck` attribute".into()))?;
        let index = snap
            .attr("output_index")
            .and_then(AttrValue::as_i64)
            .filter(|&k| k >= 0)
            .ok_or_else(|| not("no valid `output_index` attribute".into()))?
            as usize;
        check_restart_overrides(overrides)?;
        let mut all: Vec<String> = snap
            .attr("deck_overrides")
            .and_then(AttrValue::as_str)
            .unwrap_or("")
            .lines()
            .filter(|l| !l.trim().is_empty())
            .map(str::to_string)
            .collect();
        all.extend(overrides.iter().cloned());
        let mut sim = Simulation::from_toml_str(deck_text, &all)?;

        let r = Reader { snap, source_name };
        let n = sim.state().grid.n;
        let time = r.data("/restart/driver/time", 1)?[0];
        if sim.t_end() < time {
            return Err(RestartError::EndBeforeSnapshot {
                t_end: sim.deck().run.t_end,
                time: time * sim.units().time(),
            }
            .into());
        }
        // Gas.
        {
            let st = sim.state_mut();
            let range = st.grid.interior();
            for (name, a) in [
                ("density", &mut st.rho),
                ("momentum_x", &mut st.mx),
                ("momentum_y", &mut st.my),
                ("momentum_z", &mut st.mz),
                ("energy", &mut st.en),
                ("field_y", &mut st.by),
                ("field_z", &mut st.bz),
            ] {
                let d = r.data(&format!("/restart/gas/{name}"), n)?;
                for (dst, &src) in a.slice_mut(ndarray::s![range.clone()]).iter_mut().zip(d) {
                    *dst = src;
                }
            }
            st.bx = r.data("/restart/gas/field_x", 1)?[0];
        }
        let mut reports = Vec::new();
        {
            let (solver, stages, state) = sim.parts_mut();
            solver.apply_boundaries(state);
            // Stages.
            for s in stages.iter_mut() {
                let prefix = format!("/restart/{}/", s.name());
                let fields: Vec<OutputField> = snap
                    .datasets
                    .iter()
                    .filter_map(|d| {
                        d.path.strip_prefix(&prefix).map(|name| OutputField {
                            name: name.to_string(),
                            data: d.data.clone(),
                            units: d
                                .attr("units")
                                .and_then(AttrValue::as_str)
                                .unwrap_or("")
                                .to_string(),
                        })
                    })
                    .collect();
                s.restore(&fields)?;
                let path = format!("/restart/driver/stage_{}", s.name());
                let v = r.data(&path, REPORT_LEN)?;
                reports.push(StageReport {
                    floor_hits: r.count(v[0], &path)?,
                    floor_energy: v[1],
                    energy_source: v[2],
                    boundary_energy_left: v[3],
                    boundary_energy_right: v[4],
                    substeps: r.count(v[5], &path)?,
                });
            }
        }
        let mc = r.data("/restart/driver/mhd_counters", 5)?;
        let mut counters = Counters {
            steps: r.count(
                r.data("/restart/driver/steps", 1)?[0],
                "/restart/driver/steps",
            )?,
            rho_floor_hits: r.count(mc[0], "/restart/driver/mhd_counters")?,
            p_floor_hits: r.count(mc[1], "/restart/driver/mhd_counters")?,
            hlld_fallbacks: r.count(mc[2], "/restart/driver/mhd_counters")?,
            mhd_floor_energy: mc[3],
            mhd_floor_mass: mc[4],
            stages: reports,
            ..Counters::default()
        };
        counters
            .gas_inflow_left
            .copy_from_slice(r.data("/restart/driver/gas_inflow_left", 7)?);
        counters
            .gas_inflow_right
            .copy_from_slice(r.data("/restart/driver/gas_inflow_right", 7)?);
        let o = r.data("/restart/driver/ledger_origin", 2)?;
        sim.restore_run(time, counters, (o[0], o[1]), index);
        Ok(sim)
    }
}

/// Writes `text` to `path` atomically (temporary file beside it, fsync, rename).
pub fn write_text_atomic(path: &Path, text: &str) -> Result<(), DriverError> {
    let io = |e: std::io::Error| DriverError::Io {
        path: path.display().to_string(),
        message: e.to_string(),
    };
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => std::path::PathBuf::from("."),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "file".into());
    static N: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let k = N.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    let tmp = dir.join(format!(".{name}.tmp-{}-{k}", std::process::id()));
    let result = (|| {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(text.as_bytes())?;
        f.sync_all()?;
        drop(f);
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result.map_err(io)
}

/// The rows of a ledger CSV `text` (header + rows) with `time` ≤ `t_restart` s, checking
/// that its header is `expected_header`. Returns the kept text (header included).
pub fn ledger_rows_until(
    text: &str,
    expected_header: &str,
    t_restart: f64,
) -> Result<String, String> {
    let mut lines = text.lines();
    let header = lines.next().unwrap_or("");
    if header != expected_header {
        return Err(format!(
            "its header `{header}` differs from this run's `{expected_header}`"
        ));
    }
    let mut out = String::with_capacity(text.len());
    out.push_str(header);
    out.push('\n');
    for (i, line) in lines.enumerate() {
        if line.trim().is_empty() {
            continue;
        }
        let t: f64 = line
            .split(',')
            .next()
            .and_then(|t| t.trim().parse().ok())
            .ok_or_else(|| format!("row {} has no readable time", i + 2))?;
        if t <= t_restart {
            out.push_str(line);
            out.push('\n');
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::output::build_snapshot;
    use crate::simulation::Observer;

    /// Collects every snapshot in memory.
    #[derive(Default)]
    struct Keep(Vec<Snapshot>);

    impl Observer for Keep {
        fn output(&mut self, sim: &Simulation, index: usize) -> Result<(), DriverError> {
            let _ = index;
            self.0.push(build_snapshot(sim, index));
            Ok(())
        }
    }

    const SOD: &str = r#"
[run]
name = "sod"
t_end = 0.1
output_interval = 0.025
[grid]
cells = 48
x_min = 0.0
x_max = 1.0
[gas]
gamma = 1.4
[magnetic_field]
x = 0.75
[boundaries]
left = "outflow"
right = "outflow"
[[init.regions]]
x_min = 0.0
x_max = 0.5
density = 1.0
pressure = 1.0
magnetic_field_y = 1.0
[[init.regions]]
x_min = 0.5
x_max = 1.0
density = 0.125
pressure = 0.1
magnetic_field_y = -1.0
"#;

    fn bits(s: &Snapshot) -> Vec<(String, Vec<u64>)> {
        s.sorted()
            .datasets
            .iter()
            .map(|d| (d.path.clone(), d.data.iter().map(|x| x.to_bits()).collect()))
            .collect()
    }

    /// A restart from every intermediate snapshot reproduces all later snapshots bit for bit
    /// (determinism of a restart: the state after a restart must be the state of the
    /// uninterrupted run, a property of the scheme, not a reference value).
    #[test]
    fn restart_from_each_snapshot_is_bit_identical() {
        let mut a = Simulation::from_toml_str(SOD, &[]).unwrap();
        let mut full = Keep::default();
        a.run(&mut full).unwrap();
        assert_eq!(full.0.len(), 5);
        for k in 1..4 {
            let mut b = Simulation::from_snapshot(&full.0[k], "mem", &[]).unwrap();
            assert_eq!(b.restart_index(), Some(k));
            let mut rest = Keep::default();
            b.run(&mut rest).unwrap();
            assert_eq!(rest.0.len(), 4 - k, "outputs after index {k}");
            for (j, s) in rest.0.iter().enumerate() {
                assert_eq!(
                    s.attr("output_index").and_then(AttrValue::as_i64),
                    Some((k + 1 + j) as i64)
                );
                assert_eq!(bits(s), bits(&full.0[k + 1 + j]), "snapshot {}", k + 1 + j);
            }
        }
    }

    #[test]
    fn restart_may_extend_t_end_but_not_change_physics() {
        let mut a = Simulation::from_toml_str(SOD, &[]).unwrap();
        let mut full = Keep::default();
        a.run(&mut full).unwrap();
        let s = &full.0[2];
        let mut b = Simulation::from_snapshot(s, "mem", &["run.t_end=0.15".into()]).unwrap();
        let mut rest = Keep::default();
        b.run(&mut rest).unwrap();
        assert_eq!(rest.0.len(), 4);
        assert!((b.time_seconds() - 0.15).abs() < 1e-15);
        assert_eq!(b.overrides(), &["run.t_end=0.15".to_string()]);
        for bad in [
            "grid.cells=64",
            "gas.gamma=1.6",
            "init.regions[0].density=2",
        ] {
            let e = Simulation::from_snapshot(s, "mem", &[bad.into()]).unwrap_err();
            let key = bad.split('=').next().unwrap();
            assert!(e.to_string().contains(&format!("`{key}`")), "{e}");
        }
        let e = Simulation::from_snapshot(s, "mem", &["run.t_end=0.01".into()]).unwrap_err();
        assert!(e.to_string().contains("before the snapshot time"), "{e}");
    }

    #[test]
    fn restart_rejects_foreign_or_damaged_snapshots() {
        let mut a = Simulation::from_toml_str(SOD, &[]).unwrap();
        let mut full = Keep::default();
        a.run(&mut full).unwrap();
        let mut s = full.0[1].clone();
        s.attrs.retain(|(n, _)| n != "program");
        let e = Simulation::from_snapshot(&s, "x.h5", &[]).unwrap_err();
        assert!(e.to_string().contains("not a Sluice snapshot"), "{e}");
        let mut s = full.0[1].clone();
        s.datasets.retain(|d| d.path != "/restart/gas/energy");
        let e = Simulation::from_snapshot(&s, "x.h5", &[]).unwrap_err();
        assert!(e.to_string().contains("/restart/gas/energy"), "{e}");
        let mut s = full.0[1].clone();
        for d in &mut s.datasets {
            if d.path == "/restart/driver/steps" {
                d.data = vec![1.5];
            }
        }
        let e = Simulation::from_snapshot(&s, "x.h5", &[]).unwrap_err();
        assert!(e.to_string().contains("not a count"), "{e}");
    }

    #[test]
    fn ledger_rows_are_cut_at_the_restart_time() {
        let text = "time,step,a\n0e0,0,1\n1e-1,3,2\n2e-1,6,3\n";
        let kept = ledger_rows_until(text, "time,step,a", 0.1).unwrap();
        assert_eq!(kept, "time,step,a\n0e0,0,1\n1e-1,3,2\n");
        assert!(ledger_rows_until(text, "time,step,b", 0.1).is_err());
    }
}
