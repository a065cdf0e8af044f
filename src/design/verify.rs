//! Stage: verification by the checker. The written cycle is checked against the same
//! [`Selection`], so what the design report claims (clean, first leak, terms cancelled, kept
//! values) is what `pathsieve check` finds.

use super::PlanError;
use crate::check::{check, CheckOptions};
use crate::cycle::Cycle;
use crate::selection::Selection;
use serde::Serialize;

/// What the checker says about the written cycle.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Verification {
    /// True when every output is clean through the order.
    pub clean: bool,
    /// True when every verdict is exact.
    pub exact: bool,
    /// Rejected terms checked per output (conjugates included).
    pub rejected_checked: Vec<usize>,
    /// Leaking rejected terms per output.
    pub leak_count: Vec<usize>,
    /// Lowest first-leak order over the outputs.
    pub first_leak_order: Option<u32>,
    /// Noise efficiency of each output's first kept term.
    pub noise_efficiency: Vec<f64>,
}

/// Check `cycle` for `sel`.
pub fn verify(sel: &Selection, cycle: &Cycle) -> Result<Verification, PlanError> {
    let r = check(sel, cycle, &CheckOptions::default()).map_err(PlanError::Check)?;
    Ok(Verification {
        clean: r.clean,
        exact: r.exact,
        rejected_checked: r.outputs.iter().map(|o| o.rejected_checked).collect(),
        leak_count: r.outputs.iter().map(|o| o.leak_count).collect(),
        first_leak_order: r.first_leak_order,
        noise_efficiency: r.outputs.iter().map(|o| o.noise_efficiency).collect(),
    })
}
