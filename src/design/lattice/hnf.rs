//! Full-rank sublattices of Z^n in Hermite normal form: construction, membership,
//! index, the dual group of step phases, and per-field phase counts.
//!
//! Form used throughout: the basis rows `h_0..h_{n-1}` are **lower triangular**
//! (`h_i[j] = 0` for `j > i`), with positive diagonal and `0 <= h_i[j] < h_j[j]`
//! for `j < i`. Rows `h_0..h_{k-1}` then span exactly the lattice vectors supported
//! on the first `k` coordinates, which is what the search prunes on.

use num_rational::Ratio;

use super::group::{gcd, smith, Presented};
use super::DesignError;

/// A full-rank sublattice of Z^n, stored by its lower-triangular Hermite normal form.
#[derive(Clone, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Lattice {
    rows: Vec<Vec<i64>>,
}

impl Lattice {
    /// Builds a lattice from HNF rows, checking the form (lower triangular, positive
    /// diagonal, reduced off-diagonal entries).
    pub fn from_hnf(rows: Vec<Vec<i64>>) -> Result<Lattice, DesignError> {
        let n = rows.len();
        for (i, r) in rows.iter().enumerate() {
            if r.len() != n {
                return Err(DesignError::NotHnf(format!(
                    "row {i} has {} entries, expected {n}",
                    r.len()
                )));
            }
            if r[i] <= 0 {
                return Err(DesignError::NotHnf(format!(
                    "diagonal entry {i} is {}",
                    r[i]
                )));
            }
            for j in 0..n {
                let ok = if j > i {
                    r[j] == 0
                } else if j < i {
                    (0..rows[j][j]).contains(&r[j])
                } else {
                    true
                };
                if !ok {
                    return Err(DesignError::NotHnf(format!(
                        "entry ({i},{j}) = {} is not reduced",
                        r[j]
                    )));
                }
            }
        }
        Ok(Lattice { rows })
    }

    /// Builds the lattice spanned by `gens` (each of length `dims`); fails if they do
    /// not span a full-rank lattice.
    pub fn from_generators(dims: usize, gens: &[Vec<i64>]) -> Result<Lattice, DesignError> {
        if let Some(g) = gens.iter().find(|g| g.len() != dims) {
            return Err(DesignError::WrongLength {
                expected: dims,
                found: g.len(),
            });
        }
        let mut pool: Vec<Vec<i128>> = gens
            .iter()
            .map(|g| g.iter().map(|&v| v as i128).collect())
            .collect();
        let mut rows: Vec<Vec<i128>> = vec![vec![0; dims]; dims];
        for col in (0..dims).rev() {
            // Euclid on column `col` among the pool.
            loop {
                let nz: Vec<usize> = (0..pool.len()).filter(|&i| pool[i][col] != 0).collect();
                if nz.len() <= 1 {
                    break;
                }
                let p = *nz
                    .iter()
                    .min_by_key(|&&i| pool[i][col].abs())
                    .unwrap_or(&nz[0]);
                let pv = pool[p].clone();
                for &i in &nz {
                    if i != p {
                        let q = pool[i][col].div_euclid(pv[col]);
                        for (e, &b) in pool[i].iter_mut().zip(&pv) {
                            *e -= q * b;
                        }
                    }
                }
            }
            let Some(p) = (0..pool.len()).find(|&i| pool[i][col] != 0) else {
                return Err(DesignError::NotFullRank { dims });
            };
            let mut row = pool.swap_remove(p);
            if row[col] < 0 {
                row.iter_mut().for_each(|e| *e = -*e);
            }
            rows[col] = row;
        }
        // Reduce off-diagonal entries, top row first so each reduction is final.
        for i in 0..dims {
            for j in (0..i).rev() {
                let q = rows[i][j].div_euclid(rows[j][j]);
                if q != 0 {
                    let rj = rows[j].clone();
                    for (e, &b) in rows[i].iter_mut().zip(&rj) {
                        *e -= q * b;
                    }
                }
            }
        }
        let rows = rows
            .into_iter()
            .map(|r| {
                r.into_iter()
                    .map(|v| i64::try_from(v).map_err(|_| DesignError::TooLarge("lattice entry")))
                    .collect::<Result<Vec<_>, _>>()
            })
            .collect::<Result<Vec<_>, _>>()?;
        Lattice::from_hnf(rows)
    }

