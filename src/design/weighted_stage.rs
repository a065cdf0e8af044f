//! The designer's search beyond lattice designs: weighted step sets on the grid with free
//! complex weights ([`crate::design::weighted`]), run below the lattice optimum, level by level
//! up to a step count and a number of step sets (never a clock: the same problem always gets
//! the same answer). It says over which class the final design is proven minimal.

use super::Prepared;
use crate::cycle::{Cycle, CycleMeta, CycleOutput, Phase, Weight, WeightSource};
use crate::design::lattice::Lattice;
use crate::design::weighted::{
    search_beyond, BeyondDesign, BeyondProblem, BeyondStop, MAX_BEYOND_STEPS,
};
use crate::model::Experiment;
use num_rational::Ratio;
use serde::Serialize;
use std::sync::atomic::AtomicBool;

/// What the beyond-lattice search did.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BeyondSummary {
    /// Grid searched, steps per turn per cycled field.
    pub grid: Vec<u32>,
    /// Largest step count asked for.
    pub max_steps: usize,
    /// Every weighted step set with at most this many steps on the grid fails (exact).
    pub exhaustive_up_to: usize,
    /// Step sets examined (through the origin: translates are equivalent).
    pub subsets_tested: u64,
    /// Step sets not settled by the compressed-column rank, decided by exact ranks.
    pub exact_decisions: u64,
    /// Steps of the shorter weighted design found, if any.
    pub found_steps: Option<usize>,
    /// Its noise efficiency (the best among the step sets of that length).
    pub noise_efficiency: Option<f64>,
    /// Step sets of that length (through the origin) that carry a design.
    pub designs_at_minimum: u64,
    /// The level not searched because the work limit was reached: `(steps, step sets)`.
    pub work_limit_at: Option<(usize, u64)>,
    /// True when the final design (weighted, or the lattice optimum if no shorter weighted
    /// set exists) is proven minimal over every step set on `grid`.
    pub minimal_on_grid: bool,
    /// A sentence for the report.
    pub note: String,
}

/// Search weighted step sets with fewer steps than the lattice optimum `lattice_steps`,
/// within `max_steps` steps and `step_sets` step sets.
pub fn search_below(
    prep: &Prepared,
    lattice: &Lattice,
    lattice_steps: u64,
    step_sets: u64,
    max_steps: usize,
    cancel: &AtomicBool,
) -> Option<(BeyondSummary, Option<BeyondDesign>)> {
    if step_sets == 0 || lattice_steps < 2 || max_steps == 0 {
        return None;
    }
    let p = &prep.problem;
    let grid: Vec<u32> = if p.grid.iter().all(|&g| g > 0) {
        p.grid.clone()
    } else {
        (0..p.dims)
            .map(|j| lattice.distinct_phases(j) as u32)
            .collect()
    };
    let mut summary = BeyondSummary {
        grid: grid.clone(),
        max_steps: 0,
        exhaustive_up_to: 0,
        subsets_tested: 0,
        exact_decisions: 0,
        found_steps: None,
        noise_efficiency: None,
        designs_at_minimum: 0,
        work_limit_at: None,
        minimal_on_grid: false,
        note: String::new(),
    };
    if p.outputs.iter().any(|o| o.kept.len() > 1) {
        summary.note = "not run: an output keeps several signatures together, which the weighted search does not handle".into();
        return Some((summary, None));
    }
    let n = max_steps
        .min((lattice_steps - 1) as usize)
        .min(MAX_BEYOND_STEPS);
    summary.max_steps = n;
    let problem = BeyondProblem {
        dims: p.dims,
        grid: grid.clone(),
        outputs: p
            .outputs
            .iter()
            .map(|o| (o.name.clone(), o.kept[0].clone()))
            .collect(),
        rejected: p.rejected.clone(),
        max_steps: n,
        max_step_sets: step_sets,
    };
    let out = match search_beyond(&problem, cancel) {
        Ok(out) => out,
        Err(e) => {
            summary.note = format!("not run: {e}");
            return Some((summary, None));
        }
    };
    summary.exhaustive_up_to = out.exhaustive_up_to;
    summary.subsets_tested = out.subsets_tested;
    summary.exact_decisions = out.exact_decisions;
    summary.found_steps = out.design.as_ref().map(|d| d.n);
    summary.noise_efficiency = out.design.as_ref().map(|d| d.noise_efficiency);
    summary.designs_at_minimum = out.designs_at_minimum;
    if let BeyondStop::WorkLimit { steps, step_sets } = out.stop {
        summary.work_limit_at = Some((steps, step_sets));
    }
    let below_lattice = out.exhaustive_up_to as u64 + 1 >= lattice_steps;
    summary.minimal_on_grid = out.design.is_some() || below_lattice;
    summary.note = note(&summary, &out.stop, lattice_steps);
    Some((summary, out.design))
}

/// The sentence for the report: what was found and what was proven, over which class.
fn note(s: &BeyondSummary, stop: &BeyondStop, lattice_steps: u64) -> String {
    let grid = &s.grid;
    let steps = |k: usize| super::report::steps_text(k as u64);
    match (s.found_steps, s.noise_efficiency) {
        (Some(k), Some(eff)) => format!(
            "a weighted design with {} exists on the grid {grid:?}, the best noise efficiency ({eff:.3}) among the {} step sets of that length through the origin that work; every step set on the grid with fewer steps fails (exhaustive, exact): minimal over all step sets on the grid {grid:?}",
            steps(k),
            s.designs_at_minimum
        ),
        _ if s.minimal_on_grid => format!(
            "no step set on the grid {grid:?} with at most {} works, whatever its weights ({} step sets through the origin, each ruled out exactly), so the {lattice_steps}-step lattice design is minimal over all step sets on the grid {grid:?}",
            steps(s.exhaustive_up_to),
            s.subsets_tested
        ),
        _ => {
            let why = match stop {
                BeyondStop::WorkLimit { steps: k, step_sets } => format!(
                    "; the {k}-step level ({step_sets} step sets) is beyond the work limit"
                ),
                BeyondStop::Cancelled => "; interrupted".into(),
                BeyondStop::Completed => String::new(),
            };
            format!(
                "no step set on the grid {grid:?} with at most {} works, whatever its weights ({} step sets through the origin, each ruled out exactly){why}; step sets with {} to {} steps were not searched",
                steps(s.exhaustive_up_to),
                s.subsets_tested,
                s.exhaustive_up_to + 1,
                lattice_steps - 1
            )
        }
    }
}

/// The cycle table of a weighted design: explicit exact weights per output.
pub fn weighted_cycle(
    exp: &Experiment,
    prep: &Prepared,
    d: &BeyondDesign,
    meta: CycleMeta,
) -> Cycle {
    let steps = d
        .phases
        .iter()
        .map(|row| {
            let mut out = vec![Phase::Exact(Ratio::from_integer(0)); exp.fields.len()];
            for (k, &j) in prep.cycled.iter().enumerate() {
                out[j] = Phase::Exact(row[k]);
            }
            out
        })
        .collect();
    let outputs = prep
        .problem
        .outputs
        .iter()
        .zip(&d.weights)
        .map(|(o, w)| CycleOutput {
            name: o.name.clone(),
            weights: w.iter().cloned().map(Weight::Exact).collect(),
            source: WeightSource::Explicit,
        })
        .collect();
    Cycle {
        fields: exp.field_names(),
        steps,
        outputs,
        meta,
    }
}
