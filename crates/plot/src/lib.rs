//! Line plots for Sluice: profiles and time series written as SVG or PNG.
//!
//! A [`Figure`] is a stack of [`Panel`]s (one per field), each holding several [`Series`].
//! [`write`] picks the backend from the file extension (`.svg` or `.png`) and writes the file
//! atomically (temporary file in the same directory, then rename).
//!
//! Fonts: no system font, fontconfig or other system library is used. Text is laid out with
//! plotters' `ab_glyph` support from DejaVu Sans, embedded from the `dejavu` crate
//! (font licence: Bitstream Vera / DejaVu, permissive; crate licence MIT/Apache-2.0). SVG
//! files carry text elements (`font-family="sans-serif"`), PNG files are rasterised with the
//! embedded font.
//!
//! Log axes: [`Scale::Auto`] turns an axis logarithmic when every finite value on it is
//! positive and they span more than [`AUTO_LOG_DECADES`] decades. On a log axis the data are
//! drawn in log10 space and ticks are labelled with the values themselves; non-positive
//! points are left out (the line is broken there).

use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::{Path, PathBuf};
use std::sync::Once;

/// An axis spanning more than this many decades (max/min of its positive values) is drawn
/// logarithmic under [`Scale::Auto`].
pub const AUTO_LOG_DECADES: f64 = 2.5;

/// Errors of [`write`].
#[derive(Debug, thiserror::Error)]
pub enum PlotError {
    /// The output path has no `.svg` or `.png` extension.
    #[error("plot file `{0}`: extension must be .svg or .png")]
    Extension(PathBuf),
    /// The figure has no panel, or a panel has no series with a finite point.
    #[error("plot: {0}")]
    Empty(String),
    /// A series has x and y of different lengths.
    #[error("plot: series `{label}` has {nx} x values but {ny} y values")]
    Length {
        /// Label of the series.
        label: String,
        /// Number of x values.
        nx: usize,
        /// Number of y values.
        ny: usize,
    },
    /// The drawing backend failed.
    #[error("plot: drawing failed: {0}")]
    Draw(String),
    /// Writing or renaming the file failed.
    #[error("plot file `{path}`: {source}")]
    Io {
        /// The file.
        path: PathBuf,
        /// The I/O error.
        source: std::io::Error,
    },
}

/// Axis scale.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Scale {
    /// Logarithmic when the data are positive and span more than [`AUTO_LOG_DECADES`].
    #[default]
    Auto,
    /// Linear.
    Linear,
    /// Logarithmic (base 10); non-positive values are left out.
    Log,
}

/// How a series is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Style {
    /// A solid polyline.
    #[default]
    Line,
    /// A dashed polyline (e.g. a reference or exact solution).
    Dashed,
    /// Markers only.
    Points,
}

/// One curve: `y(x)` with a legend label.
#[derive(Clone, Debug, Default)]
pub struct Series {
    /// Legend text (e.g. `t = 1.0e10 s`).
    pub label: String,
    /// Abscissae (same length as `y`).
    pub x: Vec<f64>,
    /// Ordinates.
    pub y: Vec<f64>,
    /// Drawing style; the colour follows the series' index in its panel.
    pub style: Style,
}

/// One set of axes with its series.
#[derive(Clone, Debug, Default)]
pub struct Panel {
    /// Panel title (may be empty).
    pub title: String,
    /// x-axis label, with unit (e.g. `x [cm]`).
    pub x_label: String,
    /// y-axis label, with unit (e.g. `density [g cm^-3]`).
    pub y_label: String,
    /// x-axis scale.
    pub x_scale: Scale,
    /// y-axis scale.
    pub y_scale: Scale,
    /// The curves.
    pub series: Vec<Series>,
}

/// A figure: panels stacked vertically, all of the same size.
#[derive(Clone, Debug)]
pub struct Figure {
    /// Title over the whole figure (may be empty).
    pub title: String,
    /// The panels, top to bottom.
    pub panels: Vec<Panel>,
    /// Width in pixels.
    pub width: u32,
    /// Height of one panel in pixels.
    pub panel_height: u32,
}

impl Figure {
    /// A figure of the given panels, 900 px wide and 420 px per panel.
    pub fn new(title: impl Into<String>, panels: Vec<Panel>) -> Self {
        Figure {
            title: title.into(),
            panels,
            width: 900,
            panel_height: 420,
        }
    }

    /// Total size in pixels (width, height).
    pub fn size(&self) -> (u32, u32) {
        let title = if self.title.is_empty() { 0 } else { 40 };
        (
            self.width,
            self.panel_height * self.panels.len().max(1) as u32 + title,
        )
    }
}

/// Colours of successive series (colour-blind-safe set of Wong 2011, Nature Methods 8, 441).
const COLOURS: [RGBColor; 8] = [
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
    RGBColor(86, 180, 233),
    RGBColor(0, 0, 0),
    RGBColor(240, 228, 66),
];

