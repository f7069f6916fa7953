//! The overlay plot of `sluice compare --plot FILE.svg|FILE.png`, drawn with the `sluice-plot`
//! crate like `sluice plot` (docs/plots.md).
//!
//! Two panels per compared field: the reference (cell averages drawn as a line through the
//! cell centres) with OTHER remapped onto the reference cells (dashed), and below it the
//! difference OTHER − reference on the same cells.

use crate::Failure;
use sluice_analysis::{remap, CompareReport, Profile};
use sluice_plot::{Figure, Panel, Scale, Series, Style};
use std::collections::BTreeMap;
use std::path::Path;

/// Writes the overlay of every compared field of `report` to `path` (SVG or PNG by extension,
/// atomically). `units` maps `x` and field names to the reference's units where known.
pub fn write_overlay(
    path: &Path,
    reference: &Profile,
    other: &Profile,
    report: &CompareReport,
    units: &BTreeMap<String, Option<String>>,
) -> Result<(), Failure> {
    let names: Vec<&str> = report.fields.iter().map(|f| f.field.as_str()).collect();
    let mapped = remap(reference, other, &names, report.method, report.coverage)
        .map_err(|e| Failure(e.to_string(), 2))?;
    let xs: Vec<f64> = mapped
        .covered
        .iter()
        .map(|&i| reference.centres()[i])
        .collect();
    let unit = |k: &str| {
        units
            .get(k)
            .cloned()
            .flatten()
            .unwrap_or_else(|| "units not given".into())
    };
    let x_label = format!("x [{}]", unit("x"));
    let mut panels = Vec::new();
    for (field, cmp) in mapped.fields.iter().zip(&report.fields) {
        let r_all = reference
            .require_field(&field.name)
            .map_err(|e| Failure(e.to_string(), 2))?;
        let r: Vec<f64> = mapped.covered.iter().map(|&i| r_all[i]).collect();
        let d: Vec<f64> = field.values.iter().zip(&r).map(|(a, b)| a - b).collect();
        let u = unit(&field.name);
        panels.push(Panel {
            title: format!("{}: {}", field.name, if cmp.pass { "pass" } else { "FAIL" }),
            x_label: x_label.clone(),
            y_label: format!("{} [{u}]", field.name),
            x_scale: Scale::Linear,
            y_scale: Scale::Auto,
            series: vec![
                Series {
                    label: format!("reference {}", report.reference),
                    x: xs.clone(),
                    y: r,
                    style: Style::Line,
                },
                Series {
                    label: format!("other {} ({} remap)", report.other, report.method.name()),
                    x: xs.clone(),
                    y: field.values.clone(),
                    style: Style::Dashed,
                },
            ],
        });
        panels.push(Panel {
            title: format!("{}: other − reference", field.name),
            x_label: x_label.clone(),
            y_label: format!("Δ{} [{u}]", field.name),
            x_scale: Scale::Linear,
            y_scale: Scale::Linear,
            series: vec![Series {
                label: String::new(),
                x: xs.clone(),
                y: d,
                style: Style::Line,
            }],
        });
    }
    let mut fig = Figure::new(
        format!("compare: {}", if report.pass { "PASS" } else { "FAIL" }),
        panels,
    );
    fig.panel_height = 300;
    sluice_plot::write(&fig, path).map_err(|e| Failure(format!("--plot: {e}"), 2))
}
