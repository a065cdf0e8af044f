//! Stress tests of the orbit reduction (`symmetry`, `field_order`, the engine's cut) on
//! problems built with a known group of signed field permutations: a signed swap, 3-cycles
//! with and without sign changes, two commuting swaps; single outputs fixed by the group and
//! several outputs the group exchanges; several kept signatures per output; grids equal on
//! the orbits or not; with and without a phase cap. Every check is against brute force over
//! the plain sublattice enumerator, with group actions, phase counts and symmetry tests
//! recomputed here from exact lattice membership only (common practice: a search is checked
//! against exhaustive enumeration on small cases).

use std::collections::HashSet;
use std::sync::atomic::AtomicBool;

use super::field_order::engine_order;
use super::symmetry::{field_symmetries, for_the_cut};
use super::*;

/// A signed permutation: `(s v)[pi[j]] = e[j] v[j]`.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
struct Signed {
    pi: Vec<usize>,
    e: Vec<i64>,
}

impl Signed {
    fn apply(&self, v: &[i64]) -> Vec<i64> {
        let mut w = vec![0; v.len()];
        for j in 0..v.len() {
            w[self.pi[j]] = self.e[j] * v[j];
        }
        w
    }
    /// `self` after `other`.
    fn after(&self, other: &Signed) -> Signed {
        let n = self.pi.len();
        let mut pi = vec![0; n];
        let mut e = vec![0; n];
        for j in 0..n {
            pi[j] = self.pi[other.pi[j]];
            e[j] = other.e[j] * self.e[other.pi[j]];
        }
        Signed { pi, e }
    }
    fn lattice(&self, l: &Lattice) -> Lattice {
        let gens: Vec<Vec<i64>> = l.rows().iter().map(|r| self.apply(r)).collect();
        Lattice::from_generators(l.dims(), &gens).unwrap()
    }
}

/// The group the generators generate (identity included).
fn closure(n: usize, gens: &[Signed]) -> Vec<Signed> {
    let id = Signed {
        pi: (0..n).collect(),
        e: vec![1; n],
    };
    let mut seen: HashSet<Signed> = HashSet::from([id.clone()]);
    let mut stack = vec![id];
    while let Some(g) = stack.pop() {
        for s in gens {
            let h = s.after(&g);
            if seen.insert(h.clone()) {
                stack.push(h);
            }
        }
    }
    let mut out: Vec<Signed> = seen.into_iter().collect();
    out.sort_by(|a, b| (&a.pi, &a.e).cmp(&(&b.pi, &b.e)));
    out
}

/// A small deterministic generator (xorshift64*).
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_f491_4f6c_dd1d)
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
    fn entry(&mut self) -> i64 {
        self.below(5) as i64 - 2
    }
    fn vector(&mut self, n: usize) -> Vec<i64> {
        (0..n).map(|_| self.entry()).collect()
    }
}

/// `v` up to sign, as the smaller of `v` and `-v` (a convention of this file only).
fn canon(v: &[i64]) -> Vec<i64> {
    let m: Vec<i64> = v.iter().map(|x| -x).collect();
    if m < v.to_vec() {
        m
    } else {
        v.to_vec()
    }
}

/// The forbidden and required difference sets of a problem, rebuilt from its definition
/// (kept minus reference in L, rejected and other outputs' kept minus reference outside), each
/// vector taken up to sign.
fn difference_sets(p: &LatticeProblem) -> (HashSet<Vec<i64>>, HashSet<Vec<i64>>) {
    let minus = |a: &[i64], b: &[i64]| a.iter().zip(b).map(|(x, y)| x - y).collect::<Vec<_>>();
    let (mut forb, mut req) = (HashSet::new(), HashSet::new());
    for (o, out) in p.outputs.iter().enumerate() {
        let t = &out.kept[0];
        for k in &out.kept[1..] {
            req.insert(canon(&minus(k, t)));
        }
        for b in &p.rejected {
            forb.insert(canon(&minus(b, t)));
        }
        for (q, other) in p.outputs.iter().enumerate() {
            if q != o {
                for k in &other.kept {
                    forb.insert(canon(&minus(k, t)));
                }
            }
        }
    }
    req.remove(&vec![0; p.dims]);
    forb.remove(&vec![0; p.dims]);
    (forb, req)
}

