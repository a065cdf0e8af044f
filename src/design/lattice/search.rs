//! The minimal-index search: up-front impossibility checks (identical signatures,
//! aliasing on the grid), a quick upper bound (smallest nested cycle, a budgeted
//! Korobov-type cogwheel scan), then the exhaustive scan N = 1, 2, ... with the
//! pruned engine, run in parallel over top-level branches.
//!
//! Preference among lattices of the minimal index (deterministic): a nested cycle
//! if one exists (the lexicographically smallest step-count tuple), else the first
//! valid lattice in engine order: HNF diagonal tuple `(h_00, ..., h_nn)`
//! lexicographically smallest, then the off-diagonal entries read row by row. Both
//! orders are read in the engine's field order (`field_order`), and only among the
//! lattices the symmetry cut keeps.
//!
//! Exhaustiveness: windows `[lo, 2 lo)` of indices are scanned in turn; inside a
//! window every HNF whose rows pass the prefix tests is generated, and a prefix is
//! only cut when a forbidden difference (or grid, cap or kept condition) already
//! decided by its rows fails, which no completion can repair, or when a field symmetry
//! of the problem gives every lattice below it a lexicographically larger phase-count
//! vector (`symmetry`): each orbit keeps its members with the largest vector.

use std::sync::atomic::{AtomicBool, AtomicU64};

use num_rational::Ratio;
use rayon::prelude::*;

use super::engine::{order_key, Engine, Sink};
use super::enumerate::LatticeCounts;
use super::field_order::{
    engine_order, permuted, permuted_differences, restored, symmetries_in_order,
};
use super::hnf::Lattice;
use super::problem::{normalise, LatticeProblem, Reduced};
use super::seed::{greedy_nested_steps, korobov_seed, nested_seed};
use super::symmetry::{field_symmetries, for_the_cut};
use super::DesignError;

/// Progress report: the index being scanned and candidate rows tested so far.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Progress {
    /// Index N now being scanned (all smaller N are excluded).
    pub index: u64,
    /// Candidate HNF rows examined so far.
    pub lattices_tested: u64,
    /// Steps of the best valid design known so far (a seed), if any.
    pub best: Option<u64>,
    /// Estimated share (0 to 1) of the lattices with fewer steps than `best` already
    /// excluded, weighting each index by its number of lattices
    /// ([`super::enumerate::LatticeCounts`]); `None` without a best design or above the table.
    pub share_done: Option<f64>,
}

/// Cancellation and progress hooks for a search.
pub struct SearchControl<'a> {
    /// Set to true (from any thread) to stop; checked at every search node.
    pub cancel: &'a AtomicBool,
    /// Called at the start of every index N.
    pub progress: Option<&'a (dyn Fn(Progress) + Sync)>,
}

impl<'a> SearchControl<'a> {
    /// A control with a cancel flag and no progress callback.
    pub fn new(cancel: &'a AtomicBool) -> SearchControl<'a> {
        SearchControl {
            cancel,
            progress: None,
        }
    }
}

/// Weights of one output: `w_m = exp(-2 pi i r_m) / N` with `r_m` in turns.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct OutputWeights {
    /// Output name.
    pub name: String,
    /// Exponent `r_m = t . phi_m mod 1` per step (turns).
    pub exponents: Vec<Ratio<i64>>,
}

/// A valid lattice design.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Design {
    /// The lattice L.
    pub lattice: Lattice,
    /// Number of steps N = index of L.
    pub steps: u64,
    /// Step phases (turns, one row per step, one entry per cycled field).
    pub phases: Vec<Vec<Ratio<i64>>>,
    /// Per-output weight exponents.
    pub weights: Vec<OutputWeights>,
    /// True if every lattice of smaller index was shown invalid.
    pub proven_minimal: bool,
    /// Every lattice design with fewer steps than this is impossible.
    pub excluded_below: u64,
    /// Candidate HNF rows examined.
    pub lattices_tested: u64,
    /// `Some(c)`: the design is the nested cycle with `c_j` steps on field j.
    pub nested: Option<Vec<u64>>,
    /// `Some((N, nu))`: the design is the cogwheel cycle with winding numbers `nu`.
    pub cogwheel: Option<(u64, Vec<i64>)>,
    /// Smallest valid nested cycle found by the seeding step (for comparison).
    pub nested_bound: Option<u64>,
}

