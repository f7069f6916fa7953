//! placeholder; see docs/design.md