/// Every signed permutation mapping both difference sets onto themselves (up to sign) and
/// keeping each field's grid, found by trying all `n! 2^n` of them.
fn all_symmetries(p: &LatticeProblem) -> Vec<Signed> {
    let n = p.dims;
    let (forb, req) = difference_sets(p);
    let keeps =
        |s: &Signed, set: &HashSet<Vec<i64>>| set.iter().all(|v| set.contains(&canon(&s.apply(v))));
    let mut perms: Vec<Vec<usize>> = vec![vec![]];
    for _ in 0..n {
        perms = perms
            .into_iter()
            .flat_map(|p| {
                (0..n)
                    .filter(|i| !p.contains(i))
                    .map(|i| {
                        let mut q = p.clone();
                        q.push(i);
                        q
                    })
                    .collect::<Vec<_>>()
            })
            .collect();
    }
    let mut out = Vec::new();
    for pi in perms {
        if (0..n).any(|j| p.grid[pi[j]] != p.grid[j]) {
            continue;
        }
        for mask in 0..1u32 << n {
            let e = (0..n)
                .map(|j| if mask >> j & 1 == 1 { -1 } else { 1 })
                .collect();
            let s = Signed { pi: pi.clone(), e };
            if keeps(&s, &forb) && keeps(&s, &req) {
                out.push(s);
            }
        }
    }
    out
}

/// `pi_inv` as `field_symmetries` reports it.
fn inverse(pi: &[usize]) -> Vec<usize> {
    let mut inv = vec![0; pi.len()];
    for (j, &p) in pi.iter().enumerate() {
        inv[p] = j;
    }
    inv
}

/// Compares `field_symmetries` with the exhaustive list: the same non-identity permutations.
/// Returns the exhaustive list.
fn check_symmetries(p: &LatticeProblem) -> Vec<Signed> {
    let red = p.reduce();
    let got: HashSet<Vec<usize>> = field_symmetries(p.dims, &red.forb, &red.req, &p.grid)
        .into_iter()
        .collect();
    let all = all_symmetries(p);
    let want: HashSet<Vec<usize>> = all
        .iter()
        .map(|s| inverse(&s.pi))
        .filter(|inv| inv.iter().enumerate().any(|(i, &j)| i != j))
        .collect();
    assert_eq!(got, want, "{p:?}");
    all
}

/// Distinct phases of field j: the least m > 0 with `m e_j` in L (membership only).
fn phase_counts(l: &Lattice) -> Vec<u64> {
    (0..l.dims())
        .map(|j| {
            (1..=l.index())
                .find(|&m| {
                    let mut e = vec![0; l.dims()];
                    e[j] = m as i64;
                    l.contains(&e)
                })
                .unwrap()
        })
        .collect()
}