/// Result of a search.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SearchOutcome {
    /// A design (check `proven_minimal`).
    Found(Design),
    /// No lattice design with at most `max_steps` steps exists (or, if `cancelled`,
    /// none below `excluded_below` and none found yet).
    NotFound {
        /// All N below this are impossible.
        excluded_below: u64,
        /// Candidate HNF rows examined.
        lattices_tested: u64,
        /// True if the search was stopped before reaching `max_steps`.
        cancelled: bool,
        /// Steps of a valid nested cycle above `max_steps` (the greedy nested seed without the
        /// cap), so a refusal can say what raising the cap gives.
        valid_above: Option<u64>,
    },
    /// A rejected (or other output's kept) signature equals `t_o` modulo the grid:
    /// no cycle on this grid separates them.
    Aliased {
        /// Output index.
        output: usize,
        /// The aliased signature.
        rejected: Vec<i64>,
        /// A finer grid (each entry a multiple of the old one) that lifts this alias.
        finer_grid_hint: Vec<u32>,
    },
    /// A signature to cancel is identical to one to keep (the reference `t_o`, or a
    /// kept signature of the same output): no phase cycle separates them.
    Inseparable {
        /// Output index.
        output: usize,
        /// The offending signature.
        rejected: Vec<i64>,
    },
}

/// Finds the minimal-index valid lattice design and proves it minimal among
/// lattice designs (see the module docs for the preference among equals).
pub fn search(problem: &LatticeProblem, ctl: &SearchControl) -> Result<SearchOutcome, DesignError> {
    run(problem, ctl, 1).map(|(o, _)| o)
}

/// Up to `limit` valid lattices of the minimal index, in engine order (empty if the
/// search does not find one or is cancelled). These are the lattices the symmetry cut keeps:
/// with `limit` large enough at least one of every orbit under the problem's field
/// symmetries (`symmetry`), not every lattice of the minimal index.
pub fn all_minimal(
    problem: &LatticeProblem,
    limit: usize,
    ctl: &SearchControl,
) -> Result<Vec<Lattice>, DesignError> {
    run(problem, ctl, limit.max(1)).map(|(_, v)| v)
}

/// The search and up to `limit` valid lattices of the minimal index in one pass: the
/// outcome of [`search`] together with the alternatives [`all_minimal`] would list.
pub fn search_with_alternatives(
    problem: &LatticeProblem,
    limit: usize,
    ctl: &SearchControl,
) -> Result<(SearchOutcome, Vec<Lattice>), DesignError> {
    run(problem, ctl, limit.max(1))
}

fn run(
    problem: &LatticeProblem,
    ctl: &SearchControl,
    limit: usize,
) -> Result<(SearchOutcome, Vec<Lattice>), DesignError> {
    problem.validate()?;
    let red = problem.reduce();
    if let Some(o) = impossible(problem, &red) {
        return Ok((o, vec![]));
    }
    let symmetries = for_the_cut(field_symmetries(
        problem.dims,
        &red.forb,
        &red.req,
        &problem.grid,
    ));
    let order = engine_order(problem.dims, &symmetries);
    if order.iter().enumerate().all(|(p, &j)| p == j) {
        return run_in_order(problem, (&red.forb, &red.req), symmetries, ctl, limit);
    }
    let inner = permuted(problem, &order);
    let (forb, req) = permuted_differences(&red.forb, &red.req, &order);
    let inner_syms = symmetries_in_order(&symmetries, &order);
    let (outcome, found) = run_in_order(&inner, (&forb, &req), inner_syms, ctl, limit)?;
    let outcome = match outcome {
        SearchOutcome::Found(d) => SearchOutcome::Found(design(
            problem,
            restored(&d.lattice, &order),
            d.proven_minimal,
            d.excluded_below,
            d.lattices_tested,
            d.nested_bound,
        )),
        other => other,
    };
    let found = found.iter().map(|l| restored(l, &order)).collect();
    Ok((outcome, found))
}

/// The search without the symmetry reduction, in the problem's own field order: the plain
/// exhaustive scan the reduced one must agree with (tests only).
#[cfg(test)]
pub(crate) fn search_unreduced(
    problem: &LatticeProblem,
    ctl: &SearchControl,
) -> Result<SearchOutcome, DesignError> {
    problem.validate()?;
    let red = problem.reduce();
    if let Some(o) = impossible(problem, &red) {
        return Ok(o);
    }
    run_in_order(problem, (&red.forb, &red.req), Vec::new(), ctl, 1).map(|(o, _)| o)
}

