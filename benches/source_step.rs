//! Bench placeholder; the owning engineer fills it.
fn main() {}
