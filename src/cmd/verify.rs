//! `sluice verify`: the built-in checks against published results.

use crate::Failure;

/// Arguments of `sluice verify`.
#[derive(clap::Args)]
pub struct VerifyArgs {
    /// Only checks whose name contains this text.
    #[arg(long)]
    pub only: Option<String>,
    /// Print a JSON array instead of a table.
    #[arg(long)]
    pub json: bool,
}

/// Runs `sluice verify`.
pub fn run(a: VerifyArgs) -> Result<(), Failure> {
    cmd_verify(a.only.as_deref(), a.json)
}

fn cmd_verify(only: Option<&str>, json: bool) -> Result<(), Failure> {
    let checks = sluice_verify::select(only);
    if checks.is_empty() {
        let names: Vec<&str> = sluice_verify::all_checks().iter().map(|c| c.name).collect();
        let avail = if names.is_empty() {
            "(none registered)".to_string()
        } else {
            names.join(", ")
        };
        return Err(Failure(
            format!(
                "no check name contains `{}`; available: {avail}",
                only.unwrap_or("")
            ),
            2,
        ));
    }
    let results = sluice_verify::run_all(&checks);
    if json {
        println!("{}", serde_json::to_string_pretty(&results)?);
    } else {
        let head = [
            "name",
            "source",
            "measured",
            "expected",
            "tolerance",
            "pass",
        ];
        let rows: Vec<[String; 6]> = results
            .iter()
            .map(|r| {
                [
                    r.name.clone(),
                    r.source.clone(),
                    format!("{:.6e}", r.measured),
                    format!("{:.6e}", r.expected),
                    format!("{:.3e}", r.tolerance),
                    if r.pass { "pass".into() } else { "FAIL".into() },
                ]
            })
            .collect();
        let mut w = head.map(|h| h.chars().count());
        for r in &rows {
            for (k, c) in r.iter().enumerate() {
                w[k] = w[k].max(c.chars().count());
            }
        }
        let line = |cells: [&str; 6]| {
            let mut s = String::new();
            for (k, c) in cells.iter().enumerate() {
                let pad = w[k] - c.chars().count();
                if (2..5).contains(&k) {
                    s.push_str(&" ".repeat(pad));
                    s.push_str(c);
                } else {
                    s.push_str(c);
                    if k < 5 {
                        s.push_str(&" ".repeat(pad));
                    }
                }
                if k < 5 {
                    s.push_str("  ");
                }
            }
            s
        };
        println!("{}", line(head));
        for r in &rows {
            println!("{}", line([&r[0], &r[1], &r[2], &r[3], &r[4], &r[5]]));
        }
        let failed = results.iter().filter(|r| !r.pass).count();
        println!("{} passed, {} failed", results.len() - failed, failed);
    }
    let failed: Vec<&str> = results
        .iter()
        .filter(|r| !r.pass)
        .map(|r| r.name.as_str())
        .collect();
    if failed.is_empty() {
        Ok(())
    } else {
        Err(Failure(
            format!("{} check(s) failed: {}", failed.len(), failed.join(", ")),
            1,
        ))
    }
}
