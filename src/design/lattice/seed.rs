//! Quick valid designs used as upper bounds before the exhaustive scan: the smallest
//! nested cycle (exact, by branch and bound, within a node budget) and a budgeted scan
//! of Korobov-type cogwheels `nu = (1, a, a^2, ...) mod N`.

use std::sync::atomic::{AtomicBool, Ordering};

use super::engine::Engine;
use super::group::gcd;
use super::hnf::Lattice;

const NESTED_BUDGET: u64 = 20_000_000;
/// Forbidden-difference tests the exact nested search may make (about a second): the seed
/// must come fast, whatever the size of the rejection set.
const NESTED_WORK_BUDGET: u64 = 40_000_000;
const KOROBOV_BUDGET: u64 = 3_000_000;

/// Smallest nested cycle with at most `max_steps` steps, as `(lattice, exact)`;
/// `exact` is false if the node or work budget ran out or `cancel` was set (the lattice is then
/// only valid).
pub(crate) fn nested_seed(
    e: &Engine,
    max_steps: u64,
    cancel: &AtomicBool,
) -> Option<(Lattice, bool)> {
    let n = e.n;
    let mut st = Nested::new(e, max_steps, cancel);
    // Greedy bound first, then the exact branch and bound.
    st.greedy();
    st.dfs(&mut Vec::new(), 1);
    let exact = !st.stopped;
    let c = st.best_c?;
    let rows = (0..n)
        .map(|i| {
            (0..n)
                .map(|j| if i == j { c[i] as i64 } else { 0 })
                .collect()
        })
        .collect();
    Lattice::from_hnf(rows).ok().map(|l| (l, exact))
}

struct Nested<'a> {
    e: &'a Engine,
    rj: Vec<i64>,
    best: u64,
    best_c: Option<Vec<u64>>,
    nodes: u64,
    work: u64,
    /// Set when a budget ran out or the search was cancelled: the best is then only valid.
    stopped: bool,
    cancel: &'a AtomicBool,
}

/// Steps of the greedy nested cycle (smallest clean step count field by field) with at most
/// `max_steps` steps: one pass over each level's differences, no branch and bound.
pub(crate) fn greedy_nested_steps(e: &Engine, max_steps: u64, cancel: &AtomicBool) -> Option<u64> {
    let mut st = Nested::new(e, max_steps, cancel);
    st.greedy();
    st.best_c.map(|_| st.best)
}

