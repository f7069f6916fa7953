//! Helpers shared by the end-to-end tests that run the `sluice` binary.

use std::path::Path;
use std::process::{Command, Output};

const BIN: &str = env!("CARGO_BIN_EXE_sluice");
/// The workspace root: the binary runs there and `problems/` lies below it.
pub const ROOT: &str = env!("CARGO_MANIFEST_DIR");

/// Runs `sluice` with `args` in the workspace root and returns its output.
pub fn sluice(args: &[&str]) -> Output {
    Command::new(BIN)
        .args(args)
        .current_dir(ROOT)
        .output()
        .expect("cannot start the sluice binary")
}

/// Bytes of a stream as text (lossy UTF-8).
pub fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

/// Path of the shipped deck `problems/<name>`.
#[allow(dead_code)] // not every test binary opens a shipped deck by name
pub fn problem(name: &str) -> String {
    Path::new(ROOT)
        .join("problems")
        .join(name)
        .display()
        .to_string()
}

/// Every shipped deck `problems/*.toml`, sorted by path.
#[allow(dead_code)] // not every test binary walks the problem library
pub fn problem_decks() -> Vec<std::path::PathBuf> {
    let mut decks: Vec<std::path::PathBuf> = std::fs::read_dir(Path::new(ROOT).join("problems"))
        .expect("problems/ is readable")
        .map(|e| e.expect("problems/ entry").path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .collect();
    decks.sort();
    decks
}
