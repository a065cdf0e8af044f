//! Turning an experiment and a design request into a design problem over the cycled fields:
//! which fields are stepped, which terms must be kept and which cancelled, and which requests
//! are impossible before any search (terms no phase cycle can separate).

use super::{DesignRequest, Impossibility, PlanError, RejectionSource};
use crate::agnostic::agnostic_set;
use crate::design::lattice::{LatticeProblem, OutputSpec, MAX_DIMS};
use crate::model::{Detection, Experiment, PathwayClass, PhaseControl};
use crate::pathways::{for_each_pathway, resolve_signals, ResolvedSignal, Scope};
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
    /// The rejection set actually used (NMR always uses the coherence pathways).
    pub source: RejectionSource,
}

/// Restrict a signature to the given fields.
pub fn restrict(b: &Signature, fields: &[usize]) -> Vec<i64> {
    fields.iter().map(|&j| b.0[j]).collect()
}

/// Build the problem.
pub fn prepare(exp: &Experiment, req: &DesignRequest) -> Result<Prepared, PlanError> {
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
    let outputs = resolve_signals(exp)?;
    if outputs.is_empty() {
        return Err(PlanError::NoSignals);
    }
    let wanted: Vec<Signature> = outputs.iter().flat_map(|o| o.kept.clone()).collect();
    let order = req.order.unwrap_or(exp.order);
    // NMR: the optical agnostic set does not apply (every term carries the receiver).
    let source = if matches!(exp.detection, Detection::Nmr { .. }) {
        RejectionSource::Pathways
    } else {
        req.rejection
    };
    let rejected: Vec<Signature> = match source {
        RejectionSource::Agnostic => agnostic_set(exp, order, &wanted, req.geometry)?,
        RejectionSource::Pathways => {
            let mut set = BTreeSet::new();
            let scope = if matches!(exp.detection, Detection::Nmr { .. }) {
                Scope::Signal
            } else {
                Scope::Through(order)
            };
            for_each_pathway(exp, scope, |p| {
                if !req.geometry || exp.is_phase_matched(&p.signature) {
                    set.insert(p.signature.clone());
                    if exp.detection.is_real() {
                        set.insert(p.signature.conjugate());
                    }
                }
            })?;
            set.into_iter().filter(|b| !wanted.contains(b)).collect()
        }
    };

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
    // Terms that differ from a kept one only on fixed fields.
    let fixed_names: Vec<String> = (0..exp.fields.len())
        .filter(|j| !cycled.contains(j) && Some(*j) != fixed_by_global_phase)
        .map(|j| exp.fields[j].name.clone())
        .collect();
    for o in &outputs {
        let t = restrict(&o.kept[0], &cycled);
        let others = rejected.iter().chain(
            outputs
                .iter()
                .filter(|x| x.name != o.name)
                .flat_map(|x| &x.kept),
        );
        for b in others {
            if restrict(b, &cycled) == t {
                impossible.push(Impossibility::FixedFields {
                    output: o.name.clone(),
                    kept: o.kept[0].clone(),
                    rejected: b.clone(),
                    fields: fixed_names.clone(),
                });
            }
        }
    }

    let grid = match &req.grid {
        None => vec![0; cycled.len()],
        Some(g) if g.len() == 1 => vec![g[0]; cycled.len()],
        Some(g) if g.len() == exp.fields.len() => cycled.iter().map(|&j| g[j]).collect(),
        Some(g) => {
            return Err(PlanError::BadGrid(format!(
                "--grid takes one value for every field or one per field ({} fields: {}); got {}",
                exp.fields.len(),
                exp.field_names().join(", "),
                g.len()
            )))
        }
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
        max_steps: req.max_steps,
        max_phases_per_field: req.max_phases_per_field,
    };
    Ok(Prepared {
        cycled,
        fixed_by_global_phase,
        problem,
        outputs,
        rejected,
        impossible,
        source,
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