static FONT: Once = Once::new();

fn register_font() {
    FONT.call_once(|| {
        // The embedded font is a valid TrueType file; a failure here would leave text out
        // but cannot happen with the bytes shipped by the crate.
        let _ = plotters::style::register_font(
            "sans-serif",
            FontStyle::Normal,
            dejavu::sans::regular(),
        );
    });
}

/// Whether an axis over `values` is drawn logarithmic.
pub fn resolve_log(scale: Scale, values: impl Iterator<Item = f64>) -> bool {
    match scale {
        Scale::Linear => false,
        Scale::Log => true,
        Scale::Auto => {
            let (mut lo, mut hi, mut any) = (f64::INFINITY, 0.0f64, false);
            for v in values.filter(|v| v.is_finite()) {
                if v <= 0.0 {
                    return false;
                }
                any = true;
                lo = lo.min(v);
                hi = hi.max(v);
            }
            any && (hi / lo).log10() > AUTO_LOG_DECADES
        }
    }
}

/// Writes the figure to `path`; `.svg` gives an SVG, `.png` a PNG. The file is written to a
/// temporary name beside it and renamed into place.
pub fn write(fig: &Figure, path: &Path) -> Result<(), PlotError> {
    validate(fig)?;
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(|e| e.to_ascii_lowercase());
    register_font();
    let size = fig.size();
    let dir = path.parent().filter(|p| !p.as_os_str().is_empty());
    let name = path
        .file_name()
        .ok_or_else(|| PlotError::Extension(path.to_path_buf()))?
        .to_string_lossy();
    let tmp_name = format!(".{name}.tmp-{}", std::process::id());
    let io = |source| PlotError::Io {
        path: path.to_path_buf(),
        source,
    };
    match ext.as_deref() {
        Some("svg") => {
            let mut text = String::new();
            {
                let root = SVGBackend::with_string(&mut text, size).into_drawing_area();
                draw(fig, &root)?;
                root.present().map_err(|e| PlotError::Draw(e.to_string()))?;
            }
            let tmp = dir.map_or(PathBuf::from(&tmp_name), |d| d.join(&tmp_name));
            std::fs::write(&tmp, text).map_err(io)?;
            std::fs::rename(&tmp, path).map_err(io)
        }
        Some("png") => {
            // The bitmap encoder picks the format from the extension: keep `.png` last.
            let tmp_name = format!("{tmp_name}.png");
            let tmp = dir.map_or(PathBuf::from(&tmp_name), |d| d.join(&tmp_name));
            {
                let root = BitMapBackend::new(&tmp, size).into_drawing_area();
                draw(fig, &root)?;
                root.present().map_err(|e| {
                    let _ = std::fs::remove_file(&tmp);
                    PlotError::Draw(e.to_string())
                })?;
            }
            std::fs::rename(&tmp, path).map_err(io)
        }
        _ => Err(PlotError::Extension(path.to_path_buf())),
    }
}

fn validate(fig: &Figure) -> Result<(), PlotError> {
    if fig.panels.is_empty() {
        return Err(PlotError::Empty("the figure has no panel".into()));
    }
    for p in &fig.panels {
        for s in &p.series {
            if s.x.len() != s.y.len() {
                return Err(PlotError::Length {
                    label: s.label.clone(),
                    nx: s.x.len(),
                    ny: s.y.len(),
                });
            }
        }
        let finite = p.series.iter().any(|s| {
            s.x.iter()
                .zip(&s.y)
                .any(|(x, y)| x.is_finite() && y.is_finite())
        });
        if !finite {
            return Err(PlotError::Empty(format!(
                "panel `{}` ({}) has no finite point",
                p.title, p.y_label
            )));
        }
    }
    Ok(())
}

fn derr<E: std::error::Error + Send + Sync>(e: DrawingAreaErrorKind<E>) -> PlotError {
    PlotError::Draw(e.to_string())
}

/// Data range of transformed values, padded 5 %, never empty.
fn range(values: impl Iterator<Item = f64>) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !lo.is_finite() {
        return (0.0, 1.0);
    }
    if hi <= lo {
        let d = if lo == 0.0 { 1.0 } else { 0.1 * lo.abs() };
        return (lo - d, hi + d);
    }
    let pad = 0.05 * (hi - lo);
    (lo - pad, hi + pad)
}

/// The power of ten k that brings a linear axis range to order one (0 when it already is,
/// i.e. when its largest magnitude lies in [1e-2, 1e4)).
fn decade(lo: f64, hi: f64) -> i32 {
    let m = lo.abs().max(hi.abs());
    if !m.is_finite() || m == 0.0 || (1e-2..1e4).contains(&m) {
        0
    } else {
        m.log10().floor() as i32
    }
}

