//! Stage 2, the lattice search: the minimal lattice design with each output's kept signatures
//! in one class of `t + L` (weights `exp(-2 pi i t.phi) / N`) and, where an output keeps
//! several signatures, with each in its own class (summed weights
//! `w_m = sum_k exp(-2 pi i t_k.phi_m) / N`, domain.md section 9). The shorter wins, then the
//! more efficient (one class: noise efficiency 1; `K` classes: `1 / sqrt(K)`). When neither
//! arrangement has a design the stage says which of the three refusals is proven.

use super::refusal::{Impossibility, LimitRemedy, Refusal};
use super::{DesignOptions, PlanError, Prepared};
use crate::design::lattice::{
    search, search_with_alternatives, Design, Lattice, LatticeProblem, OutputSpec, SearchControl,
    SearchOutcome,
};
use serde::Serialize;

/// How an output's several kept signatures sit in the lattice.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ClassLayout {
    /// All in one class of `t + L`.
    Shared,
    /// Each in its own class, weights summed over the kept characters.
    Separate,
}

/// A lattice design found.
#[derive(Clone, Debug)]
pub struct LatticeFound {
    /// The search result.
    pub design: Design,
    /// Equal-length alternatives (empty unless proven minimal).
    pub alternatives: Vec<Lattice>,
    /// Shared or separate classes.
    pub layout: ClassLayout,
    /// True when this design is proven minimal and every other arrangement's search ran to
    /// its end (so no lattice design of either arrangement is shorter).
    pub proven_minimal: bool,
    /// The problem that was searched (one output per kept signature when separate).
    pub problem: LatticeProblem,
}

/// What the lattice stage produced.
#[derive(Clone, Debug)]
pub enum LatticeStage {
    /// A design.
    Found(Box<LatticeFound>),
    /// No design, with the refusal that is proven and its terms.
    Refused {
        /// Which refusal.
        refusal: Refusal,
        /// The terms involved.
        causes: Vec<Impossibility>,
        /// Every lattice design with fewer steps is impossible.
        excluded_below: u64,
        /// Candidate lattices examined.
        lattices_tested: u64,
        /// True when the search was interrupted.
        cancelled: bool,
    },
}

/// One kept signature per output: the separate-class arrangement of `p`.
pub fn split_problem(p: &LatticeProblem) -> LatticeProblem {
    let outputs = p
        .outputs
        .iter()
        .flat_map(|o| {
            o.kept.iter().enumerate().map(move |(k, t)| OutputSpec {
                name: format!("{}#{}", o.name, k + 1),
                kept: vec![t.clone()],
            })
        })
        .collect();
    LatticeProblem {
        outputs,
        ..p.clone()
    }
}

/// Run the stage.
pub fn lattice_search(
    prep: &Prepared,
    opts: &DesignOptions,
    ctl: &SearchControl,
) -> Result<LatticeStage, PlanError> {
    let shared = search_with_alternatives(&prep.problem, 16, ctl)?;
    let several = prep.problem.outputs.iter().any(|o| o.kept.len() > 1);
    let mut tried = vec![(shared, prep.problem.clone(), ClassLayout::Shared)];
    if several {
        let p = split_problem(&prep.problem);
        tried.push((
            search_with_alternatives(&p, 16, ctl)?,
            p,
            ClassLayout::Separate,
        ));
    }
    let best = tried
        .iter()
        .filter_map(|((o, alts), p, layout)| match o {
            SearchOutcome::Found(d) => Some((d, alts, p, *layout)),
            _ => None,
        })
        .min_by_key(|(d, _, _, layout)| (d.steps, *layout == ClassLayout::Separate));
    let complete = tried.iter().all(|((o, _), _, _)| match o {
        SearchOutcome::Found(d) => d.proven_minimal,
        SearchOutcome::NotFound { cancelled, .. } => !cancelled,
        _ => true,
    });
    if let Some((d, alts, p, layout)) = best {
        return Ok(LatticeStage::Found(Box::new(LatticeFound {
            proven_minimal: complete,
            design: d.clone(),
            alternatives: if d.proven_minimal {
                alts.clone()
            } else {
                Vec::new()
            },
            layout,
            problem: p.clone(),
        })));
    }
    Ok(refuse(prep, opts, &tried, ctl))
}

type Tried = ((SearchOutcome, Vec<Lattice>), LatticeProblem, ClassLayout);

