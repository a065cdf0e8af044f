//! The designer's search beyond lattice designs: weighted step sets on the grid with free
//! complex weights ([`crate::design::weighted`]), run below the lattice optimum to see whether a
//! shorter cycle exists, with its exhaustive certificate reported as such.

use super::Prepared;
use crate::cycle::{Cycle, CycleMeta, CycleOutput, Phase, Weight, WeightSource};
use crate::design::lattice::Lattice;
use crate::design::weighted::{search_beyond, BeyondDesign, BeyondError, BeyondProblem};
use crate::model::Experiment;
use num_rational::Ratio;
use serde::Serialize;
use std::sync::atomic::AtomicBool;
use std::time::Duration;

/// What the beyond-lattice search did.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BeyondSummary {
    /// Grid searched, steps per turn per cycled field.
    pub grid: Vec<u32>,
    /// Largest step count tried.
    pub max_steps: usize,
    /// Every weighted step set with at most this many steps on the grid fails.
    pub exhaustive_up_to: usize,
    /// True when every failing step set was proven so exactly.
    pub exact_certificate: bool,
    /// Step sets examined.
    pub subsets_tested: u64,
    /// Steps of the shorter weighted design found, if any.
    pub found_steps: Option<usize>,
    /// Its noise efficiency.
    pub noise_efficiency: Option<f64>,
    /// True when the time budget ran out.
    pub stopped_by_time: bool,
    /// A sentence for the report.
    pub note: String,
}

/// Search weighted step sets with fewer steps than the lattice optimum `lattice_steps`.
pub fn search_below(
    prep: &Prepared,
    lattice: &Lattice,
    lattice_steps: u64,
    budget: Duration,
    max_steps: usize,
    cancel: &AtomicBool,
) -> Option<(BeyondSummary, Option<BeyondDesign>)> {
    if budget.is_zero() || lattice_steps < 2 || max_steps == 0 {
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
    let skip = |note: String| {
        Some((
            BeyondSummary {
                grid: grid.clone(),
                max_steps: 0,
                exhaustive_up_to: 0,
                exact_certificate: false,
                subsets_tested: 0,
                found_steps: None,
                noise_efficiency: None,
                stopped_by_time: false,
                note,
            },
            None,
        ))
    };
    if p.outputs.iter().any(|o| o.kept.len() > 1) {
        return skip("not run: an output keeps several signatures together, which the weighted search does not handle".into());
    }
    if grid.iter().any(|&g| g > 24) {
        return skip(format!(
            "not run: the grid {grid:?} has more than 24 steps per turn on a field"
        ));
    }
    let mut n = max_steps
        .min((lattice_steps - 1) as usize)
        .min(crate::design::weighted::MAX_BEYOND_STEPS);
    let outputs: Vec<(String, Vec<i64>)> = p
        .outputs
        .iter()
        .map(|o| (o.name.clone(), o.kept[0].clone()))
        .collect();
    loop {
        let problem = BeyondProblem {
            dims: p.dims,
            grid: grid.clone(),
            outputs: outputs.clone(),
            rejected: p.rejected.clone(),
            max_steps: n,
            time_budget: budget,
        };
        match search_beyond(&problem, cancel) {
            Ok(out) => {
                let eff = out.design.as_ref().map(noise_efficiency);
                let found = out.design.as_ref().map(|d| d.n);
                let note = match found {
                    Some(k) => format!(
                        "a weighted non-lattice design with {k} steps exists on the grid {grid:?} (noise efficiency {:.3}); every weighted step set with fewer steps fails{}",
                        eff.unwrap_or(0.0),
                        if out.exact_certificate { " (exact certificate)" } else { " (certificate partly numerical)" }
                    ),
                    None => format!(
                        "no weighted step set with at most {} on the grid {grid:?} works either ({} step sets tested{}{})",
                        super::report::steps_text(out.exhaustive_up_to as u64),
                        out.subsets_tested,
                        if out.exact_certificate { ", each ruled out exactly" } else { ", some ruled out numerically only" },
                        if out.stopped_by_time { "; stopped on the time budget" } else { "" }
                    ),
                };
                return Some((
                    BeyondSummary {
                        grid,
                        max_steps: n,
                        exhaustive_up_to: out.exhaustive_up_to,
                        exact_certificate: out.exact_certificate,
                        subsets_tested: out.subsets_tested,
                        found_steps: found,
                        noise_efficiency: eff,
                        stopped_by_time: out.stopped_by_time,
                        note,
                    },
                    out.design,
                ));
            }
            Err(BeyondError::TooLarge { .. }) if n > 1 => n -= 1,
            Err(e) => return skip(format!("not run: {e}")),
        }
    }
}

/// `|F(t)| / sqrt(N sum |w|^2)` for the first output, with `F(t) = 1` by construction.
fn noise_efficiency(d: &BeyondDesign) -> f64 {
    let w = &d.weights[0];
    let s: f64 = w.iter().map(|c| c.to_complex().norm_sqr()).sum();
    1.0 / ((d.n as f64) * s).sqrt()
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
