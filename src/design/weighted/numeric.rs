//! Floating-point triage for one candidate step set: Gaussian elimination with complete
//! pivoting on the complex matrix `A` (rows: differences `d`, columns: steps) gives a
//! numerical rank, pivot rows and columns, and a kernel basis. Nothing decided here is final:
//! the caller turns each outcome into an exact certificate or an exact design (module
//! [`super::subset`]); the floats only say which exact computation to try.

use num_complex::Complex64;

/// Pivots below this modulus count as zero. Entries are unit-modulus roots of unity and the
/// matrices have at most 8 columns, so genuine pivots are far larger; a wrong call here only
/// costs an exact check that fails (counted as undecided), never a wrong answer.
pub(crate) const PIVOT_TOL: f64 = 1e-9;

/// Result of the elimination.
#[derive(Clone, Debug)]
pub(crate) struct Elimination {
    /// Original indices of the pivot rows, in pivot order (`rank` of them).
    pub pivot_rows: Vec<usize>,
    /// Original indices of the pivot columns, in pivot order.
    pub pivot_cols: Vec<usize>,
    /// One kernel basis vector per free column: `(free column, vector over all columns)`.
    pub kernel: Vec<(usize, Vec<Complex64>)>,
}

impl Elimination {
    /// Numerical rank.
    pub fn rank(&self) -> usize {
        self.pivot_rows.len()
    }

    /// The free column whose kernel vector has the largest `|sum|` relative to its size, if
    /// that sum is clearly nonzero: then `v` with `A v = 0`, `sum v != 0` exists (numerically).
    pub fn best_free_column(&self) -> Option<usize> {
        let mut best: Option<(usize, f64)> = None;
        for (f, v) in &self.kernel {
            let size = v.iter().map(|x| x.norm()).fold(1.0, f64::max);
            let s = v.iter().sum::<Complex64>().norm() / size;
            if s > 1e-7 && best.is_none_or(|(_, b)| s > b) {
                best = Some((*f, s));
            }
        }
        best.map(|(f, _)| f)
    }
}

/// Eliminate the `rows x cols` row-major matrix `a` with complete pivoting.
pub(crate) fn eliminate(a: &[Complex64], rows: usize, cols: usize) -> Elimination {
    let mut m = a.to_vec();
    let mut rp: Vec<usize> = (0..rows).collect();
    let mut cp: Vec<usize> = (0..cols).collect();
    let mut rank = 0;
    while rank < rows.min(cols) {
        // Largest remaining entry (first one on ties: deterministic).
        let (mut bi, mut bj, mut bv) = (rank, rank, -1.0);
        for i in rank..rows {
            for j in rank..cols {
                let v = m[i * cols + j].norm();
                if v > bv {
                    (bi, bj, bv) = (i, j, v);
                }
            }
        }
        if bv < PIVOT_TOL {
            break;
        }
        if bi != rank {
            for j in 0..cols {
                m.swap(bi * cols + j, rank * cols + j);
            }
            rp.swap(bi, rank);
        }
        if bj != rank {
            for i in 0..rows {
                m.swap(i * cols + bj, i * cols + rank);
            }
            cp.swap(bj, rank);
        }
        let p = m[rank * cols + rank];
        for i in rank + 1..rows {
            let f = m[i * cols + rank] / p;
            if f.norm() == 0.0 {
                continue;
            }
            for j in rank..cols {
                let v = m[rank * cols + j];
                m[i * cols + j] -= f * v;
            }
        }
        rank += 1;
    }
    // Kernel: for each free (permuted) column f, x_f = 1, other free 0, back-substitute.
    let mut kernel = Vec::with_capacity(cols - rank);
    for f in rank..cols {
        let mut x = vec![Complex64::new(0.0, 0.0); cols];
        x[f] = Complex64::new(1.0, 0.0);
        for i in (0..rank).rev() {
            let mut s = m[i * cols + f];
            for j in i + 1..rank {
                s += m[i * cols + j] * x[j];
            }
            x[i] = -s / m[i * cols + i];
        }
        let mut v = vec![Complex64::new(0.0, 0.0); cols];
        for (k, xk) in x.into_iter().enumerate() {
            v[cp[k]] = xk;
        }
        kernel.push((cp[f], v));
    }
    Elimination {
        pivot_rows: rp[..rank].to_vec(),
        pivot_cols: cp[..rank].to_vec(),
        kernel,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn c(re: f64) -> Complex64 {
        Complex64::new(re, 0.0)
    }

    #[test]
    fn rank_and_kernel_by_hand() {
        // [[1, 1, 1], [1, -1, 1]]: rank 2, kernel spanned by (1, 0, -1) (hand computation).
        let a = [c(1.0), c(1.0), c(1.0), c(1.0), c(-1.0), c(1.0)];
        let e = eliminate(&a, 2, 3);
        assert_eq!(e.rank(), 2);
        assert_eq!(e.kernel.len(), 1);
        let v = &e.kernel[0].1;
        for r in 0..2 {
            let s: Complex64 = (0..3).map(|j| a[r * 3 + j] * v[j]).sum();
            assert!(s.norm() < 1e-12);
        }
        assert!((v[0] + v[2]).norm() < 1e-12 && v[1].norm() < 1e-12);
        assert_eq!(e.best_free_column(), None); // the kernel vector sums to 0
                                                // [[1, -1]]: kernel (1, 1) sums to 2.
        let e = eliminate(&[c(1.0), c(-1.0)], 1, 2);
        assert_eq!(e.rank(), 1);
        assert!(e.best_free_column().is_some());
    }
}
