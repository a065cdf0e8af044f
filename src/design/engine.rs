//! The pruned exhaustive scan over lattices of one index N. Rows of the lower-
//! triangular HNF are fixed one at a time; after row k the prefix lattice
//! `L_k = L ∩ (Z^(k+1) x 0)` is final, so every forbidden difference whose last
//! non-zero entry is k is decided there and prunes the whole subtree.
//!
//! The candidate row k = `(h', D)` is tested in the quotient group
//! `G = Z^k / L_{k-1}` (kept in Smith coordinates): a vector `(d', d_k)` lies in
//! `L_k` iff `D | d_k` and `(d_k / D) [h'] = [d']` in G. The classes `[h']` are walked
//! over the HNF box of reduced off-diagonal entries, so each lattice is met once.

use std::sync::atomic::{AtomicBool, Ordering};

use super::group::{extend, Presented};
use super::lattice::Lattice;
use super::problem::top;

/// Constraints sorted by the level at which they become decidable.
pub(crate) struct Engine {
    pub n: usize,
    /// `forb[k]`: forbidden differences whose last non-zero entry is `k` (> 0).
    pub forb: Vec<Vec<Vec<i64>>>,
    /// `req[k]`: required differences whose last non-zero entry is `k`.
    pub req: Vec<Vec<Vec<i64>>>,
    pub grid: Vec<u32>,
    pub cap: Option<u32>,
}

/// A partial HNF: rows `0..k` fixed.
#[derive(Clone)]
pub(crate) struct Node {
    rows: Vec<Vec<i64>>,
    grp: Presented,
    index: u64,
}

/// What to do with complete valid lattices.
pub(crate) struct Sink<'a> {
    /// Stop after this many lattices.
    pub limit: usize,
    pub found: Vec<Lattice>,
    /// Candidate rows examined.
    pub tested: u64,
    pub cancel: &'a AtomicBool,
    /// If set, nodes of this depth are collected instead of expanded.
    pub split: Option<usize>,
    pub tasks: Vec<Node>,
}

impl<'a> Sink<'a> {
    pub fn new(limit: usize, cancel: &'a AtomicBool) -> Sink<'a> {
        Sink {
            limit,
            found: Vec::new(),
            tested: 0,
            cancel,
            split: None,
            tasks: Vec::new(),
        }
    }
    fn stop(&self) -> bool {
        self.found.len() >= self.limit || self.cancel.load(Ordering::Relaxed)
    }
}

impl Engine {
    pub fn new(
        n: usize,
        forb: &[Vec<i64>],
        req: &[Vec<i64>],
        grid: &[u32],
        cap: Option<u32>,
    ) -> Engine {
        let mut f = vec![Vec::new(); n];
        let mut r = vec![Vec::new(); n];
        for d in forb {
            if let Some(k) = top(d) {
                f[k].push(d.clone());
            }
        }
        for q in req {
            if let Some(k) = top(q) {
                r[k].push(q.clone());
            }
        }
        Engine {
            n,
            forb: f,
            req: r,
            grid: grid.to_vec(),
            cap,
        }
    }

    /// The empty prefix.
    pub fn root(&self) -> Node {
        Node {
            rows: Vec::new(),
            grp: Presented {
                inv: vec![],
                img: vec![],
            },
            index: 1,
        }
    }

