//! The overlay plot of `sluice compare --plot FILE.svg`: a small self-contained SVG writer
//! (axes, ticks, legend, optional log axis; no fonts embedded, text is left to the viewer).
//!
//! One row per compared field: the reference (cell averages drawn as a polyline through the
//! cell centres) and OTHER remapped onto the reference cells, and below it the difference
//! OTHER − reference on the same cells.

use crate::Failure;
use sluice_analysis::{remap, CompareReport, Profile};
use std::fmt::Write as _;
use std::path::Path;

const W: f64 = 760.0;
const ROW_H: f64 = 330.0;
const LEFT: f64 = 90.0;
const RIGHT: f64 = 20.0;
const MAIN_H: f64 = 190.0;
const DIFF_H: f64 = 70.0;
const GAP: f64 = 12.0;

/// One axis mapping data to pixels.
#[derive(Clone, Copy)]
pub struct Axis {
    lo: f64,
    hi: f64,
    log: bool,
    p0: f64,
    p1: f64,
}

impl Axis {
    /// An axis over the data range `[lo, hi]` (padded 5 %; log10 when `log`), drawn from
    /// pixel `p0` (low value) to `p1`.
    pub fn new(mut lo: f64, mut hi: f64, log: bool, p0: f64, p1: f64) -> Self {
        if log {
            lo = lo.log10();
            hi = hi.log10();
        }
        if lo.is_nan() || hi.is_nan() || hi <= lo {
            let d = if lo == 0.0 { 1.0 } else { lo.abs() * 0.1 };
            lo -= d;
            hi += d;
        } else {
            let pad = 0.05 * (hi - lo);
            lo -= pad;
            hi += pad;
        }
        Axis {
            lo,
            hi,
            log,
            p0,
            p1,
        }
    }

    /// Pixel of a data value.
    pub fn px(&self, v: f64) -> f64 {
        let v = if self.log { v.log10() } else { v };
        self.p0 + (v - self.lo) / (self.hi - self.lo) * (self.p1 - self.p0)
    }

    /// Tick values (data units): 1-2-5 steps, or the decades on a log axis.
    pub fn ticks(&self) -> Vec<f64> {
        if self.log {
            let (a, b) = (self.lo.ceil() as i32, self.hi.floor() as i32);
            let step = ((b - a) / 6 + 1).max(1);
            return (a..=b)
                .step_by(step as usize)
                .map(|e| 10f64.powi(e))
                .collect();
        }
        let raw = (self.hi - self.lo) / 5.0;
        let mag = 10f64.powf(raw.log10().floor());
        let step = [1.0, 2.0, 5.0, 10.0]
            .iter()
            .map(|m| m * mag)
            .find(|s| *s >= raw)
            .unwrap_or(10.0 * mag);
        let mut t = (self.lo / step).ceil() * step;
        let mut out = Vec::new();
        while t <= self.hi + 1e-9 * step {
            out.push(if (t / step).abs() < 1e-9 { 0.0 } else { t });
            t += step;
        }
        out
    }
}

