//! Symmetries of a design problem, used to test each orbit of lattices once.
//!
//! A signed permutation `s` of the cycled fields (`(s v)_{pi(j)} = e_j v_j`, `e_j = +-1`) is a
//! symmetry of the reduced problem when it maps the forbidden differences onto forbidden
//! differences and the required ones onto required ones (both up to sign, as lattices are
//! symmetric), and keeps every field's grid. Then `L` is valid exactly when `s L` is, with the
//! same index, the same number of phases per field (permuted) and the same cyclic or nested
//! structure, so the search only needs one lattice of every orbit.
//!
//! The representative: write `v(L)_j` for the order of the unit vector `e_j` in `Z^n / L`
//! (the number of distinct phases field j takes). A lattice is kept when no symmetry makes this
//! vector lexicographically larger: `v(s L)_i = v(L)_{pi^-1(i)}`. The element of an orbit with
//! the lexicographically largest vector is never cut, so every orbit keeps a member. The engine
//! knows `v_j` once row j of the HNF is fixed (`m e_j` lies in L only through that row), so the
//! test cuts whole subtrees as soon as a comparison is decided by the rows fixed so far.
//!
//! Any subset of the symmetry group keeps this sound (the orbit of the subgroup it generates
//! still has its largest member kept), so the search for symmetries stops at a work budget.

use std::collections::HashSet;

use super::problem::{normalise_in_place, top};

/// Membership tests the symmetry search may spend before it settles for what it found (the
/// five-field problems of the benchmark need about 16 000; on the largest agnostic sets a test
/// costs about half a microsecond, and the first design must not wait for this search).
const WORK_BUDGET: u64 = 400_000;

/// The problem's vectors grouped by the last field they involve, for partial tests.
struct Sets<'a> {
    dims: usize,
    /// `by_top[j]`: forbidden (`false`) and required (`true`) vectors whose last non-zero
    /// entry is field j.
    by_top: Vec<Vec<(&'a [i64], bool)>>,
    forb: HashSet<&'a [i64]>,
    req: HashSet<&'a [i64]>,
    grid: &'a [u32],
    /// Per field: the sorted multiset of non-zero |entries| over the forbidden set (a field can
    /// only map to a field with the same one).
    profile: Vec<Vec<i64>>,
}

/// The field permutations `pi` (as `pi_inv`, `pi_inv[i] = pi^-1(i)`) of the problem's
/// symmetries, identity excluded; empty when the problem has none (or none was found within
/// the work budget).
pub(crate) fn field_symmetries(
    dims: usize,
    forb: &[Vec<i64>],
    req: &[Vec<i64>],
    grid: &[u32],
) -> Vec<Vec<usize>> {
    let mut by_top = vec![Vec::new(); dims];
    for (v, is_req) in forb
        .iter()
        .map(|v| (v, false))
        .chain(req.iter().map(|v| (v, true)))
    {
        if let Some(k) = top(v) {
            by_top[k].push((v.as_slice(), is_req));
        }
    }
    let profile = (0..dims)
        .map(|j| {
            let mut p: Vec<i64> = forb
                .iter()
                .map(|v| v[j].abs())
                .filter(|&a| a != 0)
                .collect();
            p.sort_unstable();
            p
        })
        .collect();
    let sets = Sets {
        dims,
        by_top,
        forb: forb.iter().map(Vec::as_slice).collect(),
        req: req.iter().map(Vec::as_slice).collect(),
        grid,
        profile,
    };
    let mut found: HashSet<Vec<usize>> = HashSet::new();
    let mut walk = Walk {
        pi: vec![usize::MAX; dims],
        sign: vec![1; dims],
        used: vec![false; dims],
        work: 0,
    };
    walk.extend(&sets, 0, &mut found);
    let mut out: Vec<Vec<usize>> = found
        .into_iter()
        .filter(|pi| pi.iter().enumerate().any(|(j, &p)| p != j))
        .map(|pi| {
            let mut inv = vec![0; dims];
            for (j, &p) in pi.iter().enumerate() {
                inv[p] = j;
            }
            inv
        })
        .collect();
    out.sort();
    out
}

/// A partial signed permutation being extended field by field.
struct Walk {
    pi: Vec<usize>,
    sign: Vec<i64>,
    used: Vec<bool>,
    work: u64,
}

impl Walk {
    /// Assigns field j's image and sign in every way that keeps the vectors decided so far in
    /// their sets; records the permutation of every complete symmetry.
    fn extend(&mut self, sets: &Sets, j: usize, found: &mut HashSet<Vec<usize>>) {
        if j == sets.dims {
            found.insert(self.pi.clone());
            return;
        }
        for p in 0..sets.dims {
            if self.used[p] || sets.grid[p] != sets.grid[j] || sets.profile[p] != sets.profile[j] {
                continue;
            }
            // A global sign change maps every set to itself: field 0 keeps its sign.
            let signs: &[i64] = if j == 0 { &[1] } else { &[1, -1] };
            for &e in signs {
                if self.work > WORK_BUDGET {
                    return;
                }
                self.pi[j] = p;
                self.sign[j] = e;
                self.used[p] = true;
                if self.decided_ok(sets, j) {
                    self.extend(sets, j + 1, found);
                }
                self.used[p] = false;
            }
        }
        self.pi[j] = usize::MAX;
    }

