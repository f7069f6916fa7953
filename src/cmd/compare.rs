//! `sluice compare`: compare a profile from another code with a Sluice reference.
//!
//! REFERENCE is a Sluice snapshot (HDF5) or a text profile; OTHER is a text profile
//! (CSV / whitespace columns, header names or `--columns`), an HDF5 file of another code
//! (`--x-dataset`, `--dataset FIELD=PATH`) or another Sluice snapshot. OTHER is remapped onto
//! the reference grid (conservatively for cell averages, linearly for point samples) and
//! compared per field in L1, L2 and L∞, absolute and relative (sluice-analysis). Exit status:
//! 0 every field within tolerance, 1 a field failed, 2 bad input.

use super::profile_io::{self, Hdf5Layout, LoadedProfile};
use crate::Failure;
use sluice_analysis::{
    compare, parse_column_map, parse_field_list, parse_tolerances, read_profile, CompareOptions,
    CompareReport, Coverage, Delimiter, ReadOptions, RemapMethod, Sampling, Tolerance,
};
use std::collections::BTreeMap;
use std::path::PathBuf;

/// Arguments of `sluice compare`.
#[derive(clap::Args)]
pub struct CompareArgs {
    /// The reference: a Sluice snapshot (.h5) or a text profile with a header (`x` and fields).
    pub reference: PathBuf,
    /// The profile to check: CSV / whitespace columns, an HDF5 file of another code (with
    /// --x-dataset and --dataset) or another Sluice snapshot.
    pub other: PathBuf,
    /// Fields to compare, comma-separated (default: every field present in both).
    #[arg(long, value_name = "LIST")]
    pub fields: Option<String>,
    /// Tolerance: VALUE (relative L1), NORM:VALUE, KIND:NORM:VALUE, with per-field entries
    /// FIELD=TOLERANCE in the same list, e.g. `1e-2,velocity_x=abs:linf:1e3`.
    #[arg(long, value_name = "SPEC")]
    pub tolerance: Option<String>,
    /// Text OTHER without a header: NAME=COLUMN (1-based), e.g. `x=1,density=3`.
    #[arg(long, value_name = "MAP")]
    pub columns: Option<String>,
    /// Name of OTHER's coordinate column (text) (default `x`).
    #[arg(long, value_name = "NAME", default_value = "x")]
    pub coordinate: String,
    /// OTHER's lower and upper cell-edge columns (text), e.g. `x_lo,x_hi`.
    #[arg(long, value_name = "LO,HI")]
    pub edges: Option<String>,
    /// Column separator of a text OTHER: auto, comma or whitespace.
    #[arg(long, value_name = "SEP", default_value = "auto")]
    pub delimiter: String,
    /// Sort OTHER's rows by the coordinate instead of rejecting unsorted data.
    #[arg(long)]
    pub sort: bool,
    /// What OTHER's values are: `cell` (cell averages, default) or `point` (point samples).
    #[arg(long, value_name = "KIND", default_value = "cell")]
    pub sampling: String,
    /// HDF5 OTHER: dataset of the coordinate (cell centres or sample points).
    #[arg(long, value_name = "PATH")]
    pub x_dataset: Option<String>,
    /// HDF5 OTHER: dataset of the cell faces (one more value than the centres).
    #[arg(long, value_name = "PATH")]
    pub edges_dataset: Option<String>,
    /// HDF5 OTHER: FIELD=PATH, repeatable or comma-separated, e.g. `density=/data/rho`.
    #[arg(long = "dataset", value_name = "FIELD=PATH")]
    pub dataset: Vec<String>,
    /// Multiply OTHER's values by a factor first: FIELD=FACTOR (or x=FACTOR for the
    /// coordinate), repeatable or comma-separated. The scaled values must be in the
    /// reference's units.
    #[arg(long = "scale", value_name = "FIELD=FACTOR")]
    pub scale: Vec<String>,
    /// OTHER's units as exported: FIELD=UNIT (or x=UNIT), repeatable or comma-separated.
    /// A unit differing from the reference's requires a --scale for that field.
    #[arg(long = "units", value_name = "FIELD=UNIT")]
    pub units: Vec<String>,
    /// Remap method: linear, conservative or conservative_linear (default: conservative for
    /// cell averages, linear for point samples).
    #[arg(long, value_name = "METHOD")]
    pub method: Option<String>,
    /// `strict` (every reference cell covered, default) or `overlap`.
    #[arg(long, value_name = "MODE", default_value = "strict")]
    pub coverage: String,
    /// Print the report as JSON instead of a table.
    #[arg(long)]
    pub json: bool,
    /// Write an overlay plot (SVG or PNG, by extension) of reference and OTHER (remapped) per
    /// field, with the difference in a panel below.
    #[arg(long, value_name = "FILE.svg|FILE.png")]
    pub plot: Option<PathBuf>,
}

