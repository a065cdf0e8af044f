//! Plain enumeration of every full-rank sublattice of Z^n of a given index, each
//! exactly once (by its Hermite normal form), and the classical count of them.
//!
//! This enumerator is deliberately simple and independent of the pruned search; the
//! tests use it as the brute-force reference.

use super::hnf::Lattice;

/// All ordered factorisations `d_1 * ... * d_n = index` (each `d_i >= 1`).
pub fn diagonals(dims: usize, index: u64) -> Vec<Vec<u64>> {
    fn rec(left: usize, rest: u64, cur: &mut Vec<u64>, out: &mut Vec<Vec<u64>>) {
        if left == 1 {
            cur.push(rest);
            out.push(cur.clone());
            cur.pop();
            return;
        }
        for d in 1..=rest {
            if rest % d == 0 {
                cur.push(d);
                rec(left - 1, rest / d, cur, out);
                cur.pop();
            }
        }
    }
    let mut out = Vec::new();
    if dims > 0 && index > 0 {
        rec(dims, index, &mut Vec::new(), &mut out);
    }
    out
}

/// Iterator over all sublattices of Z^`dims` of index `index`, in the order:
/// diagonal tuples ascending lexicographically, then off-diagonal entries as an
/// odometer (row 1 first, within a row column 0 first, last entry fastest).
pub struct Sublattices {
    diags: Vec<Vec<u64>>,
    di: usize,
    /// Off-diagonal entries of the current lattice, row-major below the diagonal.
    off: Vec<i64>,
    fresh: bool,
}

/// Enumerates every sublattice of Z^`dims` with the given index exactly once.
pub fn sublattices(dims: usize, index: u64) -> Sublattices {
    Sublattices {
        diags: diagonals(dims, index),
        di: 0,
        off: Vec::new(),
        fresh: true,
    }
}

impl Sublattices {
    fn bounds(&self) -> Vec<i64> {
        let d = &self.diags[self.di];
        let mut b = Vec::new();
        for i in 0..d.len() {
            for &dj in &d[..i] {
                b.push(dj as i64);
            }
        }
        b
    }
}

impl Iterator for Sublattices {
    type Item = Lattice;

    fn next(&mut self) -> Option<Lattice> {
        while self.di < self.diags.len() {
            let bounds = self.bounds();
            if self.fresh {
                self.off = vec![0; bounds.len()];
                self.fresh = false;
            } else {
                // advance odometer
                let mut k = bounds.len();
                let mut carried_out = true;
                while k > 0 {
                    k -= 1;
                    self.off[k] += 1;
                    if self.off[k] < bounds[k] {
                        carried_out = false;
                        break;
                    }
                    self.off[k] = 0;
                }
                if carried_out {
                    self.di += 1;
                    self.fresh = true;
                    continue;
                }
            }
            let d = &self.diags[self.di];
            let n = d.len();
            let mut rows = vec![vec![0i64; n]; n];
            let mut p = 0;
            for i in 0..n {
                for j in 0..i {
                    rows[i][j] = self.off[p];
                    p += 1;
                }
                rows[i][i] = d[i] as i64;
            }
            return Lattice::from_hnf(rows).ok();
        }
        None
    }
}

/// Number of sublattices of index `index` in Z^`dims`: the Dirichlet convolution
/// `1 * id * id^2 * ... * id^(dims-1)`, i.e. the coefficients of
/// `zeta(s) zeta(s-1) ... zeta(s-dims+1)` (classical; see Gruber, Acta Cryst. A53,
/// 807 (1997), from memory). For `dims = 2` this is `sigma_1(index)`.
pub fn sublattice_count(dims: usize, index: u64) -> u128 {
    if dims == 0 || index == 0 {
        return 0;
    }
    let mut f: Vec<u128> = vec![0; index as usize + 1];
    // dims = 1: exactly one sublattice per index.
    for v in f.iter_mut().skip(1) {
        *v = 1;
    }
    for k in 1..dims {
        let mut g = vec![0u128; index as usize + 1];
        for (m, gm) in g.iter_mut().enumerate().skip(1) {
            for d in 1..=m {
                if m % d == 0 {
                    *gm += f[d] * ((m / d) as u128).pow(k as u32);
                }
            }
        }
        f = g;
    }
    f[index as usize]
}

/// Largest index [`LatticeCounts`] tabulates (building it holds about 20 bytes per index, 20 MiB
/// here; above it progress shows no share).
pub const MAX_COUNTED_INDEX: u64 = 1 << 20;

/// Cumulative sublattice counts `C(x) = sum_{N < x} a_dims(N)` for `x` up to a limit, in
/// floats: the measure by which a search's progress is estimated (the share of all lattices
/// below the best design whose index has been excluded). `a_dims` is multiplicative with
/// `a_dims(p^e) = prod_{i=1}^{dims-1} (p^(e+i) - 1) / (p^i - 1)` (Gruber, Acta Cryst. A53, 807
/// (1997), from memory; it agrees with [`sublattice_count`], tested).
#[derive(Clone, Debug)]
pub struct LatticeCounts {
    cum: Vec<f64>,
}

impl LatticeCounts {
    /// The table for indices below `limit`; `None` above [`MAX_COUNTED_INDEX`].
    pub fn new(dims: usize, limit: u64) -> Option<LatticeCounts> {
        if limit > MAX_COUNTED_INDEX || dims == 0 {
            return None;
        }
        let len = limit as usize + 1;
        // Smallest prime factor sieve, then a(N) = a(N / p^e) a(p^e).
        let mut spf = vec![0u32; len];
        for i in 2..len {
            if spf[i] == 0 {
                for j in (i..len).step_by(i) {
                    if spf[j] == 0 {
                        spf[j] = i as u32;
                    }
                }
            }
        }
        let prime_power = |p: f64, e: i32| -> f64 {
            (1..dims as i32)
                .map(|i| (p.powi(e + i) - 1.0) / (p.powi(i) - 1.0))
                .product()
        };
        let mut a = vec![0f64; len];
        if len > 1 {
            a[1] = 1.0;
        }
        for n in 2..len {
            let p = spf[n] as usize;
            let (mut m, mut e) = (n, 0);
            while m % p == 0 {
                m /= p;
                e += 1;
            }
            a[n] = a[m] * prime_power(p as f64, e);
        }
        let mut cum = vec![0f64; len + 1];
        for n in 1..len {
            cum[n + 1] = cum[n] + a[n];
        }
        Some(LatticeCounts { cum })
    }

    /// `C(x)`: the number of sublattices of index below `x` (clamped to the table).
    pub fn below(&self, x: u64) -> f64 {
        self.cum[(x as usize).min(self.cum.len() - 1)]
    }

    /// The estimated share of the lattices below `best` already excluded when every index
    /// below `lo` is excluded and `part` of the window `[lo, hi)` is scanned.
    pub fn share(&self, lo: u64, hi: u64, part: f64, best: u64) -> f64 {
        let total = self.below(best);
        if total <= 0.0 {
            return 1.0;
        }
        let a = self.below(lo.min(best));
        let h = self.below(hi.min(best));
        ((a + (h - a) * part.clamp(0.0, 1.0)) / total).clamp(0.0, 1.0)
    }
}
