//! Checks of this subsystem (filled in by its owner).

use crate::Check;

/// The checks of this module.
pub fn checks() -> Vec<Check> {
    Vec::new()
}
