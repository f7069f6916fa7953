//! Profiles for `sluice compare` and `sluice converge`: Sluice snapshots (HDF5), text
//! profiles (CSV / whitespace columns) and selected datasets of any HDF5 file.

use crate::Failure;
use sluice_analysis::{read_profile, Profile, ReadOptions, Sampling};
use sluice_driver::snapshot::{self, Snapshot};
use std::collections::BTreeMap;
use std::path::Path;

/// A profile plus the units of its coordinate and fields, where known (`None`: not stated).
pub struct LoadedProfile {
    /// The profile.
    pub profile: Profile,
    /// Units by field name (and by the coordinate name, `x` for snapshots), as stated by the
    /// file (snapshot `units` attributes, HDF5 `units` attributes) or by the user (`--units`).
    pub units: BTreeMap<String, String>,
}

/// First 8 bytes of every HDF5 file (HDF5 File Format Specification, superblock signature).
const HDF5_SIGNATURE: [u8; 8] = [0x89, b'H', b'D', b'F', b'\r', b'\n', 0x1a, b'\n'];

/// Whether `path` starts with the HDF5 signature (at offset 0; user blocks are not probed).
pub fn is_hdf5(path: &Path) -> Result<bool, Failure> {
    use std::io::Read;
    let mut f = std::fs::File::open(path)
        .map_err(|e| Failure(format!("{}: cannot open: {e}", path.display()), 2))?;
    let mut head = [0u8; 8];
    match f.read_exact(&mut head) {
        Ok(()) => Ok(head == HDF5_SIGNATURE),
        Err(_) => Ok(false),
    }
}

/// Builds a cell-average profile from a Sluice snapshot: coordinates `/grid/x_center` with
/// edges `/grid/x_face` (cm), one field per `/fields/<name>` dataset (names as in
/// docs/output-format.md, units from their `units` attributes).
pub fn profile_from_snapshot(snap: &Snapshot, source: &str) -> Result<LoadedProfile, Failure> {
    let bad = |m: String| Failure(format!("{source}: {m}"), 2);
    let centres = snap.dataset("/grid/x_center").ok_or_else(|| {
        bad(
            "no dataset `/grid/x_center`: not a Sluice snapshot (docs/output-format.md); \
             for another code's HDF5 file give --x-dataset and --dataset"
                .into(),
        )
    })?;
    let edges = snap.dataset("/grid/x_face").map(|d| d.data.clone());
    let mut profile = Profile::new(source, Sampling::CellAverage, centres.data.clone(), edges)
        .map_err(|e| Failure(e.to_string(), 2))?;
    let mut units = BTreeMap::new();
    units.insert(
        "x".to_string(),
        unit_of(centres).unwrap_or_else(|| "cm".into()),
    );
    for d in &snap.datasets {
        let Some(name) = d.path.strip_prefix("/fields/") else {
            continue;
        };
        if d.data.len() != profile.len() {
            continue;
        }
        // Non-finite values (e.g. a NaN diagnostic) would make the whole profile unusable;
        // such a field is left out and reported as missing if asked for.
        if d.data.iter().any(|v| !v.is_finite()) {
            continue;
        }
        profile
            .add_field(name, d.data.clone())
            .map_err(|e| Failure(e.to_string(), 2))?;
        if let Some(u) = unit_of(d) {
            units.insert(name.to_string(), u);
        }
    }
    Ok(LoadedProfile { profile, units })
}

fn unit_of(d: &snapshot::Dataset) -> Option<String> {
    d.attr("units").and_then(|a| a.as_str()).map(String::from)
}

/// Reads a reference: a Sluice snapshot (HDF5) or a text profile with a header naming `x`
/// and the fields (cell averages).
pub fn load_reference(path: &Path) -> Result<LoadedProfile, Failure> {
    let source = path.display().to_string();
    if is_hdf5(path)? {
        let snap = snapshot::read(path).map_err(|e| Failure(e.to_string(), 2))?;
        profile_from_snapshot(&snap, &source)
    } else {
        let profile =
            read_profile(path, &ReadOptions::default()).map_err(|e| Failure(e.to_string(), 2))?;
        Ok(LoadedProfile {
            profile,
            units: BTreeMap::new(),
        })
    }
}

/// How OTHER is laid out in an HDF5 file that is not a Sluice snapshot.
pub struct Hdf5Layout {
    /// Dataset of the coordinate (cell centres or sample points).
    pub x: String,
    /// Optional dataset of the cell faces (one more value than the centres).
    pub edges: Option<String>,
    /// `(field name, dataset path)` pairs.
    pub fields: Vec<(String, String)>,
}

