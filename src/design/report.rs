//! The design run and its report: the minimal lattice design (proven by the search), the
//! choice among equal-length designs, the step order, the yardsticks (nested, cogwheel), the
//! first leak order and a one-paragraph summary.

use super::choice::{pick, score};
use super::to_cycle::lattice_cycle;
use super::weighted_stage::{search_below, weighted_cycle, BeyondSummary};
use super::yardsticks::{min_cogwheel, CogwheelScan};
use super::{prepare, DesignOptions, Impossibility, PlanError};
use crate::check::{check, CheckOptions};
use crate::cycle::{Cycle, CycleMeta};
use crate::design::lattice::{search_with_alternatives, Lattice, SearchControl, SearchOutcome};
use crate::model::Experiment;
use crate::selection::{RejectionSource, Selection};
use crate::signature::Signature;
use serde::Serialize;
use std::time::Instant;

/// What kind of lattice design the result is.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum DesignKind {
    /// A nested cycle: each cycled field stepped independently.
    Nested {
        /// Steps per cycled field.
        steps_per_field: Vec<u64>,
    },
    /// A cogwheel cycle `phi_j = nu_j m / N`.
    Cogwheel {
        /// N.
        n: u64,
        /// Winding numbers, one per cycled field.
        winding: Vec<i64>,
    },
    /// A general lattice design, given by its Hermite-normal-form basis.
    Lattice {
        /// Basis rows.
        basis: Vec<Vec<i64>>,
    },
    /// A weighted step set that is not a lattice design (unequal weights).
    Weighted {
        /// Steps.
        steps: usize,
    },
}

/// The result of a design run.
#[derive(Clone, Debug, Serialize)]
pub struct DesignReport {
    /// Experiment title.
    pub experiment: String,
    /// All field names.
    pub fields: Vec<String>,
    /// Fields the design steps.
    pub cycled_fields: Vec<String>,
    /// Fields held at phase 0 (fixed in the experiment or by the global-phase freedom).
    pub fixed_fields: Vec<String>,
    /// The field fixed by the global-phase freedom, if one was.
    pub global_phase_field: Option<String>,
    /// Order through which everything else is cancelled.
    pub order: u32,
    /// Agnostic or enumerated rejection set.
    pub rejection: RejectionSource,
    /// Number of rejected terms (over all fields).
    pub rejected_terms: usize,
    /// Phase grid per cycled field (0 = any).
    pub grid: Vec<u32>,
    /// Outputs with their reference signatures.
    pub outputs: Vec<(String, Signature)>,
    /// Every signature each output keeps (the reference first).
    pub kept: Vec<(String, Vec<Signature>)>,
    /// Steps of the design, if one was found.
    pub steps: Option<u64>,
    /// Nested, cogwheel or general lattice.
    pub kind: Option<DesignKind>,
    /// True when every lattice design with fewer steps was shown invalid.
    pub proven_minimal: bool,
    /// Every lattice design with fewer steps than this is impossible.
    pub excluded_below: u64,
    /// Candidate lattice rows examined by the search.
    pub lattices_tested: u64,
    /// The smallest nested cycle (what a lab would use by default).
    pub nested_steps: Option<u64>,
    /// The smallest cogwheel cycle.
    pub cogwheel: Option<CogwheelScan>,
    /// Which rule picked this design among equal-length ones.
    pub choice_rule: String,
    /// How the steps were ordered.
    pub step_order: String,
    /// Largest drift first moment on the backgrounds, natural order, per unit drift per step.
    pub drift_moment_natural: f64,
    /// The same after reordering.
    pub drift_moment_ordered: f64,
    /// First order at which the written cycle leaks, as the checker finds it on the
    /// selection's terms (NMR: coherence level).
    pub first_leak_order: Option<u32>,
    /// Orders searched for the first leak.
    pub first_leak_searched_to: u32,
    /// The checker's verdict on the written cycle: every kept value and rejected term.
    pub verified: Option<Verification>,
    /// True for NMR detection (first leak counted in coherence level, not order).
    pub detection_nmr: bool,
    /// Noise efficiency `|F(t)| / sqrt(N sum |w|^2)`: 1 for unit-modulus weights.
    pub noise_efficiency: f64,
    /// The search over weighted non-lattice step sets below the lattice optimum.
    pub beyond: Option<BeyondSummary>,
    /// The lattice optimum when a shorter weighted design replaced it.
    pub lattice_steps: Option<u64>,
    /// Terms no phase cycle can remove that affect the kept signals, in words.
    pub caveats: Vec<String>,
    /// Why no design is possible, if so.
    pub impossible: Vec<Impossibility>,
    /// True when the search was interrupted (the design is then not proven minimal).
    pub cancelled: bool,
    /// Wall time of the run in seconds.
    pub seconds: f64,
    /// One paragraph for people.
    pub summary: String,
    /// The cycle table.
    #[serde(skip)]
    pub cycle: Option<Cycle>,
}

