//! Deciding one step set exactly, and how good its best weights are.
//!
//! For output `o` the matrix `A_o` has one row per reduced difference `d` and one column per
//! step, entries `zeta_L^(L d . phi_m)`. The step set carries a design for `o` iff the
//! all-ones row is not in the row space of `A_o`, i.e. `rank [A_o; 1] > rank A_o` (module doc
//! of [`super`]). Both ranks are computed exactly as the largest rank over a family of prime
//! fields ([`super::modp`]). The noise efficiency of the best weights for a feasible set is
//! `||P 1|| / sqrt(N)` with `P` the orthogonal projection onto the kernel of `A_o`: the
//! Cauchy-Schwarz bound `|sum v| <= ||P 1|| ||v||` for `v` in the kernel is attained by
//! `v = P 1`. That figure is computed in floats from an exactly independent set of rows and
//! only ranks the candidates; the chosen design's weights are exact ([`super::weights`]).

use num_complex::Complex64;

use super::modp::{rank_rows, Primes};

/// The precomputed data of a search: the grid, and per output the reduced differences.
#[derive(Clone, Debug)]
pub(crate) struct Ctx {
    /// Common order `L = lcm(grid)`.
    pub l: u32,
    /// Steps per turn for each field.
    pub grid: Vec<u32>,
    /// Per output: reference signature and the distinct nonzero differences `d = b - t`
    /// reduced modulo the grid (`d_j mod M_j`: the phase factors only see that).
    pub outputs: Vec<(Vec<i64>, Vec<Vec<i64>>)>,
    /// `zeta_L^k` as floats, `k in [0, L)`.
    pub roots: Vec<Complex64>,
    /// Primes whose largest modular rank is exact for every matrix of the search.
    pub primes: Primes,
}

/// The exact verdict on one step set for every output.
#[derive(Clone, Debug)]
pub(crate) enum Verdict {
    /// For some output no weights work (exact).
    Infeasible,
    /// Every output has weights: per output a set of rows of `A_o` that is independent and
    /// spans its row space (exact), and the float noise efficiency of the best weights.
    Feasible {
        /// Per output, the spanning independent rows.
        rows: Vec<Vec<usize>>,
        /// Smallest noise efficiency over the outputs.
        efficiency: f64,
    },
}

impl Ctx {
    /// Phase numerators over `L` of grid point `p` (mixed radix, field 0 fastest).
    pub fn point(&self, mut p: usize) -> Vec<u32> {
        self.grid
            .iter()
            .map(|&m| {
                let k = (p % m as usize) as u32;
                p /= m as usize;
                k * (self.l / m)
            })
            .collect()
    }

    /// Exponent of `zeta_L` in `exp(2 pi i d . phi)` for a point given by its numerators.
    pub fn exponent(&self, d: &[i64], a: &[u32]) -> u32 {
        let l = self.l as i64;
        let e = d
            .iter()
            .zip(a)
            .fold(0i64, |e, (dj, aj)| (e + dj.rem_euclid(l) * *aj as i64) % l);
        e as u32
    }

    /// Exponent matrix of output `o` on the step set (rows: differences, cols: steps).
    pub fn exps(&self, o: usize, pts: &[Vec<u32>]) -> Vec<u32> {
        let rows = &self.outputs[o].1;
        let mut out = Vec::with_capacity(rows.len() * pts.len());
        for d in rows {
            out.extend(pts.iter().map(|a| self.exponent(d, a)));
        }
        out
    }
}

/// Exact ranks of `A` (`rows x n`, exponents `e`) and of `[A; 1]`, with a set of rows of
/// `A` that is independent over `Q(zeta_L)` and spans its row space.
fn exact_ranks(ctx: &Ctx, e: &[u32], rows: usize, n: usize) -> (usize, usize, Vec<usize>) {
    let (mut ra, mut r1, mut best_rows) = (0, 0, Vec::new());
    let mut m = Vec::with_capacity((rows + 1) * n);
    for pr in &ctx.primes.list {
        let pw: Vec<u64> = (0..ctx.l as u64)
            .scan(1u64, |acc, _| {
                let v = *acc;
                *acc = *acc * pr.w % pr.p;
                Some(v)
            })
            .collect();
        m.clear();
        m.extend(e.iter().map(|&k| pw[k as usize]));
        let (rank_a, indep) = rank_rows(&mut m, rows, n, pr.p);
        if rank_a > ra {
            ra = rank_a;
            best_rows = indep;
        }
        if ra == n {
            // Full column rank: the kernel is zero and `[A; 1]` cannot have more rank.
            return (ra, ra, best_rows);
        }
        m.clear();
        m.extend(e.iter().map(|&k| pw[k as usize]));
        m.extend(std::iter::repeat_n(1u64, n));
        let (rank_1, _) = rank_rows(&mut m, rows + 1, n, pr.p);
        r1 = r1.max(rank_1);
    }
    (ra, r1, best_rows)
}

/// Decide one step set (given by grid point indices) exactly for every output.
pub(crate) fn decide(ctx: &Ctx, subset: &[usize]) -> Verdict {
    let pts: Vec<Vec<u32>> = subset.iter().map(|&p| ctx.point(p)).collect();
    let n = pts.len();
    let mut spanning = Vec::with_capacity(ctx.outputs.len());
    let mut efficiency = f64::INFINITY;
    for o in 0..ctx.outputs.len() {
        let e = ctx.exps(o, &pts);
        let rows = ctx.outputs[o].1.len();
        let (ra, r1, indep) = exact_ranks(ctx, &e, rows, n);
        if r1 == ra {
            return Verdict::Infeasible;
        }
        efficiency = efficiency.min(kernel_efficiency(ctx, &e, n, &indep));
        spanning.push(indep);
    }
    Verdict::Feasible {
        rows: spanning,
        efficiency,
    }
}

/// `||P 1|| / sqrt(n)`, `P` the projection onto `{v : A v = 0}`, from independent rows of
/// `A` that span its row space (modified Gram-Schmidt, two passes).
fn kernel_efficiency(ctx: &Ctx, e: &[u32], n: usize, rows: &[usize]) -> f64 {
    let dot = |a: &[Complex64], b: &[Complex64]| -> Complex64 {
        a.iter().zip(b).map(|(x, y)| x.conj() * y).sum()
    };
    // A v = 0 iff v is orthogonal to the conjugated rows.
    let mut basis: Vec<Vec<Complex64>> = Vec::with_capacity(rows.len());
    for &r in rows {
        let mut v: Vec<Complex64> = (0..n)
            .map(|m| ctx.roots[e[r * n + m] as usize].conj())
            .collect();
        for _ in 0..2 {
            for q in &basis {
                let c = dot(q, &v);
                v.iter_mut().zip(q).for_each(|(x, y)| *x -= c * y);
            }
        }
        let nv = dot(&v, &v).re.sqrt();
        if nv > 0.0 {
            basis.push(v.iter().map(|x| x / nv).collect());
        }
    }
    let mut one = vec![Complex64::new(1.0, 0.0); n];
    for _ in 0..2 {
        for q in &basis {
            let c = dot(q, &one);
            one.iter_mut().zip(q).for_each(|(x, y)| *x -= c * y);
        }
    }
    (dot(&one, &one).re / n as f64).sqrt()
}
