//! Exact evaluation of a group-structured table in `O(generators x fields)` per term. When the
//! step phases (numerators over `L`) form a subgroup `S` of `(Z_L)^n` and the weights are one
//! rational times a character of `S` (`w_m = c zeta^chi(phi_m)`, `chi` a homomorphism
//! `S -> Z_L`) — every lattice design, nested and cogwheel cycle written with its own weights
//! is such a table — then `F(b) = c sum_{s in S} zeta^{psi_b(s)}` with the homomorphism
//! `psi_b(s) = b.s + chi(s)`, and the sum of a character over a finite group is `|S|` when it
//! is trivial and `0` otherwise (orthogonality of characters; e.g. Serre, *Linear
//! Representations of Finite Groups*, 1977, section 2.3). So `F(b) = c |S| [psi_b(g) = 0 for
//! every generator g]`, exactly, without summing over the steps.
//!
//! The structure is proven, not assumed: [`GroupTable::detect`] rebuilds `S` from generators
//! taken from the table (each new element `e = g + k s` with a unique `(g, k)`), checks that
//! every rebuilt element is a row of the table and that the rows are exactly the group, and
//! checks the weight exponents against the character on every element and on the relation
//! `r s in S_old` that closes each cyclic extension. Any failure returns `None` and the caller
//! sums over the steps as usual.

use std::collections::HashMap;

/// A proven group table: generators of the phase group and the character's values on them.
#[derive(Clone, Debug)]
pub struct GroupTable {
    order: i64,
    /// Weight exponent of the zero row: `F(b) = c |S| zeta^offset` when `b` passes.
    pub offset: usize,
    /// Generators (phase numerators over `order`) with `chi` of each.
    generators: Vec<(Vec<i64>, i64)>,
}

/// Tables with more rows than this are not examined: the proof keeps the rows in two hash
/// tables (tens of MiB at this size), and larger tables take the usual sum.
const MAX_ROWS: usize = 1 << 18;

impl GroupTable {
    /// Proves the structure of a table with phase numerators `rows` (each in `[0, order)`) and
    /// monomial weights `shifts[m]` (exponent of `zeta_order`) with one common multiplier.
    /// `None` when the rows are not a group containing 0, or the exponents not a character.
    pub fn detect(order: u32, rows: &[&[i64]], shifts: &[usize]) -> Option<GroupTable> {
        if rows.is_empty() || rows.len() > MAX_ROWS || rows.len() != shifts.len() {
            return None;
        }
        let l = order as i64;
        let mut index: HashMap<&[i64], usize> = HashMap::with_capacity(rows.len());
        for (m, r) in rows.iter().enumerate() {
            if index.insert(r, m).is_some() {
                return None; // a repeated step: not a plain group table
            }
        }
        let zero = vec![0i64; rows[0].len()];
        let chi0 = shifts[*index.get(zero.as_slice())?] as i64;
        // chi(e) = shift(e) - shift(0): the common phase factor goes into the multiplier.
        let chi_of = |r: &[i64]| -> Option<i64> {
            index
                .get(r)
                .map(|&m| (shifts[m] as i64 - chi0).rem_euclid(l))
        };
        // Every element rebuilt so far with chi of it.
        let mut group: HashMap<Vec<i64>, i64> = HashMap::from([(zero, 0)]);
        let mut generators = Vec::new();
        for r in rows {
            if group.contains_key(*r) {
                continue;
            }
            let chi_s = chi_of(r)?;
            let extended = extend(&group, r, chi_s, l, &chi_of)?;
            group.extend(extended);
            generators.push((r.to_vec(), chi_s));
            if group.len() > rows.len() {
                return None;
            }
        }
        (group.len() == rows.len()).then_some(GroupTable {
            order: l,
            offset: chi0 as usize,
            generators,
        })
    }

    /// True when `psi_b` is trivial on the group, i.e. `F(b) = c |S|`; otherwise `F(b) = 0`.
    pub fn passes(&self, b: &[i64]) -> bool {
        let l = self.order;
        self.generators.iter().all(|(g, chi)| {
            let dot = b
                .iter()
                .zip(g)
                .fold(0i64, |acc, (&x, &y)| (acc + x.rem_euclid(l) * y) % l);
            (dot + chi) % l == 0
        })
    }
}