/// A problem whose difference sets the group of `gens` maps onto themselves: rejected
/// vectors closed under the group; outputs the orbit of one kept list (one output when the
/// group fixes it, the reference made fixed by summing its orbit); extra kept signatures the
/// orbit of one vector; grids constant on the field orbits or drawn per field.
fn built_problem(rng: &mut Rng, n: usize, gens: &[Signed], max_steps: u64) -> LatticeProblem {
    let group = closure(n, gens);
    let orbit_sum = |v: &[i64]| -> Vec<i64> {
        let mut s = vec![0; n];
        for g in &group {
            for (x, y) in s.iter_mut().zip(g.apply(v)) {
                *x += y;
            }
        }
        let d = s.iter().fold(0i64, |a, &b| num_integer::gcd(a, b)).max(1);
        s.iter().map(|x| x / d).collect()
    };
    let multi = rng.below(3) == 0;
    let t = if multi {
        rng.vector(n)
    } else {
        orbit_sum(&rng.vector(n))
    };
    let mut kept0 = vec![t.clone()];
    if rng.below(3) == 0 {
        let k = rng.vector(n);
        let mut ks: Vec<Vec<i64>> = if multi {
            vec![k]
        } else {
            group.iter().map(|g| g.apply(&k)).collect()
        };
        ks.sort();
        ks.dedup();
        kept0.extend(ks.into_iter().filter(|k| *k != t));
    }
    // Outputs as (reference, the other kept ones sorted): the group permutes them.
    let mut outputs: Vec<Vec<Vec<i64>>> = Vec::new();
    for g in &group {
        let mut image: Vec<Vec<i64>> = kept0.iter().map(|k| g.apply(k)).collect();
        image[1..].sort();
        if !outputs.contains(&image) {
            outputs.push(image);
        }
    }
    let kept_all: HashSet<Vec<i64>> = outputs.iter().flatten().cloned().collect();
    let mut rejected: Vec<Vec<i64>> = (0..1 + rng.below(5))
        .flat_map(|_| {
            let b = rng.vector(n);
            group.iter().map(move |g| g.apply(&b)).collect::<Vec<_>>()
        })
        .filter(|b| !kept_all.contains(b))
        .collect();
    rejected.sort();
    rejected.dedup();
    let grid = if rng.below(3) == 0 {
        (0..n)
            .map(|_| [0, 2, 3, 4][rng.below(4) as usize])
            .collect()
    } else {
        let mut g = vec![u32::MAX; n];
        for j in 0..n {
            if g[j] == u32::MAX {
                let m = [0, 2, 3, 4, 6][rng.below(5) as usize];
                for s in &group {
                    g[s.pi[j]] = m;
                }
            }
        }
        g
    };
    LatticeProblem {
        dims: n,
        grid,
        outputs: outputs
            .into_iter()
            .enumerate()
            .map(|(i, kept)| OutputSpec {
                name: format!("o{i}"),
                kept,
            })
            .collect(),
        rejected,
        max_steps,
        max_phases_per_field: [None, Some(3), Some(4), Some(6)][rng.below(4) as usize],
    }
}

fn signed(pi: &[usize], e: &[i64]) -> Signed {
    Signed {
        pi: pi.to_vec(),
        e: e.to_vec(),
    }
}

/// The generator families: (fields, generators, step limit of the brute force).
fn families() -> Vec<(usize, Vec<Signed>, u64)> {
    vec![
        // Signed swap of fields 0 and 2: fixes (1, 1, -1).
        (3, vec![signed(&[2, 1, 0], &[-1, 1, -1])], 24),
        // Plain swap on two and three fields.
        (2, vec![signed(&[1, 0], &[1, 1])], 40),
        (3, vec![signed(&[1, 0, 2], &[1, 1, 1])], 24),
        // 3-cycles: plain, with an even and an odd number of sign changes (order 3 and 6).
        (3, vec![signed(&[1, 2, 0], &[1, 1, 1])], 24),
        (3, vec![signed(&[1, 2, 0], &[1, -1, -1])], 24),
        (3, vec![signed(&[1, 2, 0], &[-1, -1, -1])], 24),
        // The whole symmetric group on three fields, and a sign change alone with a swap.
        (
            3,
            vec![
                signed(&[1, 0, 2], &[1, 1, 1]),
                signed(&[1, 2, 0], &[1, 1, 1]),
            ],
            24,
        ),
        (
            3,
            vec![
                signed(&[0, 1, 2], &[1, -1, 1]),
                signed(&[1, 0, 2], &[1, 1, 1]),
            ],
            24,
        ),
        // Two commuting swaps on four fields.
        (
            4,
            vec![
                signed(&[1, 0, 2, 3], &[1, 1, 1, 1]),
                signed(&[0, 1, 3, 2], &[1, 1, -1, -1]),
            ],
            12,
        ),
    ]
}