    /// Whether every vector whose last field is j maps into its own set.
    fn decided_ok(&mut self, sets: &Sets, j: usize) -> bool {
        let mut image = vec![0i64; sets.dims];
        for &(v, is_req) in &sets.by_top[j] {
            self.work += 1;
            image.iter_mut().for_each(|x| *x = 0);
            for (i, &vi) in v[..=j].iter().enumerate() {
                image[self.pi[i]] = self.sign[i] * vi;
            }
            // Sign-normalised, as the sets are.
            normalise_in_place(&mut image);
            let set = if is_req { &sets.req } else { &sets.forb };
            if !set.contains(image.as_slice()) {
                return false;
            }
        }
        true
    }
}

/// Most symmetries the engine's cut compares with. The cut costs one comparison per symmetry
/// for every accepted candidate row; on the agnostic ball of radius 2 around zero on eight
/// fields (6479 permutations found within the work budget) that cost made the search about
/// twenty times slower than with no cut at all.
const MAX_CUT_SYMMETRIES: usize = 64;

/// The symmetries the engine's cut uses: those that move the fewest fields first, at most
/// `MAX_CUT_SYMMETRIES` of them. Any subset keeps the cut sound (see the module docs). When
/// every permutation of some blocks of fields is a symmetry, the transpositions inside the
/// blocks alone cut as much as all those permutations: a phase-count vector none of them can
/// enlarge is one that never increases along a block (in the engine's field order), and
/// those are exactly the ones no transposition enlarges.
pub(crate) fn for_the_cut(mut symmetries: Vec<Vec<usize>>) -> Vec<Vec<usize>> {
    let moved = |p: &[usize]| p.iter().enumerate().filter(|&(i, &j)| i != j).count();
    symmetries.sort_by(|a, b| (moved(a), a).cmp(&(moved(b), b)));
    symmetries.truncate(MAX_CUT_SYMMETRIES);
    symmetries
}

/// Whether some symmetry makes the order vector `v` (known for fields `0..v.len()`)
/// lexicographically larger, decided by the known entries alone.
pub(crate) fn beaten(v: &[u64], symmetries: &[Vec<usize>]) -> bool {
    symmetries.iter().any(|pi_inv| {
        for (i, &vi) in v.iter().enumerate() {
            let Some(&wi) = v.get(pi_inv[i]) else {
                return false;
            };
            if wi != vi {
                return wi > vi;
            }
        }
        false
    })
}

#[cfg(test)]
mod tests {
    use super::super::problem::normalise;
    use super::*;

    #[test]
    fn swapping_two_equivalent_fields_is_found_and_nothing_else() {
        // Keep t = (1, 1, 0); reject every other vector of the cube {-1, 0, 1}^3: fields 0 and
        // 1 are interchangeable, field 2 is not (the cube is symmetric under every signed
        // permutation, t only under the swap and sign changes of field 2).
        let t = [1i64, 1, 0];
        let mut forb = Vec::new();
        for a in -1..=1 {
            for b in -1..=1 {
                for c in -1..=1 {
                    let v = [a, b, c];
                    if v != t {
                        let d: Vec<i64> = v.iter().zip(&t).map(|(x, y)| x - y).collect();
                        forb.push(normalise(&d));
                    }
                }
            }
        }
        forb.sort();
        forb.dedup();
        let syms = field_symmetries(3, &forb, &[], &[0, 0, 0]);
        assert_eq!(syms, vec![vec![1, 0, 2]]);
    }

    #[test]
    fn a_grid_difference_breaks_the_symmetry() {
        let forb = vec![vec![1, 0], vec![0, 1], vec![1, 1], vec![-1, 1]];
        assert_eq!(field_symmetries(2, &forb, &[], &[0, 0]), vec![vec![1, 0]]);
        assert!(field_symmetries(2, &forb, &[], &[4, 8]).is_empty());
    }

    #[test]
    fn the_cut_takes_few_symmetries_transpositions_first() {
        // Every vector with entries in {-1, 0, 1}, two non-zero at most, on five fields: the
        // set is symmetric under every signed permutation (common practice: the agnostic ball).
        let mut forb = Vec::new();
        for i in 0..5 {
            for j in i..5 {
                for (a, b) in [(1, 1), (1, -1)] {
                    let mut v = vec![0i64; 5];
                    v[i] += a;
                    v[j] += b;
                    if v.iter().any(|&x| x != 0) {
                        forb.push(normalise(&v));
                    }
                }
            }
        }
        forb.sort();
        forb.dedup();
        let all = field_symmetries(5, &forb, &[], &[0; 5]);
        assert_eq!(all.len(), 119);
        let cut = for_the_cut(all);
        assert_eq!(cut.len(), MAX_CUT_SYMMETRIES);
        let moved = |p: &[usize]| p.iter().enumerate().filter(|&(i, &j)| i != j).count();
        assert!(cut[..10].iter().all(|p| moved(p) == 2));
        assert!(cut[10..].iter().all(|p| moved(p) >= 3));
    }

    #[test]
    fn the_order_vector_test_is_decided_by_known_entries_only() {
        let swap = vec![vec![1, 0, 2]];
        assert!(beaten(&[2, 4], &swap));
        assert!(!beaten(&[4, 2], &swap));
        assert!(!beaten(&[4, 4, 1], &swap));
        // Field 2 maps to itself: nothing more to compare.
        let cyc = vec![vec![2, 0, 1]];
        // w = (v2, v0, v1): undecided while v2 is unknown.
        assert!(!beaten(&[1, 8], &cyc));
        assert!(beaten(&[1, 8, 3], &cyc));
    }
}