fn label(v: f64) -> String {
    if v == 0.0 {
        "0".into()
    } else if (1e-3..1e4).contains(&v.abs()) {
        let s = format!("{v:.4}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        format!("{v:.2e}")
    }
}

fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

fn polyline(svg: &mut String, xs: &[f64], ys: &[f64], ax: &Axis, ay: &Axis, style: &str) {
    let mut pts = String::new();
    for (x, y) in xs.iter().zip(ys) {
        if ay.log && *y <= 0.0 {
            continue;
        }
        let _ = write!(pts, "{:.2},{:.2} ", ax.px(*x), ay.px(*y));
    }
    let _ = writeln!(
        svg,
        r#"<polyline fill="none" {style} points="{}"/>"#,
        pts.trim_end()
    );
}

/// Draws axes with ticks and a y label into a panel `[x0, x1] × [y_top, y_bottom]`.
fn frame(svg: &mut String, ax: &Axis, ay: &Axis, y_label: &str, x_label: Option<&str>) {
    let (x0, x1) = (ax.p0, ax.p1);
    let (yb, yt) = (ay.p0, ay.p1);
    let _ = writeln!(
        svg,
        r##"<rect x="{x0:.1}" y="{yt:.1}" width="{:.1}" height="{:.1}" fill="none" stroke="#000"/>"##,
        x1 - x0,
        yb - yt
    );
    for t in ay.ticks() {
        let y = ay.px(t);
        if y < yt - 0.5 || y > yb + 0.5 {
            continue;
        }
        let _ = writeln!(
            svg,
            r##"<line x1="{x0:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="#000"/><text x="{:.1}" y="{:.1}" font-size="10" text-anchor="end">{}</text>"##,
            x0 + 5.0,
            x0 - 4.0,
            y + 3.5,
            label(t)
        );
    }
    for t in ax.ticks() {
        let x = ax.px(t);
        if x < x0 - 0.5 || x > x1 + 0.5 {
            continue;
        }
        let _ = writeln!(
            svg,
            r##"<line x1="{x:.1}" y1="{yb:.1}" x2="{x:.1}" y2="{:.1}" stroke="#000"/>"##,
            yb - 5.0
        );
        if x_label.is_some() {
            let _ = writeln!(
                svg,
                r#"<text x="{x:.1}" y="{:.1}" font-size="10" text-anchor="middle">{}</text>"#,
                yb + 14.0,
                label(t)
            );
        }
    }
    let _ = writeln!(
        svg,
        r#"<text x="14" y="{:.1}" font-size="11" text-anchor="middle" transform="rotate(-90 14 {:.1})">{}</text>"#,
        0.5 * (yb + yt),
        0.5 * (yb + yt),
        esc(y_label)
    );
    if let Some(l) = x_label {
        let _ = writeln!(
            svg,
            r#"<text x="{:.1}" y="{:.1}" font-size="11" text-anchor="middle">{}</text>"#,
            0.5 * (x0 + x1),
            yb + 28.0,
            esc(l)
        );
    }
}

/// Writes the overlay of every compared field of `report` to `path` (SVG, atomically:
/// temporary file then rename). A field whose values are all positive and span more than
/// three decades gets a log10 value axis.
pub fn write_overlay(
    path: &Path,
    reference: &Profile,
    other: &Profile,
    report: &CompareReport,
) -> Result<(), Failure> {
    let names: Vec<&str> = report.fields.iter().map(|f| f.field.as_str()).collect();
    let mapped = remap(reference, other, &names, report.method, report.coverage)
        .map_err(|e| Failure(e.to_string(), 2))?;
    let xs: Vec<f64> = mapped
        .covered
        .iter()
        .map(|&i| reference.centres()[i])
        .collect();
    let height = 40.0 + ROW_H * names.len() as f64;
    let mut svg = String::new();
    let _ = writeln!(
        svg,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{W}" height="{height}" viewBox="0 0 {W} {height}" font-family="sans-serif">"#
    );
    let _ = writeln!(svg, r##"<rect width="100%" height="100%" fill="#fff"/>"##);
    let _ = writeln!(
        svg,
        r#"<text x="{LEFT}" y="22" font-size="13">{} vs reference {} ({} remap): {}</text>"#,
        esc(&report.other),
        esc(&report.reference),
        report.method.name(),
        if report.pass { "PASS" } else { "FAIL" }
    );
    for (k, (field, cmp)) in mapped.fields.iter().zip(&report.fields).enumerate() {
        let r_all = reference
            .require_field(&field.name)
            .map_err(|e| Failure(e.to_string(), 2))?;
        let r: Vec<f64> = mapped.covered.iter().map(|&i| r_all[i]).collect();
        let o = &field.values;
        let d: Vec<f64> = o.iter().zip(&r).map(|(a, b)| a - b).collect();
        let top = 40.0 + ROW_H * k as f64;
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for v in r.iter().chain(o) {
            lo = lo.min(*v);
            hi = hi.max(*v);
        }
        let log = lo > 0.0 && hi / lo > 1e3;
        let (x_lo, x_hi) = (xs[0], xs[xs.len() - 1]);
        let ax = Axis::new(x_lo, x_hi, false, LEFT, W - RIGHT);
        let ay = Axis::new(lo, hi, log, top + MAIN_H, top + 10.0);
        frame(&mut svg, &ax, &ay, &field.name, None);
        polyline(
            &mut svg,
            &xs,
            &r,
            &ax,
            &ay,
            r##"stroke="#1f4e9e" stroke-width="2""##,
        );
        polyline(
            &mut svg,
            &xs,
            o,
            &ax,
            &ay,
            r##"stroke="#c0392b" stroke-width="1.3" stroke-dasharray="5,3""##,
        );
        // Legend.
        let lx = W - RIGHT - 230.0;
        let ly = top + 22.0;
        let _ = writeln!(
            svg,
            r##"<line x1="{lx}" y1="{ly}" x2="{}" y2="{ly}" stroke="#1f4e9e" stroke-width="2"/><text x="{}" y="{}" font-size="10">reference</text><line x1="{}" y1="{ly}" x2="{}" y2="{ly}" stroke="#c0392b" stroke-dasharray="5,3"/><text x="{}" y="{}" font-size="10">other ({})</text>"##,
            lx + 20.0,
            lx + 24.0,
            ly + 3.5,
            lx + 80.0,
            lx + 100.0,
            lx + 104.0,
            ly + 3.5,
            if cmp.pass { "pass" } else { "FAIL" }
        );
        let (mut dlo, mut dhi) = (0.0f64, 0.0f64);
        for v in &d {
            dlo = dlo.min(*v);
            dhi = dhi.max(*v);
        }
        let dtop = top + MAIN_H + GAP;
        let ady = Axis::new(dlo, dhi, false, dtop + DIFF_H, dtop);
        frame(&mut svg, &ax, &ady, "other − ref", Some("x"));
        polyline(
            &mut svg,
            &xs,
            &d,
            &ax,
            &ady,
            r##"stroke="#333" stroke-width="1""##,
        );
    }
    svg.push_str("</svg>\n");
    write_text_atomic(path, &svg)
}

/// Writes `text` to `path` through a temporary file in the same directory and a rename.
pub fn write_text_atomic(path: &Path, text: &str) -> Result<(), Failure> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path
        .file_name()
        .ok_or_else(|| Failure(format!("--plot {}: not a file name", path.display()), 2))?;
    let tmp = dir.join(format!(
        ".{}.tmp-{}",
        name.to_string_lossy(),
        std::process::id()
    ));
    let io = |e: std::io::Error| Failure(format!("cannot write {}: {e}", path.display()), 2);
    std::fs::write(&tmp, text).map_err(io)?;
    std::fs::rename(&tmp, path).map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        io(e)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn linear_ticks_are_round_and_inside() {
        let a = Axis::new(0.0, 1.0, false, 0.0, 100.0);
        let t = a.ticks();
        assert!(t.contains(&0.0) && t.contains(&1.0), "{t:?}");
        assert!(t.iter().all(|v| *v >= a.lo && *v <= a.hi));
    }

    #[test]
    fn log_axis_ticks_are_decades() {
        let a = Axis::new(1e-3, 1e3, true, 0.0, 100.0);
        let t = a.ticks();
        assert_eq!(t.first(), Some(&1e-3));
        assert!(t
            .iter()
            .all(|v| (v.log10() - v.log10().round()).abs() < 1e-12));
        assert!((a.px(1.0) - 50.0).abs() < 1e-9);
    }
}
