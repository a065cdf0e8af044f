//! Smallest phase cycles **beyond lattice designs**: exhaustive search over all step sets of
//! `N` grid points with free complex weights, level by level `N = 1, 2, ..`, with exact
//! verdicts. The work is bounded by a step count and a number of step sets, never by a
//! clock, so the same problem always gets the same answer. This module owns the driver, its
//! problem and outcome types and its limits; [`modp`] computes exact ranks through prime
//! fields, `decide` settles one step set, `sweep` walks one level over both cores, `weights`
//! builds the exact weights and [`galois`] the exact inverses.
//!
//! # The question for one step set
//! Signatures are restricted to the cycled fields. Output `o` keeps its reference signature
//! `t_o` and must cancel `D_o = {b - t_o}` for every rejected `b` and every other output's
//! `t`. For steps `phi_1..phi_N` put `v_m = w_m exp(2 pi i t_o . phi_m)`; then
//! `F_o(t_o) = sum_m v_m` and `F_o(b) = sum_m A_o[d][m] v_m` with
//! `A_o[d][m] = exp(2 pi i d . phi_m) = zeta_L^(L d . phi_m)`, `L = lcm(M_j)`. Weights exist iff
//! some `v` in the kernel of `A_o` has `sum v != 0`, i.e. iff the all-ones row is not in the
//! row space of `A_o` (`rank [A_o; 1] > rank A_o`). A step set is a design iff this holds for
//! every output (one step table, one weight vector per output). Among the designs of the
//! smallest `N` the search returns the first (in enumeration order) of the best noise
//! efficiency, with the weights that maximise it (`weights`): non-group step sets, unit-modulus
//! and unequal weights are all in the class searched.
//!
//! # Translation symmetry (why only step sets containing the origin are searched)
//! Translating every step by one grid vector `psi` multiplies row `d` of `A_o` by the nonzero
//! constant `exp(2 pi i d . psi)`: `A_o' = D A_o` with `D` diagonal and invertible. So `A_o'`
//! and `A_o` have the same kernel, and the same `v` works with `w_m' = v_m exp(-2 pi i t_o .
//! phi_m')` and the same noise efficiency. The grid is a group, so every step set translates
//! (by minus one of its points) to a step set on the grid that contains the origin and is a
//! design iff the original is. Enumerating the `C(G - 1, N - 1)` sets that contain grid point
//! 0 (`G = prod M_j`) therefore decides every `N`-point step set. Order: lexicographic in the
//! grid point index (mixed radix, field 0 fastest).
//!
//! # Exactness
//! Every verdict is exact: ranks are exact ranks over `Q(zeta_L)` computed through prime
//! fields (module [`modp`]), a returned design has exact cyclotomic weights and is verified
//! with [`crate::exact::ExactFilter`] on every rejected and every other kept signature
//! (`F = 0`) and on its own (`F = 1`). Floats only rank equal-length designs by noise
//! efficiency.

mod decide;
pub mod galois;
pub(crate) mod modp;
mod sweep;
#[cfg(test)]
mod tests;
mod weights;

use std::sync::atomic::AtomicBool;

use num_complex::Complex64;
use num_rational::Ratio;

use crate::exact::{Cyclo, ExactError, ExactFilter, Turns};
use decide::Ctx;
use modp::Primes;
use sweep::{sweep_level, Columns};

/// Largest number of steps searched (`max_steps`).
pub const MAX_BEYOND_STEPS: usize = 16;
/// Largest number of grid steps per turn for one field.
pub const MAX_GRID_STEPS: u32 = 24;
/// Largest common order `L = lcm(M_j)`; exact inverses cost `phi(L)` field products.
pub const MAX_GRID_ORDER: u64 = 840;
/// Largest number of grid points `G = prod M_j`.
pub const MAX_GRID_POINTS: u64 = 1_000_000;
/// Largest work limit `max_step_sets` (step sets through the origin over all levels).
pub const MAX_STEP_SETS: u64 = 100_000_000_000;
/// Largest number of signatures (rejected plus kept).
pub const MAX_SIGNATURES: usize = 100_000;
/// Largest `G x (differences of all outputs)`: the size of the compressed-column table.
pub const MAX_TABLE: u64 = 200_000_000;

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
    /// Work limit: a level is searched only if its step sets (through the origin), added to
    /// those of the levels before, stay within this number.
    pub max_step_sets: u64,
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
    /// Smallest noise efficiency `|F(t)| / sqrt(N sum |w|^2)` over the outputs.
    pub noise_efficiency: f64,
}

