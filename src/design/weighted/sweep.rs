//! One level of the search: every step set of `N` grid points through the origin, in
//! lexicographic order, split over the worker threads by its second point.
//!
//! Most step sets below the optimum fail because their matrix `A_o` has full column rank (no
//! nonzero kernel at all). That is decided without touching the exact layer: each grid
//! point gets a *compressed column*, a fixed pseudo-random combination of its `A_o` column
//! over one prime field (`k` entries instead of one per difference). The rank of compressed
//! columns is at most the rank modulo the prime, which is at most the exact rank
//! ([`super::modp`]), so `N` independent compressed columns prove full column rank exactly,
//! whatever the random combination was. The walk keeps the compressed columns of the first
//! `N - 1` points in reduced echelon form, so testing a last point costs about `N`
//! multiplications. Every step set not settled this way goes to [`super::decide::decide`].

use std::sync::atomic::{AtomicBool, Ordering};

use rayon::prelude::*;

use super::decide::{decide, Ctx, Verdict};
use super::modp::{mul, Barrett, PrimeRoot};

/// Compressed columns for every output: `cols[o][g * k + i]`.
pub(crate) struct Columns {
    /// Arithmetic modulo the prime of the compression.
    f: Barrett,
    /// Entries per column, per output.
    k: Vec<usize>,
    /// Per output, `G * k` entries.
    cols: Vec<Vec<u32>>,
}

impl Columns {
    /// Compress every grid point's column, `k <= k_max` entries per output.
    pub fn new(ctx: &Ctx, g: usize, k_max: usize) -> Columns {
        let PrimeRoot { p, w } = ctx.primes.list[0];
        let pw: Vec<u64> = (0..ctx.l as u64)
            .map(|e| super::modp::pow(w, e, p))
            .collect();
        let mut seed = 0x9E37_79B9_7F4A_7C15u64;
        let mut next = move || {
            // splitmix64: a fixed sequence, so every run compresses the same way.
            seed = seed.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = seed;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            (z ^ (z >> 31)) % p
        };
        let mut ks = Vec::new();
        let mut cols = Vec::new();
        for (_, rows) in &ctx.outputs {
            let r = rows.len();
            let k = r.min(k_max);
            let mix: Option<Vec<u64>> = (r > k).then(|| (0..k * r).map(|_| next()).collect());
            let mut c = vec![0u32; g * k];
            for pt in 0..g {
                let a = ctx.point(pt);
                let vals: Vec<u64> = rows
                    .iter()
                    .map(|d| pw[ctx.exponent(d, &a) as usize])
                    .collect();
                for i in 0..k {
                    c[pt * k + i] = match &mix {
                        None => vals[i] as u32,
                        Some(m) => vals
                            .iter()
                            .zip(&m[i * r..(i + 1) * r])
                            .fold(0u64, |s, (v, x)| (s + mul(*v, *x, p)) % p)
                            as u32,
                    };
                }
            }
            ks.push(k);
            cols.push(c);
        }
        Columns {
            f: Barrett::new(p),
            k: ks,
            cols,
        }
    }

    fn col(&self, o: usize, g: usize) -> &[u32] {
        &self.cols[o][g * self.k[o]..(g + 1) * self.k[o]]
    }
}

/// A basis of compressed columns in reduced echelon form, stored flat: vector `i` is
/// `vecs[i * k..(i + 1) * k]`, has 1 at `pivots[i]` and 0 at every other pivot.
#[derive(Clone, Debug, Default)]
struct Basis {
    k: usize,
    pivots: Vec<usize>,
    vecs: Vec<u64>,
}

impl Basis {
    fn new(k: usize, capacity: usize) -> Basis {
        Basis {
            k,
            pivots: Vec::with_capacity(capacity),
            vecs: Vec::with_capacity(capacity * k),
        }
    }

    /// Become a copy of `other` without allocating.
    fn copy_from(&mut self, other: &Basis) {
        self.k = other.k;
        self.pivots.clear();
        self.pivots.extend_from_slice(&other.pivots);
        self.vecs.clear();
        self.vecs.extend_from_slice(&other.vecs);
    }

    /// Append `c` (its first `k` entries) if independent, keeping the reduced form; false
    /// if it is in the span.
    fn push(&mut self, c: &[u32], fp: &Barrett) -> bool {
        let k = self.k;
        let start = self.vecs.len();
        self.vecs.extend(c[..k].iter().map(|&x| x as u64));
        for (i, &pv) in self.pivots.iter().enumerate() {
            let f = self.vecs[start + pv];
            if f != 0 {
                let (done, new) = self.vecs.split_at_mut(start);
                for (x, y) in new.iter_mut().zip(&done[i * k..(i + 1) * k]) {
                    *x = fp.sub_mul(*x, f, *y);
                }
            }
        }
        let Some(pv) = self.vecs[start..].iter().position(|&x| x != 0) else {
            self.vecs.truncate(start);
            return false;
        };
        let iv = fp.inv(self.vecs[start + pv]);
        self.vecs[start..]
            .iter_mut()
            .for_each(|x| *x = fp.mul(*x, iv));
        // Clear the new pivot from the earlier vectors.
        let (done, new) = self.vecs.split_at_mut(start);
        for i in 0..self.pivots.len() {
            let row = &mut done[i * k..(i + 1) * k];
            let f = row[pv];
            if f != 0 {
                for (x, y) in row.iter_mut().zip(new.iter()) {
                    *x = fp.sub_mul(*x, f, *y);
                }
            }
        }
        self.pivots.push(pv);
        true
    }

