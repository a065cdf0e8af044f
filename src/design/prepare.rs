//! Stage 1, the problem: a [`Selection`] (what to keep and cancel) turned into a lattice
//! problem over the cycled fields: which fields are stepped, which terms must be kept and which
//! cancelled, and which requests are impossible before any search (terms no phase cycle can
//! separate).

use super::{DesignOptions, Impossibility, PlanError};
use crate::design::lattice::{LatticeProblem, OutputSpec, MAX_DIMS};
use crate::model::{Detection, Experiment, PathwayClass, PhaseControl};
use crate::pathways::ResolvedSignal;
use crate::selection::Selection;
use crate::signature::Signature;
use std::collections::BTreeSet;

/// A design problem ready for the search, with the bookkeeping to map results back.
#[derive(Clone, Debug)]
pub struct Prepared {
    /// Experiment field indices stepped by the design, in order (the lattice coordinates).
    pub cycled: Vec<usize>,
    /// The field held at phase 0 by the global-phase freedom, if one was needed.
    pub fixed_by_global_phase: Option<usize>,
    /// The problem over the cycled fields.
    pub problem: LatticeProblem,
    /// The wanted outputs as resolved from the experiment.
    pub outputs: Vec<ResolvedSignal>,
    /// Every rejected signature over all fields.
    pub rejected: Vec<Signature>,
    /// Requests that no phase cycle can meet.
    pub impossible: Vec<Impossibility>,
    /// Number of experiment fields.
    pub field_count: usize,
}

/// Restrict a signature to the given fields.
pub fn restrict(b: &Signature, fields: &[usize]) -> Vec<i64> {
    fields.iter().map(|&j| b.0[j]).collect()
}

/// The fields a design steps and the field the global phase holds fixed (when every field
/// is cycled), refused when there are none or more than the lattice search supports. Cheap:
/// call it before building a [`Selection`] so the limit answers before any work.
pub fn cycled_fields(exp: &Experiment) -> Result<(Vec<usize>, Option<usize>), PlanError> {
    // Cycled fields; the global phase (every term has sum b = 0) lets one field stay fixed.
    let mut cycled: Vec<usize> = (0..exp.fields.len())
        .filter(|&j| exp.fields[j].phase == PhaseControl::Cycled)
        .collect();
    let any_fixed = cycled.len() < exp.fields.len();
    let fixed_by_global_phase = if !any_fixed && !cycled.is_empty() {
        Some(cycled.remove(0))
    } else {
        None
    };
    if cycled.is_empty() {
        return Err(PlanError::NothingCycled);
    }
    // Limits before work: the field count is known now, the rejection set is not built yet.
    if cycled.len() > MAX_DIMS {
        return Err(crate::error::ModelError::TooLarge {
            what: "the number of cycled fields (the global phase frees one)".into(),
            value: cycled.len() as u64,
            limit: MAX_DIMS as u64,
            hint: "hold more fields at a fixed phase (`phase = \"fixed\"`), e.g. pulses the shaper does not control".into(),
        }
        .into());
    }
    Ok((cycled, fixed_by_global_phase))
}

