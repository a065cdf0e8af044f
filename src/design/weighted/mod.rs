//! Smallest phase cycles **beyond lattice designs**: exhaustive search over all step sets of
//! `N` grid points with free complex weights, for `N = 1, 2, ..`, with exact certificates.
//! This module owns the search driver, its problem and outcome types and its limits; the
//! exact pieces live in `ring` (root-of-unity determinants), [`galois`] (automorphisms and
//! exact inverses), the float triage in `numeric` and the per-step-set decision in
//! `subset`.
//!
//! # The question for one step set
//! Signatures are restricted to the cycled fields. Output `o` keeps its reference signature
//! `t_o` and must cancel `D_o = {b - t_o}` for every rejected `b` and every other output's
//! `t`. For steps `phi_1..phi_N` put `v_m = w_m exp(2 pi i t_o . phi_m)`; then
//! `F_o(t_o) = sum_m v_m` and `F_o(b) = sum_m A_o[d][m] v_m` with
//! `A_o[d][m] = exp(2 pi i d . phi_m) = zeta_L^(L d . phi_m)`, `L = lcm(M_j)`. Weights exist iff
//! some `v` in the kernel of `A_o` has `sum v != 0`, i.e. iff the all-ones row is not in the
//! row space of `A_o` (`rank [A_o; 1] > rank A_o`). A step set is a design iff this holds for
//! every output (one step table, one weight vector per output).
//!
//! # Translation symmetry (why only step sets containing the origin are searched)
//! Translating every step by one grid vector `psi` multiplies row `d` of `A_o` by the nonzero
//! constant `exp(2 pi i d . psi)`: `A_o' = D A_o` with `D` diagonal and invertible. So `A_o'`
//! and `A_o` have the same kernel, and the same `v` works with `w_m' = v_m exp(-2 pi i t_o .
//! phi_m')`. The grid is a group, so every step set translates (by minus one of its points) to
//! a step set on the grid that contains the origin and is a design iff the original is.
//! Enumerating the `C(G - 1, N - 1)` sets that contain grid point 0 (`G = prod M_j`) therefore
//! decides every `N`-point step set. Order: lexicographic in the grid point index (mixed
//! radix, field 0 fastest), so the first design found is deterministic.
//!
//! # Exactness
//! Floats only choose which exact computation to run; every verdict that is returned rests on
//! exact arithmetic, except the subsets counted in
//! [`BeyondOutcome::numerically_decided`]:
//! * a returned design has exact cyclotomic weights (Cramer's rule with root-of-unity
//!   determinants, the denominator inverted through the field norm) and is verified with
//!   [`crate::exact::ExactFilter`] on every rejected and every other kept signature
//!   (`F = 0`) and on its own (`F = 1`);
//! * an infeasible step set is certified by an exact left multiplier `y` with `y^T A_o = 1^T`
//!   (see `subset`): for full column rank this is a nonzero `N x N` minor, for deficient rank a
//!   Cramer solution checked on the remaining columns. Both are exact tests of divisibility by
//!   the cyclotomic polynomial `Phi_L`;
//! * if the exact check fails (the float rank was wrong), an infeasible verdict is kept as
//!   *numerical* and `exact_certificate` becomes false; a numerical design candidate that
//!   fails exact verification is *undecided* and stops the exhaustive claim at the level
//!   below it.

pub mod galois;
pub(crate) mod numeric;
pub(crate) mod ring;
mod subset;
#[cfg(test)]
mod tests;

use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use itertools::Itertools;
use num_complex::Complex64;
use num_rational::Ratio;
use rayon::prelude::*;

use crate::exact::{Cyclo, ExactError, ExactFilter, Turns};
use subset::{decide, exact_weights, Ctx, Verdict};

/// Largest number of steps searched (`max_steps`): the Leibniz determinants have `N!` terms.
pub const MAX_BEYOND_STEPS: usize = 8;
/// Largest number of grid steps per turn for one field.
pub const MAX_GRID_STEPS: u32 = 24;
/// Largest common order `L = lcm(M_j)`; exact inverses cost `phi(L)` field products.
pub const MAX_GRID_ORDER: u64 = 840;
/// Largest number of grid points `G = prod M_j`.
pub const MAX_GRID_POINTS: u64 = 1_000_000;
/// Largest number of step sets `C(G - 1, N - 1)` at any level `N <= max_steps`.
pub const MAX_SUBSETS_PER_LEVEL: u64 = 20_000_000;
/// Largest number of signatures (rejected plus kept).
pub const MAX_SIGNATURES: usize = 100_000;