fn bad(e: impl std::fmt::Display) -> Failure {
    Failure(e.to_string(), 2)
}

/// Runs `sluice compare`.
pub fn run(a: CompareArgs) -> Result<(), Failure> {
    let sampling = Sampling::parse(&a.sampling).map_err(|_| {
        bad(format!(
            "invalid `--sampling` = `{}`: allowed `cell` (cell averages) or `point` (point \
             samples)",
            a.sampling
        ))
    })?;
    let coverage = Coverage::parse(&a.coverage).map_err(bad)?;
    let method = a
        .method
        .as_deref()
        .map(RemapMethod::parse)
        .transpose()
        .map_err(bad)?;
    let (global, field_tolerances) = match &a.tolerance {
        Some(t) => parse_tolerances(t).map_err(bad)?,
        None => (None, BTreeMap::new()),
    };
    let fields = a
        .fields
        .as_deref()
        .map(parse_field_list)
        .transpose()
        .map_err(bad)?;
    let scales: Vec<(String, f64)> = profile_io::parse_pairs("--scale", &a.scale, "density=1e-3")?
        .into_iter()
        .map(|(k, v)| match v.parse::<f64>() {
            Ok(f) if f.is_finite() && f != 0.0 => Ok((k, f)),
            _ => Err(bad(format!(
                "invalid `--scale` entry `{k}={v}`: the factor must be a finite non-zero number"
            ))),
        })
        .collect::<Result<_, _>>()?;
    let stated_units = profile_io::parse_pairs("--units", &a.units, "density=g/cm^3,x=cm")?;

    let reference = profile_io::load_reference(&a.reference)?;
    let mut other = load_other(&a, sampling)?;
    for (k, u) in &stated_units {
        other.units.insert(k.clone(), u.clone());
    }
    other.profile = profile_io::apply_scales(&other.profile, &scales, &a.coordinate)?;
    let coord_key = |k: &str| {
        if k == a.coordinate {
            "x".to_string()
        } else {
            k.to_string()
        }
    };
    let scaled: Vec<String> = scales.iter().map(|(k, _)| coord_key(k)).collect();

    let options = CompareOptions {
        fields,
        tolerance: global.unwrap_or_else(Tolerance::default),
        field_tolerances,
        coverage,
        method,
    };
    // Units first: a coordinate in other units would otherwise show up as a coverage error.
    let mut unit_keys: Vec<String> = vec!["x".into()];
    match &options.fields {
        Some(f) => unit_keys.extend(f.iter().cloned()),
        None => unit_keys.extend(
            reference
                .profile
                .field_names()
                .into_iter()
                .filter(|n| other.profile.field(n).is_some())
                .map(String::from),
        ),
    }
    let units = check_units(&unit_keys, &reference, &other, &scaled, &scales)?;
    let report = compare(&reference.profile, &other.profile, &options).map_err(bad)?;
    let units: BTreeMap<String, UnitsEntry> = units
        .into_iter()
        .filter(|(k, _)| k == "x" || report.fields.iter().any(|f| &f.field == k))
        .collect();

    if let Some(plot) = &a.plot {
        let ref_units = units
            .iter()
            .map(|(k, u)| (k.clone(), u.reference.clone()))
            .collect();
        super::compare_plot::write_overlay(
            plot,
            &reference.profile,
            &other.profile,
            &report,
            &ref_units,
        )?;
    }
    if a.json {
        let mut v: serde_json::Value =
            serde_json::from_str(&report.to_json()).map_err(|e| Failure(e.to_string(), 101))?;
        v["units"] = units
            .iter()
            .map(|(k, u)| {
                (
                    k.clone(),
                    serde_json::json!({"reference": u.reference, "other": u.other, "scale": u.scale}),
                )
            })
            .collect::<serde_json::Map<_, _>>()
            .into();
        println!(
            "{}",
            serde_json::to_string_pretty(&v).map_err(|e| Failure(e.to_string(), 101))?
        );
    } else {
        print!("{}", units_block(&units));
        print!("{}", report.to_table());
        if let Some(p) = &a.plot {
            println!("overlay plot: {}", p.display());
        }
    }
    verdict(&report)
}