fn tick(v: f64, log: bool) -> String {
    let v = if log { 10f64.powf(v) } else { v };
    if v == 0.0 {
        "0".into()
    } else if (1e-2..1e4).contains(&v.abs()) {
        let s = format!("{v:.3}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        format!("{v:.2e}")
    }
}

fn draw<DB: DrawingBackend>(fig: &Figure, root: &DrawingArea<DB, Shift>) -> Result<(), PlotError>
where
    DB::ErrorType: 'static,
{
    root.fill(&WHITE).map_err(derr)?;
    let area = if fig.title.is_empty() {
        root.clone()
    } else {
        root.titled(&fig.title, ("sans-serif", 22)).map_err(derr)?
    };
    let panels = area.split_evenly((fig.panels.len(), 1));
    for (panel, pa) in fig.panels.iter().zip(&panels) {
        draw_panel(panel, pa)?;
    }
    Ok(())
}

fn draw_panel<DB: DrawingBackend>(p: &Panel, area: &DrawingArea<DB, Shift>) -> Result<(), PlotError>
where
    DB::ErrorType: 'static,
{
    let xs = || p.series.iter().flat_map(|s| s.x.iter().copied());
    let ys = || p.series.iter().flat_map(|s| s.y.iter().copied());
    let xlog = resolve_log(p.x_scale, xs());
    let ylog = resolve_log(p.y_scale, ys());
    let tf = |v: f64, log: bool| {
        if !log {
            v
        } else if v > 0.0 {
            v.log10()
        } else {
            f64::NAN
        }
    };
    let (x0, x1) = range(xs().map(|v| tf(v, xlog)));
    let (y0, y1) = range(ys().map(|v| tf(v, ylog)));
    // Linear axes far from unity are drawn in units of 10^k (named in the axis label): the
    // tick placement works on numbers of order one, not on 1e-26 g/cm^3.
    let (xk, yk) = (
        if xlog { 0 } else { decade(x0, x1) },
        if ylog { 0 } else { decade(y0, y1) },
    );
    let (xm, ym) = (10f64.powi(-xk), 10f64.powi(-yk));
    let (x0, x1, y0, y1) = (x0 * xm, x1 * xm, y0 * ym, y1 * ym);
    let tx = |v: f64| tf(v, xlog) * xm;
    let ty = |v: f64| tf(v, ylog) * ym;
    let mut chart = ChartBuilder::on(area)
        .caption(&p.title, ("sans-serif", 18))
        .margin(12)
        .x_label_area_size(45)
        .y_label_area_size(85)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(derr)?;
    let desc = |label: &str, log: bool, k: i32| {
        if log {
            format!("{label} (log)")
        } else if k != 0 {
            format!("{label} (×1e{k})")
        } else {
            label.to_string()
        }
    };
    let x_desc = desc(&p.x_label, xlog, xk);
    let y_desc = desc(&p.y_label, ylog, yk);
    chart
        .configure_mesh()
        .x_desc(x_desc)
        .y_desc(y_desc)
        .x_label_formatter(&|v| tick(*v, xlog))
        .y_label_formatter(&|v| tick(*v, ylog))
        .label_style(("sans-serif", 13))
        .axis_desc_style(("sans-serif", 15))
        .draw()
        .map_err(derr)?;
    for (k, s) in p.series.iter().enumerate() {
        let colour = COLOURS[k % COLOURS.len()];
        // Split at non-finite points so log axes and gaps break the line.
        let mut runs: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
        for (&x, &y) in s.x.iter().zip(&s.y) {
            let (px, py) = (tx(x), ty(y));
            if px.is_finite() && py.is_finite() {
                runs.last_mut().expect("one run").push((px, py));
            } else if !runs.last().expect("one run").is_empty() {
                runs.push(Vec::new());
            }
        }
        let mut first = true;
        for run in runs.into_iter().filter(|r| !r.is_empty()) {
            let anno = match s.style {
                Style::Line => chart
                    .draw_series(LineSeries::new(run, colour.stroke_width(2)))
                    .map_err(derr)?,
                Style::Dashed => chart
                    .draw_series(DashedLineSeries::new(run, 8, 5, colour.stroke_width(2)))
                    .map_err(derr)?,
                Style::Points => chart
                    .draw_series(run.into_iter().map(|q| Circle::new(q, 3, colour.filled())))
                    .map_err(derr)?,
            };
            if first && !s.label.is_empty() {
                anno.label(s.label.clone()).legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2))
                });
            }
            first = false;
        }
    }
    if p.series.iter().any(|s| !s.label.is_empty()) {
        chart
            .configure_series_labels()
            .background_style(WHITE.mix(0.8))
            .border_style(BLACK)
            .label_font(("sans-serif", 13))
            .position(SeriesLabelPosition::UpperRight)
            .draw()
            .map_err(derr)?;
    }
    Ok(())
}
