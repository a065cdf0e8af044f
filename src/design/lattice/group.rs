//! Finite abelian groups Z^k / L in Smith normal form: the invariant factors of a
//! relation matrix and the images of the standard generators in those coordinates.
//!
//! This is the arithmetic core shared by the lattice type (classification, phase
//! counts) and the search engine (incremental group extension).

/// A finite abelian group `Z_{s_1} x ... x Z_{s_r}` (every `s_i > 1`, `s_i | s_{i+1}`)
/// together with the images of the generators it was presented with.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Presented {
    /// Invariant factors larger than one, each dividing the next.
    pub inv: Vec<i64>,
    /// `img[g]` is the image of generator `g`, one residue in `[0, s_i)` per factor.
    pub img: Vec<Vec<i64>>,
}

impl Presented {
    /// Order of the group (product of the invariant factors).
    pub fn order(&self) -> u64 {
        self.inv.iter().map(|&s| s as u64).product()
    }

    /// Order of the element with coordinates `x`.
    pub fn element_order(&self, x: &[i64]) -> u64 {
        let mut ord: u64 = 1;
        for (&xi, &s) in x.iter().zip(&self.inv) {
            let o = (s / gcd(xi, s)) as u64;
            ord = lcm_u64(ord, o);
        }
        ord
    }
}

/// Greatest common divisor of two integers (non-negative result, `gcd(0,0) = 0`).
pub(crate) fn gcd(a: i64, b: i64) -> i64 {
    let (mut a, mut b) = (a.unsigned_abs(), b.unsigned_abs());
    while b != 0 {
        let t = a % b;
        a = b;
        b = t;
    }
    a as i64
}

/// Least common multiple of two positive integers.
pub(crate) fn lcm_u64(a: u64, b: u64) -> u64 {
    if a == 0 || b == 0 {
        return 0;
    }
    let g = gcd(a as i64, b as i64) as u64;
    a / g * b
}

/// Smith normal form of a square, full-rank integer relation matrix `rel` (rows are
/// relations among `rel.len()` generators). `modulus` must be a multiple of the group
/// order (for instance the determinant); it keeps the transform entries small.
///
/// Returns `None` if the matrix is singular.
pub(crate) fn smith(rel: &[Vec<i64>], modulus: i64) -> Option<Presented> {
    let m = rel.len();
    let mut a: Vec<Vec<i128>> = rel
        .iter()
        .map(|r| r.iter().map(|&v| v as i128).collect())
        .collect();
    // v tracks the column operations: generator g maps to row g of v.
    let mut v: Vec<Vec<i128>> = (0..m)
        .map(|i| (0..m).map(|j| i128::from(i == j)).collect())
        .collect();
    let md = modulus.max(1) as i128;
    for t in 0..m {
        loop {
            // Pivot: smallest non-zero entry of the trailing block.
            let mut best: Option<(usize, usize)> = None;
            for (i, row) in a.iter().enumerate().skip(t) {
                for (j, &e) in row.iter().enumerate().skip(t) {
                    if e != 0 && best.is_none_or(|(bi, bj)| e.abs() < a[bi][bj].abs()) {
                        best = Some((i, j));
                    }
                }
            }
            let (pi, pj) = best?;
            a.swap(t, pi);
            for row in a.iter_mut() {
                row.swap(t, pj);
            }
            for row in v.iter_mut() {
                row.swap(t, pj);
            }
            let p = a[t][t];
            let mut clean = true;
            for i in t + 1..m {
                let q = a[i][t].div_euclid(p);
                if q != 0 {
                    for j in t..m {
                        a[i][j] -= q * a[t][j];
                    }
                }
                if a[i][t] != 0 {
                    clean = false;
                }
            }
            for j in t + 1..m {
                let q = a[t][j].div_euclid(p);
                if q != 0 {
                    for row in a.iter_mut().skip(t) {
                        row[j] -= q * row[t];
                    }
                    for row in v.iter_mut() {
                        row[j] = (row[j] - q * row[t]).rem_euclid(md);
                    }
                }
                if a[t][j] != 0 {
                    clean = false;
                }
            }
            if !clean {
                continue;
            }
            // Divisibility condition on the trailing block.
            let mut bad = None;
            'outer: for (i, row) in a.iter().enumerate().skip(t + 1) {
                for &e in row.iter().skip(t + 1) {
                    if e % p != 0 {
                        bad = Some(i);
                        break 'outer;
                    }
                }
            }
            match bad {
                Some(i) => {
                    for j in t..m {
                        a[t][j] += a[i][j];
                    }
                }
                None => break,
            }
        }
    }
    let diag: Vec<i128> = (0..m).map(|i| a[i][i].abs()).collect();
    let keep: Vec<usize> = (0..m).filter(|&i| diag[i] > 1).collect();
    let inv: Vec<i64> = keep.iter().map(|&i| diag[i] as i64).collect();
    let img = v
        .iter()
        .map(|row| {
            keep.iter()
                .map(|&i| row[i].rem_euclid(diag[i]) as i64)
                .collect()
        })
        .collect();
    Some(Presented { inv, img })
}

/// The group `(G x Z) / <(x, d)>` for `G` presented by `g`: the extension obtained
/// when a new coordinate with diagonal entry `d` and off-diagonal class `x` is added.
/// Images of the old generators and of the new one (last) are returned.
pub(crate) fn extend(g: &Presented, x: &[i64], d: i64) -> Presented {
    let r = g.inv.len();
    let mut rel = vec![vec![0i64; r + 1]; r + 1];
    for i in 0..r {
        rel[i][i] = g.inv[i];
    }
    rel[r][..r].copy_from_slice(x);
    rel[r][r] = d;
    let order = g.order() as i64 * d;
    // Full rank: diagonal blocks are non-zero, so smith cannot fail.
    let h = smith(&rel, order).unwrap_or(Presented {
        inv: vec![],
        img: vec![vec![]; r + 1],
    });
    let r2 = h.inv.len();
    let mut img: Vec<Vec<i64>> = g
        .img
        .iter()
        .map(|old| {
            let mut y = vec![0i64; r2];
            for (i, &c) in old.iter().enumerate() {
                for (yk, (&bk, &s)) in y.iter_mut().zip(h.img[i].iter().zip(&h.inv)) {
                    *yk = ((*yk as i128 + c as i128 * bk as i128).rem_euclid(s as i128)) as i64;
                }
            }
            y
        })
        .collect();
    img.push(h.img[r].clone());
    Presented { inv: h.inv, img }
}
