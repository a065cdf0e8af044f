//! Recognises the two classical families among lattice designs: nested (product)
//! cycles `c_1 Z + ... + c_n Z` and cogwheel cycles `{b : b . nu = 0 mod N}`
//! (Levitt, Madhu & Hughes, J. Magn. Reson. 155, 300 (2002)).

use super::group::gcd;
use super::hnf::Lattice;

impl Lattice {
    /// `Some(c)` if the lattice is `c_1 Z x ... x c_n Z` (a nested cycle with `c_j`
    /// steps on field j), else `None`.
    pub fn as_nested(&self) -> Option<Vec<u64>> {
        let rows = self.rows();
        let mut c = Vec::with_capacity(rows.len());
        for (i, r) in rows.iter().enumerate() {
            if r[..i].iter().any(|&v| v != 0) {
                return None;
            }
            c.push(r[i] as u64);
        }
        Some(c)
    }

    /// `Some((N, nu))` if Z^n / L is cyclic, i.e. `L = {b : b . nu = 0 mod N}` (a
    /// cogwheel cycle with `phi_j = nu_j m / N`). The winding numbers are normalised:
    /// residues in `[0, N)`, and among all unit multiples `u nu` (`gcd(u, N) = 1`)
    /// the lexicographically smallest.
    pub fn as_cogwheel(&self) -> Option<(u64, Vec<i64>)> {
        let q = self.quotient();
        let n = self.index();
        if q.inv.len() > 1 {
            return None;
        }
        if q.inv.is_empty() {
            return Some((1, vec![0; self.dims()]));
        }
        let nn = q.inv[0];
        let raw: Vec<i64> = q.img.iter().map(|x| x[0]).collect();
        let mut best: Option<Vec<i64>> = None;
        for u in 1..nn {
            if gcd(u, nn) != 1 {
                continue;
            }
            let cand: Vec<i64> = raw
                .iter()
                .map(|&v| ((v as i128 * u as i128).rem_euclid(nn as i128)) as i64)
                .collect();
            if best.as_ref().is_none_or(|b| cand < *b) {
                best = Some(cand);
            }
        }
        Some((n, best.unwrap_or(raw)))
    }
}
