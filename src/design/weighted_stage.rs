//! The designer's search beyond lattice designs: weighted step sets on the grid with free
//! complex weights ([`crate::design::weighted`]), run below the lattice optimum, level by level
//! up to a step count and a number of step sets (never a clock: the same problem always gets
//! the same answer). It says over which class the final design is proven minimal.

use super::choice::ChoiceRule;
use super::lattice_stage::{ClassLayout, LatticeFound};
use super::report::{DesignKind, DesignReport};
use super::{DesignOptions, Prepared};
use crate::cycle::{Cycle, CycleMeta, CycleOutput, Phase, Weight, WeightSource};
use crate::design::lattice::Lattice;
use crate::design::lattice::SearchControl;
use crate::design::weighted::{
    search_beyond, BeyondDesign, BeyondProblem, BeyondStop, MAX_BEYOND_STEPS,
};
use crate::model::Experiment;
use crate::selection::Selection;
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
/// within `max_steps` steps and `step_sets` step sets, on the problem's grid (or, where a
/// field has none, the phases the lattice uses).
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
    let grid: Vec<u32> = (0..p.dims)
        .map(|j| match p.grid[j] {
            0 => lattice.distinct_phases(j) as u32,
            g => g,
        })
        .collect();
    let n = max_steps.min((lattice_steps - 1) as usize);
    Some(search_on_grid(
        prep,
        grid,
        n,
        step_sets,
        Some(lattice_steps),
        cancel,
    ))
}

/// The wider class when no lattice design exists within the limits: weighted step sets with
/// at most `max_steps` steps on the problem's grid, each field's grid cut to its largest
/// divisor within the phase cap `max_phases` (so a design found respects the cap). `None`
/// when a cycled field has neither a grid nor a phase cap (the class is searched on a grid).
pub fn search_without_lattice(
    prep: &Prepared,
    max_phases: Option<u32>,
    step_sets: u64,
    max_steps: usize,
    cancel: &AtomicBool,
) -> Option<(BeyondSummary, Option<BeyondDesign>)> {
    if step_sets == 0 || max_steps < 2 {
        return None;
    }
    let grid = prep
        .problem
        .grid
        .iter()
        .map(|&g| match (g, max_phases) {
            (0, cap) => cap,
            (g, Some(cap)) if g > cap => (1..=cap).rev().find(|d| g % d == 0),
            (g, _) => Some(g),
        })
        .collect::<Option<Vec<u32>>>()?;
    Some(search_on_grid(
        prep, grid, max_steps, step_sets, None, cancel,
    ))
}