/// The new elements `g + k s` (`g` in the old group, `1 <= k < r`, `r s` the first multiple
/// of `s` back in the old group) with `chi(g) + k chi(s)`, each checked against the table; and
/// the closing relation `chi(r s) = r chi(s)`. `None` on any mismatch.
fn extend(
    group: &HashMap<Vec<i64>, i64>,
    s: &[i64],
    chi_s: i64,
    l: i64,
    chi_of: &dyn Fn(&[i64]) -> Option<i64>,
) -> Option<Vec<(Vec<i64>, i64)>> {
    let mut multiple = s.to_vec();
    let mut k = 1i64;
    let mut out = Vec::new();
    loop {
        if let Some(&c_old) = group.get(&multiple) {
            // Closing relation: k s lies in the old group.
            return ((k * chi_s - c_old).rem_euclid(l) == 0).then_some(out);
        }
        if k > l {
            return None;
        }
        for (g, c_g) in group {
            let e: Vec<i64> = g.iter().zip(&multiple).map(|(a, b)| (a + b) % l).collect();
            let want = (c_g + k * chi_s).rem_euclid(l);
            if group.contains_key(&e) || chi_of(&e)? != want {
                return None;
            }
            out.push((e, want));
        }
        k += 1;
        multiple = multiple.iter().zip(s).map(|(a, b)| (a + b) % l).collect();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Brute-force `F(b) != 0` for a table, by summing the steps in floats.
    fn brute(order: i64, rows: &[Vec<i64>], shifts: &[usize], b: &[i64]) -> bool {
        let mut z = num_complex::Complex64::new(0.0, 0.0);
        for (r, &s) in rows.iter().zip(shifts) {
            let e: i64 = r.iter().zip(b).map(|(x, y)| x * y).sum::<i64>() + s as i64;
            z += num_complex::Complex64::from_polar(
                1.0,
                std::f64::consts::TAU * e.rem_euclid(order) as f64 / order as f64,
            );
        }
        z.norm() > 1e-6
    }

    fn nested(c: &[i64], l: i64, t: &[i64]) -> (Vec<Vec<i64>>, Vec<usize>) {
        let mut rows = vec![vec![]];
        for &cj in c {
            rows = rows
                .into_iter()
                .flat_map(|r: Vec<i64>| {
                    (0..cj).map(move |k| {
                        let mut r = r.clone();
                        r.push(k * (l / cj));
                        r
                    })
                })
                .collect();
        }
        let shifts = rows
            .iter()
            .map(|r| (-r.iter().zip(t).map(|(x, y)| x * y).sum::<i64>()).rem_euclid(l) as usize)
            .collect();
        (rows, shifts)
    }

    /// The nested 1x3x3x3-type cycle (Tan 2008 (memory), here 3x3x3 on the cycled fields)
    /// with weights exp(-2 pi i t.phi): the fast path agrees with the sum over the steps for
    /// every b in a box (orthogonality of characters, common practice).
    #[test]
    fn nested_cycle_agrees_with_the_sum_over_steps() {
        let t = [1, 1, -1];
        let (rows, shifts) = nested(&[3, 3, 3], 3, &t);
        let refs: Vec<&[i64]> = rows.iter().map(Vec::as_slice).collect();
        let g = GroupTable::detect(3, &refs, &shifts).expect("a group table");
        for b0 in -3..=3 {
            for b1 in -3..=3 {
                for b2 in -3..=3 {
                    let b = [b0, b1, b2];
                    assert_eq!(g.passes(&b), brute(3, &rows, &shifts, &b), "b = {b:?}");
                }
            }
        }
    }

    /// A cogwheel cycle phi_j = nu_j m / N (Levitt, Madhu & Hughes 2002) is a cyclic group.
    #[test]
    fn cogwheel_cycle_is_detected_and_agrees() {
        let (n, nu, t) = (7i64, [1i64, 3], [1i64, -1]);
        let rows: Vec<Vec<i64>> = (0..n)
            .map(|m| nu.iter().map(|v| v * m % n).collect())
            .collect();
        let shifts: Vec<usize> = rows
            .iter()
            .map(|r| (-(r[0] * t[0] + r[1] * t[1])).rem_euclid(n) as usize)
            .collect();
        let refs: Vec<&[i64]> = rows.iter().map(Vec::as_slice).collect();
        let g = GroupTable::detect(7, &refs, &shifts).expect("cyclic");
        for b0 in -6..=6 {
            for b1 in -6..=6 {
                assert_eq!(g.passes(&[b0, b1]), brute(7, &rows, &shifts, &[b0, b1]));
            }
        }
    }

    /// Tables that are not group tables are refused: a missing step, a wrong weight, a
    /// non-zero-containing coset.
    #[test]
    fn broken_tables_are_not_taken_for_groups() {
        let (rows, mut shifts) = nested(&[2, 3], 6, &[1, 1]);
        let refs: Vec<&[i64]> = rows.iter().map(Vec::as_slice).collect();
        assert!(GroupTable::detect(6, &refs[..5], &shifts[..5]).is_none());
        shifts[4] = (shifts[4] + 1) % 6;
        assert!(GroupTable::detect(6, &refs, &shifts).is_none());
        let moved: Vec<Vec<i64>> = rows.iter().map(|r| vec![(r[0] + 1) % 6, r[1]]).collect();
        let refs: Vec<&[i64]> = moved.iter().map(Vec::as_slice).collect();
        assert!(GroupTable::detect(6, &refs, &shifts).is_none());
    }
}