/// Step sets handed to the worker threads at once (between time and cancel checks).
const CHUNK: usize = 2048;

/// A search request.
#[derive(Clone, Debug)]
pub struct BeyondProblem {
    /// Number of cycled fields (length of every signature).
    pub dims: usize,
    /// Steps per turn on each cycled field, `1..=24`.
    pub grid: Vec<u32>,
    /// Outputs: a name and the signature kept with `F = 1`.
    pub outputs: Vec<(String, Vec<i64>)>,
    /// Signatures every output must cancel.
    pub rejected: Vec<Vec<i64>>,
    /// Largest `N` to search, `1..=MAX_BEYOND_STEPS`.
    pub max_steps: usize,
    /// Wall-clock budget; the search stops between chunks when it is spent.
    pub time_budget: Duration,
}

/// A verified design.
#[derive(Clone, Debug, PartialEq)]
pub struct BeyondDesign {
    /// `phases[m][j]`: phase of field `j` at step `m`, in turns, in `[0, 1)`.
    pub phases: Vec<Vec<Turns>>,
    /// `weights[o][m]`: exact weight of step `m` for output `o` (order of `outputs`).
    pub weights: Vec<Vec<Cyclo>>,
    /// Number of steps.
    pub n: usize,
}

/// What the search found and how far its optimality claim reaches.
#[derive(Clone, Debug)]
pub struct BeyondOutcome {
    /// The first design found at the smallest `N` searched (exactly verified), if any.
    pub design: Option<BeyondDesign>,
    /// Every step set with at most this many points was decided and none is a design.
    pub exhaustive_up_to: usize,
    /// True if every step set counted in `exhaustive_up_to` was proven infeasible exactly.
    pub exact_certificate: bool,
    /// Step sets examined (containing the origin; see the module doc).
    pub subsets_tested: u64,
    /// Step sets judged infeasible by the float rank only (exact certificate failed).
    pub numerically_decided: u64,
    /// Numerical design candidates whose exact weights failed verification.
    pub undecided: u64,
    /// The time budget ran out.
    pub stopped_by_time: bool,
    /// The cancel flag was raised.
    pub cancelled: bool,
}

/// Errors of the search; each names the bad value and the fix.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum BeyondError {
    /// A vector has the wrong length.
    #[error("{what} has {found} entries, expected {expected} (one per cycled field)")]
    Length {
        /// Which input.
        what: String,
        /// Expected length (`dims`).
        expected: usize,
        /// Length found.
        found: usize,
    },
    /// A value is outside its allowed range.
    #[error("{what} = {value} is out of range; allowed {allowed}")]
    OutOfRange {
        /// Which input.
        what: String,
        /// The value given.
        value: u64,
        /// The allowed range.
        allowed: String,
    },
    /// The search would be too large; nothing was run.
    #[error("{what} = {value} exceeds the limit {limit}; {fix}")]
    TooLarge {
        /// What is too large.
        what: &'static str,
        /// Its value.
        value: u64,
        /// The limit.
        limit: u64,
        /// How to get under it.
        fix: String,
    },
    /// A signature to cancel differs from a kept one by a vector no step on this grid sees.
    #[error(
        "output `{output}` keeps {kept:?} but must cancel {other:?}: they differ by a multiple \
         of the grid on every field, so no phase cycle on this grid separates them; use a finer \
         grid or drop one of them"
    )]
    Inseparable {
        /// Output name.
        output: String,
        /// Its kept signature.
        kept: Vec<i64>,
        /// The signature it cannot cancel.
        other: Vec<i64>,
    },
    /// `sigma_k` was asked for with `k` not coprime to the order.
    #[error("sigma_{k} is not an automorphism of Q(zeta_{n}): {k} and {n} are not coprime")]
    NotCoprime {
        /// The exponent.
        k: i64,
        /// The field order.
        n: i64,
    },
    /// Exact arithmetic failed (limits of the exact layer).
    #[error(transparent)]
    Exact(#[from] ExactError),
    /// An internal invariant failed; a bug, please report it.
    #[error("internal error: {what}")]
    Internal {
        /// What failed.
        what: &'static str,
    },
}

