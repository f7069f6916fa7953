//! One module per subcommand; each owns its clap arguments and its `run` function.

pub mod check;
pub mod compare;
pub mod compare_plot;
pub mod converge;
pub mod plot;
pub mod profile_io;
pub mod run;
pub mod study;
pub mod sweep;
pub mod verify;