/// Why the search stopped before `max_steps` without a design.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BeyondStop {
    /// Every level through `max_steps` was searched.
    Completed,
    /// Level `steps` has `step_sets` step sets, more than the work limit left.
    WorkLimit {
        /// The level not searched.
        steps: usize,
        /// Its step sets through the origin.
        step_sets: u64,
    },
    /// The cancel flag was raised.
    Cancelled,
}

/// What the search found and how far its optimality claim reaches.
#[derive(Clone, Debug)]
pub struct BeyondOutcome {
    /// The design of the best noise efficiency at the smallest `N` that has one.
    pub design: Option<BeyondDesign>,
    /// Every step set with at most this many points was decided exactly and none is a design.
    pub exhaustive_up_to: usize,
    /// Step sets examined (containing the origin; see the module doc).
    pub subsets_tested: u64,
    /// Step sets that needed the exact multi-prime decision (the rest were settled by the
    /// compressed-column rank).
    pub exact_decisions: u64,
    /// Step sets through the origin of the design's length that carry a design.
    pub designs_at_minimum: u64,
    /// Why the search ended.
    pub stop: BeyondStop,
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
/// every limit before any work; a level that does not fit the work limit is not started, and
/// the cancel flag stops the search with the claim of the levels completed.
pub fn search_beyond(p: &BeyondProblem, cancel: &AtomicBool) -> Result<BeyondOutcome, BeyondError> {
    let ctx = prepare(p)?;
    let g: usize = ctx.grid.iter().map(|&m| m as usize).product();
    let mut out = BeyondOutcome {
        design: None,
        exhaustive_up_to: 0,
        subsets_tested: 0,
        exact_decisions: 0,
        designs_at_minimum: 0,
        stop: BeyondStop::Completed,
    };
    let mut columns: Option<Columns> = None;
    let mut budget = p.max_step_sets;
    let table: u64 = ctx.outputs.iter().map(|(_, r)| r.len() as u64).sum::<u64>() * g as u64;
    for n in 1..=p.max_steps.min(g) {
        let count = binomial(g as u64 - 1, n as u64 - 1);
        if count > budget {
            out.stop = BeyondStop::WorkLimit {
                steps: n,
                step_sets: count,
            };
            return Ok(out);
        }
        budget -= count;
        if n >= 3 && columns.is_none() && table <= MAX_TABLE {
            columns = Some(Columns::new(&ctx, g, p.max_steps + 3));
        }
        let level = sweep_level(&ctx, columns.as_ref(), g, n, cancel);
        out.subsets_tested += level.tested;
        out.exact_decisions += level.exact_decisions;
        if level.cancelled {
            out.stop = BeyondStop::Cancelled;
            return Ok(out);
        }
        if let Some((set, rows, _)) = level.best {
            out.designs_at_minimum = level.feasible;
            out.design = Some(build_design(&ctx, p, &set, &rows)?);
            return Ok(out);
        }
        out.exhaustive_up_to = n;
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
        return Err(range("max_steps", p.max_steps as u64, "1..=16"));
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
    if p.max_step_sets > MAX_STEP_SETS {
        return Err(range(
            "max_step_sets",
            p.max_step_sets,
            "0..=100000000000 step sets",
        ));
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
    let rank_bound = p.max_steps.min(g as usize);
    Ok(Ctx {
        l: l as u32,
        grid: p.grid.clone(),
        outputs,
        roots,
        primes: Primes::new(l as u32, Primes::for_rank(l as u32, rank_bound)),
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

/// Exact weights for every output and exact verification of the chosen step set.
fn build_design(
    ctx: &Ctx,
    p: &BeyondProblem,
    subset: &[usize],
    rows: &[Vec<usize>],
) -> Result<BeyondDesign, BeyondError> {
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
    let failed = BeyondError::Internal {
        what: "exact weights of a feasible step set failed verification",
    };
    let mut weights = Vec::with_capacity(rows.len());
    let mut efficiency = f64::INFINITY;
    for (o, spanning) in rows.iter().enumerate() {
        let w = weights::exact_weights(ctx, o, subset, spanning)?;
        let filter = ExactFilter::new(&phases, &w)?;
        let t = &p.outputs[o].1;
        if filter.eval(t)? != Cyclo::one(1)? {
            return Err(failed);
        }
        let others = p.outputs.iter().enumerate().filter(|(k, _)| *k != o);
        for b in p.rejected.iter().chain(others.map(|(_, (_, t2))| t2)) {
            if !filter.is_zero(b)? {
                return Err(failed);
            }
        }
        let sum_sq: f64 = w.iter().map(|c| c.to_complex().norm_sqr()).sum();
        efficiency = efficiency.min(1.0 / (subset.len() as f64 * sum_sq).sqrt());
        weights.push(w);
    }
    Ok(BeyondDesign {
        n: subset.len(),
        phases,
        weights,
        noise_efficiency: efficiency,
    })
}