    /// Expands `node` towards lattices of index exactly `target`.
    pub fn dfs(&self, node: &Node, target: u64, sink: &mut Sink) {
        if sink.stop() {
            return;
        }
        let k = node.rows.len();
        if sink.split == Some(k) {
            sink.tasks.push(node.clone());
            return;
        }
        let rest = target / node.index;
        let last = k + 1 == self.n;
        let g = &node.grp;
        let r = g.inv.len();
        // Image of the first k coordinates of every level-k constraint.
        let image = |d: &[i64]| -> Vec<i64> {
            let mut y = vec![0i64; r];
            for (j, &dj) in d[..k].iter().enumerate() {
                if dj != 0 {
                    for i in 0..r {
                        y[i] = (y[i] + dj.rem_euclid(g.inv[i]) * g.img[j][i]) % g.inv[i];
                    }
                }
            }
            y
        };
        let fy: Vec<(i64, Vec<i64>)> = self.forb[k].iter().map(|d| (d[k], image(d))).collect();
        let qy: Vec<(i64, Vec<i64>)> = self.req[k].iter().map(|d| (d[k], image(d))).collect();
        let later_grid: Option<u64> = if self.grid[k + 1..].iter().all(|&m| m > 0) {
            Some(self.grid[k + 1..].iter().map(|&m| m as u64).product())
        } else {
            None
        };
        let box_dims: Vec<i64> = (0..k).map(|j| node.rows[j][j]).collect();
        for dd in 1..=rest {
            if rest % dd != 0 || (last && dd != rest) {
                continue;
            }
            let m = self.grid[k] as u64;
            if m > 0 && m % dd != 0 {
                continue;
            }
            if let Some(lg) = later_grid {
                if lg % (rest / dd) != 0 {
                    continue;
                }
            }
            if self.cap.is_some_and(|c| dd > c as u64) {
                continue;
            }
            let d = dd as i64;
            if qy.iter().any(|(dk, _)| dk % d != 0) {
                continue;
            }
            let tests: Vec<(i64, &[i64])> = fy
                .iter()
                .filter(|(dk, _)| dk % d == 0)
                .map(|(dk, y)| (dk / d, y.as_slice()))
                .collect();
            let reqs: Vec<(i64, &[i64])> =
                qy.iter().map(|(dk, y)| (dk / d, y.as_slice())).collect();
            let mut h = vec![0i64; k];
            let mut x = vec![0i64; r];
            loop {
                sink.tested += 1;
                if self.accept(g, &x, d, &tests, &reqs) {
                    let mut row = h.clone();
                    row.push(d);
                    row.resize(self.n, 0);
                    let mut rows = node.rows.clone();
                    rows.push(row);
                    if last {
                        if let Ok(l) = Lattice::from_hnf(rows) {
                            sink.found.push(l);
                        }
                    } else {
                        let grp = extend(g, &x, d);
                        let child = Node {
                            rows,
                            grp,
                            index: node.index * dd,
                        };
                        self.dfs(&child, target, sink);
                    }
                    if sink.stop() {
                        return;
                    }
                }
                // Odometer over the box, keeping x = sum h_j img_j.
                let mut j = k;
                let mut done = true;
                while j > 0 {
                    j -= 1;
                    h[j] += 1;
                    for i in 0..r {
                        x[i] = (x[i] + g.img[j][i]) % g.inv[i];
                    }
                    if h[j] < box_dims[j] {
                        done = false;
                        break;
                    }
                    // wrap: subtract box_dims[j] * img_j
                    for i in 0..r {
                        x[i] = (x[i] - (box_dims[j] % g.inv[i]) * g.img[j][i]).rem_euclid(g.inv[i]);
                    }
                    h[j] = 0;
                }
                if done {
                    break;
                }
            }
        }
    }

    fn accept(
        &self,
        g: &Presented,
        x: &[i64],
        d: i64,
        tests: &[(i64, &[i64])],
        reqs: &[(i64, &[i64])],
    ) -> bool {
        let hits = |c: i64, y: &[i64]| {
            x.iter()
                .zip(y)
                .zip(&g.inv)
                .all(|((&xi, &yi), &s)| (c.rem_euclid(s) * xi - yi) % s == 0)
        };
        let k = g.img.len();
        let m = self.grid[k] as i64;
        if m > 0 && !hits(m / d, &vec![0; x.len()]) {
            return false;
        }
        if let Some(cap) = self.cap {
            if d as u64 * g.element_order(x) > cap as u64 {
                return false;
            }
        }
        reqs.iter().all(|&(c, y)| hits(c, y)) && !tests.iter().any(|&(c, y)| hits(c, y))
    }
}