    /// True if `c` is outside the span (so the columns with it are independent): some
    /// non-pivot entry differs from what the pivot entries predict.
    fn independent(&self, c: &[u32], fp: &Barrett) -> bool {
        let k = self.k;
        (0..k).filter(|f| !self.pivots.contains(f)).any(|f| {
            let s = self.pivots.iter().enumerate().fold(0u64, |s, (i, pv)| {
                fp.add_mul(s, c[*pv] as u64, self.vecs[i * k + f])
            });
            s != c[f] as u64
        })
    }
}

/// What one level (or one part of it) found.
#[derive(Clone, Debug, Default)]
pub(crate) struct LevelResult {
    /// Step sets examined.
    pub tested: u64,
    /// Step sets that needed the exact multi-prime decision.
    pub exact_decisions: u64,
    /// Step sets carrying a design.
    pub feasible: u64,
    /// The first step set of the best noise efficiency, its spanning rows per output and
    /// that efficiency.
    pub best: Option<(Vec<usize>, Vec<Vec<usize>>, f64)>,
    /// The cancel flag stopped the level.
    pub cancelled: bool,
}

impl LevelResult {
    fn offer(&mut self, set: &[usize], v: Verdict) {
        if let Verdict::Feasible { rows, efficiency } = v {
            self.feasible += 1;
            let better = self.best.as_ref().is_none_or(|b| efficiency > b.2 + 1e-12);
            if better {
                self.best = Some((set.to_vec(), rows, efficiency));
            }
        }
    }

    /// Merge a later part (in enumeration order) into this one.
    fn merge(&mut self, other: LevelResult) {
        self.tested += other.tested;
        self.exact_decisions += other.exact_decisions;
        self.cancelled |= other.cancelled;
        let feasible = self.feasible + other.feasible;
        if let Some((s, r, e)) = other.best {
            self.offer(
                &s,
                Verdict::Feasible {
                    rows: r,
                    efficiency: e,
                },
            );
        }
        self.feasible = feasible;
    }
}

/// Sweep every `n`-point step set through the origin on `g` grid points.
pub(crate) fn sweep_level(
    ctx: &Ctx,
    cols: Option<&Columns>,
    g: usize,
    n: usize,
    cancel: &AtomicBool,
) -> LevelResult {
    let Some(cols) = cols.filter(|_| n >= 2) else {
        return plain(ctx, g, n, cancel);
    };
    // The filter uses the output with the most differences, the first `n + 1` compressed
    // entries (a random compression's leading rows are one too).
    let o = (0..cols.k.len())
        .max_by_key(|&o| (cols.k[o], usize::MAX - o))
        .unwrap_or(0);
    let k = cols.k[o].min(n + 1);
    let parts: Vec<LevelResult> = (1..g)
        .into_par_iter()
        .map(|s1| {
            let mut out = LevelResult::default();
            if cancel.load(Ordering::Relaxed) {
                out.cancelled = true;
                return out;
            }
            let mut stack: Vec<Basis> = (0..=n).map(|_| Basis::new(k, n)).collect();
            let ok =
                stack[2].push(cols.col(o, 0), &cols.f) && stack[2].push(cols.col(o, s1), &cols.f);
            let mut set = vec![0, s1];
            let walker = Walker {
                ctx,
                cols,
                o,
                g,
                n,
                cancel,
            };
            walker.walk(&mut set, ok, &mut stack, &mut out);
            out
        })
        .collect();
    let mut total = LevelResult::default();
    for part in parts {
        total.merge(part);
    }
    total
}

/// The fixed data of one level's walk.
struct Walker<'a> {
    ctx: &'a Ctx,
    cols: &'a Columns,
    /// The output whose compressed columns filter.
    o: usize,
    g: usize,
    n: usize,
    cancel: &'a AtomicBool,
}

impl Walker<'_> {
    /// Depth-first extension of `set` (its last entry largest) to `n` points; `stack[d]`
    /// holds the basis of the first `d` points, `ok` says they were independent.
    fn walk(&self, set: &mut Vec<usize>, ok: bool, stack: &mut [Basis], out: &mut LevelResult) {
        let (n, g, p) = (self.n, self.g, &self.cols.f);
        let last = *set.last().expect("the set holds the origin");
        let depth = set.len();
        if depth == n {
            // Only reached for n == 2 (the leaves of longer sets are tested below).
            out.tested += 1;
            if !ok {
                out.exact_decisions += 1;
                out.offer(set, decide(self.ctx, set));
            }
            return;
        }
        if depth + 1 == n {
            for s in last + 1..g {
                out.tested += 1;
                if !(ok && stack[depth].independent(self.cols.col(self.o, s), p)) {
                    set.push(s);
                    out.exact_decisions += 1;
                    out.offer(set, decide(self.ctx, set));
                    set.pop();
                }
            }
            return;
        }
        for s in last + 1..g {
            if self.cancel.load(Ordering::Relaxed) {
                out.cancelled = true;
                return;
            }
            let (lower, upper) = stack.split_at_mut(depth + 1);
            let next = &mut upper[0];
            next.copy_from(&lower[depth]);
            let ok_next = ok && next.push(self.cols.col(self.o, s), p);
            set.push(s);
            self.walk(set, ok_next, stack, out);
            set.pop();
        }
    }
}

/// Every step set decided exactly, one at a time (tiny levels).
fn plain(ctx: &Ctx, g: usize, n: usize, cancel: &AtomicBool) -> LevelResult {
    use itertools::Itertools;
    let mut out = LevelResult::default();
    for c in (1..g).combinations(n - 1) {
        if cancel.load(Ordering::Relaxed) {
            out.cancelled = true;
            return out;
        }
        let set: Vec<usize> = std::iter::once(0).chain(c).collect();
        out.tested += 1;
        out.exact_decisions += 1;
        out.offer(&set, decide(ctx, &set));
    }
    out
}
