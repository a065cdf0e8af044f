//! Deciding one step set exactly. For each output the float elimination of
//! [`super::numeric`] proposes either a design (a kernel vector with nonzero sum) or
//! infeasibility; this module turns the proposal into exact arithmetic:
//!
//! * **Infeasible, certified.** With pivot rows `R` and pivot columns `P` (`r` of each),
//!   `den = det A[R,P]` is computed exactly (Leibniz) and must be nonzero. Cramer's rule for
//!   `y^T A[R,P] = den * 1^T` gives `y_i = det(A[R,P] with row i replaced by ones)`, again a
//!   root-of-unity determinant, and the identity holds on the pivot columns by construction.
//!   If also `sum_i y_i A[R_i][c] = den` exactly for every other column `c`, then
//!   `(y/den)^T A = 1^T`: the all-ones row lies in the row space, so every `v` with `A v = 0`
//!   has `sum v = 0` and no weights work. For `r = N` there are no other columns and this is
//!   just the nonzero `N x N` minor. All tests are exact divisibility tests by `Phi_L`.
//! * **Candidate design.** For a free column `f` with a kernel vector of nonzero sum, solve
//!   the square system `A[R, P+f] v = 0`, `sum v = 1` (other free variables 0) by Cramer's
//!   rule: the denominator has the all-ones row appended (still a root-of-unity matrix, and
//!   nonzero iff that kernel vector's sum is nonzero), each numerator is, up to sign, an
//!   `r x r` minor of `A[R, P+f]`. The caller verifies the weights on every signature.

use num_complex::Complex64;

use super::galois::inverse;
use super::numeric::{eliminate, Elimination};
use super::ring::{add_shifted, is_zero_at_zeta, leibniz_det, to_cyclo, RingPoly};
use super::BeyondError;
use crate::exact::Cyclo;

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
}

/// What the float triage and the exact certificate say about one step set.
#[derive(Clone, Debug)]
pub(crate) enum Verdict {
    /// No weights work, proven exactly for at least one output.
    Certified,
    /// No weights work according to the float rank; the exact certificate failed.
    Numerical,
    /// Every output has a numerical solution: `(pivot rows, pivot cols, free col)` each.
    Candidate(Vec<(Vec<usize>, Vec<usize>, usize)>),
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
    fn exps(&self, o: usize, pts: &[Vec<u32>]) -> Vec<u32> {
        let rows = &self.outputs[o].1;
        let mut out = Vec::with_capacity(rows.len() * pts.len());
        for d in rows {
            out.extend(pts.iter().map(|a| self.exponent(d, a)));
        }
        out
    }
}

/// Exponents of the submatrix with the given rows and columns (`None` row: all ones).
fn sub_exps(e: &[u32], cols_total: usize, rows: &[Option<usize>], cols: &[usize]) -> Vec<u32> {
    let mut out = Vec::with_capacity(rows.len() * cols.len());
    for r in rows {
        for &c in cols {
            out.push(r.map_or(0, |r| e[r * cols_total + c]));
        }
    }
    out
}

/// Decide one step set (given by grid point indices).
pub(crate) fn decide(ctx: &Ctx, subset: &[usize]) -> Result<Verdict, BeyondError> {
    let pts: Vec<Vec<u32>> = subset.iter().map(|&p| ctx.point(p)).collect();
    let n = pts.len();
    let mut choices = Vec::with_capacity(ctx.outputs.len());
    let mut numerical = false;
    for o in 0..ctx.outputs.len() {
        let e = ctx.exps(o, &pts);
        let rows = ctx.outputs[o].1.len();
        let a: Vec<Complex64> = e.iter().map(|k| ctx.roots[*k as usize]).collect();
        let el = eliminate(&a, rows, n);
        match el.best_free_column() {
            Some(f) => choices.push((el.pivot_rows.clone(), el.pivot_cols.clone(), f)),
            None => {
                if certify(ctx.l, &e, n, &el)? {
                    return Ok(Verdict::Certified);
                }
                numerical = true;
            }
        }
    }
    Ok(if numerical {
        Verdict::Numerical
    } else {
        Verdict::Candidate(choices)
    })
}

/// The exact certificate of infeasibility described in the module doc.
fn certify(l: u32, e: &[u32], n: usize, el: &Elimination) -> Result<bool, BeyondError> {
    let r = el.rank();
    if r == 0 {
        return Ok(false);
    }
    let rows: Vec<Option<usize>> = el.pivot_rows.iter().map(|&i| Some(i)).collect();
    let den = leibniz_det(&sub_exps(e, n, &rows, &el.pivot_cols), r, l);
    if is_zero_at_zeta(&den, l)? {
        return Ok(false);
    }
    if r == n {
        return Ok(true);
    }
    let y: Vec<RingPoly> = (0..r)
        .map(|i| {
            let mut rr = rows.clone();
            rr[i] = None;
            leibniz_det(&sub_exps(e, n, &rr, &el.pivot_cols), r, l)
        })
        .collect();
    for c in (0..n).filter(|c| !el.pivot_cols.contains(c)) {
        let mut acc: RingPoly = den.iter().map(|x| -x).collect();
        for (i, yi) in y.iter().enumerate() {
            add_shifted(&mut acc, yi, e[el.pivot_rows[i] * n + c], 1);
        }
        if !is_zero_at_zeta(&acc, l)? {
            return Ok(false);
        }
    }
    Ok(true)
}

/// Exact weights for output `o` on the step set from a numerical choice, or `None` if the
/// exact denominator vanishes. Weights are `v_m * exp(-2 pi i t . phi_m)` so that
/// `F(t) = sum v = 1`; steps outside the chosen columns get weight 0.
pub(crate) fn exact_weights(
    ctx: &Ctx,
    o: usize,
    subset: &[usize],
    choice: &(Vec<usize>, Vec<usize>, usize),
) -> Result<Option<Vec<Cyclo>>, BeyondError> {
    let l = ctx.l;
    let pts: Vec<Vec<u32>> = subset.iter().map(|&p| ctx.point(p)).collect();
    let n = pts.len();
    let e = ctx.exps(o, &pts);
    let (prow, pcol, f) = choice;
    let r = prow.len();
    let mut cols = pcol.clone();
    cols.push(*f);
    cols.sort_unstable();
    let mut rows: Vec<Option<usize>> = prow.iter().map(|&i| Some(i)).collect();
    rows.push(None);
    let den = leibniz_det(&sub_exps(&e, n, &rows, &cols), r + 1, l);
    if is_zero_at_zeta(&den, l)? {
        return Ok(None);
    }
    let inv = inverse(&to_cyclo(&den, l)?)?;
    let mut w = vec![Cyclo::zero(l)?; n];
    let (t, _) = &ctx.outputs[o];
    for i in 0..=r {
        let minor_cols: Vec<usize> = cols
            .iter()
            .enumerate()
            .filter(|(k, _)| *k != i)
            .map(|(_, c)| *c)
            .collect();
        let minor = leibniz_det(&sub_exps(&e, n, &rows[..r], &minor_cols), r, l);
        let mut v = to_cyclo(&minor, l)?.mul(&inv)?;
        if (r + i) % 2 == 1 {
            v = v.neg();
        }
        let m = cols[i];
        let et = ctx.exponent(t, &pts[m]);
        w[m] = v.mul_root_of_unity(-(et as i64));
    }
    Ok(Some(w))
}