/// The weighted search on `grid` through `max_steps` steps, summarised; `lattice_steps` is
/// the lattice optimum it runs below, if there is one.
fn search_on_grid(
    prep: &Prepared,
    grid: Vec<u32>,
    max_steps: usize,
    step_sets: u64,
    lattice_steps: Option<u64>,
    cancel: &AtomicBool,
) -> (BeyondSummary, Option<BeyondDesign>) {
    let p = &prep.problem;
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
        return (summary, None);
    }
    summary.max_steps = max_steps.min(MAX_BEYOND_STEPS);
    let problem = BeyondProblem {
        dims: p.dims,
        grid,
        outputs: p
            .outputs
            .iter()
            .map(|o| (o.name.clone(), o.kept[0].clone()))
            .collect(),
        rejected: p.rejected.clone(),
        max_steps: summary.max_steps,
        max_step_sets: step_sets,
    };
    let out = match search_beyond(&problem, cancel) {
        Ok(out) => out,
        Err(e) => {
            summary.note = format!("not run: {e}");
            return (summary, None);
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
    let below_lattice = lattice_steps.is_some_and(|l| out.exhaustive_up_to as u64 + 1 >= l);
    summary.minimal_on_grid = out.design.is_some() || below_lattice;
    summary.note = note(&summary, &out.stop, lattice_steps);
    (summary, out.design)
}

/// The sentence for the report: what was found and what was proven, over which class.
fn note(s: &BeyondSummary, stop: &BeyondStop, lattice_steps: Option<u64>) -> String {
    let grid = &s.grid;
    let steps = |k: usize| crate::render::design_summary::steps_text(k as u64);
    let ruled_out = format!(
        "no step set on the grid {grid:?} with at most {} works, whatever its weights ({} step sets through the origin, each ruled out exactly)",
        steps(s.exhaustive_up_to),
        s.subsets_tested
    );
    match (s.found_steps, s.noise_efficiency, lattice_steps) {
        (Some(k), Some(eff), _) => format!(
            "a weighted design with {} exists on the grid {grid:?}, the best noise efficiency ({eff:.3}) among the {} step sets of that length through the origin that work; every step set on the grid with fewer steps fails (exhaustive, exact): minimal over all step sets on the grid {grid:?}",
            steps(k),
            s.designs_at_minimum
        ),
        (_, _, Some(l)) if s.minimal_on_grid => format!(
            "{ruled_out}, so the {l}-step lattice design is minimal over all step sets on the grid {grid:?}"
        ),
        (_, _, lattice) => {
            let why = match stop {
                BeyondStop::WorkLimit { steps: k, step_sets } => format!(
                    "; the {k}-step level ({step_sets} step sets) is beyond the work limit (--weighted-work)"
                ),
                BeyondStop::Cancelled => "; interrupted".into(),
                BeyondStop::Completed => String::new(),
            };
            let rest = match lattice {
                Some(l) if s.exhaustive_up_to as u64 + 1 < l - 1 => format!(
                    "; step sets with {} to {} steps were not searched",
                    s.exhaustive_up_to + 1,
                    l - 1
                ),
                Some(_) => String::new(),
                None => format!(
                    "; longer step sets were not searched (up to {} steps asked)",
                    s.max_steps
                ),
            };
            format!("{ruled_out}{why}{rest}")
        }
    }
}

/// Stage: a weighted step set shorter than the lattice optimum, if one exists on the grid;
/// returns its cycle when it replaces the lattice design.
pub(super) fn weighted_below(
    sel: &Selection,
    prep: &Prepared,
    found: &LatticeFound,
    lattice: &Lattice,
    opts: &DesignOptions,
    ctl: &SearchControl,
    report: &mut DesignReport,
) -> Option<Cycle> {
    if !found.proven_minimal || found.layout != ClassLayout::Shared {
        return None;
    }
    let steps = found.design.steps;
    let (summary, w) = search_below(
        prep,
        lattice,
        steps,
        opts.beyond_step_sets,
        opts.beyond_max_steps,
        ctl.cancel,
    )?;
    let cycle = w.map(|w| {
        report.lattice_steps = Some(steps);
        report.choice = Some(ChoiceRule::WeightedShorter);
        take_weighted(sel, prep, &w, &summary.note, report)
    });
    report.beyond = Some(summary);
    cycle
}

/// Stage, when no lattice design exists within the limits: the weighted class on the grid
/// (cut to the phase cap). A design found replaces the refusal; otherwise the refusal stays
/// and the report says how far the wider class was searched.
pub fn weighted_without_lattice(
    sel: &Selection,
    prep: &Prepared,
    opts: &DesignOptions,
    ctl: &SearchControl,
    report: &mut DesignReport,
) -> Option<Cycle> {
    let max_steps = usize::try_from(opts.max_steps)
        .unwrap_or(usize::MAX)
        .min(opts.beyond_max_steps);
    let (summary, w) = search_without_lattice(
        prep,
        opts.max_phases_per_field,
        opts.beyond_step_sets,
        max_steps,
        ctl.cancel,
    )?;
    let cycle = w.map(|w| {
        report.lattice_refusal = report.refusal.take();
        report.choice = Some(ChoiceRule::WeightedOnly);
        take_weighted(sel, prep, &w, &summary.note, report)
    });
    report.beyond = Some(summary);
    cycle
}

/// Record a weighted design in the report and build its cycle table.
fn take_weighted(
    sel: &Selection,
    prep: &Prepared,
    w: &BeyondDesign,
    note: &str,
    report: &mut DesignReport,
) -> Cycle {
    let exp = &sel.experiment;
    let meta = CycleMeta {
        title: Some(format!("{} — designed cycle (weighted)", exp.title)),
        grid: None,
        made_by: Some(format!(
            "pathsieve {} design (weighted non-lattice search)",
            env!("CARGO_PKG_VERSION")
        )),
        experiment: Some(exp.title.clone()),
        notes: vec![note.to_string()],
        written: None,
    };
    report.steps = Some(w.n as u64);
    report.kind = Some(DesignKind::Weighted { steps: w.n });
    report.step_order = None;
    weighted_cycle(exp, prep, w, meta)
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
