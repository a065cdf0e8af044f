//! Yardsticks for a design: the smallest cogwheel cycle (cyclic lattice designs, Levitt, Madhu
//! & Hughes, J. Magn. Reson. 155, 300 (2002)) found by a pruned exhaustive scan. (The first
//! leak order is the checker's, on the written cycle.)

use crate::design::lattice::{Lattice, LatticeProblem};
use num_integer::Integer;
use serde::Serialize;
use std::sync::atomic::{AtomicBool, Ordering};

/// Work (search nodes plus the differences each tests) the cogwheel scan may spend: about a
/// second in a release build (a yardstick, not a proof the design needs).
pub const COGWHEEL_NODE_BUDGET: u64 = 200_000_000;

/// Result of the cogwheel scan.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CogwheelScan {
    /// The smallest cogwheel found: N and winding numbers (one per cycled field).
    pub best: Option<(u64, Vec<i64>)>,
    /// Every N below this holds no valid cogwheel (scanned, or below the lattice optimum).
    pub excluded_below: u64,
    /// True if the scan stopped on its node budget.
    pub budget_exhausted: bool,
    /// True if the scan was interrupted.
    pub cancelled: bool,
    /// True when the design itself (or an equally short lattice design) is cyclic: no scan ran.
    pub optimum_is_cyclic: bool,
}

/// The cogwheel yardstick of a lattice search: a cyclic optimum (the chosen lattice or an
/// equally short alternative) is itself the smallest cogwheel; otherwise the scan starts at
/// the lattice bound (every cogwheel is a lattice design, so none lies below it) and stops at
/// `to`, the nested bound.
pub fn cogwheel_yardstick(
    p: &LatticeProblem,
    candidates: &[&Lattice],
    lattice_bound: u64,
    to: u64,
    cancel: &AtomicBool,
) -> CogwheelScan {
    if let Some((n, nu)) = candidates.iter().find_map(|l| l.as_cogwheel()) {
        if n == lattice_bound {
            return CogwheelScan {
                best: Some((n, nu)),
                excluded_below: n,
                budget_exhausted: false,
                cancelled: false,
                optimum_is_cyclic: true,
            };
        }
    }
    min_cogwheel(p, lattice_bound.max(1), to, COGWHEEL_NODE_BUDGET, cancel)
}

/// Difference vectors bucketed by the index of their last nonzero entry.
type Buckets = Vec<Vec<Vec<i64>>>;

/// Forbidden difference vectors (must not satisfy `d.nu = 0 mod N`) bucketed by the index of
/// their last nonzero entry, and required ones (must satisfy it), per output.
fn differences(p: &LatticeProblem) -> Vec<(Buckets, Buckets)> {
    let n = p.dims;
    let bucket = |vs: Vec<Vec<i64>>| {
        let mut out = vec![Vec::new(); n];
        for v in vs {
            if let Some(j) = v.iter().rposition(|&x| x != 0) {
                out[j].push(v);
            }
        }
        out
    };
    p.outputs
        .iter()
        .enumerate()
        .map(|(o, spec)| {
            let t = &spec.kept[0];
            let minus = |b: &Vec<i64>| b.iter().zip(t).map(|(x, y)| x - y).collect::<Vec<i64>>();
            let mut forb: Vec<Vec<i64>> = p.rejected.iter().map(minus).collect();
            for (q, other) in p.outputs.iter().enumerate() {
                if q != o {
                    forb.extend(other.kept.iter().map(minus));
                }
            }
            let req: Vec<Vec<i64>> = spec.kept.iter().skip(1).map(minus).collect();
            (bucket(forb), bucket(req))
        })
        .collect()
}

/// Scan N = from..=to for the smallest valid cogwheel cycle (the caller knows none lies
/// below `from`).
pub fn min_cogwheel(
    p: &LatticeProblem,
    from: u64,
    to: u64,
    node_budget: u64,
    cancel: &AtomicBool,
) -> CogwheelScan {
    let diffs = differences(p);
    let mut nodes = 0u64;
    let stopped = |n: u64, cancelled: bool| CogwheelScan {
        best: None,
        excluded_below: n,
        budget_exhausted: !cancelled,
        cancelled,
        optimum_is_cyclic: false,
    };
    for n in from.max(1)..=to {
        if cancel.load(Ordering::Relaxed) {
            return stopped(n, true);
        }
        let mut nu = vec![0i64; p.dims];
        let mut dfs = CogDfs {
            p,
            diffs: &diffs,
            n: n as i64,
            nodes: &mut nodes,
            budget: node_budget,
            cancel,
        };
        match dfs.run(0, &mut nu) {
            Some(true) => {
                return CogwheelScan {
                    best: Some((n, nu)),
                    excluded_below: n,
                    budget_exhausted: false,
                    cancelled: false,
                    optimum_is_cyclic: false,
                }
            }
            None => return stopped(n, cancel.load(Ordering::Relaxed)),
            Some(false) => {}
        }
    }
    CogwheelScan {
        best: None,
        excluded_below: to + 1,
        budget_exhausted: false,
        cancelled: false,
        optimum_is_cyclic: false,
    }
}

/// One depth-first scan of winding numbers for a fixed N.
struct CogDfs<'a> {
    p: &'a LatticeProblem,
    diffs: &'a [(Buckets, Buckets)],
    n: i64,
    nodes: &'a mut u64,
    budget: u64,
    cancel: &'a AtomicBool,
}

impl CogDfs<'_> {
    /// Assign winding numbers from field `j` on; `None` when the budget ran out or the scan
    /// was cancelled.
    fn run(&mut self, j: usize, nu: &mut Vec<i64>) -> Option<bool> {
        let (p, n) = (self.p, self.n);
        if j == p.dims {
            return Some(true);
        }
        for v in 0..n {
            // Work counts the node and every difference it tests, so the budget bounds time
            // whatever the size of the rejection set; the cancel flag is read at every node.
            *self.nodes += 1;
            if *self.nodes > self.budget || self.cancel.load(Ordering::Relaxed) {
                return None;
            }
            if !self.allowed(j, v) {
                continue;
            }
            nu[j] = v;
            let dot = |d: &Vec<i64>| {
                d.iter()
                    .zip(nu.iter())
                    .map(|(a, b)| a * b)
                    .sum::<i64>()
                    .rem_euclid(n)
            };
            let mut tested = 0u64;
            let mut test = |d: &Vec<i64>, zero: bool| {
                tested += 1;
                (dot(d) == 0) == zero
            };
            let ok = self.diffs.iter().all(|(forb, req)| {
                forb[j].iter().all(|d| test(d, false)) && req[j].iter().all(|d| test(d, true))
            });
            *self.nodes += tested;
            if ok {
                match self.run(j + 1, nu) {
                    Some(false) => {}
                    other => return other,
                }
            }
        }
        nu[j] = 0;
        Some(false)
    }

    /// Winding number `v` on field `j` respects the grid and the phase cap.
    fn allowed(&self, j: usize, v: i64) -> bool {
        let n = self.n;
        let grid = self.p.grid[j] as i64;
        if grid > 0 && (grid * v) % n != 0 {
            return false;
        }
        match self.p.max_phases_per_field {
            Some(cap) => n / v.gcd(&n).max(1) <= cap as i64,
            None => true,
        }
    }
}