/// What the checker says about the written cycle (stage: verification).
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
}

/// The checker's verdict on `cycle` for `sel`.
fn verify(sel: &Selection, cycle: &Cycle) -> Result<(Verification, Option<u32>), PlanError> {
    let r = check(sel, cycle, &CheckOptions::default()).map_err(PlanError::Check)?;
    Ok((
        Verification {
            clean: r.clean,
            exact: r.exact,
            rejected_checked: r.outputs.iter().map(|o| o.rejected_checked).collect(),
            leak_count: r.outputs.iter().map(|o| o.leak_count).collect(),
        },
        r.first_leak_order,
    ))
}

/// Run the designer.
pub fn design(
    sel: &Selection,
    req: &DesignOptions,
    ctl: &SearchControl,
) -> Result<DesignReport, PlanError> {
    let start = Instant::now();
    let exp = &sel.experiment;
    let prep = prepare(sel, req)?;
    let order = sel.order;
    let name = |j: usize| exp.fields[j].name.clone();
    let outputs: Vec<(String, Signature)> = prep
        .outputs
        .iter()
        .map(|o| (o.name.clone(), o.kept[0].clone()))
        .collect();
    let mut report = DesignReport {
        experiment: exp.title.clone(),
        fields: exp.field_names(),
        cycled_fields: prep.cycled.iter().map(|&j| name(j)).collect(),
        fixed_fields: (0..exp.fields.len())
            .filter(|j| !prep.cycled.contains(j))
            .map(name)
            .collect(),
        global_phase_field: prep.fixed_by_global_phase.map(name),
        order,
        rejection: sel.source,
        rejected_terms: prep.rejected.len(),
        grid: prep.problem.grid.clone(),
        outputs: outputs.clone(),
        kept: prep
            .outputs
            .iter()
            .map(|o| (o.name.clone(), o.kept.clone()))
            .collect(),
        steps: None,
        kind: None,
        proven_minimal: false,
        excluded_below: 0,
        lattices_tested: 0,
        nested_steps: None,
        cogwheel: None,
        choice_rule: String::new(),
        step_order: String::new(),
        drift_moment_natural: 0.0,
        drift_moment_ordered: 0.0,
        first_leak_order: None,
        first_leak_searched_to: sel.leak_search.to,
        verified: None,
        detection_nmr: matches!(exp.detection, crate::model::Detection::Nmr { .. }),
        noise_efficiency: 0.0,
        beyond: None,
        lattice_steps: None,
        caveats: crate::caveats::caveats(exp, &prep.outputs),
        impossible: prep.impossible.clone(),
        cancelled: false,
        seconds: 0.0,
        summary: String::new(),
        cycle: None,
    };
    if !report.impossible.is_empty() {
        report.summary = format!(
            "No phase cycle can do this: {}",
            report
                .impossible
                .iter()
                .map(|i| i.describe())
                .collect::<Vec<_>>()
                .join("; ")
        );
        report.seconds = start.elapsed().as_secs_f64();
        return Ok(report);
    }
    let (outcome, alternatives) = search_with_alternatives(&prep.problem, 16, ctl)?;
    let d = match outcome {
        SearchOutcome::Found(d) => d,
        SearchOutcome::Aliased {
            output,
            rejected,
            finer_grid_hint,
        } => {
            report.impossible.push(Impossibility::Aliased {
                output: prep.problem.outputs[output].name.clone(),
                rejected,
                finer_grid: lift_all_aliasing(exp, &prep, finer_grid_hint, ctl),
            });
            report.summary = format!("No cycle on this grid: {}", report.impossible[0].describe());
            report.seconds = start.elapsed().as_secs_f64();
            return Ok(report);
        }
        SearchOutcome::Inseparable { output, rejected } => {
            report.impossible.push(Impossibility::Aliased {
                output: prep.problem.outputs[output].name.clone(),
                rejected,
                finer_grid: vec![],
            });
            report.summary = "A term to cancel equals a term to keep on the cycled fields: no phase cycle separates them.".into();
            report.seconds = start.elapsed().as_secs_f64();
            return Ok(report);
        }
        SearchOutcome::NotFound {
            excluded_below,
            lattices_tested,
            cancelled,
        } => {
            report.excluded_below = excluded_below;
            report.lattices_tested = lattices_tested;
            report.cancelled = cancelled;
            report.summary = if cancelled {
                format!("Interrupted before any design was found; no lattice design has fewer than {excluded_below} steps.")
            } else {
                format!("No lattice design with at most {} steps exists (every one was tested); raise --max-steps or relax the request.", req.max_steps)
            };
            report.seconds = start.elapsed().as_secs_f64();
            return Ok(report);
        }
    };
    report.steps = Some(d.steps);
    report.proven_minimal = d.proven_minimal;
    report.cancelled = !d.proven_minimal;
    report.excluded_below = d.excluded_below;
    report.lattices_tested = d.lattices_tested;
    report.nested_steps = d.nested_bound;

    // Choose among equal-length designs.
    let t0 = &prep.problem.outputs[0].kept[0];
    let candidates: Vec<Lattice> = if d.proven_minimal {
        alternatives
    } else {
        Vec::new()
    };
    let (lattice, rule) = if candidates.len() > 1 {
        let scores: Vec<_> = candidates
            .iter()
            .map(|l| score(l, t0, &prep.problem.rejected))
            .collect();
        let (i, rule) = pick(&scores);
        (candidates[i].clone(), rule)
    } else {
        (
            d.lattice.clone(),
            "the search found one design of this length (unit-modulus weights, noise efficiency 1)"
                .to_string(),
        )
    };
    report.choice_rule = rule;
    report.kind = Some(if let Some(c) = lattice.as_nested() {
        DesignKind::Nested { steps_per_field: c }
    } else if let Some((n, nu)) = lattice.as_cogwheel() {
        DesignKind::Cogwheel { n, winding: nu }
    } else {
        DesignKind::Lattice {
            basis: lattice.rows().to_vec(),
        }
    });
    let phases = lattice.dual_points();

    // Step order against slow drift of the largest backgrounds (b = 0 and pair terms).
    let backgrounds: Vec<Vec<i64>> = sel
        .backgrounds()
        .iter()
        .map(|b| super::restrict(b, &prep.cycled))
        .collect();
    let turns: Vec<Vec<f64>> = phases
        .iter()
        .map(|p| {
            p.iter()
                .map(|r| *r.numer() as f64 / *r.denom() as f64)
                .collect()
        })
        .collect();
    let n_steps = turns.len() as f64;
    let weights: Vec<Vec<num_complex::Complex64>> = turns
        .iter()
        .map(|p| {
            let tp: f64 = p.iter().zip(t0).map(|(a, &b)| a * b as f64).sum();
            vec![num_complex::Complex64::from_polar(
                1.0 / n_steps,
                -std::f64::consts::TAU * tp,
            )]
        })
        .collect();
    let drift = crate::export::step_order::drift_order_for(&turns, &weights, &backgrounds);
    // Report the moment as |sum_p (p / N) exp(2 pi i (b - t).phi)|, per unit drift per step.
    let (step_order, before, after) = (drift.order, drift.before * n_steps, drift.after * n_steps);
    report.drift_moment_natural = before;
    report.drift_moment_ordered = after;
    report.step_order = if after + 1e-12 < before {
        format!("reordered by pairwise-swap descent so that slow linear drift leaks the backgrounds (LO/population and pair terms) least: first moment {before:.3} -> {after:.3} (units of drift per step x background)")
    } else {
        format!("natural lattice order (first moment on the backgrounds {before:.3}; no swap lowered it)")
    };

    let meta = CycleMeta {
        title: Some(format!("{} — designed cycle", exp.title)),
        grid: Some(
            exp.fields
                .iter()
                .enumerate()
                .map(|(j, _)| {
                    prep.cycled
                        .iter()
                        .position(|&c| c == j)
                        .map(|k| {
                            let g = prep.problem.grid[k];
                            if g == 0 {
                                lattice.distinct_phases(k) as u32
                            } else {
                                g
                            }
                        })
                        .unwrap_or(1)
                })
                .collect(),
        ),
        made_by: Some(format!(
            "pathsieve {} design (lattice search)",
            env!("CARGO_PKG_VERSION")
        )),
        experiment: Some(exp.title.clone()),
        notes: vec![],
        written: None,
    };
    report.cycle = Some(lattice_cycle(
        exp,
        &prep.cycled,
        &phases,
        &step_order,
        &outputs,
        meta,
    )?);
    report.noise_efficiency = 1.0;

    if let Some(cycle) = &report.cycle {
        let (v, first) = verify(sel, cycle)?;
        report.verified = Some(v);
        report.first_leak_order = first;
    }
    let bound = d.nested_bound.unwrap_or(d.steps * 4).max(d.steps);
    report.cogwheel = Some(min_cogwheel(&prep.problem, bound, 5_000_000));

    // Beyond lattices: is there a shorter weighted step set on the grid?
    if d.proven_minimal {
        if let Some((summary, found)) = search_below(
            &prep,
            &lattice,
            d.steps,
            req.beyond_step_sets,
            req.beyond_max_steps,
            ctl.cancel,
        ) {
            if let Some(w) = found {
                let meta = CycleMeta {
                    title: Some(format!("{} — designed cycle (weighted)", exp.title)),
                    grid: None,
                    made_by: Some(format!(
                        "pathsieve {} design (weighted non-lattice search)",
                        env!("CARGO_PKG_VERSION")
                    )),
                    experiment: Some(exp.title.clone()),
                    notes: vec![summary.note.clone()],
                    written: None,
                };
                let cycle = weighted_cycle(exp, &prep, &w, meta);
                let (v, first) = verify(sel, &cycle)?;
                report.verified = Some(v);
                report.first_leak_order = first;
                report.lattice_steps = Some(d.steps);
                report.steps = Some(w.n as u64);
                report.kind = Some(DesignKind::Weighted { steps: w.n });
                report.noise_efficiency = summary.noise_efficiency.unwrap_or(0.0);
                report.choice_rule = "a weighted step set shorter than every lattice design wins on length (its weights are not unit-modulus)".into();
                report.step_order = "as found by the weighted search".into();
                report.cycle = Some(cycle);
            }
            report.beyond = Some(summary);
        }
    }
    report.seconds = start.elapsed().as_secs_f64();
    report.summary = summary_text(&report);
    Ok(report)
}