/// Search step sets of `1..=max_steps` points for the smallest design (module doc). Checks
/// every limit before any work; stops early, with the partial claim, on `cancel` or when the
/// time budget is spent.
pub fn search_beyond(p: &BeyondProblem, cancel: &AtomicBool) -> Result<BeyondOutcome, BeyondError> {
    let start = Instant::now();
    let ctx = prepare(p)?;
    let g: usize = ctx.grid.iter().map(|&m| m as usize).product();
    let mut out = BeyondOutcome {
        design: None,
        exhaustive_up_to: 0,
        exact_certificate: true,
        subsets_tested: 0,
        numerically_decided: 0,
        undecided: 0,
        stopped_by_time: false,
        cancelled: false,
    };
    let mut exhaustive_ok = true;
    for n in 1..=p.max_steps.min(g) {
        let mut level_numerical = 0u64;
        let mut level_undecided = 0u64;
        let mut combos = (1..g).combinations(n - 1);
        loop {
            if cancel.load(Ordering::Relaxed) {
                out.cancelled = true;
                return Ok(out);
            }
            if start.elapsed() > p.time_budget {
                out.stopped_by_time = true;
                return Ok(out);
            }
            let chunk: Vec<Vec<usize>> = combos
                .by_ref()
                .take(CHUNK)
                .map(|c| std::iter::once(0).chain(c).collect())
                .collect();
            if chunk.is_empty() {
                break;
            }
            let verdicts: Vec<Result<Verdict, BeyondError>> =
                chunk.par_iter().map(|s| decide(&ctx, s)).collect();
            for (s, v) in chunk.iter().zip(verdicts) {
                out.subsets_tested += 1;
                match v? {
                    Verdict::Certified => {}
                    Verdict::Numerical => {
                        out.numerically_decided += 1;
                        level_numerical += 1;
                    }
                    Verdict::Candidate(choices) => match build_design(&ctx, p, s, &choices)? {
                        Some(d) => {
                            out.design = Some(d);
                            return Ok(out);
                        }
                        None => {
                            out.undecided += 1;
                            level_undecided += 1;
                        }
                    },
                }
            }
        }
        if level_undecided > 0 {
            exhaustive_ok = false;
        }
        if exhaustive_ok {
            out.exhaustive_up_to = n;
            if level_numerical > 0 {
                out.exact_certificate = false;
            }
        }
    }
    Ok(out)
}

/// Validate the problem against the limits and precompute the reduced difference rows.
fn prepare(p: &BeyondProblem) -> Result<Ctx, BeyondError> {
    let range = |what: &str, value: u64, allowed: &str| BeyondError::OutOfRange {
        what: what.to_string(),
        value,
        allowed: allowed.to_string(),
    };
    if p.dims == 0 || p.dims > crate::limits::MAX_FIELDS {
        return Err(range("dims", p.dims as u64, "1..=12 cycled fields"));
    }
    let len = |what: String, v: &[i64]| {
        if v.len() == p.dims {
            Ok(())
        } else {
            Err(BeyondError::Length {
                what,
                expected: p.dims,
                found: v.len(),
            })
        }
    };
    if p.grid.len() != p.dims {
        return Err(BeyondError::Length {
            what: "grid".into(),
            expected: p.dims,
            found: p.grid.len(),
        });
    }
    for (j, &m) in p.grid.iter().enumerate() {
        if m == 0 || m > MAX_GRID_STEPS {
            return Err(range(
                &format!("grid[{j}]"),
                m as u64,
                "1..=24 steps per turn",
            ));
        }
    }
    if p.max_steps == 0 || p.max_steps > MAX_BEYOND_STEPS {
        return Err(range("max_steps", p.max_steps as u64, "1..=8"));
    }
    if p.outputs.is_empty() {
        return Err(range("number of outputs", 0, "at least 1"));
    }
    if p.rejected.len() + p.outputs.len() > MAX_SIGNATURES {
        return Err(BeyondError::TooLarge {
            what: "number of signatures",
            value: (p.rejected.len() + p.outputs.len()) as u64,
            limit: MAX_SIGNATURES as u64,
            fix: "reduce the rejected set (e.g. use an enumerated set instead of the agnostic one)"
                .into(),
        });
    }
    for (name, t) in &p.outputs {
        len(format!("kept signature of output `{name}`"), t)?;
    }
    for (i, b) in p.rejected.iter().enumerate() {
        len(format!("rejected signature #{i}"), b)?;
    }
    let l = p
        .grid
        .iter()
        .fold(1u64, |a, &m| num_integer::lcm(a, m as u64));
    if l > MAX_GRID_ORDER {
        return Err(BeyondError::TooLarge {
            what: "lcm of the grid sizes",
            value: l,
            limit: MAX_GRID_ORDER,
            fix: "use grid sizes with a smaller common multiple (e.g. divisors of 24)".into(),
        });
    }
    let g = p.grid.iter().fold(1u64, |a, &m| a.saturating_mul(m as u64));
    if g > MAX_GRID_POINTS {
        return Err(BeyondError::TooLarge {
            what: "number of grid points",
            value: g,
            limit: MAX_GRID_POINTS,
            fix: "use a coarser grid or fewer cycled fields".into(),
        });
    }
    let worst = (1..=p.max_steps.min(g as usize))
        .map(|n| binomial(g - 1, n as u64 - 1))
        .max()
        .unwrap_or(0);
    if worst > MAX_SUBSETS_PER_LEVEL {
        let fits = (1..=p.max_steps)
            .take_while(|&n| binomial(g - 1, n as u64 - 1) <= MAX_SUBSETS_PER_LEVEL)
            .last()
            .unwrap_or(1);
        return Err(BeyondError::TooLarge {
            what: "step sets at one level",
            value: worst,
            limit: MAX_SUBSETS_PER_LEVEL,
            fix: format!("lower max_steps to {fits} or use a coarser grid"),
        });
    }
    let reduce = |d: &[i64]| -> Vec<i64> {
        d.iter()
            .zip(&p.grid)
            .map(|(x, &m)| x.rem_euclid(m as i64))
            .collect()
    };
    let mut outputs = Vec::with_capacity(p.outputs.len());
    for (o, (name, t)) in p.outputs.iter().enumerate() {
        let others = p.outputs.iter().enumerate().filter(|(k, _)| *k != o);
        let mut rows: Vec<Vec<i64>> = Vec::new();
        for b in p.rejected.iter().chain(others.map(|(_, (_, t2))| t2)) {
            // Reduce before subtracting: no overflow for any i64 input.
            let (rb, rt) = (reduce(b), reduce(t));
            let d = reduce(&rb.iter().zip(&rt).map(|(x, y)| x - y).collect::<Vec<_>>());
            if d.iter().all(|x| *x == 0) {
                return Err(BeyondError::Inseparable {
                    output: name.clone(),
                    kept: t.clone(),
                    other: b.clone(),
                });
            }
            rows.push(d);
        }
        rows.sort();
        rows.dedup();
        outputs.push((t.clone(), rows));
    }
    let roots = (0..l)
        .map(|k| Complex64::from_polar(1.0, std::f64::consts::TAU * k as f64 / l as f64))
        .collect();
    Ok(Ctx {
        l: l as u32,
        grid: p.grid.clone(),
        outputs,
        roots,
    })
}