/// Stats of one run of the stress test.
#[derive(Default, Debug)]
struct Tally {
    cases: usize,
    with_symmetry: usize,
    found: usize,
    multi_output: usize,
    several_kept: usize,
    capped: usize,
    minimal_lattices: usize,
}

/// Checks search, `all_minimal` and `field_symmetries` on one problem against brute force.
fn check_problem(p: &LatticeProblem, gens: &[Signed], tally: &mut Tally) {
    let all_syms = check_symmetries(p);
    let grids_kept = gens
        .iter()
        .all(|g| (0..p.dims).all(|j| p.grid[g.pi[j]] == p.grid[j]));
    let red = p.reduce();
    let syms = for_the_cut(field_symmetries(p.dims, &red.forb, &red.req, &p.grid));
    if grids_kept {
        for g in gens
            .iter()
            .filter(|g| g.pi.iter().enumerate().any(|(j, &q)| j != q))
        {
            assert!(syms.contains(&inverse(&g.pi)), "{g:?} missed in {p:?}");
        }
    }
    tally.cases += 1;
    tally.with_symmetry += usize::from(!syms.is_empty());
    tally.multi_output += usize::from(p.outputs.len() > 1);
    tally.several_kept += usize::from(p.outputs.iter().any(|o| o.kept.len() > 1));
    tally.capped += usize::from(p.max_phases_per_field.is_some());
    // Brute force: the difference sets rebuilt here reject most lattices cheaply; on the rest
    // the grid and cap rule of this file must agree with `is_valid`.
    let (forb, req) = difference_sets(p);
    let valid_here = |l: &Lattice| {
        if forb.iter().any(|d| l.contains(d)) || req.iter().any(|q| !l.contains(q)) {
            return false;
        }
        let v = phase_counts(l);
        let ok = (0..p.dims).all(|j| p.grid[j] == 0 || p.grid[j] as u64 % v[j] == 0)
            && p.max_phases_per_field
                .is_none_or(|c| v.iter().all(|&x| x <= c as u64));
        assert_eq!(ok, is_valid(p, l), "{:?} for {p:?}", l.rows());
        ok
    };
    let brute: Option<(u64, Vec<Lattice>)> = (1..=p.max_steps).find_map(|n| {
        let v: Vec<Lattice> = sublattices(p.dims, n).filter(|l| valid_here(l)).collect();
        (!v.is_empty()).then_some((n, v))
    });
    let cancel = AtomicBool::new(false);
    let ctl = SearchControl::new(&cancel);
    let (outcome, listed) = search_with_alternatives(p, 1_000_000, &ctl).unwrap();
    let Some((n_min, valid)) = brute else {
        assert!(!matches!(outcome, SearchOutcome::Found(_)), "{p:?}");
        assert!(listed.is_empty());
        return;
    };
    let SearchOutcome::Found(d) = search(p, &ctl).unwrap() else {
        panic!("brute force finds N = {n_min} for {p:?}")
    };
    tally.found += 1;
    tally.minimal_lattices += valid.len();
    assert!(
        d.proven_minimal && d.steps == n_min && is_valid(p, &d.lattice),
        "{p:?}"
    );
    assert!(matches!(outcome, SearchOutcome::Found(ref e) if e.steps == n_min));
    // One signed symmetry per reported permutation (the first sign vector that works).
    let chosen: Vec<Signed> = syms
        .iter()
        .map(|inv| {
            let pi = inverse(inv);
            all_syms.iter().find(|s| s.pi == pi).unwrap().clone()
        })
        .collect();
    // The engine keeps exactly the valid lattices that no symmetry gives a lexicographically
    // larger phase-count vector, read in the engine's field order; v(sL) from sL itself.
    let order = engine_order(p.dims, &syms);
    let in_order = |v: Vec<u64>| order.iter().map(|&j| v[j]).collect::<Vec<u64>>();
    let expected: HashSet<Lattice> = valid
        .iter()
        .filter(|l| {
            let v = in_order(phase_counts(l));
            chosen
                .iter()
                .all(|s| in_order(phase_counts(&s.lattice(l))) <= v)
        })
        .cloned()
        .collect();
    let got: HashSet<Lattice> = listed.iter().cloned().collect();
    assert_eq!(got.len(), listed.len(), "a lattice listed twice for {p:?}");
    assert_eq!(got, expected, "{p:?}");
    // Every orbit of the group the chosen symmetries generate meets the listed lattices.
    let group = closure(p.dims, &chosen);
    for l in &valid {
        assert!(
            group.iter().any(|g| got.contains(&g.lattice(l))),
            "orbit of {:?} lost in {p:?}",
            l.rows()
        );
    }
}