/// The search proper, with the fields in the engine's order (`field_order`).
fn run_in_order(
    problem: &LatticeProblem,
    (forb, req): (&[Vec<i64>], &[Vec<i64>]),
    symmetries: Vec<Vec<usize>>,
    ctl: &SearchControl,
    limit: usize,
) -> Result<(SearchOutcome, Vec<Lattice>), DesignError> {
    let engine = Engine::new(
        problem.dims,
        forb,
        req,
        &problem.grid,
        problem.max_phases_per_field,
        symmetries,
    );
    let seeded = nested_seed(&engine, problem.max_steps, ctl.cancel);
    let nested_exact = seeded.as_ref().is_some_and(|s| s.1);
    let nested = seeded.map(|s| s.0);
    let nested_bound = nested.as_ref().map(Lattice::index);
    let mut best = nested.clone();
    if let Some(c) = korobov_seed(
        &engine,
        best.as_ref().map_or(problem.max_steps, |l| l.index() - 1),
        ctl.cancel,
    ) {
        best = Some(c);
    }
    let counts = best
        .as_ref()
        .and_then(|l| LatticeCounts::new(problem.dims, l.index()));
    let mut tested = 0u64;
    let finish = |l: Lattice, proven: bool, below: u64, tested: u64| {
        SearchOutcome::Found(design(problem, l, proven, below, tested, nested_bound))
    };
    // Windows [lo, hi) of doubling width; every lattice of index below `lo` is
    // excluded once the previous windows finished without a valid lattice.
    let cap = problem.max_steps + 1;
    let mut lo = 1u64;
    while lo < cap {
        let mut hi = lo.saturating_mul(2).min(cap);
        if let Some(l) = nested.as_ref().filter(|_| limit == 1 && nested_exact) {
            // The nested seed is valid: no need to look beyond its index.
            hi = hi.min(l.index() + 1).max(lo + 1);
        }
        let best_n = best.as_ref().map(Lattice::index);
        // `found`: the smallest index of a valid lattice the running scan has met (u64::MAX
        // before one), so the progress shows a better design as soon as it is known.
        let report = |part: f64, tested: u64, found: u64| {
            if let Some(cb) = ctl.progress {
                let best = best_n.map_or(found, |b| b.min(found));
                let best = (best != u64::MAX).then_some(best);
                cb(Progress {
                    index: lo,
                    lattices_tested: tested,
                    best,
                    share_done: counts
                        .as_ref()
                        .zip(best)
                        .map(|(c, b)| c.share(lo, hi, part, b)),
                });
            }
        };
        report(0.0, tested, u64::MAX);
        let cancelled_out = |best: Option<Lattice>, lo: u64, tested: u64| match best {
            Some(l) => finish(l, false, lo, tested),
            None => SearchOutcome::NotFound {
                excluded_below: lo,
                lattices_tested: tested,
                cancelled: true,
                valid_above: valid_above(&engine, ctl.cancel),
            },
        };
        if ctl.cancel.load(std::sync::atomic::Ordering::Relaxed) {
            return Ok((cancelled_out(best, lo, tested), vec![]));
        }
        if let Some(l) = nested
            .as_ref()
            .filter(|l| limit == 1 && nested_exact && l.index() == lo)
        {
            return Ok((finish(l.clone(), true, lo, tested), vec![l.clone()]));
        }
        let before = tested;
        let bound = best_n.unwrap_or(u64::MAX);
        let (found, t, cancelled) = scan(
            &engine,
            (lo, hi, bound),
            limit,
            ctl.cancel,
            &|part, found| report(part, before, found),
        );
        tested += t;
        if cancelled {
            // A valid lattice the interrupted scan met beats the seed (not proven minimal).
            let better = found
                .first()
                .filter(|l| best_n.is_none_or(|b| l.index() < b));
            let best = better.cloned().or(best);
            return Ok((cancelled_out(best, lo, tested), vec![]));
        }
        if let Some(first) = found.first() {
            let n = first.index();
            let pick = match nested.as_ref().filter(|l| nested_exact && l.index() == n) {
                Some(l) => l.clone(),
                None => found
                    .iter()
                    .find(|l| l.as_nested().is_some())
                    .unwrap_or(first)
                    .clone(),
            };
            return Ok((finish(pick, true, n, tested), found));
        }
        lo = hi;
    }
    Ok((
        SearchOutcome::NotFound {
            excluded_below: cap,
            lattices_tested: tested,
            cancelled: false,
            valid_above: valid_above(&engine, ctl.cancel),
        },
        vec![],
    ))
}

