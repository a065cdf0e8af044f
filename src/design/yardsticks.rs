//! Yardsticks for a design: the smallest cogwheel cycle (cyclic lattice designs, Levitt, Madhu
//! & Hughes, J. Magn. Reson. 155, 300 (2002)) found by a pruned exhaustive scan. (The first
//! leak order is the checker's, on the written cycle.)

use crate::design::lattice::LatticeProblem;
use num_integer::Integer;
use serde::Serialize;

/// Result of the cogwheel scan.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CogwheelScan {
    /// The smallest cogwheel found: N and winding numbers (one per cycled field).
    pub best: Option<(u64, Vec<i64>)>,
    /// Every N below this was scanned completely without a valid cogwheel.
    pub excluded_below: u64,
    /// True if the scan stopped on its node budget.
    pub budget_exhausted: bool,
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

/// Scan N = 1..=max_n for the smallest valid cogwheel cycle.
pub fn min_cogwheel(p: &LatticeProblem, max_n: u64, node_budget: u64) -> CogwheelScan {
    let diffs = differences(p);
    let mut nodes = 0u64;
    for n in 1..=max_n {
        let mut nu = vec![0i64; p.dims];
        match cog_dfs(p, &diffs, n as i64, 0, &mut nu, &mut nodes, node_budget) {
            Some(true) => {
                return CogwheelScan {
                    best: Some((n, nu)),
                    excluded_below: n,
                    budget_exhausted: false,
                }
            }
            None => {
                return CogwheelScan {
                    best: None,
                    excluded_below: n,
                    budget_exhausted: true,
                }
            }
            Some(false) => {}
        }
    }
    CogwheelScan {
        best: None,
        excluded_below: max_n + 1,
        budget_exhausted: false,
    }
}

/// Depth-first assignment of winding numbers; `None` when the budget ran out.
fn cog_dfs(
    p: &LatticeProblem,
    diffs: &[(Buckets, Buckets)],
    n: i64,
    j: usize,
    nu: &mut Vec<i64>,
    nodes: &mut u64,
    budget: u64,
) -> Option<bool> {
    if j == p.dims {
        return Some(true);
    }
    for v in 0..n {
        *nodes += 1;
        if *nodes > budget {
            return None;
        }
        let grid = p.grid[j] as i64;
        if grid > 0 && (grid * v) % n != 0 {
            continue;
        }
        if let Some(cap) = p.max_phases_per_field {
            if n / v.gcd(&n).max(1) > cap as i64 {
                continue;
            }
        }
        nu[j] = v;
        let dot = |d: &Vec<i64>| {
            d.iter()
                .zip(nu.iter())
                .map(|(a, b)| a * b)
                .sum::<i64>()
                .rem_euclid(n)
        };
        let ok = diffs.iter().all(|(forb, req)| {
            forb[j].iter().all(|d| dot(d) != 0) && req[j].iter().all(|d| dot(d) == 0)
        });
        if ok {
            match cog_dfs(p, diffs, n, j + 1, nu, nodes, budget) {
                Some(true) => return Some(true),
                None => return None,
                Some(false) => {}
            }
        }
    }
    nu[j] = 0;
    Some(false)
}
