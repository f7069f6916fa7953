//! `sluice plot`: profile and time-series figures (SVG or PNG), drawn with the `sluice-plot`
//! crate (docs/plots.md).
//!
//! * `sluice plot SNAPSHOT... --fields density,cr_pressure -o out.svg` overlays the snapshots,
//!   one panel per field, x = `/grid/x_center`; legend `<file>: t = … s`; units from the
//!   datasets' `units` attributes.
//! * `sluice plot --ledger out/run/ledger.csv --columns total,energy_residual -o l.png` and
//!   `sluice plot --csv out/run/run_slab.csv --columns …` plot time series, one panel per
//!   column, against the `time` column.

use crate::Failure;
use sluice_driver::snapshot::{self, AttrValue, Snapshot};
use sluice_plot::{Figure, Panel, Scale, Series, Style};
use std::path::{Path, PathBuf};

/// Arguments of `sluice plot`.
#[derive(clap::Args)]
pub struct PlotArgs {
    /// Snapshots (`<name>_NNNN.h5`) to overlay, one curve per file in every panel.
    pub snapshots: Vec<PathBuf>,
    /// Snapshot fields to plot, comma-separated (names under `/fields`, e.g. density,cr_pressure).
    #[arg(long, value_delimiter = ',')]
    pub fields: Vec<String>,
    /// A ledger time series (`ledger.csv` of a run) to plot against time.
    #[arg(long, conflicts_with = "csv")]
    pub ledger: Option<PathBuf>,
    /// Any time-series CSV with a `time` column (e.g. `<name>_slab.csv`) to plot against time.
    #[arg(long)]
    pub csv: Option<PathBuf>,
    /// Columns of the time series to plot, comma-separated (default: all but time and step).
    #[arg(long, value_delimiter = ',')]
    pub columns: Vec<String>,
    /// Output file; `.svg` or `.png`.
    #[arg(short = 'o', long = "out", default_value = "plot.svg")]
    pub out: PathBuf,
    /// Logarithmic value axes in every panel (default: log when a positive field spans more
    /// than 2.5 decades).
    #[arg(long, conflicts_with = "linear")]
    pub log: bool,
    /// Linear value axes in every panel.
    #[arg(long)]
    pub linear: bool,
    /// Logarithmic time axis for time series.
    #[arg(long)]
    pub log_time: bool,
    /// Logarithmic x axis for snapshot profiles (default: linear x).
    #[arg(long)]
    pub log_x: bool,
    /// Figure title (default: names the inputs).
    #[arg(long)]
    pub title: Option<String>,
}

/// Runs `sluice plot`.
pub fn run(a: PlotArgs) -> Result<(), Failure> {
    let ext = a
        .out
        .extension()
        .and_then(|e| e.to_str())
        .map(|e| e.to_ascii_lowercase());
    if !matches!(ext.as_deref(), Some("svg") | Some("png")) {
        return Err(Failure(
            format!(
                "--out `{}`: the extension must be .svg or .png",
                a.out.display()
            ),
            2,
        ));
    }
    let y_scale = if a.log {
        Scale::Log
    } else if a.linear {
        Scale::Linear
    } else {
        Scale::Auto
    };
    let series_file = a.ledger.as_ref().or(a.csv.as_ref());
    let fig =
        match (series_file, a.snapshots.is_empty()) {
            (Some(_), false) => {
                return Err(Failure(
                    "give either snapshots (with --fields) or --ledger/--csv, not both".into(),
                    2,
                ))
            }
            (None, true) => return Err(Failure(
                "nothing to plot: give snapshot files with --fields, or --ledger FILE / --csv FILE"
                    .into(),
                2,
            )),
            (Some(f), true) => {
                if !a.fields.is_empty() {
                    return Err(Failure(
                        "--fields is for snapshots; time series take --columns".into(),
                        2,
                    ));
                }
                let x_scale = if a.log_time {
                    Scale::Log
                } else {
                    Scale::Linear
                };
                series_figure(f, &a.columns, x_scale, y_scale, a.title.clone())?
            }
            (None, false) => {
                if !a.columns.is_empty() {
                    return Err(Failure(
                        "--columns is for --ledger/--csv; snapshots take --fields".into(),
                        2,
                    ));
                }
                let x_scale = if a.log_x { Scale::Log } else { Scale::Linear };
                profile_figure(&a.snapshots, &a.fields, x_scale, y_scale, a.title.clone())?
            }
        };
    sluice_plot::write(&fig, &a.out).map_err(|e| Failure(e.to_string(), 2))?;
    println!(
        "wrote {} ({} panel{})",
        a.out.display(),
        fig.panels.len(),
        if fig.panels.len() == 1 { "" } else { "s" }
    );
    Ok(())
}