/// Scans all lattices with index in `[lo, hi)` and at most `bound` (the index of a valid
/// design already known, so lattices above it cannot be the minimum): returns up to `limit` valid ones of
/// the smallest index there, in engine order, the candidate count, and whether the
/// scan was cancelled.
fn scan(
    engine: &Engine,
    (lo, hi, bound): (u64, u64, u64),
    limit: usize,
    cancel: &AtomicBool,
    on_task: &(dyn Fn(f64, u64) + Sync),
) -> (Vec<Lattice>, u64, bool) {
    let best = AtomicU64::new(bound);
    let split = if engine.n >= 3 { Some(2) } else { None };
    let mut top = Sink::new(limit, &best, cancel);
    top.split = split;
    engine.dfs(&engine.root(), lo, hi, &mut top);
    let mut found = std::mem::take(&mut top.found);
    let mut tested = top.tested;
    let tasks = std::mem::take(&mut top.tasks);
    let done = std::sync::atomic::AtomicUsize::new(0);
    let parts: Vec<(Vec<Lattice>, u64)> = tasks
        .par_iter()
        .map(|node| {
            let mut s = Sink::new(limit, &best, cancel);
            engine.dfs(node, lo, hi, &mut s);
            let k = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
            on_task(
                k as f64 / tasks.len() as f64,
                best.load(std::sync::atomic::Ordering::Relaxed),
            );
            (s.found, s.tested)
        })
        .collect();
    for (f, t) in parts {
        tested += t;
        found.extend(f);
    }
    let min = found.iter().map(Lattice::index).min();
    found.retain(|l| Some(l.index()) == min);
    found.sort_by_key(order_key);
    found.truncate(limit);
    let cancelled = cancel.load(std::sync::atomic::Ordering::Relaxed);
    (found, tested, cancelled)
}

/// The steps of the greedy nested cycle with no step cap (up to the absolute limit of
/// 1e7), when the capped search found nothing: the greedy pass alone, not the seed's branch
/// and bound again.
fn valid_above(engine: &Engine, cancel: &AtomicBool) -> Option<u64> {
    greedy_nested_steps(engine, 10_000_000, cancel)
}

/// Up-front impossibility checks: identical signatures and grid aliasing.
fn impossible(problem: &LatticeProblem, red: &Reduced) -> Option<SearchOutcome> {
    for f in &red.forbidden {
        // Identical to t_o, or to another kept signature of the same output.
        if f.diff.iter().all(|&x| x == 0) || red.req.contains(&normalise(&f.diff)) {
            return Some(SearchOutcome::Inseparable {
                output: f.output,
                rejected: f.other.clone(),
            });
        }
    }
    for f in &red.forbidden {
        let aliased =
            f.diff
                .iter()
                .zip(&problem.grid)
                .all(|(&d, &m)| if m == 0 { d == 0 } else { d % m as i64 == 0 });
        if aliased {
            return Some(SearchOutcome::Aliased {
                output: f.output,
                rejected: f.other.clone(),
                finer_grid_hint: finer_grid(&problem.grid, &f.diff),
            });
        }
    }
    None
}

/// Refines one field (the cheapest) so that `diff` is no longer a grid vector.
fn finer_grid(grid: &[u32], diff: &[i64]) -> Vec<u32> {
    let mut best: Option<(u32, usize)> = None;
    for (j, (&m, &d)) in grid.iter().zip(diff).enumerate() {
        if m == 0 || d == 0 {
            continue;
        }
        let q = (d / m as i64).unsigned_abs();
        let p = (2u32..).find(|&p| q % p as u64 != 0).unwrap_or(2);
        let cand = m.saturating_mul(p);
        if best.is_none_or(|(b, _)| cand < b) {
            best = Some((cand, j));
        }
    }
    let mut g = grid.to_vec();
    if let Some((c, j)) = best {
        g[j] = c;
    }
    g
}

fn design(
    problem: &LatticeProblem,
    lattice: Lattice,
    proven: bool,
    below: u64,
    tested: u64,
    nested_bound: Option<u64>,
) -> Design {
    let phases = lattice.dual_points();
    let weights = problem
        .outputs
        .iter()
        .map(|o| {
            let t = &o.kept[0];
            let exponents = phases
                .iter()
                .map(|p| {
                    let r: Ratio<i64> = p.iter().zip(t).map(|(&x, &c)| x * c).sum();
                    r - r.floor()
                })
                .collect();
            OutputWeights {
                name: o.name.clone(),
                exponents,
            }
        })
        .collect();
    Design {
        steps: lattice.index(),
        nested: lattice.as_nested(),
        cogwheel: lattice.as_cogwheel(),
        lattice,
        phases,
        weights,
        proven_minimal: proven,
        excluded_below: below,
        lattices_tested: tested,
        nested_bound,
    }
}
