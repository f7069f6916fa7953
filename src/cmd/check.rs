//! `sluice check`: validate a deck and print derived quantities.

use crate::Failure;
use sluice_driver::check::check_deck;
use sluice_driver::deck::read_deck;
use std::path::{Path, PathBuf};

/// Arguments of `sluice check`.
#[derive(clap::Args)]
pub struct CheckArgs {
    /// The deck.
    pub deck: PathBuf,
    /// Override a deck value: key.path=value (repeatable).
    #[arg(long = "set", value_name = "KEY=VALUE")]
    pub set: Vec<String>,
}

/// Runs `sluice check`.
pub fn run(a: CheckArgs) -> Result<(), Failure> {
    cmd_check(&a.deck, &a.set)
}

fn cmd_check(deck_path: &Path, set: &[String]) -> Result<(), Failure> {
    let (deck, text) = read_deck(deck_path, set)?;
    let report = check_deck(&deck, &text)?;
    println!(
        "deck {} is valid (run `{}`, t_end = {:e} s)",
        deck_path.display(),
        deck.run.name,
        deck.run.t_end
    );
    println!("{report}");
    Ok(())
}
