//! A cycle made ready for export, shared by `pathsieve export` and the Python bindings: the
//! exact check of the cycle (its verdict goes into the metadata), the outputs bound to the
//! experiment's wanted signals (a table without weight columns gets each signal's derived
//! weights), the rows laid out over the experiment's fields and put in the chosen order
//! (as designed, or drift-robust). Formats and file writing are the callers' business.

use super::phase_list::{ExportError, PhaseList};
use super::step_order::drift_order_for;
use crate::check::{bind_cycle, check, CheckError, CheckOptions, CheckReport, SnapPolicy};
use crate::cycle::{Cycle, CycleOutput};
use crate::selection::Selection;

/// The row order of an export.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum RowOrder {
    /// As in the cycle.
    #[default]
    Designed,
    /// Reordered against slow linear drift of the cancelled low-order backgrounds.
    Drift,
}

impl RowOrder {
    /// The name written in metadata (`step_order`).
    pub fn name(self) -> &'static str {
        match self {
            RowOrder::Designed => "designed",
            RowOrder::Drift => "drift",
        }
    }
}

/// Why a cycle could not be prepared for export.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlanError {
    /// The cycle does not fit the experiment (from the checker).
    #[error(transparent)]
    Check(#[from] CheckError),
    /// From laying out the rows.
    #[error(transparent)]
    Export(#[from] ExportError),
}

/// A cycle ready for export.
#[derive(Clone, Debug)]
pub struct ExportPlan {
    /// The rows, over the experiment's fields, in export order, with bound weights.
    pub list: PhaseList,
    /// The exact check of the cycle against the selection.
    pub report: CheckReport,
    /// Metadata notes: the check verdict and, for the drift order, its figure of merit.
    pub notes: Vec<String>,
}

/// Check `cycle` against `sel`, bind its outputs and lay out its rows in `order`.
///
/// # Errors
/// [`PlanError`] when the cycle does not fit the experiment or has no steps.
pub fn plan_export(
    sel: &Selection,
    cycle: &Cycle,
    order: RowOrder,
) -> Result<ExportPlan, PlanError> {
    let report = check(sel, cycle, &CheckOptions::default())?;
    let unsnapped = SnapPolicy {
        enabled: false,
        ..SnapPolicy::default()
    };
    let bound = bind_cycle(sel, cycle, &unsnapped)?;
    let mut cycle = cycle.clone();
    cycle.outputs = bound
        .outputs
        .iter()
        .map(|o| CycleOutput {
            name: o.name.clone(),
            weights: o.weights.clone(),
            source: o.source.clone(),
        })
        .collect();
    let mut list = PhaseList::from_cycle(&cycle)?.with_experiment_fields(&sel.experiment)?;
    let mut notes = vec![format!(
        "exact check at export: {} through order {}{}",
        if report.clean { "clean" } else { "LEAKS" },
        report.order,
        report
            .first_leak_order
            .map_or(String::new(), |k| format!(", first leak order {k}"))
    )];
    if order == RowOrder::Drift {
        let backgrounds: Vec<Vec<i64>> = sel.backgrounds().into_iter().map(|b| b.0).collect();
        let d = drift_order_for(&list.turns_f64(), &list.weights, &backgrounds);
        notes.push(format!(
            "drift-robust order: largest first moment of {} cancelled low-order backgrounds {:.4} -> {:.4} (per unit relative drift per step, relative to N sum|w|)",
            d.backgrounds, d.before, d.after
        ));
        list = list.reordered(&d.order)?;
    }
    Ok(ExportPlan {
        list,
        report,
        notes,
    })
}
