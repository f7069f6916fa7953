//! Readers for text profiles: CSV and whitespace-separated columns.
//!
//! Format accepted (strict):
//! * blank lines are skipped; lines whose first non-blank character is `#` are comments;
//! * column names come from a header: the first non-comment line when it is not numeric, or
//!   else the last comment line before the first data line (with the `#` removed) when it has
//!   as many names as the data has columns (as written e.g. by `numpy.savetxt` or gnuplot-style
//!   exports); alternatively an explicit `columns` mapping `x=1,density=3` (1-based) names the
//!   columns when there is no header (a non-numeric first line is then skipped as a header);
//! * separator: a comma when the first line of data (or a non-comment header) contains one,
//!   whitespace otherwise (configurable);
//! * numbers in any form Rust's `f64` parser accepts, plus a Fortran `D` exponent (`1.5D-03`);
//!   `NaN` and infinities are rejected;
//! * every data row has the same number of columns; the coordinate column (default `x`) is
//!   strictly increasing (or sorted on request, duplicates are always an error).

use crate::error::{AnalysisError, Result};
use crate::profile::{Profile, Sampling};
use std::path::Path;

/// Column separator of a text profile.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Delimiter {
    /// Comma if the first header/data line contains one, whitespace otherwise.
    #[default]
    Auto,
    /// Comma-separated values (fields are trimmed).
    Comma,
    /// Runs of spaces or tabs.
    Whitespace,
}

/// How to read a text profile.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadOptions {
    /// Name of the coordinate column (default `x`).
    pub coordinate: String,
    /// Explicit `(name, 1-based column)` mapping for files without a header; only the mapped
    /// columns are read. See [`parse_column_map`].
    pub columns: Option<Vec<(String, usize)>>,
    /// Column separator.
    pub delimiter: Delimiter,
    /// Whether values are cell averages or point samples (default: cell averages).
    pub sampling: Sampling,
    /// Optional names of the lower and upper cell-edge columns (e.g. `("x_lo", "x_hi")`); the
    /// edges must be contiguous (upper edge of a cell = lower edge of the next).
    pub edges: Option<(String, String)>,
    /// Sort rows by the coordinate instead of rejecting a non-increasing coordinate column.
    pub sort: bool,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            coordinate: "x".into(),
            columns: None,
            delimiter: Delimiter::Auto,
            sampling: Sampling::CellAverage,
            edges: None,
            sort: false,
        }
    }
}

/// Parses a column mapping such as `x=1,density=3` (1-based column numbers).
pub fn parse_column_map(spec: &str) -> Result<Vec<(String, usize)>> {
    let bad = |allowed: &str| AnalysisError::InvalidOption {
        key: "columns".into(),
        value: spec.into(),
        allowed: allowed.into(),
    };
    let mut out: Vec<(String, usize)> = Vec::new();
    for entry in spec.split(',') {
        let entry = entry.trim();
        if entry.is_empty() {
            return Err(bad(
                "a comma-separated list of NAME=COLUMN, e.g. x=1,density=3 \
                            (found an empty entry)",
            ));
        }
        let Some((name, col)) = entry.split_once('=') else {
            return Err(bad(&format!(
                "entries of the form NAME=COLUMN, e.g. x=1,density=3 (entry `{entry}` has no `=`)"
            )));
        };
        let name = name.trim();
        if name.is_empty() {
            return Err(bad(&format!("a column name before `=` (entry `{entry}`)")));
        }
        let col: usize = col.trim().parse().map_err(|_| {
            bad(&format!(
                "a positive integer column number after `=` (entry `{entry}`)"
            ))
        })?;
        if col == 0 {
            return Err(bad(&format!("column numbers start at 1 (entry `{entry}`)")));
        }
        if out.iter().any(|(n, _)| n == name) {
            return Err(bad(&format!("each name once (`{name}` appears twice)")));
        }
        if let Some((other, _)) = out.iter().find(|(_, c)| *c == col) {
            return Err(bad(&format!(
                "each column once (column {col} is mapped to `{other}` and `{name}`)"
            )));
        }
        out.push((name.to_string(), col));
    }
    Ok(out)
}

/// Reads a text profile from a file. Errors name the file, the line and the column.
pub fn read_profile(path: impl AsRef<Path>, options: &ReadOptions) -> Result<Profile> {
    let path = path.as_ref();
    let name = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| AnalysisError::Io {
        file: name.clone(),
        message: e.to_string(),
    })?;
    parse_profile(&text, &name, options)
}