/// One grid, over every experiment field (fixed fields 1), on which no kept term aliases a
/// rejected one: merge the search's hints until none remains (a few rounds at most).
fn lift_all_aliasing(
    exp: &Experiment,
    prep: &super::Prepared,
    mut grid: Vec<u32>,
    ctl: &SearchControl,
) -> Vec<u32> {
    use num_integer::Integer;
    for _ in 0..8 {
        let mut p = prep.problem.clone();
        p.grid = grid.clone();
        p.max_steps = 1;
        match crate::design::lattice::search(&p, ctl) {
            Ok(SearchOutcome::Aliased {
                finer_grid_hint, ..
            }) => {
                grid = grid
                    .iter()
                    .zip(&finer_grid_hint)
                    .map(|(a, b)| a.lcm(b))
                    .collect();
            }
            _ => break,
        }
    }
    (0..exp.fields.len())
        .map(|j| {
            prep.cycled
                .iter()
                .position(|&c| c == j)
                .map(|k| grid[k])
                .unwrap_or(1)
        })
        .collect()
}

fn summary_text(r: &DesignReport) -> String {
    let n = r.steps.unwrap_or(0);
    let kind = match &r.kind {
        Some(DesignKind::Nested { steps_per_field }) => format!(
            "a nested cycle ({})",
            steps_per_field
                .iter()
                .map(|c| c.to_string())
                .collect::<Vec<_>>()
                .join(" x ")
        ),
        Some(DesignKind::Cogwheel { n, winding }) => format!(
            "a cogwheel cycle Cog{n}({})",
            winding
                .iter()
                .map(|c| c.to_string())
                .collect::<Vec<_>>()
                .join(",")
        ),
        Some(DesignKind::Lattice { .. }) => {
            "a lattice cycle that is neither nested nor cogwheel".into()
        }
        Some(DesignKind::Weighted { .. }) => format!(
            "a weighted non-lattice step set (shorter than the {}-step lattice optimum; noise efficiency {:.3})",
            r.lattice_steps.unwrap_or(0),
            r.noise_efficiency
        ),
        None => String::new(),
    };
    let nested = match r.nested_steps {
        Some(m) if m > n => format!(" The smallest nested cycle a lab would use by default needs {m} steps: this design takes {:.0} % of its acquisition time.", 100.0 * n as f64 / m as f64),
        Some(m) => format!(" The smallest nested cycle also needs {m} steps."),
        None => String::new(),
    };
    let cog = match &r.cogwheel {
        Some(CogwheelScan { best: Some((m, nu)), .. }) => format!(" The smallest cogwheel cycle has {m} steps (winding numbers {nu:?})."),
        Some(c) if c.budget_exhausted => format!(" No cogwheel cycle with fewer than {} steps exists; the scan stopped on its budget there.", c.excluded_below),
        Some(c) => format!(" No cogwheel cycle with at most {} exists.", steps_text(c.excluded_below.saturating_sub(1))),
        None => String::new(),
    };
    let nmr = r.detection_nmr;
    let leak = match r.first_leak_order {
        Some(k) if nmr => format!(" It first leaks when the spin system allows coherence level |p| = {k} (enumerated pathways)."),
        Some(k) => format!(" It first leaks at order {k} ({} set, as checked on the written cycle).", source_word(r.rejection)),
        None if nmr => " It stays clean for every coherence level checked.".to_string(),
        None => format!(
            " It stays clean through order {} ({} set, the highest order checked).",
            r.first_leak_searched_to,
            source_word(r.rejection)
        ),
    };
    let proof = if let (Some(DesignKind::Weighted { steps }), Some(b)) = (&r.kind, &r.beyond) {
        format!(
            " Minimality: every lattice design needs at least {} steps (proven by the lattice search), and every weighted step set with fewer than {steps} steps on the grid {:?} fails ({}).",
            r.lattice_steps.unwrap_or(0),
            b.grid,
            "exhaustive search, exact"
        )
    } else if let (true, Some(b)) = (
        r.proven_minimal,
        r.beyond.as_ref().filter(|b| b.minimal_on_grid),
    ) {
        format!(" Minimality is proven over all step sets on the grid {:?} with any weights: every lattice design with fewer steps fails (lattice search) and so does every weighted step set with fewer steps on that grid (exhaustive search, exact).", b.grid)
    } else if r.proven_minimal {
        " Minimality is proven among lattice designs (nested and cogwheel cycles included): every lattice design with fewer steps was tested and fails; weighted non-lattice step sets are a separate class, searched only as far as the note below says.".to_string()
    } else {
        format!(" The search was interrupted: this design is NOT proven minimal; no lattice design has fewer than {} steps.", r.excluded_below)
    };
    let beyond = match &r.beyond {
        Some(b) => format!(" Beyond lattices: {}.", b.note),
        None => String::new(),
    };
    format!(
        "{}: {kind} cycling {} that keeps {} and cancels all {} {} terms through order {} (exact).{nested}{cog}{leak}{proof}{beyond}",
        steps_text(n),
        r.cycled_fields.join(", "),
        r.kept
            .iter()
            .map(|(n, ts)| format!("{n} {}", ts.iter().map(|t| t.to_string()).collect::<Vec<_>>().join(" + ")))
            .collect::<Vec<_>>()
            .join(", "),
        r.rejected_terms,
        source_word(r.rejection),
        r.order
    )
}

fn source_word(s: RejectionSource) -> &'static str {
    match s {
        RejectionSource::Agnostic => "agnostic",
        RejectionSource::FromPathways => "enumerated",
    }
}

/// `1 step`, `27 steps`.
pub(crate) fn steps_text(n: u64) -> String {
    if n == 1 {
        "1 step".into()
    } else {
        format!("{n} steps")
    }
}