fn verdict(report: &CompareReport) -> Result<(), Failure> {
    if report.pass {
        return Ok(());
    }
    let failed: Vec<String> = report
        .fields
        .iter()
        .filter(|f| !f.pass)
        .map(|f| match f.checked {
            Some(c) => format!(
                "{} ({} {} = {:.3e} > {:.3e})",
                f.field,
                match f.tolerance.kind {
                    sluice_analysis::ToleranceKind::Relative => "rel",
                    sluice_analysis::ToleranceKind::Absolute => "abs",
                },
                f.tolerance.norm.name(),
                c,
                f.tolerance.value
            ),
            None => format!("{} (relative norm undefined)", f.field),
        })
        .collect();
    Err(Failure(
        format!(
            "comparison failed: {} of {} fields outside tolerance: {}",
            failed.len(),
            report.fields.len(),
            failed.join(", ")
        ),
        1,
    ))
}

fn load_other(a: &CompareArgs, sampling: Sampling) -> Result<LoadedProfile, Failure> {
    let hdf5 = profile_io::is_hdf5(&a.other)?;
    let text_flags = a.columns.is_some() || a.edges.is_some() || a.sort || a.coordinate != "x";
    if hdf5 {
        if text_flags {
            return Err(bad(format!(
                "{} is an HDF5 file: --columns, --coordinate, --edges and --sort apply to text \
                 profiles; name its datasets with --x-dataset PATH --dataset FIELD=PATH \
                 [--edges-dataset PATH]",
                a.other.display()
            )));
        }
        let pairs = profile_io::parse_pairs("--dataset", &a.dataset, "density=/data/rho")?;
        let layout = match (&a.x_dataset, pairs.is_empty()) {
            (None, true) => {
                if a.edges_dataset.is_some() {
                    return Err(bad(
                        "--edges-dataset needs --x-dataset and at least one --dataset FIELD=PATH",
                    ));
                }
                None
            }
            (Some(x), false) => Some(Hdf5Layout {
                x: x.clone(),
                edges: a.edges_dataset.clone(),
                fields: pairs,
            }),
            (None, false) => {
                return Err(bad(
                    "--dataset given without --x-dataset: name the coordinate dataset too, \
                     e.g. --x-dataset /grid/x --dataset density=/data/rho",
                ))
            }
            (Some(_), true) => {
                return Err(bad(
                    "--x-dataset given without any --dataset FIELD=PATH: name at least one \
                     field dataset, e.g. --dataset density=/data/rho",
                ))
            }
        };
        return profile_io::load_hdf5_other(&a.other, layout.as_ref(), sampling);
    }
    if a.x_dataset.is_some() || a.edges_dataset.is_some() || !a.dataset.is_empty() {
        return Err(bad(format!(
            "{} is not an HDF5 file: --x-dataset, --edges-dataset and --dataset apply to HDF5 \
             files; for a text profile use its header or --columns",
            a.other.display()
        )));
    }
    let delimiter = match a.delimiter.to_ascii_lowercase().as_str() {
        "auto" => Delimiter::Auto,
        "comma" | "," => Delimiter::Comma,
        "whitespace" | "space" => Delimiter::Whitespace,
        d => {
            return Err(bad(format!(
                "invalid `--delimiter` = `{d}`: allowed `auto`, `comma` or `whitespace`"
            )))
        }
    };
    let edges = match &a.edges {
        None => None,
        Some(s) => match s.split_once(',') {
            Some((lo, hi)) if !lo.trim().is_empty() && !hi.trim().is_empty() => {
                Some((lo.trim().to_string(), hi.trim().to_string()))
            }
            _ => {
                return Err(bad(format!(
                    "invalid `--edges` = `{s}`: allowed LO,HI, the names of the lower and upper \
                     cell-edge columns, e.g. x_lo,x_hi"
                )))
            }
        },
    };
    let opts = ReadOptions {
        coordinate: a.coordinate.clone(),
        columns: a
            .columns
            .as_deref()
            .map(parse_column_map)
            .transpose()
            .map_err(bad)?,
        delimiter,
        sampling,
        edges,
        sort: a.sort,
    };
    let profile = read_profile(&a.other, &opts).map_err(bad)?;
    Ok(LoadedProfile {
        profile,
        units: BTreeMap::new(),
    })
}