fn parse_number(token: &str) -> std::result::Result<f64, String> {
    let parsed = token.parse::<f64>().or_else(|_| {
        // Fortran double-precision exponent: 1.5D-03.
        if token.contains(['D', 'd']) && !token.contains(['e', 'E']) {
            token.replace(['D', 'd'], "e").parse::<f64>()
        } else {
            token.parse::<f64>()
        }
    });
    match parsed {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(v) => Err(format!(
            "value `{token}` is {v}: values must be finite numbers"
        )),
        Err(_) if token.is_empty() => Err("empty value: expected a number".into()),
        Err(_) => Err(format!("expected a number, found `{token}`")),
    }
}

fn is_numeric(token: &str) -> bool {
    parse_number(token).is_ok()
        || matches!(
            token.to_ascii_lowercase().as_str(),
            "nan" | "inf" | "-inf" | "+inf" | "infinity" | "-infinity" | "+nan" | "-nan"
        )
}

fn split(line: &str, delimiter: Delimiter) -> Vec<&str> {
    match delimiter {
        Delimiter::Comma => line.split(',').map(str::trim).collect(),
        Delimiter::Whitespace | Delimiter::Auto => line.split_whitespace().collect(),
    }
}

fn clean_name(token: &str) -> String {
    let t = token.trim();
    let t = t
        .strip_prefix('"')
        .and_then(|s| s.strip_suffix('"'))
        .unwrap_or(t);
    t.trim().to_string()
}