    /// The cogwheel lattice `{b : b . nu = 0 mod n}` (winding numbers `nu`, `n` steps).
    pub fn from_cogwheel(n: u64, nu: &[i64]) -> Result<Lattice, DesignError> {
        let dims = nu.len();
        if n == 0 || dims == 0 {
            return Err(DesignError::NotFullRank { dims });
        }
        let n = i64::try_from(n).map_err(|_| DesignError::TooLarge("cogwheel steps"))?;
        let nu: Vec<i64> = nu.iter().map(|v| v.rem_euclid(n)).collect();
        // Row k: diagonal = smallest c with c nu_k in <nu_0..nu_{k-1}, n>; the
        // off-diagonal part is the unique box vector completing it to the kernel.
        let mut rows: Vec<Vec<i64>> = Vec::with_capacity(dims);
        let mut g = n;
        for k in 0..dims {
            let d = g / gcd(g, nu[k]);
            let target = (-(d as i128) * nu[k] as i128).rem_euclid(n as i128);
            let box_dims: Vec<i64> = (0..k).map(|j| rows[j][j]).collect();
            let mut h = vec![0i64; k];
            let found = loop {
                let val: i128 = h
                    .iter()
                    .zip(&nu)
                    .map(|(&a, &b)| a as i128 * b as i128)
                    .sum();
                if val.rem_euclid(n as i128) == target {
                    break true;
                }
                // odometer over the box
                let mut j = k;
                loop {
                    if j == 0 {
                        break;
                    }
                    j -= 1;
                    h[j] += 1;
                    if h[j] < box_dims[j] {
                        break;
                    }
                    h[j] = 0;
                    if j == 0 {
                        j = usize::MAX;
                        break;
                    }
                }
                if j == usize::MAX || k == 0 {
                    break false;
                }
            };
            if !found {
                return Err(DesignError::NotFullRank { dims });
            }
            let mut row = h;
            row.push(d);
            row.resize(dims, 0);
            rows.push(row);
            g = gcd(g, nu[k]);
        }
        Lattice::from_hnf(rows)
    }

    /// Number of coordinates n.
    pub fn dims(&self) -> usize {
        self.rows.len()
    }

    /// The HNF rows (lower triangular, see the module docs).
    pub fn rows(&self) -> &[Vec<i64>] {
        &self.rows
    }

    /// Index of the lattice in Z^n = number of steps of the design.
    pub fn index(&self) -> u64 {
        self.rows
            .iter()
            .enumerate()
            .map(|(i, r)| r[i] as u64)
            .product()
    }

    /// Exact membership test. Works for entries of any size the `i64` type holds by
    /// reducing modulo the index (the lattice contains `index * Z^n`) in `i128`.
    pub fn contains(&self, b: &[i64]) -> bool {
        if b.len() != self.dims() {
            return false;
        }
        let n = self.index() as i128;
        let mut v: Vec<i128> = b.iter().map(|&x| (x as i128).rem_euclid(n)).collect();
        for i in (0..self.dims()).rev() {
            let h = self.rows[i][i] as i128;
            if v[i] % h != 0 {
                return false;
            }
            let c = v[i] / h;
            for j in 0..i {
                v[j] = (v[j] - c * self.rows[i][j] as i128).rem_euclid(n);
            }
        }
        true
    }

    /// Canonical coset representatives of Z^n / L (the box `0 <= v_i < h_ii`).
    pub fn coset_reps(&self) -> Vec<Vec<i64>> {
        let n = self.dims();
        let mut out = vec![vec![]];
        for i in 0..n {
            let mut next = Vec::new();
            for v in &out {
                for k in 0..self.rows[i][i] {
                    let mut w: Vec<i64> = v.clone();
                    w.push(k);
                    next.push(w);
                }
            }
            out = next;
        }
        out
    }

    /// The quotient group Z^n / L with the images of the unit vectors.
    pub(crate) fn quotient(&self) -> Presented {
        let n = self.index() as i64;
        smith(&self.rows, n).unwrap_or(Presented {
            inv: vec![],
            img: vec![vec![]; self.dims()],
        })
    }

    /// The step phases: all `phi` in `[0,1)^n` (turns) with `b . phi` an integer for
    /// every `b` in L. Exactly `index()` points, ordered by a counter whose first field
    /// is the slowest digit; for a nested lattice `c_1 Z + ... + c_n Z` this is the
    /// usual nested order `phi_j = k_j / c_j`.
    pub fn dual_points(&self) -> Vec<Vec<Ratio<i64>>> {
        let n = self.dims();
        let mut out: Vec<Vec<Ratio<i64>>> = vec![vec![]];
        for i in 0..n {
            let h = self.rows[i][i];
            let mut next = Vec::with_capacity(out.len() * h as usize);
            for p in &out {
                // phi_i = (z - s) / h with s = sum_{j<i} h_ij phi_j.
                let s: Ratio<i64> = (0..i).map(|j| p[j] * self.rows[i][j]).sum();
                let frac_neg_s = (-s) - (-s).floor();
                let u0 = frac_neg_s / h;
                for k in 0..h {
                    let mut q = p.clone();
                    q.push(u0 + Ratio::new(k, h));
                    next.push(q);
                }
            }
            out = next;
        }
        out
    }

    /// Number of distinct phase values field `j` takes over the steps: the order of
    /// `e_j` in Z^n / L. Returns 0 for `j` out of range.
    pub fn distinct_phases(&self, j: usize) -> u64 {
        if j >= self.dims() {
            return 0;
        }
        let q = self.quotient();
        q.element_order(&q.img[j])
    }
}
