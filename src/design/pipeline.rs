//! The designer's pipeline: each stage a function with typed input and output, run in order
//! (see the module map in [`super`]). This file only wires them and fills the report.

use super::choice::{choose, ChoiceRule};
use super::lattice_stage::{lattice_search, ClassLayout, LatticeFound, LatticeStage};
use super::refusal::Refusal;
use super::report::{DesignKind, DesignReport};
use super::step_order::{float_weights, order_steps};
use super::to_cycle::lattice_cycle;
use super::verify::verify;
use super::weighted_stage::{weighted_below, weighted_without_lattice};
use super::yardsticks::cogwheel_yardstick;
use super::{prepare, DesignOptions, PlanError, Prepared};
use crate::cycle::{Cycle, CycleMeta};
use crate::design::lattice::{Lattice, SearchControl};
use crate::design::yardsticks::CogwheelScan;
use crate::selection::Selection;
use crate::signature::Signature;
use std::time::Instant;

/// Run the designer on a selection.
///
/// # Errors
/// [`PlanError`] for problems the designer cannot pose (no signals, nothing cycled, limits).
pub fn design(
    sel: &Selection,
    opts: &DesignOptions,
    ctl: &SearchControl,
) -> Result<DesignReport, PlanError> {
    let start = Instant::now();
    let prep = prepare(sel, opts)?;
    let mut report = DesignReport::new(sel, &prep);
    if !report.impossible.is_empty() {
        report.refusal = Some(Refusal::NoPhaseCycleAtAll);
        report.seconds = start.elapsed().as_secs_f64();
        return Ok(report);
    }
    let found = match lattice_search(&prep, opts, ctl)? {
        LatticeStage::Found(f) => *f,
        LatticeStage::Refused {
            refusal,
            causes,
            excluded_below,
            lattices_tested,
            cancelled,
        } => {
            report.impossible = causes;
            report.excluded_below = excluded_below;
            report.lattices_tested = lattices_tested;
            report.cancelled = cancelled;
            let wider = matches!(refusal, Refusal::NoLatticeDesign { .. }) && !cancelled;
            report.refusal = Some(refusal);
            if wider {
                if let Some(cycle) = weighted_without_lattice(sel, &prep, opts, ctl, &mut report) {
                    finish(sel, cycle, &mut report)?;
                }
            }
            report.seconds = start.elapsed().as_secs_f64();
            return Ok(report);
        }
    };
    let (lattice, rule) = choose(&found);
    record_lattice(&mut report, &found, &lattice, rule);
    let mut cycle = build_lattice_cycle(sel, &prep, &found, &lattice, &mut report)?;
    report.cogwheel = Some(cogwheel_yardstick_of(&found, &lattice, ctl));
    if let Some(w) = weighted_below(sel, &prep, &found, &lattice, opts, ctl, &mut report) {
        cycle = w;
    }
    finish(sel, cycle, &mut report)?;
    report.seconds = start.elapsed().as_secs_f64();
    Ok(report)
}

/// Last stage: the checker verifies the written cycle, and the report takes its verdict.
fn finish(sel: &Selection, cycle: Cycle, report: &mut DesignReport) -> Result<(), PlanError> {
    let v = verify(sel, &cycle)?;
    report.first_leak_order = v.first_leak_order;
    report.noise_efficiency = v.noise_efficiency.iter().copied().fold(1.0, f64::min);
    report.verified = Some(v);
    report.cycle = Some(cycle);
    Ok(())
}

/// Fill the report from the lattice stage and the choice.
fn record_lattice(r: &mut DesignReport, f: &LatticeFound, lattice: &Lattice, rule: ChoiceRule) {
    let d = &f.design;
    r.steps = Some(d.steps);
    r.proven_minimal = f.proven_minimal;
    r.cancelled = !f.proven_minimal;
    r.excluded_below = d.excluded_below;
    r.lattices_tested = d.lattices_tested;
    r.nested_steps = d.nested_bound;
    r.layout = Some(f.layout);
    r.choice = Some(rule);
    r.kind = Some(if let Some(c) = lattice.as_nested() {
        DesignKind::Nested { steps_per_field: c }
    } else if let Some((n, nu)) = lattice.as_cogwheel() {
        DesignKind::Cogwheel { n, winding: nu }
    } else {
        DesignKind::Lattice {
            basis: lattice.rows().to_vec(),
        }
    });
}

/// The signatures whose characters each output's weights sum: the reference alone for one
/// class, every kept signature for separate classes.
fn weight_signatures(prep: &Prepared, layout: ClassLayout) -> Vec<(String, Vec<Signature>)> {
    prep.outputs
        .iter()
        .map(|o| {
            let ts = match layout {
                ClassLayout::Shared => vec![o.kept[0].clone()],
                ClassLayout::Separate => o.kept.clone(),
            };
            (o.name.clone(), ts)
        })
        .collect()
}

/// Stages step order and cycle table for the chosen lattice.
fn build_lattice_cycle(
    sel: &Selection,
    prep: &Prepared,
    found: &LatticeFound,
    lattice: &Lattice,
    report: &mut DesignReport,
) -> Result<Cycle, PlanError> {
    let exp = &sel.experiment;
    let phases = lattice.dual_points();
    let sigs = weight_signatures(prep, found.layout);
    let restricted: Vec<Vec<Vec<i64>>> = sigs
        .iter()
        .map(|(_, ts)| {
            ts.iter()
                .map(|t| super::restrict(t, &prep.cycled))
                .collect()
        })
        .collect();
    let order = order_steps(sel, prep, &phases, &float_weights(&phases, &restricted));
    let grid = (0..exp.fields.len())
        .map(|j| match prep.cycled.iter().position(|&c| c == j) {
            Some(k) if prep.problem.grid[k] == 0 => lattice.distinct_phases(k) as u32,
            Some(k) => prep.problem.grid[k],
            None => 1,
        })
        .collect();
    let meta = CycleMeta {
        title: Some(format!("{} — designed cycle", exp.title)),
        grid: Some(grid),
        made_by: Some(format!(
            "pathsieve {} design (lattice search)",
            env!("CARGO_PKG_VERSION")
        )),
        experiment: Some(exp.title.clone()),
        notes: vec![],
        written: None,
    };
    let cycle = lattice_cycle(exp, &prep.cycled, &phases, &order.order, &sigs, meta)?;
    report.step_order = Some(order);
    Ok(cycle)
}

/// The cogwheel yardstick: from the lattice bound (`excluded_below`: the optimum itself when
/// proven, else the bound reached before an interruption) to the nested bound.
fn cogwheel_yardstick_of(
    found: &LatticeFound,
    chosen: &Lattice,
    ctl: &SearchControl,
) -> CogwheelScan {
    let d = &found.design;
    let to = d.nested_bound.unwrap_or(d.steps * 4).max(d.steps);
    let mut candidates = vec![chosen];
    candidates.extend(found.alternatives.iter());
    cogwheel_yardstick(
        &found.problem,
        &candidates,
        d.excluded_below,
        to,
        ctl.cancel,
    )
}