/// The refusal the failed searches prove: aliasing on the grid first (true for any cycle on
/// the grid), then identical signatures, else the lattice limit.
fn refuse(
    prep: &Prepared,
    opts: &DesignOptions,
    tried: &[Tried],
    ctl: &SearchControl,
) -> LatticeStage {
    let refused = |refusal, causes| LatticeStage::Refused {
        refusal,
        causes,
        excluded_below: 0,
        lattices_tested: 0,
        cancelled: false,
    };
    for ((o, _), p, _) in tried {
        if let SearchOutcome::Aliased {
            output,
            rejected,
            finer_grid_hint,
        } = o
        {
            let cause = Impossibility::Aliased {
                output: original_name(&p.outputs[*output].name),
                rejected: rejected.clone(),
                finer_grid: lift_all_aliasing(prep, p, finer_grid_hint.clone(), ctl),
            };
            return refused(Refusal::NoCycleOnThisGrid, vec![cause]);
        }
    }
    let identical: Vec<Impossibility> = tried
        .iter()
        .filter_map(|((o, _), p, layout)| match o {
            SearchOutcome::Inseparable { output, rejected }
                if is_identical(p, *layout, *output, rejected) =>
            {
                Some(Impossibility::Identical {
                    output: original_name(&p.outputs[*output].name),
                    rejected: rejected.clone(),
                })
            }
            _ => None,
        })
        .collect();
    if let Some(first) = identical.into_iter().next() {
        return refused(Refusal::NoPhaseCycleAtAll, vec![first]);
    }
    let (excluded_below, lattices_tested, cancelled) = tried
        .iter()
        .filter_map(|((o, _), _, _)| match o {
            SearchOutcome::NotFound {
                excluded_below,
                lattices_tested,
                cancelled,
                ..
            } => Some((*excluded_below, *lattices_tested, *cancelled)),
            _ => None,
        })
        .fold((0, 0, false), |a, b| (a.0.max(b.0), a.1 + b.1, a.2 || b.2));
    let known_valid = tried
        .iter()
        .filter_map(|((o, _), _, _)| match o {
            SearchOutcome::NotFound { valid_above, .. } => *valid_above,
            _ => None,
        })
        .min();
    LatticeStage::Refused {
        refusal: Refusal::NoLatticeDesign {
            remedy: limit_remedy(prep.problem.dims, opts, known_valid),
        },
        causes: Vec::new(),
        excluded_below,
        lattices_tested,
        cancelled,
    }
}

/// True when the shared-class search found `rejected` equal to one of the output's kept
/// signatures on the cycled fields (the rejected list holds only terms the output must
/// cancel): identical characters, so no phase cycle at all. The separate arrangement also
/// forbids sibling kept terms, so its verdict proves nothing here (identical rejected terms
/// are caught before the search, [`super::prepare`]).
fn is_identical(p: &LatticeProblem, layout: ClassLayout, output: usize, rejected: &[i64]) -> bool {
    layout == ClassLayout::Shared && p.outputs[output].kept.iter().any(|t| t == rejected)
}

/// The experiment output a split output belongs to (`R#2` -> `R`).
fn original_name(split: &str) -> String {
    split.rsplit_once('#').map_or(split, |(a, _)| a).to_string()
}

/// What can lift "no lattice design": a phase cap `c` bounds every lattice design to
/// `c ^ dims` steps (its dual group embeds in the product of the per-field cyclic groups), so
/// when those were all tested only a higher phase cap helps.
pub fn limit_remedy(dims: usize, opts: &DesignOptions, known_valid: Option<u64>) -> LimitRemedy {
    match opts.max_phases_per_field {
        None => LimitRemedy::MaxSteps {
            current: opts.max_steps,
            known_valid,
        },
        Some(c) => {
            let bound = u64::from(c).checked_pow(dims as u32).unwrap_or(u64::MAX);
            if bound <= opts.max_steps {
                LimitRemedy::MaxPhases { current: c, bound }
            } else {
                LimitRemedy::Either {
                    max_steps: opts.max_steps,
                    max_phases: c,
                }
            }
        }
    }
}

/// One grid, over every experiment field (fixed fields 1), on which no kept term aliases a
/// rejected one: merge the search's hints until none remains (a few rounds at most).
fn lift_all_aliasing(
    prep: &Prepared,
    problem: &LatticeProblem,
    mut grid: Vec<u32>,
    ctl: &SearchControl,
) -> Vec<u32> {
    use num_integer::Integer;
    for _ in 0..8 {
        let mut p = problem.clone();
        p.grid = grid.clone();
        p.max_steps = 1;
        match search(&p, ctl) {
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
    (0..prep.field_count)
        .map(|j| {
            prep.cycled
                .iter()
                .position(|&c| c == j)
                .map(|k| grid[k])
                .unwrap_or(1)
        })
        .collect()
}