fn units_of(attrs: &[(String, AttrValue)]) -> Option<String> {
    attrs
        .iter()
        .find(|(n, _)| n == "units")
        .and_then(|(_, v)| v.as_str())
        .map(str::to_string)
}

fn file_label(p: &Path) -> String {
    p.file_name()
        .map_or_else(|| p.display().to_string(), |n| n.to_string_lossy().into())
}

/// One panel per field, one series per snapshot.
fn profile_figure(
    files: &[PathBuf],
    fields: &[String],
    x_scale: Scale,
    y_scale: Scale,
    title: Option<String>,
) -> Result<Figure, Failure> {
    if fields.is_empty() {
        return Err(Failure(
            "--fields is required with snapshots (e.g. --fields density,cr_pressure)".into(),
            2,
        ));
    }
    let mut snaps: Vec<(PathBuf, Snapshot)> = Vec::new();
    for f in files {
        if !f.is_file() {
            return Err(Failure(
                format!("snapshot `{}`: no such file", f.display()),
                2,
            ));
        }
        let s = snapshot::read(f).map_err(|e| Failure(format!("{}: {e}", f.display()), 2))?;
        snaps.push((f.clone(), s));
    }
    let mut panels: Vec<Panel> = fields
        .iter()
        .map(|name| Panel {
            title: name.clone(),
            x_scale,
            y_scale,
            ..Default::default()
        })
        .collect();
    for (path, s) in &snaps {
        let x = s.dataset("/grid/x_center").ok_or_else(|| {
            Failure(
                format!(
                    "{}: no dataset `/grid/x_center`: not a Sluice snapshot (docs/output-format.md)",
                    path.display()
                ),
                2,
            )
        })?;
        let x_unit = units_of(&x.attrs).unwrap_or_else(|| "cm".into());
        let time = s.attr("time").and_then(AttrValue::as_f64);
        let t_unit = s
            .attr("time_units")
            .and_then(AttrValue::as_str)
            .unwrap_or("s")
            .to_string();
        let label = match time {
            Some(t) => format!("{}: t = {t:.4e} {t_unit}", file_label(path)),
            None => file_label(path),
        };
        for (name, panel) in fields.iter().zip(panels.iter_mut()) {
            let path_in = format!("/fields/{name}");
            let d = s.dataset(&path_in).ok_or_else(|| {
                let avail: Vec<&str> = s
                    .datasets
                    .iter()
                    .filter_map(|d| d.path.strip_prefix("/fields/"))
                    .collect();
                Failure(
                    format!(
                        "--fields: `{name}` is not in {}; available fields: {}",
                        path.display(),
                        avail.join(", ")
                    ),
                    2,
                )
            })?;
            if d.data.len() != x.data.len() {
                return Err(Failure(
                    format!(
                        "{}: `{path_in}` has {} values but the grid has {} cells",
                        path.display(),
                        d.data.len(),
                        x.data.len()
                    ),
                    2,
                ));
            }
            let unit = units_of(&d.attrs).unwrap_or_else(|| "units not given".into());
            let y_label = format!("{name} [{unit}]");
            if panel.y_label.is_empty() {
                panel.y_label = y_label;
                panel.x_label = format!("x [{x_unit}]");
            } else if panel.y_label != y_label {
                return Err(Failure(
                    format!(
                        "{}: `{name}` is in {unit} but an earlier snapshot has {}",
                        path.display(),
                        panel.y_label
                    ),
                    2,
                ));
            }
            panel.series.push(Series {
                label: label.clone(),
                x: x.data.clone(),
                y: d.data.clone(),
                style: Style::Line,
            });
        }
    }
    let title = title.unwrap_or_else(|| {
        let run = snaps[0]
            .1
            .attr("run_name")
            .and_then(AttrValue::as_str)
            .unwrap_or("")
            .to_string();
        if run.is_empty() {
            "profiles".into()
        } else {
            format!("{run}: profiles")
        }
    });
    Ok(Figure::new(title, panels))
}

/// A time-series table: column names, units and values by column.
struct Table {
    names: Vec<String>,
    units: Vec<Option<String>>,
    cols: Vec<Vec<f64>>,
}

/// Splits `name [unit]` into its parts.
fn split_unit(h: &str) -> (String, Option<String>) {
    let h = h.trim();
    if let (Some(a), true) = (h.find('['), h.ends_with(']')) {
        return (
            h[..a].trim().to_string(),
            Some(h[a + 1..h.len() - 1].trim().to_string()),
        );
    }
    (h.to_string(), None)
}

