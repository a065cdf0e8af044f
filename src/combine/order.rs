//! The step order of measured data, read from the export the acquisition ran: an export's
//! metadata says how its rows were ordered (`step_order`: `designed` or `drift`) and, for each
//! row, which step of the cycle file it is (`source_steps`). This module turns that into the
//! order [`super::apply_weights`] takes and checks every exported row against the cycle, so a
//! drift-reordered export, an export of another cycle or a hand-shuffled list is caught before
//! any data are combined.

use super::CombineError;
use crate::cycle::Cycle;
use crate::export::meta::ExportMeta;

/// Largest phase difference (turns, modulo 1) accepted between an exported row and its cycle
/// step: exports write shortest round-trip floats, so anything above rounding is a mismatch.
const PHASE_TOLERANCE_TURNS: f64 = 1e-9;

/// The data order of an export: `order[p]` is the cycle step on the export's row p.
///
/// `export` is the exported phase list read back (its fields are the experiment's, so fixed
/// fields the cycle omits appear with phase 0), `meta` its metadata. An export without
/// `source_steps` (older files) is taken in the designed order.
///
/// # Errors
/// [`CombineError::StepOrder`] when the row count, the source steps or a phase disagree with
/// the cycle, naming the row, the field and both phases.
pub fn order_from_export(
    cycle: &Cycle,
    export: &Cycle,
    meta: &ExportMeta,
) -> Result<Vec<usize>, CombineError> {
    let n = cycle.len();
    if export.len() != n {
        return Err(CombineError::StepOrder(format!(
            "the export has {} rows but the cycle has {n} steps: it was made from another cycle; export this cycle again",
            export.len()
        )));
    }
    let order: Vec<usize> = if meta.source_steps.is_empty() {
        (0..n).collect()
    } else {
        meta.source_steps.clone()
    };
    super::check_permutation(&order, n).map_err(|e| {
        CombineError::StepOrder(format!("the export's source_steps are damaged: {e}"))
    })?;
    let label = if meta.step_order.is_empty() {
        "designed"
    } else {
        meta.step_order.as_str()
    };
    for (j, field) in cycle.fields.iter().enumerate() {
        let Some(col) = export.fields.iter().position(|f| f == field) else {
            return Err(CombineError::StepOrder(format!(
                "the export has no column for the cycle's field `{field}` (export fields: {}); export this cycle for this experiment again",
                export.fields.join(", ")
            )));
        };
        for (p, &m) in order.iter().enumerate() {
            let want = cycle.steps[m][j].turns_f64();
            let got = export.steps[p][col].turns_f64();
            let d = (want - got).rem_euclid(1.0);
            if d.min(1.0 - d) > PHASE_TOLERANCE_TURNS {
                return Err(CombineError::StepOrder(format!(
                    "export row {p} (step order `{label}`, cycle step {m}) sets field `{field}` to {got} turn but cycle step {m} has {want} turn: the export does not belong to this cycle or its rows were reordered by hand; export the cycle again and acquire in the exported order"
                )));
            }
        }
    }
    Ok(order)
}