/// `C(n, k)`, saturating at `u64::MAX`.
fn binomial(n: u64, k: u64) -> u64 {
    if k > n {
        return 0;
    }
    let k = k.min(n - k);
    let mut r: u128 = 1;
    for i in 0..k {
        r = r * (n - i) as u128 / (i + 1) as u128;
        if r > u64::MAX as u128 {
            return u64::MAX;
        }
    }
    r as u64
}

/// Exact weights for every output and exact verification; `None` if either fails.
fn build_design(
    ctx: &Ctx,
    p: &BeyondProblem,
    subset: &[usize],
    choices: &[(Vec<usize>, Vec<usize>, usize)],
) -> Result<Option<BeyondDesign>, BeyondError> {
    let phases: Vec<Vec<Turns>> = subset
        .iter()
        .map(|&pt| {
            ctx.point(pt)
                .iter()
                .zip(&ctx.grid)
                .map(|(a, &m)| Ratio::new((*a / (ctx.l / m)) as i64, m as i64))
                .collect()
        })
        .collect();
    let mut weights = Vec::with_capacity(choices.len());
    for (o, choice) in choices.iter().enumerate() {
        let Some(w) = exact_weights(ctx, o, subset, choice)? else {
            return Ok(None);
        };
        // Exact verification on the original signatures; a failure of the exact layer
        // (e.g. weights too large for its accumulator) counts as unverified.
        let Ok(filter) = ExactFilter::new(&phases, &w) else {
            return Ok(None);
        };
        let t = &p.outputs[o].1;
        let one = Cyclo::one(1)?;
        if filter.eval(t).map(|f| f != one).unwrap_or(true) {
            return Ok(None);
        }
        let others = p.outputs.iter().enumerate().filter(|(k, _)| *k != o);
        for b in p.rejected.iter().chain(others.map(|(_, (_, t2))| t2)) {
            if !filter.is_zero(b).unwrap_or(false) {
                return Ok(None);
            }
        }
        weights.push(w);
    }
    Ok(Some(BeyondDesign {
        n: subset.len(),
        phases,
        weights,
    }))
}