/// Reads OTHER from an HDF5 file: with a layout, the named datasets; without one, the file
/// must be a Sluice snapshot.
pub fn load_hdf5_other(
    path: &Path,
    layout: Option<&Hdf5Layout>,
    sampling: Sampling,
) -> Result<LoadedProfile, Failure> {
    let source = path.display().to_string();
    let Some(layout) = layout else {
        let snap = snapshot::read(path).map_err(|e| {
            Failure(
                format!(
                    "{e}; for an HDF5 file of another code name its datasets with \
                     --x-dataset PATH --dataset FIELD=PATH"
                ),
                2,
            )
        })?;
        let mut lp = profile_from_snapshot(&snap, &source)?;
        if sampling == Sampling::PointSample {
            let p = &lp.profile;
            let mut q = Profile::new(
                p.source(),
                Sampling::PointSample,
                p.centres().to_vec(),
                None,
            )
            .map_err(|e| Failure(e.to_string(), 2))?;
            for f in p.fields() {
                q.add_field(f.name.clone(), f.values.clone())
                    .map_err(|e| Failure(e.to_string(), 2))?;
            }
            lp.profile = q;
        }
        return Ok(lp);
    };
    let mut paths: Vec<&str> = vec![layout.x.as_str()];
    if let Some(e) = &layout.edges {
        paths.push(e);
    }
    paths.extend(layout.fields.iter().map(|(_, p)| p.as_str()));
    let ds = snapshot::read_datasets(path, &paths).map_err(|e| Failure(e.to_string(), 2))?;
    let mut it = ds.into_iter();
    let x = it.next().expect("one dataset per requested path");
    let edges = if layout.edges.is_some() {
        Some(it.next().expect("one dataset per requested path").data)
    } else {
        None
    };
    let mut units = BTreeMap::new();
    if let Some(u) = unit_of(&x) {
        units.insert("x".to_string(), u);
    }
    let mut profile = Profile::new(source.as_str(), sampling, x.data, edges).map_err(|e| {
        Failure(
            format!(
                "{e} (coordinate dataset `{}`{})",
                layout.x,
                layout
                    .edges
                    .as_ref()
                    .map(|e| format!(", edge dataset `{e}`"))
                    .unwrap_or_default()
            ),
            2,
        )
    })?;
    for ((name, dpath), d) in layout.fields.iter().zip(it) {
        if d.data.len() != profile.len() {
            return Err(Failure(
                format!(
                    "{source}: dataset `{dpath}` (field `{name}`) has {} values but the \
                     coordinate dataset `{}` has {}: lengths must match",
                    d.data.len(),
                    layout.x,
                    profile.len()
                ),
                2,
            ));
        }
        if let Some(u) = unit_of(&d) {
            units.insert(name.clone(), u);
        }
        profile
            .add_field(name.clone(), d.data)
            .map_err(|e| Failure(format!("{e} (dataset `{dpath}`)"), 2))?;
    }
    Ok(LoadedProfile { profile, units })
}

/// Parses `NAME=VALUE` entries separated by commas (from one or several occurrences of a
/// flag), each name once. `flag` names the option in errors, `example` shows the syntax.
pub fn parse_pairs(
    flag: &str,
    specs: &[String],
    example: &str,
) -> Result<Vec<(String, String)>, Failure> {
    let mut out: Vec<(String, String)> = Vec::new();
    for spec in specs {
        for entry in spec.split(',') {
            let entry = entry.trim();
            let Some((k, v)) = entry.split_once('=') else {
                return Err(Failure(
                    format!(
                        "invalid `{flag}` = `{spec}`: entries NAME=VALUE separated by commas, \
                         e.g. {example} (entry `{entry}` has no `=`)"
                    ),
                    2,
                ));
            };
            let (k, v) = (k.trim(), v.trim());
            if k.is_empty() || v.is_empty() {
                return Err(Failure(
                    format!(
                        "invalid `{flag}` = `{spec}`: a non-empty name and value in each entry, \
                         e.g. {example} (entry `{entry}`)"
                    ),
                    2,
                ));
            }
            if out.iter().any(|(n, _)| n == k) {
                return Err(Failure(
                    format!("invalid `{flag}` = `{spec}`: `{k}` is given twice; each name once"),
                    2,
                ));
            }
            out.push((k.to_string(), v.to_string()));
        }
    }
    Ok(out)
}

/// Multiplies the coordinate (key `x` or the coordinate's name) and named fields of a
/// profile by the given factors (finite, non-zero). Returns the rebuilt profile.
pub fn apply_scales(
    p: &Profile,
    scales: &[(String, f64)],
    coordinate: &str,
) -> Result<Profile, Failure> {
    let factor = |name: &str| scales.iter().find(|(n, _)| n == name).map(|(_, f)| *f);
    for (n, _) in scales {
        if n != "x" && n != coordinate && p.field(n).is_none() {
            return Err(Failure(
                format!(
                    "invalid `--scale` entry `{n}`: not a field of {}; allowed: x (the \
                     coordinate) or one of its fields: {}",
                    p.source(),
                    p.field_names().join(", ")
                ),
                2,
            ));
        }
    }
    let fx = factor("x").or_else(|| factor(coordinate)).unwrap_or(1.0);
    if fx < 0.0 {
        return Err(Failure(
            "invalid `--scale` for the coordinate: a negative factor reverses the direction; \
             allowed: a positive factor (flip the export instead)"
                .into(),
            2,
        ));
    }
    let centres: Vec<f64> = p.centres().iter().map(|x| x * fx).collect();
    let edges = p
        .edges()
        .map(|e| e.iter().map(|x| x * fx).collect::<Vec<f64>>());
    let mut q = Profile::new(p.source(), p.sampling(), centres, edges)
        .map_err(|e| Failure(e.to_string(), 2))?;
    for f in p.fields() {
        let k = factor(&f.name).unwrap_or(1.0);
        q.add_field(f.name.clone(), f.values.iter().map(|v| v * k).collect())
            .map_err(|e| Failure(e.to_string(), 2))?;
    }
    Ok(q)
}