/// Units of one compared quantity.
struct UnitsEntry {
    /// The reference's units (`null` if the reference does not state them).
    reference: Option<String>,
    /// OTHER's units as exported (file attribute or --units; `null` if not stated).
    other: Option<String>,
    /// The --scale factor applied to OTHER (`null`: none).
    scale: Option<f64>,
}

/// Checks that OTHER's stated units agree with the reference's, or that a scale converts
/// them; no conversion is ever made silently.
fn check_units(
    keys: &[String],
    reference: &LoadedProfile,
    other: &LoadedProfile,
    scaled: &[String],
    scales: &[(String, f64)],
) -> Result<BTreeMap<String, UnitsEntry>, Failure> {
    let norm = |s: &str| s.split_whitespace().collect::<String>();
    let mut out = BTreeMap::new();
    for key in keys {
        let r = reference.units.get(key).cloned();
        let o = other.units.get(key).cloned();
        let pos = scaled.iter().position(|k| k == key);
        let scale = pos.map(|i| scales[i].1);
        if let (Some(r), Some(o), None) = (&r, &o, scale) {
            if norm(r) != norm(o) {
                return Err(bad(format!(
                    "units of `{key}`: OTHER {} is in `{o}` but the reference {} is in `{r}`; \
                     nothing is converted silently: give --scale {key}=FACTOR such that OTHER × \
                     FACTOR is in {r}",
                    other.profile.source(),
                    reference.profile.source()
                )));
            }
        }
        out.insert(
            key.clone(),
            UnitsEntry {
                reference: r,
                other: o,
                scale,
            },
        );
    }
    Ok(out)
}

fn units_block(units: &BTreeMap<String, UnitsEntry>) -> String {
    let mut s = String::from("units:");
    let mut unstated = Vec::new();
    for (k, u) in units {
        let r = u.reference.as_deref().unwrap_or("not stated");
        s.push_str(&format!(" {k} [{r}]"));
        match (&u.other, u.scale) {
            (_, Some(f)) => s.push_str(&format!(" (OTHER × {f:e})")),
            (None, None) => unstated.push(k.as_str()),
            _ => {}
        }
        s.push(';');
    }
    s.pop();
    s.push('\n');
    if !unstated.is_empty() {
        s.push_str(&format!(
            "note: OTHER does not state the units of {}: taken to be the reference's (state \
             them with --units, convert with --scale)\n",
            unstated.join(", ")
        ));
    }
    s
}
