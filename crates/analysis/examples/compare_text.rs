//! Compares two text profiles and prints the table (or JSON with `--json`).
//!
//! `cargo run -p sluice-analysis --example compare_text -- REFERENCE OTHER [--json]`
//!
//! Both files are read as cell averages with a header naming the columns and `x` as the
//! coordinate; every field present in both is compared with the default tolerance (relative
//! L1 error <= 1e-2). Without arguments, a built-in scenario is used: a smooth bump sampled at
//! the centres of 64 cells (read as cell averages, a second-order approximation) against the
//! same bump on 96 cells with the density 0.3 % high.

use sluice_analysis::{compare, parse_profile, read_profile, CompareOptions, ReadOptions};

fn bump_csv(n: usize, perturbation: f64) -> String {
    let mut s = String::from("# x density cr_energy_density\n");
    for i in 0..n {
        let x = (i as f64 + 0.5) / n as f64;
        let rho = 1.0 + 0.5 * (-((x - 0.5) / 0.1).powi(2)).exp();
        let ecr = 2.0 + (std::f64::consts::PI * x).sin();
        s.push_str(&format!(
            "{x:.17e} {:.17e} {:.17e}\n",
            rho * (1.0 + perturbation),
            ecr
        ));
    }
    s
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let json = args.iter().any(|a| a == "--json");
    let files: Vec<&String> = args.iter().filter(|a| !a.starts_with("--")).collect();
    let opts = ReadOptions::default();
    let result = if files.len() == 2 {
        read_profile(files[0], &opts).and_then(|r| {
            read_profile(files[1], &opts).and_then(|o| compare(&r, &o, &CompareOptions::default()))
        })
    } else {
        parse_profile(&bump_csv(64, 0.0), "reference.txt", &opts).and_then(|r| {
            parse_profile(&bump_csv(96, 3e-3), "other.txt", &opts)
                .and_then(|o| compare(&r, &o, &CompareOptions::default()))
        })
    };
    match result {
        Ok(report) if json => println!("{}", report.to_json()),
        Ok(report) => print!("{}", report.to_table()),
        Err(e) => {
            eprintln!("error: {e}");
            std::process::exit(2);
        }
    }
}