/// Build the problem.
pub fn prepare(sel: &Selection, opts: &DesignOptions) -> Result<Prepared, PlanError> {
    let exp = &sel.experiment;
    let (cycled, fixed_by_global_phase) = cycled_fields(exp)?;
    let outputs = sel.outputs.clone();
    if outputs.is_empty() {
        return Err(PlanError::NoSignals);
    }
    let rejected = sel.rejected_by_all();

    let mut impossible = Vec::new();
    for o in &outputs {
        for c in &o.contamination {
            impossible.push(Impossibility::Contaminated {
                output: o.name.clone(),
                kept: c.kept.clone(),
                class: c.class,
                via_conjugate: c.via_conjugate,
                explanation: contamination_text(exp, c.class, c.via_conjugate),
            });
        }
    }
    impossible.extend(fixed_field_refusals(
        exp,
        &cycled,
        fixed_by_global_phase,
        &outputs,
        &rejected,
    ));

    let grid = match &sel.grid {
        None => vec![0; cycled.len()],
        Some(g) => cycled.iter().map(|&j| g[j]).collect(),
    };
    let mut rej_c: Vec<Vec<i64>> = rejected.iter().map(|b| restrict(b, &cycled)).collect();
    rej_c.sort();
    rej_c.dedup();
    let kept_sets: Vec<OutputSpec> = outputs
        .iter()
        .map(|o| OutputSpec {
            name: o.name.clone(),
            kept: o.kept.iter().map(|k| restrict(k, &cycled)).collect(),
        })
        .collect();
    // A kept term of one output must not be cancelled as 'rejected' by itself.
    let all_kept: BTreeSet<Vec<i64>> = kept_sets.iter().flat_map(|o| o.kept.clone()).collect();
    rej_c.retain(|b| !all_kept.contains(b));
    let problem = LatticeProblem {
        dims: cycled.len(),
        grid,
        outputs: kept_sets,
        rejected: rej_c,
        max_steps: opts.max_steps,
        max_phases_per_field: opts.max_phases_per_field,
    };
    Ok(Prepared {
        cycled,
        fixed_by_global_phase,
        problem,
        outputs,
        rejected,
        impossible,
        field_count: exp.fields.len(),
    })
}

fn contamination_text(exp: &Experiment, class: PathwayClass, via_conjugate: bool) -> String {
    if via_conjugate && matches!(exp.detection, Detection::PumpProbe) {
        format!(
            "in pump-probe geometry the probe is its own local oscillator, so the complex conjugate of every {} pathway carries exactly this signature: the detected term is the sum of both whatever the phases, and no phase cycle on any grid can separate them. Keep rephasing and non-rephasing together (the absorptive spectrum), or separate them by other means: a non-collinear geometry with a separate LO (emission detection), Fourier filtering of the coherence-time data, or chopping",
            class.short()
        )
    } else if via_conjugate {
        format!("the complex conjugates of the {} pathways carry this signature; no phase cycle separates a term from the conjugate of another with the same signature. Use a detection that separates the conjugate (e.g. spectral interferometry with Fourier filtering) or keep both classes", class.short())
    } else {
        format!("{} pathways carry the same signature; no phase cycle can separate them. Use another handle: pulse order, intensity dependence, beam geometry or spectral filtering", class.short())
    }
}

/// Terms (rejected, or kept by another output) equal to a kept term on every cycled field: one
/// refusal per kept term for those equal on every field, and one naming the fixed fields on
/// which the others differ (cycling one of those is the remedy).
fn fixed_field_refusals(
    exp: &Experiment,
    cycled: &[usize],
    fixed_by_global_phase: Option<usize>,
    outputs: &[ResolvedSignal],
    rejected: &[Signature],
) -> Vec<Impossibility> {
    let mut found = Vec::new();
    for o in outputs {
        for kept in &o.kept {
            let t = restrict(kept, cycled);
            let others = rejected.iter().chain(
                outputs
                    .iter()
                    .filter(|x| x.name != o.name)
                    .flat_map(|x| &x.kept),
            );
            let (equal, differ): (Vec<Signature>, Vec<Signature>) = others
                .filter(|b| restrict(b, cycled) == t)
                .cloned()
                .partition(|b| b == kept);
            let fields: Vec<String> = (0..exp.fields.len())
                .filter(|j| !cycled.contains(j) && Some(*j) != fixed_by_global_phase)
                .filter(|&j| differ.iter().any(|b| b.0[j] != kept.0[j]))
                .map(|j| exp.fields[j].name.clone())
                .collect();
            for (rejected, fields) in [(equal, Vec::new()), (differ, fields)] {
                if !rejected.is_empty() {
                    found.push(Impossibility::FixedFields {
                        output: o.name.clone(),
                        kept: kept.clone(),
                        rejected,
                        fields,
                    });
                }
            }
        }
    }
    found
}