/// Reads a CSV time series. Units come from a `# units: name [unit], …` comment line (as in
/// `<name>_slab.csv`), from `name [unit]` headers, or, for a `ledger.csv` without either, from
/// the ledger layout of docs/output-format.md (time in s, masses in g/cm^2, energies erg/cm^2).
fn read_table(path: &Path, ledger: bool) -> Result<Table, Failure> {
    let bad = |m: String| Failure(format!("{}: {m}", path.display()), 2);
    if !path.is_file() {
        return Err(bad("no such file".into()));
    }
    let text = std::fs::read_to_string(path).map_err(|e| bad(e.to_string()))?;
    let mut comment_units: Vec<(String, String)> = Vec::new();
    let mut lines = text.lines().enumerate().filter(|(_, l)| {
        let t = l.trim();
        !t.is_empty()
    });
    let header = loop {
        match lines.next() {
            None => return Err(bad("no header line".into())),
            Some((_, l)) if l.trim_start().starts_with('#') => {
                if let Some(rest) = l.trim_start()[1..].trim().strip_prefix("units:") {
                    for item in rest.split(", ") {
                        if let (n, Some(u)) = split_unit(item) {
                            comment_units.push((n, u));
                        }
                    }
                }
            }
            Some((_, l)) => break l,
        }
    };
    let mut names = Vec::new();
    let mut units = Vec::new();
    for h in header.split(',') {
        let (n, u) = split_unit(h);
        let u = u.or_else(|| {
            comment_units
                .iter()
                .find(|(c, _)| *c == n)
                .map(|c| c.1.clone())
        });
        let u = u.or_else(|| {
            ledger.then(|| {
                if n == "time" {
                    "s".into()
                } else if n == "step" {
                    "1".into()
                } else if n.contains("mass") {
                    "g/cm^2".into()
                } else {
                    "erg/cm^2".into()
                }
            })
        });
        names.push(n);
        units.push(u);
    }
    let mut cols = vec![Vec::new(); names.len()];
    for (ln, l) in lines {
        if l.trim_start().starts_with('#') {
            continue;
        }
        let vals: Vec<&str> = l.split(',').collect();
        if vals.len() != names.len() {
            return Err(bad(format!(
                "line {}: {} values for {} columns",
                ln + 1,
                vals.len(),
                names.len()
            )));
        }
        for (c, v) in cols.iter_mut().zip(vals) {
            let v = v.trim();
            let x = match v.to_ascii_lowercase().as_str() {
                "nan" => f64::NAN,
                _ => v
                    .parse::<f64>()
                    .map_err(|_| bad(format!("line {}: `{v}` is not a number", ln + 1)))?,
            };
            c.push(x);
        }
    }
    Ok(Table { names, units, cols })
}

/// One panel per column against time.
fn series_figure(
    path: &Path,
    columns: &[String],
    x_scale: Scale,
    y_scale: Scale,
    title: Option<String>,
) -> Result<Figure, Failure> {
    let ledger = path.file_name().is_some_and(|n| n == "ledger.csv");
    let t = read_table(path, ledger)?;
    let ti = t.names.iter().position(|n| n == "time").ok_or_else(|| {
        Failure(
            format!(
                "{}: no `time` column (columns: {})",
                path.display(),
                t.names.join(", ")
            ),
            2,
        )
    })?;
    let chosen: Vec<usize> = if columns.is_empty() {
        (0..t.names.len())
            .filter(|&i| i != ti && t.names[i] != "step")
            .collect()
    } else {
        columns
            .iter()
            .map(|c| {
                t.names.iter().position(|n| n == c).ok_or_else(|| {
                    Failure(
                        format!(
                            "--columns: `{c}` is not in {}; available columns: {}",
                            path.display(),
                            t.names.join(", ")
                        ),
                        2,
                    )
                })
            })
            .collect::<Result<_, _>>()?
    };
    if chosen.is_empty() {
        return Err(Failure(
            format!("{}: no column besides time and step", path.display()),
            2,
        ));
    }
    let t_unit = t.units[ti].clone().unwrap_or_else(|| "s".into());
    let panels = chosen
        .iter()
        .map(|&i| Panel {
            title: t.names[i].clone(),
            x_label: format!("time [{t_unit}]"),
            y_label: format!(
                "{} [{}]",
                t.names[i],
                t.units[i].as_deref().unwrap_or("units not given")
            ),
            x_scale,
            y_scale,
            series: vec![Series {
                label: String::new(),
                x: t.cols[ti].clone(),
                y: t.cols[i].clone(),
                style: Style::Line,
            }],
        })
        .collect();
    Ok(Figure::new(
        title.unwrap_or_else(|| format!("{}: time series", path.display())),
        panels,
    ))
}
