//! Human-readable tables and JSON for compare and convergence results.

use crate::compare::{CompareReport, Norm, ToleranceKind};
use crate::convergence::{ConvergenceKind, ConvergenceSeries};
use serde::{Deserialize, Serialize};

/// Formats rows as a left-aligned table with two spaces between columns (no trailing blanks).
pub fn aligned_table(rows: &[Vec<String>]) -> String {
    let ncol = rows.iter().map(Vec::len).max().unwrap_or(0);
    let mut width = vec![0usize; ncol];
    for row in rows {
        for (w, cell) in width.iter_mut().zip(row) {
            *w = (*w).max(cell.chars().count());
        }
    }
    let mut out = String::new();
    for row in rows {
        let mut line = String::new();
        for (i, cell) in row.iter().enumerate() {
            if i > 0 {
                line.push_str("  ");
            }
            line.push_str(cell);
            let pad = width[i] - cell.chars().count();
            line.extend(std::iter::repeat_n(' ', pad));
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

fn sci(v: f64) -> String {
    format!("{v:.3e}")
}

fn opt_sci(v: Option<f64>) -> String {
    v.map_or_else(|| "n/a".to_string(), sci)
}

impl CompareReport {
    /// The aligned table: one row per field and norm; the tolerance and pass columns are
    /// filled on the row of the norm the tolerance applies to. Ends with the verdict line.
    pub fn to_table(&self) -> String {
        let mut out = format!(
            "compare {} against reference {}\nremap: {}, coverage: {:?}, compared {} of {} \
             reference cells, x in [{}, {}]\n\n",
            self.other,
            self.reference,
            self.method.name(),
            self.coverage,
            self.compared_cells,
            self.reference_cells,
            self.compared_range[0],
            self.compared_range[1]
        )
        .replace("Strict", "strict")
        .replace("Overlap", "overlap");
        let mut rows = vec![
            ["field", "norm", "absolute", "relative", "tolerance", "pass"]
                .map(String::from)
                .to_vec(),
        ];
        for f in &self.fields {
            for (k, norm) in Norm::ALL.into_iter().enumerate() {
                let governs = norm == f.tolerance.norm;
                let kind = match f.tolerance.kind {
                    ToleranceKind::Relative => "rel",
                    ToleranceKind::Absolute => "abs",
                };
                rows.push(vec![
                    if k == 0 {
                        f.field.clone()
                    } else {
                        String::new()
                    },
                    norm.name().into(),
                    sci(f.absolute.get(norm)),
                    opt_sci(f.relative.get(norm)),
                    if governs {
                        format!("{kind} <= {}", sci(f.tolerance.value))
                    } else {
                        String::new()
                    },
                    if governs {
                        if f.pass { "yes" } else { "NO" }.into()
                    } else {
                        String::new()
                    },
                ]);
            }
        }
        out.push_str(&aligned_table(&rows));
        for f in &self.fields {
            if let Some(note) = &f.note {
                out.push_str(&format!("note: {}: {note}\n", f.field));
            }
        }
        let passed = self.fields.iter().filter(|f| f.pass).count();
        out.push_str(&format!(
            "\nverdict: {} ({passed} of {} fields within tolerance)\n",
            if self.pass { "PASS" } else { "FAIL" },
            self.fields.len()
        ));
        out
    }

    /// Pretty-printed JSON of the whole report (field names as in the struct).
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
    }
}

/// A set of convergence series with an overall verdict.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConvergenceReport {
    /// The series, e.g. one per field and norm.
    pub series: Vec<ConvergenceSeries>,
    /// `Some(true)` when every series with an order check passes, `Some(false)` when one
    /// fails, `None` when no series has a check.
    pub pass: Option<bool>,
}

impl ConvergenceReport {
    /// Collects series and derives the verdict.
    pub fn new(series: Vec<ConvergenceSeries>) -> Self {
        let checks: Vec<bool> = series.iter().filter_map(|s| s.pass).collect();
        let pass = (!checks.is_empty()).then(|| checks.iter().all(|&p| p));
        ConvergenceReport { series, pass }
    }

    /// The aligned table: one block per series (N, error, observed order), then the fitted
    /// order and, where requested, the check.
    pub fn to_table(&self) -> String {
        let mut rows = vec![["series", "N", "error", "order"].map(String::from).to_vec()];
        for s in &self.series {
            for (i, r) in s.rows.iter().enumerate() {
                rows.push(vec![
                    if i == 0 {
                        s.label.clone()
                    } else {
                        String::new()
                    },
                    r.n.to_string(),
                    sci(r.error),
                    r.order.map_or_else(|| "-".into(), |p| format!("{p:.3}")),
                ]);
            }
            let mut fit = format!(
                "fitted order {}",
                s.fitted_order
                    .map_or_else(|| "n/a".into(), |p| format!("{p:.3}"))
            );
            if let (Some(e), Some(t), Some(p)) = (s.expected_order, s.order_tolerance, s.pass) {
                fit.push_str(&format!(
                    " (expected >= {:.3}: {})",
                    e - t,
                    if p { "pass" } else { "FAIL" }
                ));
            }
            if let Some(est) = s.richardson_error_estimate {
                fit.push_str(&format!(
                    "; Richardson error estimate of the finest {}",
                    sci(est)
                ));
            }
            if s.kind == ConvergenceKind::SelfConvergence {
                fit.push_str(
                    "\n  (self-convergence: each error is the difference between the run at N \
                     and the next finer run, measured on the N grid)",
                );
            }
            rows.push(vec![String::new(), fit]);
        }
        // The fitted-order line would widen the N column: print it after the table instead.
        let mut body = Vec::new();
        let mut notes = Vec::new();
        for row in rows {
            if row.len() == 2 {
                notes.push(row[1].clone());
                body.push(None);
            } else {
                body.push(Some(row));
            }
        }
        let table_rows: Vec<Vec<String>> = body.iter().flatten().cloned().collect();
        let table = aligned_table(&table_rows);
        let mut lines = table.lines();
        let mut out = String::new();
        let mut notes = notes.into_iter();
        for row in &body {
            match row {
                Some(_) => {
                    out.push_str(lines.next().unwrap_or(""));
                    out.push('\n');
                }
                None => {
                    out.push_str("  ");
                    out.push_str(&notes.next().unwrap_or_default());
                    out.push('\n');
                }
            }
        }
        out.push_str(&format!(
            "\nverdict: {}\n",
            match self.pass {
                Some(true) => "PASS",
                Some(false) => "FAIL",
                None => "no order check requested",
            }
        ));
        out
    }

    /// Pretty-printed JSON of the whole report.
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"))
    }
}
