//! One module per subcommand; each owns its clap arguments and its `run` function.

pub mod check;
pub mod compare;
pub mod converge;
pub mod plot;
pub mod run;
pub mod study;
pub mod sweep;
pub mod verify;