/// The search on problems with built-in field symmetries agrees with brute force, keeps one
/// member (at least) of every orbit, and `field_symmetries` reports exactly the permutations
/// of the true symmetries (common practice: exhaustive enumeration on small cases).
#[test]
fn orbit_reduced_search_agrees_with_brute_force_on_symmetric_problems() {
    let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
    let mut tally = Tally::default();
    for (n, gens, max_steps) in families() {
        let rounds = if n == 4 { 12 } else { 36 };
        for _ in 0..rounds {
            let p = built_problem(&mut rng, n, &gens, max_steps);
            check_problem(&p, &gens, &mut tally);
        }
    }
    eprintln!("symmetric problems: {tally:?}");
    assert!(tally.with_symmetry * 2 > tally.cases, "{tally:?}");
    assert!(tally.found * 2 > tally.cases, "{tally:?}");
    assert!(tally.multi_output > 0 && tally.several_kept > 0 && tally.capped > 0);
}

/// On unstructured random problems `field_symmetries` reports exactly the permutations that
/// some sign vector turns into a symmetry (soundness and completeness, by trying all signed
/// permutations; common practice).
#[test]
fn field_symmetries_are_exactly_the_true_ones_on_random_problems() {
    let mut rng = Rng(0x0123_4567_89ab_cdef);
    let mut nontrivial = 0;
    for case in 0..300 {
        let n = 1 + case % 4;
        let outputs = (0..1 + rng.below(2))
            .map(|i| OutputSpec {
                name: format!("o{i}"),
                kept: (0..1 + rng.below(2)).map(|_| rng.vector(n)).collect(),
            })
            .collect();
        let p = LatticeProblem {
            dims: n,
            grid: (0..n).map(|_| [0, 2][rng.below(2) as usize]).collect(),
            outputs,
            rejected: (0..rng.below(4)).map(|_| rng.vector(n)).collect(),
            max_steps: 10,
            max_phases_per_field: None,
        };
        let red = p.reduce();
        nontrivial += usize::from(!field_symmetries(n, &red.forb, &red.req, &p.grid).is_empty());
        check_symmetries(&p);
    }
    assert!(nontrivial > 0);
}

/// The agnostic ball of radius 2 around zero on five fields (common practice): every signed
/// permutation is a symmetry (119 field permutations), more than the cut takes
/// (`symmetry::for_the_cut`); the capped cut still finds the brute-force minimum and lists one
/// lattice of every orbit.
#[test]
fn the_capped_cut_agrees_with_brute_force_on_a_five_field_ball() {
    let n = 5;
    let mut rejected = Vec::new();
    for i in 0..n {
        for j in i..n {
            for (a, b) in [(1, 1), (1, -1), (-1, 1), (-1, -1)] {
                let mut v = vec![0i64; n];
                v[i] += a;
                v[j] += b;
                if v.iter().any(|&x| x != 0) && !rejected.contains(&v) {
                    rejected.push(v);
                }
            }
        }
    }
    let p = LatticeProblem {
        dims: n,
        grid: vec![0; n],
        outputs: vec![OutputSpec {
            name: "zero".into(),
            kept: vec![vec![0; n]],
        }],
        rejected,
        max_steps: 11,
        max_phases_per_field: None,
    };
    let mut tally = Tally::default();
    check_problem(&p, &[], &mut tally);
    assert_eq!((tally.with_symmetry, tally.found), (1, 1), "{tally:?}");
}
