//! Placeholder writer until the cycle-file module lands.

use super::Cycle;

/// Write a cycle as TOML.
pub fn write_cycle_toml(c: &Cycle) -> String {
    format!("# {} steps\n", c.len())
}
