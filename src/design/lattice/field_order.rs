//! The order in which the engine fixes the fields' HNF rows.
//!
//! The symmetry cut (`symmetry`) compares the fields' phase counts, and a count is known only
//! once its field's row is fixed: a symmetry that exchanges the last field with another decides
//! nothing before the leaves, where there is nothing left to save. So the engine works in an
//! order that puts the fields a symmetry moves first, orbit by orbit, and the fields every
//! symmetry fixes last. A permutation of the fields is a bijection on lattices (index, validity
//! and structure kept), so the search in that order proves the same minimum; its lattices are
//! mapped back to the problem's own field order before anyone sees them.

use super::hnf::Lattice;
use super::problem::{normalise, sort_forbidden, LatticeProblem, OutputSpec};

/// `order[p]`: the problem field the engine handles at position p. Fields in orbits of two or
/// more come first (orbits by their smallest field, fields in problem order inside one), the
/// fields no symmetry moves last.
pub(crate) fn engine_order(dims: usize, symmetries: &[Vec<usize>]) -> Vec<usize> {
    let mut orbit: Vec<usize> = (0..dims).collect();
    // Union of i and pi^-1(i) for every symmetry: the orbits of the group they generate.
    fn root(orbit: &mut [usize], mut i: usize) -> usize {
        while orbit[i] != i {
            orbit[i] = orbit[orbit[i]];
            i = orbit[i];
        }
        i
    }
    for pi_inv in symmetries {
        for (i, &j) in pi_inv.iter().enumerate() {
            let (a, b) = (root(&mut orbit, i), root(&mut orbit, j));
            orbit[a.max(b)] = a.min(b);
        }
    }
    let roots: Vec<usize> = (0..dims).map(|i| root(&mut orbit, i)).collect();
    let size = |r: usize| roots.iter().filter(|&&x| x == r).count();
    let mut order: Vec<usize> = (0..dims).collect();
    order.sort_by_key(|&i| (size(roots[i]) < 2, roots[i], i));
    order
}

/// The problem with its fields taken in `order`.
pub(crate) fn permuted(problem: &LatticeProblem, order: &[usize]) -> LatticeProblem {
    let take = |v: &Vec<i64>| order.iter().map(|&j| v[j]).collect::<Vec<i64>>();
    LatticeProblem {
        dims: problem.dims,
        grid: order.iter().map(|&j| problem.grid[j]).collect(),
        outputs: problem
            .outputs
            .iter()
            .map(|o| OutputSpec {
                name: o.name.clone(),
                kept: o.kept.iter().map(take).collect(),
            })
            .collect(),
        rejected: problem.rejected.iter().map(take).collect(),
        max_steps: problem.max_steps,
        max_phases_per_field: problem.max_phases_per_field,
    }
}

/// The reduced forbidden and required differences with their fields taken in `order`:
/// sign-normalised and sorted as `LatticeProblem::reduce` leaves them (a permutation maps
/// distinct classes to distinct classes, so nothing repeats).
pub(crate) fn permuted_differences(
    forb: &[Vec<i64>],
    req: &[Vec<i64>],
    order: &[usize],
) -> (Vec<Vec<i64>>, Vec<Vec<i64>>) {
    let take = |v: &Vec<i64>| normalise(&order.iter().map(|&j| v[j]).collect::<Vec<i64>>());
    let mut forb: Vec<Vec<i64>> = forb.iter().map(take).collect();
    sort_forbidden(&mut forb);
    let mut req: Vec<Vec<i64>> = req.iter().map(take).collect();
    req.sort();
    (forb, req)
}

/// Symmetries (as `pi_inv` in problem fields) rewritten for the engine's positions.
pub(crate) fn symmetries_in_order(symmetries: &[Vec<usize>], order: &[usize]) -> Vec<Vec<usize>> {
    let mut pos = vec![0; order.len()];
    for (p, &j) in order.iter().enumerate() {
        pos[j] = p;
    }
    symmetries
        .iter()
        .map(|pi_inv| order.iter().map(|&j| pos[pi_inv[j]]).collect())
        .collect()
}

/// A lattice found in the engine's order, in the problem's field order.
pub(crate) fn restored(lattice: &Lattice, order: &[usize]) -> Lattice {
    let back = |row: &Vec<i64>| {
        let mut v = vec![0; order.len()];
        for (p, &j) in order.iter().enumerate() {
            v[j] = row[p];
        }
        v
    };
    let gens: Vec<Vec<i64>> = lattice.rows().iter().map(back).collect();
    Lattice::from_generators(order.len(), &gens)
        .expect("a permutation of a full-rank lattice's basis spans a full-rank lattice")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moved_fields_come_first_orbit_by_orbit() {
        // Swaps (0 1) and (2 4) on five fields: field 3 is fixed.
        let syms = vec![vec![1, 0, 2, 3, 4], vec![0, 1, 4, 3, 2]];
        assert_eq!(engine_order(5, &syms), vec![0, 1, 2, 4, 3]);
        assert_eq!(engine_order(3, &[]), vec![0, 1, 2]);
    }

    #[test]
    fn a_lattice_survives_the_round_trip_and_symmetries_follow_the_fields() {
        let order = vec![2, 0, 1];
        let l =
            Lattice::from_generators(3, &[vec![2, 1, 0], vec![0, 3, 1], vec![0, 0, 5]]).unwrap();
        let gens: Vec<Vec<i64>> = l
            .rows()
            .iter()
            .map(|r| order.iter().map(|&j| r[j]).collect())
            .collect();
        let inner = Lattice::from_generators(3, &gens).unwrap();
        assert_eq!(restored(&inner, &order), l);
        // Swap of problem fields 0 and 2 = swap of engine positions 1 and 0.
        assert_eq!(
            symmetries_in_order(&[vec![2, 1, 0]], &order),
            vec![vec![1, 0, 2]]
        );
    }
}