impl<'a> Nested<'a> {
    fn new(e: &'a Engine, max_steps: u64, cancel: &'a AtomicBool) -> Nested<'a> {
        // c_j must divide R_j: the gcd of the required differences' entries and M_j.
        let mut rj = vec![0i64; e.n];
        for (j, r) in rj.iter_mut().enumerate() {
            for q in e.req.iter().flatten() {
                *r = gcd(*r, q[j]);
            }
            if e.grid[j] > 0 {
                *r = gcd(*r, e.grid[j] as i64);
            }
        }
        Nested {
            e,
            rj,
            best: max_steps.saturating_add(1),
            best_c: None,
            nodes: 0,
            work: 0,
            stopped: false,
            cancel,
        }
    }

    fn allowed(&self, k: usize, c: u64) -> bool {
        let r = self.rj[k];
        if r != 0 && r % c as i64 != 0 {
            return false;
        }
        self.e.cap.is_none_or(|cap| c <= cap as u64)
    }

    /// The distinct `|d_k|` of the forbidden differences decided at level k whose earlier
    /// entries lie in the prefix `c[..k]`: `c_k = v` is clean iff `v` divides none of them.
    fn bad_entries(&mut self, k: usize, c: &[u64]) -> Vec<i64> {
        self.work += self.e.forb[k].len() as u64;
        let mut bad: Vec<i64> = self.e.forb[k]
            .iter()
            .filter(|d| d[..k].iter().zip(c).all(|(&x, &ci)| x % ci as i64 == 0))
            .map(|d| d[k].abs())
            .collect();
        bad.sort_unstable();
        bad.dedup();
        bad
    }

    fn clean_with(bad: &[i64], v: u64) -> bool {
        bad.iter().all(|&b| b % v as i64 != 0)
    }

    fn greedy(&mut self) {
        let mut c: Vec<u64> = Vec::new();
        let mut p = 1u64;
        // Cheap (one pass over each level's differences), so it runs even when the search is
        // already cancelled: an interrupted design always has this valid fallback.
        for k in 0..self.e.n {
            let bad = self.bad_entries(k, &c);
            let lim = self.best.saturating_sub(1) / p;
            // Every v above max(bad) is clean, and an allowed v divides the required gcd
            // when there is one: the walk stops at whichever comes first.
            let top = match self.rj[k] {
                0 => bad.last().map_or(1, |&b| b as u64 + 1),
                r => r.unsigned_abs(),
            };
            let ok = (1..=lim.min(top)).find(|&v| self.allowed(k, v) && Self::clean_with(&bad, v));
            match ok {
                Some(v) => {
                    c.push(v);
                    p *= v;
                }
                None => return,
            }
        }
        if p < self.best {
            self.best = p;
            self.best_c = Some(c);
        }
    }

    fn dfs(&mut self, c: &mut Vec<u64>, p: u64) {
        let k = c.len();
        if k == self.e.n {
            if p < self.best {
                self.best = p;
                self.best_c = Some(c.clone());
            }
            return;
        }
        if self.work > NESTED_WORK_BUDGET || self.cancel.load(Ordering::Relaxed) {
            self.stopped = true;
            return;
        }
        let bad = self.bad_entries(k, c);
        let lim = (self.best - 1) / p;
        for v in 1..=lim {
            self.nodes += 1;
            if self.nodes > NESTED_BUDGET || self.stopped {
                self.stopped = true;
                return;
            }
            if p * v >= self.best {
                return;
            }
            if !self.allowed(k, v) || !Self::clean_with(&bad, v) {
                continue;
            }
            c.push(v);
            self.dfs(c, p * v);
            c.pop();
        }
    }
}

/// First Korobov-type cogwheel `nu = (1, a, a^2, ...) mod N`, `N < bound`, passing
/// all constraints, within a fixed budget of dot products.
/// Stops early when `cancel` is set.
pub(crate) fn korobov_seed(e: &Engine, bound: u64, cancel: &AtomicBool) -> Option<Lattice> {
    let n = e.n;
    let forb: Vec<&Vec<i64>> = e.forb.iter().flatten().collect();
    let req: Vec<&Vec<i64>> = e.req.iter().flatten().collect();
    let mut work = 0u64;
    for nn in 2..bound.min(1 << 31) {
        let m = nn as i64;
        for a in 1..m {
            let mut nu = vec![1i64; n];
            for j in 1..n {
                nu[j] = (nu[j - 1] as i128 * a as i128 % m as i128) as i64;
            }
            let dot = |d: &[i64]| {
                d.iter()
                    .zip(&nu)
                    .map(|(&x, &v)| x as i128 * v as i128)
                    .sum::<i128>()
                    % m as i128
                    == 0
            };
            let grid_ok = e
                .grid
                .iter()
                .zip(&nu)
                .all(|(&g, &v)| g == 0 || (g as i64 * v) % m == 0);
            let cap_ok = e
                .cap
                .is_none_or(|c| nu.iter().all(|&v| (m / gcd(v, m)) as u64 <= c as u64));
            if !grid_ok || !cap_ok {
                continue;
            }
            let mut ok = req.iter().all(|q| dot(q));
            if ok {
                for d in &forb {
                    work += 1;
                    if dot(d) {
                        ok = false;
                        break;
                    }
                }
            }
            if ok {
                return Lattice::from_cogwheel(nn, &nu).ok();
            }
            if work > KOROBOV_BUDGET || cancel.load(Ordering::Relaxed) {
                return None;
            }
        }
    }
    None
}