/// Parses a text profile held in memory; `file` names it in error messages.
pub fn parse_profile(text: &str, file: &str, options: &ReadOptions) -> Result<Profile> {
    let perr = |line: usize, message: String| AnalysisError::Parse {
        file: file.into(),
        line,
        message,
    };
    // Classify lines.
    let mut last_comment: Option<(usize, &str)> = None;
    let mut header_comment: Option<(usize, &str)> = None;
    let mut content: Vec<(usize, &str)> = Vec::new();
    for (i, raw) in text.lines().enumerate() {
        let line = raw.trim();
        if line.is_empty() {
            continue;
        }
        if let Some(rest) = line.strip_prefix('#') {
            if content.is_empty() {
                last_comment = Some((i + 1, rest));
            }
            continue;
        }
        if content.is_empty() {
            header_comment = last_comment;
        }
        content.push((i + 1, line));
    }
    if content.is_empty() {
        return Err(AnalysisError::Profile {
            file: file.into(),
            message: "no data rows (only blank or `#` comment lines)".into(),
        });
    }
    let (first_no, first) = content[0];
    let delimiter = match options.delimiter {
        Delimiter::Auto if first.contains(',') => Delimiter::Comma,
        Delimiter::Auto => Delimiter::Whitespace,
        d => d,
    };
    let first_tokens = split(first, delimiter);
    let first_is_header = first_tokens.iter().any(|t| !is_numeric(t));

    // Resolve the column names: Vec<(name, 0-based index)>, plus where data starts.
    let (names, data_start, header_desc): (Vec<(String, usize)>, usize, String) =
        if let Some(map) = &options.columns {
            let start = if first_tokens.iter().all(|t| !is_numeric(t)) {
                1
            } else {
                0
            };
            (
                map.iter().map(|(n, c)| (n.clone(), c - 1)).collect(),
                start,
                "the `columns` mapping".into(),
            )
        } else if first_is_header {
            let names: Vec<String> = first_tokens.iter().map(|t| clean_name(t)).collect();
            (
                names.into_iter().enumerate().map(|(i, n)| (n, i)).collect(),
                1,
                format!("the header on line {first_no}"),
            )
        } else {
            // Numeric first line: look for a `#` header just above the data.
            let ncol = first_tokens.len();
            // The comment header may use either separator (`# x density` above CSV data).
            let candidate = header_comment.and_then(|(no, rest)| {
                [delimiter, Delimiter::Whitespace, Delimiter::Comma]
                    .into_iter()
                    .map(|d| {
                        split(rest.trim(), d)
                            .iter()
                            .map(|t| clean_name(t))
                            .filter(|t| !t.is_empty())
                            .collect::<Vec<String>>()
                    })
                    .find(|toks| toks.len() == ncol && toks.iter().any(|t| !is_numeric(t)))
                    .map(|toks| (no, toks))
            });
            match candidate {
                Some((no, toks)) => (
                    toks.into_iter().enumerate().map(|(i, n)| (n, i)).collect(),
                    0,
                    format!("the `#` header on line {no}"),
                ),
                None => {
                    return Err(perr(
                        first_no,
                        format!(
                            "no header: the first line is numeric data ({ncol} columns) and no \
                             `#` comment line just above it has {ncol} column names; add a \
                             header line such as `x density pressure`, or give a `columns` \
                             mapping such as x=1,density=3"
                        ),
                    ))
                }
            }
        };
    // Header checks.
    for (i, (n, _)) in names.iter().enumerate() {
        if n.is_empty() {
            return Err(perr(
                first_no,
                format!("column {} of {header_desc} has an empty name", i + 1),
            ));
        }
        if names[..i].iter().any(|(m, _)| m == n) {
            return Err(perr(
                first_no,
                format!("column name `{n}` appears twice in {header_desc}: names must be unique"),
            ));
        }
    }
    let find = |key: &str, wanted: &str| -> Result<usize> {
        names
            .iter()
            .position(|(n, _)| n == wanted)
            .ok_or_else(|| AnalysisError::Profile {
                file: file.into(),
                message: format!(
                    "no {key} column `{wanted}` in {header_desc}; columns are: {}",
                    names
                        .iter()
                        .map(|(n, _)| n.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            })
    };
    let coord = find("coordinate", &options.coordinate)?;
    let edge_cols = match &options.edges {
        Some((lo, hi)) => Some((find("lower-edge", lo)?, find("upper-edge", hi)?)),
        None => None,
    };

    // Data rows.
    let rows = &content[data_start..];
    if rows.is_empty() {
        return Err(AnalysisError::Profile {
            file: file.into(),
            message: format!("{header_desc} is followed by no data rows"),
        });
    }
    let expected_cols = if options.columns.is_some() {
        split(rows[0].1, delimiter).len()
    } else {
        names.len()
    };
    let max_index = names.iter().map(|(_, c)| *c).max().unwrap_or(0);
    let mut table: Vec<Vec<f64>> = vec![Vec::with_capacity(rows.len()); names.len()];
    let mut line_of: Vec<usize> = Vec::with_capacity(rows.len());
    for &(no, line) in rows {
        let toks = split(line, delimiter);
        if toks.len() != expected_cols {
            let what = if options.columns.is_some() {
                format!("as on the first data line {}", rows[0].0)
            } else {
                header_desc.clone()
            };
            return Err(perr(
                no,
                format!(
                    "ragged row: {} columns, expected {expected_cols} ({what})",
                    toks.len()
                ),
            ));
        }
        if max_index >= toks.len() {
            return Err(perr(
                no,
                format!(
                    "{} columns, but the `columns` mapping uses column {}",
                    toks.len(),
                    max_index + 1
                ),
            ));
        }
        for (k, (name, c)) in names.iter().enumerate() {
            let v = parse_number(toks[*c])
                .map_err(|m| perr(no, format!("column {} (`{name}`): {m}", c + 1)))?;
            table[k].push(v);
        }
        line_of.push(no);
    }

    // Ordering of the coordinate.
    let mut order: Vec<usize> = (0..line_of.len()).collect();
    if options.sort {
        order.sort_by(|&a, &b| table[coord][a].total_cmp(&table[coord][b]));
    }
    for w in order.windows(2) {
        let (a, b) = (w[0], w[1]);
        let (xa, xb) = (table[coord][a], table[coord][b]);
        let cname = &options.coordinate;
        if xb == xa {
            return Err(perr(
                line_of[b],
                format!(
                    "duplicate coordinate `{cname}` = {xb} (also on line {}): coordinates must \
                     be strictly increasing",
                    line_of[a]
                ),
            ));
        }
        if xb < xa {
            return Err(perr(
                line_of[b],
                format!(
                    "coordinate `{cname}` = {xb} is not greater than {xa} on line {}: \
                     coordinates must be strictly increasing (sort the export, or enable \
                     sorting)",
                    line_of[a]
                ),
            ));
        }
    }
    let take = |k: usize| -> Vec<f64> { order.iter().map(|&i| table[k][i]).collect() };
    let centres = take(coord);
    let edges = match edge_cols {
        None => None,
        Some((lo, hi)) => {
            let (l, h) = (take(lo), take(hi));
            let n = l.len();
            for i in 0..n {
                if l[i] >= h[i] {
                    return Err(perr(
                        line_of[order[i]],
                        format!(
                            "cell edges [{}, {}] are not increasing (lower-edge column must be \
                             below the upper-edge column)",
                            l[i], h[i]
                        ),
                    ));
                }
                if i + 1 < n {
                    let gap = (l[i + 1] - h[i]).abs();
                    let scale = (h[i] - l[i]).abs().max(h[i + 1] - l[i + 1]);
                    if gap > 1e-9 * scale {
                        return Err(perr(
                            line_of[order[i + 1]],
                            format!(
                                "lower edge {} does not match the upper edge {} of the previous \
                                 cell: cells must be contiguous",
                                l[i + 1],
                                h[i]
                            ),
                        ));
                    }
                }
            }
            let mut e = l;
            e.push(h[n - 1]);
            Some(e)
        }
    };
    let mut profile = Profile::new(file, options.sampling, centres, edges)?;
    for (k, (name, _)) in names.iter().enumerate() {
        let is_edge = edge_cols.is_some_and(|(lo, hi)| k == lo || k == hi);
        if k == coord || is_edge {
            continue;
        }
        profile.add_field(name.clone(), take(k))?;
    }
    Ok(profile)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(text: &str) -> Result<Profile> {
        parse_profile(text, "run.csv", &ReadOptions::default())
    }

    fn err(text: &str, options: &ReadOptions) -> String {
        parse_profile(text, "run.csv", options)
            .unwrap_err()
            .to_string()
    }

    #[test]
    fn csv_with_header_and_comments() {
        let p = parse("# exported line-out\n\nx, density ,\"pressure\"\n0.25,1,2\n0.75,3,4.5e-1\n")
            .unwrap();
        assert_eq!(p.centres(), &[0.25, 0.75]);
        assert_eq!(p.field_names(), vec!["density", "pressure"]);
        assert_eq!(p.field("pressure").unwrap(), &[2.0, 0.45]);
        assert_eq!(p.sampling(), Sampling::CellAverage);
    }

    #[test]
    fn whitespace_columns_with_hash_header_and_fortran_exponent() {
        let p = parse("# run 7\n#  x   density\n0.5\t1.5D-03\n1.5   2.0d+00\n").unwrap();
        assert_eq!(p.field("density").unwrap(), &[1.5e-3, 2.0]);
    }

    #[test]
    fn hash_header_with_a_different_separator_than_the_data() {
        let p = parse("# x density\n0.5,1\n1.5,2\n").unwrap();
        assert_eq!(p.field("density").unwrap(), &[1.0, 2.0]);
        let p = parse("#x,density\n0.5 1\n1.5 2\n").unwrap();
        assert_eq!(p.field("density").unwrap(), &[1.0, 2.0]);
        // A comment with the wrong number of names is not a header.
        assert!(parse("# x density pressure\n0.5 1\n")
            .unwrap_err()
            .to_string()
            .contains("no `#` comment line just above it has 2 column names"));
    }

    #[test]
    fn explicit_column_mapping_without_header() {
        let opts = ReadOptions {
            columns: Some(parse_column_map("x=1, density=3").unwrap()),
            sampling: Sampling::PointSample,
            ..ReadOptions::default()
        };
        let p = parse_profile("0 9 1\n1 9 2\n2 9 4\n", "f.dat", &opts).unwrap();
        assert_eq!(p.field_names(), vec!["density"]);
        assert_eq!(p.field("density").unwrap(), &[1.0, 2.0, 4.0]);
        // A header line is skipped when a mapping is given.
        let p = parse_profile("a b c\n0 9 1\n1 9 2\n", "f.dat", &opts).unwrap();
        assert_eq!(p.len(), 2);
        // Mapping beyond the row width.
        let opts = ReadOptions {
            columns: Some(parse_column_map("x=1,density=4").unwrap()),
            ..ReadOptions::default()
        };
        assert_eq!(
            err("0 9 1\n", &opts),
            "run.csv, line 1: 3 columns, but the `columns` mapping uses column 4"
        );
    }

    #[test]
    fn column_map_errors() {
        let e = |s: &str| parse_column_map(s).unwrap_err().to_string();
        assert!(
            e("x=0").contains("column numbers start at 1 (entry `x=0`)"),
            "{}",
            e("x=0")
        );
        assert!(e("x").contains("entry `x` has no `=`"));
        assert!(e("x=1,,y=2").contains("empty entry"));
        assert!(e("x=a").contains("positive integer column number"));
        assert!(e("x=1,x=2").contains("`x` appears twice"));
        assert!(e("x=1,y=1").contains("column 1 is mapped to `x` and `y`"));
        assert!(e("=1").contains("a column name before `=`"));
        assert_eq!(
            parse_column_map(" x = 2 ").unwrap(),
            vec![("x".to_string(), 2)]
        );
    }

    #[test]
    fn reader_error_messages_name_file_line_and_column() {
        let d = ReadOptions::default();
        assert_eq!(
            err("x,density\n0,1\n1,2,3\n", &d),
            "run.csv, line 3: ragged row: 3 columns, expected 2 (the header on line 1)"
        );
        assert_eq!(
            err("x,density\n0,1\n1,abc\n", &d),
            "run.csv, line 3: column 2 (`density`): expected a number, found `abc`"
        );
        assert_eq!(
            err("x,density\n0,1\n1,NaN\n", &d),
            "run.csv, line 3: column 2 (`density`): value `NaN` is NaN: values must be finite \
             numbers"
        );
        assert_eq!(
            err("x,density\n0,1\n1,\n", &d),
            "run.csv, line 3: column 2 (`density`): empty value: expected a number"
        );
        assert_eq!(
            err("x density\n0 1\n2 1\n1 1\n", &d),
            "run.csv, line 4: coordinate `x` = 1 is not greater than 2 on line 3: coordinates \
             must be strictly increasing (sort the export, or enable sorting)"
        );
        assert_eq!(
            err("x density\n0 1\n0 2\n", &d),
            "run.csv, line 3: duplicate coordinate `x` = 0 (also on line 2): coordinates must \
             be strictly increasing"
        );
        assert_eq!(
            err("r density\n0 1\n", &d),
            "run.csv: no coordinate column `x` in the header on line 1; columns are: r, density"
        );
        assert!(err("0 1\n1 2\n", &d).starts_with("run.csv, line 1: no header"));
        assert_eq!(
            err("# nothing\n\n", &d),
            "run.csv: no data rows (only blank or `#` comment lines)"
        );
        assert_eq!(
            err("x density\n", &d),
            "run.csv: the header on line 1 is followed by no data rows"
        );
        assert!(err("x x\n0 1\n", &d).contains("column name `x` appears twice"));
    }

    #[test]
    fn unsorted_rows_can_be_sorted_but_duplicates_stay_errors() {
        let opts = ReadOptions {
            sort: true,
            ..ReadOptions::default()
        };
        let p = parse_profile("x y\n2 20\n0 0\n1 10\n", "s", &opts).unwrap();
        assert_eq!(p.centres(), &[0.0, 1.0, 2.0]);
        assert_eq!(p.field("y").unwrap(), &[0.0, 10.0, 20.0]);
        let e = parse_profile("x y\n2 20\n0 0\n2 10\n", "s", &opts)
            .unwrap_err()
            .to_string();
        assert!(e.contains("duplicate coordinate `x` = 2"), "{e}");
    }

    #[test]
    fn edge_columns_and_custom_coordinate() {
        let opts = ReadOptions {
            coordinate: "z".into(),
            edges: Some(("zlo".into(), "zhi".into())),
            ..ReadOptions::default()
        };
        let p = parse_profile("zlo zhi z rho\n0 1 0.5 1\n1 3 2 2\n", "e", &opts).unwrap();
        assert_eq!(p.edges().unwrap(), &[0.0, 1.0, 3.0]);
        assert_eq!(p.field_names(), vec!["rho"]);
        let e = parse_profile("zlo zhi z rho\n0 1 0.5 1\n1.5 3 2 2\n", "e", &opts)
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("e, line 3: lower edge 1.5 does not match the upper edge 1"),
            "{e}"
        );
        let e = parse_profile("zlo zhi z rho\n1 0 0.5 1\n", "e", &opts)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("line 2: cell edges [1, 0] are not increasing"),
            "{e}"
        );
        let e = parse_profile("zlo z rho\n1 0 0.5\n", "e", &opts)
            .unwrap_err()
            .to_string();
        assert!(e.contains("no upper-edge column `zhi`"), "{e}");
    }

    #[test]
    fn single_row_and_missing_file() {
        let p = parse("x rho\n0.5 3\n").unwrap();
        assert_eq!(p.len(), 1);
        let e = read_profile("/nonexistent/sluice-analysis.csv", &ReadOptions::default())
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("/nonexistent/sluice-analysis.csv: cannot read:"),
            "{e}"
        );
    }
}
