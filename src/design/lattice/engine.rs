//! The pruned exhaustive scan over lattices with index in a window `[lo, hi)`. Rows of the lower-
//! triangular HNF are fixed one at a time; after row k the prefix lattice
//! `L_k = L ∩ (Z^(k+1) x 0)` is final, so every forbidden difference whose last
//! non-zero entry is k is decided there and prunes the whole subtree.
//!
//! The candidate row k = `(h', D)` is tested in the quotient group
//! `G = Z^k / L_{k-1}` (kept in Smith coordinates): a vector `(d', d_k)` lies in
//! `L_k` iff `D | d_k` and `(d_k / D) [h'] = [d']` in G. The classes `[h']` are walked
//! over the HNF box of reduced off-diagonal entries, so each lattice is met once.
//!
//! Per prefix and diagonal D, the forbidden differences are applied as a kill bitmap
//! over G (solve `c x = y` for each), stopping as soon as every class is killed; the
//! box walk then only reads one bit per candidate.

use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};

use strength_reduce::StrengthReducedU64;

use super::group::{extend, gcd, Presented};
use super::hnf::Lattice;
use super::problem::top;
use super::symmetry::beaten;

/// Constraints sorted by the level at which they become decidable.
pub(crate) struct Engine {
    pub n: usize,
    /// `forb[k]`: forbidden differences whose last non-zero entry is `k` (> 0).
    pub forb: Vec<Vec<Vec<i64>>>,
    /// `req[k]`: required differences whose last non-zero entry is `k`.
    pub req: Vec<Vec<Vec<i64>>>,
    /// `groups[k]`: `(d_k, start, end)` ranges of `forb[k]` sharing the entry `d_k`.
    pub groups: Vec<Vec<(i64, usize, usize)>>,
    pub grid: Vec<u32>,
    pub cap: Option<u32>,
    /// Field permutations of the problem's symmetries (`symmetry::field_symmetries`): a
    /// lattice whose phase-count vector one of them enlarges is left to its image.
    pub symmetries: Vec<Vec<usize>>,
}

/// A partial HNF: rows `0..k` fixed.
#[derive(Clone)]
pub(crate) struct Node {
    rows: Vec<Vec<i64>>,
    grp: Presented,
    index: u64,
    /// Distinct phases of fields `0..k` (order of `e_j` in `Z^n / L`), decided by the rows.
    ords: Vec<u64>,
}

/// Collects the valid lattices of the smallest index met so far.
pub(crate) struct Sink<'a> {
    /// Keep at most this many lattices (smallest engine-order keys).
    pub limit: usize,
    /// Valid lattices, all of index `best`.
    pub found: Vec<Lattice>,
    /// Shared upper bound on the index worth looking at (inclusive).
    pub best: &'a AtomicU64,
    /// Candidate rows examined.
    pub tested: u64,
    pub cancel: &'a AtomicBool,
    /// If set, nodes of this depth are collected instead of expanded.
    pub split: Option<usize>,
    pub tasks: Vec<Node>,
}

/// Engine order: diagonal tuple, then off-diagonal entries row by row.
pub(crate) fn order_key(l: &Lattice) -> (Vec<i64>, Vec<i64>) {
    let rows = l.rows();
    let diag = (0..rows.len()).map(|i| rows[i][i]).collect();
    let off = (0..rows.len())
        .flat_map(|i| rows[i][..i].to_vec())
        .collect();
    (diag, off)
}

impl<'a> Sink<'a> {
    pub fn new(limit: usize, best: &'a AtomicU64, cancel: &'a AtomicBool) -> Sink<'a> {
        Sink {
            limit,
            found: Vec::new(),
            best,
            tested: 0,
            cancel,
            split: None,
            tasks: Vec::new(),
        }
    }
    fn cancelled(&self) -> bool {
        self.cancel.load(Ordering::Relaxed)
    }
    fn push(&mut self, l: Lattice) {
        let idx = l.index();
        let cur = self.found.first().map(Lattice::index);
        if cur.is_some_and(|c| idx > c) {
            return;
        }
        if cur.is_some_and(|c| idx < c) {
            self.found.clear();
        }
        self.best.fetch_min(idx, Ordering::Relaxed);
        self.found.push(l);
        if self.found.len() > 4 * self.limit + 16 {
            self.found.sort_by_key(order_key);
            self.found.truncate(self.limit);
        }
    }
}

impl Engine {
    pub fn new(
        n: usize,
        forb: &[Vec<i64>],
        req: &[Vec<i64>],
        grid: &[u32],
        cap: Option<u32>,
        symmetries: Vec<Vec<usize>>,
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
        let mut groups = Vec::with_capacity(n);
        for (k, fk) in f.iter_mut().enumerate() {
            fk.sort_by_key(|d| d[k]);
            let mut gk: Vec<(i64, usize, usize)> = Vec::new();
            for (i, d) in fk.iter().enumerate() {
                match gk.last_mut() {
                    Some(last) if last.0 == d[k] => last.2 = i + 1,
                    _ => gk.push((d[k], i, i + 1)),
                }
            }
            groups.push(gk);
        }
        Engine {
            n,
            forb: f,
            groups,
            req: r,
            grid: grid.to_vec(),
            cap,
            symmetries,
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
            ords: Vec::new(),
        }
    }

    /// Expands `node` towards lattices with index in `[lo, hi)` (and not above the
    /// shared bound in the sink).
    // One out-of-line copy of the recursive scan: its code layout does not change with callers.
    #[inline(never)]
    pub fn dfs(&self, node: &Node, lo: u64, hi: u64, sink: &mut Sink) {
        if sink.cancelled() {
            return;
        }
        let k = node.rows.len();
        if sink.split == Some(k) {
            sink.tasks.push(node.clone());
            return;
        }
        let pre = Prefix::new(node);
        let mut scratch = LevelScratch::take(k, self.forb[k].len(), node.index as usize);
        let qy: Vec<(i64, Vec<i64>)> = self.req[k]
            .iter()
            .map(|d| {
                let mut y = vec![0; pre.r];
                pre.image(d, &mut y);
                (d[k], y)
            })
            .collect();
        let later_grid: Option<u64> = if self.grid[k + 1..].iter().all(|&m| m > 0) {
            Some(self.grid[k + 1..].iter().map(|&m| m as u64).product())
        } else {
            None
        };
        let top_index = |sink: &Sink| (hi - 1).min(sink.best.load(Ordering::Relaxed));
        let last = k + 1 == self.n;
        let mut dd = if last {
            lo.div_ceil(node.index).max(1)
        } else {
            1
        };
        while node.index * dd <= top_index(sink) {
            let d = dd as i64;
            dd += 1;
            let m = self.grid[k] as u64;
            if m > 0 && m % d as u64 != 0 {
                continue;
            }
            // Later diagonals divide their grids: the window must stay reachable.
            if later_grid.is_some_and(|lg| (node.index * d as u64).saturating_mul(lg) < lo) {
                continue;
            }
            if self.cap.is_some_and(|c| d as u64 > c as u64) {
                continue;
            }
            if qy.iter().any(|(dk, _)| dk % d != 0) {
                continue;
            }
            let reqs: Vec<(i64, &[i64])> =
                qy.iter().map(|(dk, y)| (dk / d, y.as_slice())).collect();
            if self.kill(&pre, d, &mut scratch.level) == 0 {
                sink.tested += node.index;
                continue;
            }
            if !self.walk_box(&pre, d, &reqs, &scratch.level, (lo, hi), sink) {
                return;
            }
        }
    }

    /// Marks every class x of the prefix group with `c x = y` for a forbidden difference
    /// (`c = d_k / D`, `y = [d']`), stopping as soon as every class is killed; returns how
    /// many classes are left.
    fn kill(&self, pre: &Prefix, d: i64, level: &mut Level) -> usize {
        let (k, r) = (pre.node.rows.len(), pre.r);
        let forb = &self.forb[k];
        level.next_divisor();
        let mut alive = pre.node.index as usize;
        for &(val, a, b) in &self.groups[k] {
            if val % d != 0 {
                continue;
            }
            let c = val / d;
            for i in a..b {
                let y = level.image(i, &forb[i], pre);
                alive -= mark_solutions(pre, c, &y[..r], level);
                if alive == 0 {
                    return 0;
                }
            }
        }
        alive
    }

    /// Walks the box of reduced off-diagonal entries for diagonal `d`, expanding every
    /// candidate row that survives the kill marks and the row conditions; false when the
    /// search was cancelled.
    fn walk_box(
        &self,
        pre: &Prefix,
        d: i64,
        reqs: &[(i64, &[i64])],
        level: &Level,
        (lo, hi): (u64, u64),
        sink: &mut Sink,
    ) -> bool {
        let node = pre.node;
        let (k, r, g) = (node.rows.len(), pre.r, &node.grp);
        let last = k + 1 == self.n;
        let mut h = [0i64; 8];
        let mut x = [0i64; 8];
        loop {
            sink.tested += 1;
            let idx: usize = (0..r).map(|i| x[i] as usize * pre.strides[i]).sum();
            let ok = level.alive(idx) && self.pre_accept(g, &x[..r], d, reqs);
            let ords = if ok {
                self.representative(node, g, &x[..r], d)
            } else {
                None
            };
            if let Some(ords) = ords {
                let mut row = h[..k].to_vec();
                row.push(d);
                row.resize(self.n, 0);
                let mut rows = node.rows.clone();
                rows.push(row);
                if last {
                    if let Ok(l) = Lattice::from_hnf(rows) {
                        sink.push(l);
                    }
                } else {
                    let child = Node {
                        rows,
                        grp: extend(g, &x[..r], d),
                        index: node.index * d as u64,
                        ords,
                    };
                    self.dfs(&child, lo, hi, sink);
                }
                if sink.cancelled() {
                    return false;
                }
            }
            if !pre.next_in_box(&mut h, &mut x) {
                return true;
            }
        }
    }

    /// The child's phase counts, or `None` when a symmetry maps the child's lattices to ones
    /// with a lexicographically larger phase-count vector (they are tested there).
    fn representative(&self, node: &Node, g: &Presented, x: &[i64], d: i64) -> Option<Vec<u64>> {
        if self.symmetries.is_empty() {
            return Some(Vec::new());
        }
        let mut ords = Vec::with_capacity(node.ords.len() + 1);
        ords.extend_from_slice(&node.ords);
        ords.push(d as u64 * g.element_order(x));
        (!beaten(&ords, &self.symmetries)).then_some(ords)
    }

    /// Grid, phase-cap and required-vector conditions for candidate `(x, d)`.
    fn pre_accept(&self, g: &Presented, x: &[i64], d: i64, reqs: &[(i64, &[i64])]) -> bool {
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
        reqs.iter().all(|&(c, y)| hits(c, y))
    }
}

/// `acc mod s` in `[0, s)` through a precomputed reciprocal of `s`.
#[inline]
fn reduce(acc: i64, s: i64, modulus: StrengthReducedU64) -> i64 {
    if acc >= 0 {
        (acc as u64 % modulus) as i64
    } else {
        match (acc.unsigned_abs() % modulus) as i64 {
            0 => 0,
            m => s - m,
        }
    }
}

/// Per component `(g, s / g, (c / g)^-1 mod s / g)` for one multiplier c.
type SolveRow = [(i64, i64, i64); 8];

/// Marks all `x` in `Z_{s_1} x ... x Z_{s_r}` with `c x = y` (componentwise) as killed for
/// the current divisor and returns how many were alive before. `level.solve[c]` holds, per
/// component, `(g, s / g, (c / g)^-1 mod s / g)` with `g = gcd(c, s)`.
fn mark_solutions(pre: &Prefix, c: i64, y: &[i64], level: &mut Level) -> usize {
    let (inv, strides, r) = (&pre.node.grp.inv, &pre.strides, pre.r);
    if c == 1 {
        let idx: usize = (0..r).map(|i| y[i] as usize * strides[i]).sum();
        return usize::from(level.kill(idx));
    }
    let cu = c as usize;
    if level.solve.len() <= cu {
        level.solve.resize(cu + 1, None);
    }
    let tab = *level.solve[cu].get_or_insert_with(|| {
        let mut t = [(1i64, 1i64, 0i64); 8];
        for i in 0..r {
            let s = inv[i];
            let cm = c.rem_euclid(s);
            let g = gcd(cm, s);
            let m = s / g;
            t[i] = (g, m, mod_inverse((cm / g).rem_euclid(m), m));
        }
        t
    });
    // Per component: solutions x0 + t * (s / g), t in 0..g, if g | y.
    let mut base = [0i64; 8];
    for i in 0..r {
        let (g, m, inv_c) = tab[i];
        if y[i] % g != 0 {
            return 0;
        }
        base[i] = (y[i] / g) * inv_c % m;
    }
    let mut fresh = 0;
    let mut t = [0i64; 8];
    loop {
        let idx: usize = (0..r)
            .map(|i| (base[i] + t[i] * tab[i].1) as usize * strides[i])
            .sum();
        fresh += usize::from(level.kill(idx));
        let mut i = 0;
        loop {
            if i == r {
                return fresh;
            }
            t[i] += 1;
            if t[i] < tab[i].0 {
                break;
            }
            t[i] = 0;
            i += 1;
        }
    }
}

/// Inverse of `a` modulo `m` (`gcd(a, m) = 1`; returns 0 for `m = 1`).
fn mod_inverse(a: i64, m: i64) -> i64 {
    if m == 1 {
        return 0;
    }
    let (mut old_r, mut r) = (a, m);
    let (mut old_s, mut s) = (1i64, 0i64);
    while r != 0 {
        let q = old_r / r;
        (old_r, r) = (r, old_r - q * r);
        (old_s, s) = (s, old_s - q * s);
    }
    old_s.rem_euclid(m)
}

/// A prefix being expanded: its group's strides, moduli and HNF box.
struct Prefix<'n> {
    node: &'n Node,
    /// Number of invariant factors of the prefix group (at most 7).
    r: usize,
    strides: [usize; 8],
    /// The invariant factors as reciprocals: division by multiplication (this reduction was a
    /// fifth of the engine's time with hardware division).
    moduli: [StrengthReducedU64; 8],
    box_dims: [i64; 8],
}

impl<'n> Prefix<'n> {
    fn new(node: &'n Node) -> Prefix<'n> {
        let inv = &node.grp.inv;
        let mut strides = [0usize; 8];
        let mut moduli = [StrengthReducedU64::new(1); 8];
        let mut acc = 1usize;
        for (i, &s) in inv.iter().enumerate() {
            strides[i] = acc;
            acc *= s as usize;
            moduli[i] = StrengthReducedU64::new(s as u64);
        }
        let mut box_dims = [0i64; 8];
        for (j, row) in node.rows.iter().enumerate() {
            box_dims[j] = row[j];
        }
        Prefix {
            node,
            r: inv.len(),
            strides,
            moduli,
            box_dims,
        }
    }

    /// Image of the first k coordinates of `d` in the prefix group (entries are at most 1e6
    /// and images below N, so the i64 sums cannot overflow).
    #[inline]
    fn image(&self, d: &[i64], y: &mut [i64]) {
        let g = &self.node.grp;
        let k = self.node.rows.len();
        for i in 0..self.r {
            let mut acc: i64 = 0;
            for (j, &dj) in d[..k].iter().enumerate() {
                acc += dj * g.img[j][i];
            }
            y[i] = reduce(acc, g.inv[i], self.moduli[i]);
        }
    }

    /// Advances the odometer over the box, keeping `x = sum h_j img_j`; false after the
    /// last box point.
    fn next_in_box(&self, h: &mut [i64; 8], x: &mut [i64; 8]) -> bool {
        let g = &self.node.grp;
        let mut j = self.node.rows.len();
        while j > 0 {
            j -= 1;
            h[j] += 1;
            for i in 0..self.r {
                // Both terms are below the modulus: one conditional subtraction.
                let v = x[i] + g.img[j][i];
                x[i] = if v >= g.inv[i] { v - g.inv[i] } else { v };
            }
            if h[j] < self.box_dims[j] {
                return true;
            }
            for i in 0..self.r {
                x[i] = (x[i] - (self.box_dims[j] % g.inv[i]) * g.img[j][i]).rem_euclid(g.inv[i]);
            }
            h[j] = 0;
        }
        false
    }
}

/// One search level's buffers, reused across the prefixes a worker thread visits. Entries are
/// valid when stamped with the current generation, so nothing is cleared between prefixes or
/// divisors (at the last level that clearing and its allocations were a tenth of the time).
#[derive(Default)]
struct Level {
    /// Images of the level's forbidden differences (the first `r` words), valid where `have`
    /// holds the prefix generation; fixed-size rows copy without a call.
    images: Vec<[i64; 8]>,
    have: Vec<u32>,
    have_gen: u32,
    /// Classes killed for the current divisor: `killed[x] == kill_gen`.
    killed: Vec<u32>,
    kill_gen: u32,
    /// Per multiplier c: the solving table of `c x = y` for this prefix.
    solve: Vec<Option<SolveRow>>,
}

impl Level {
    /// Readies the buffers for a new prefix.
    fn start_prefix(&mut self, n_forb: usize, classes: usize) {
        if self.images.len() < n_forb {
            self.images.resize(n_forb, [0; 8]);
        }
        if self.have.len() < n_forb {
            self.have.resize(n_forb, 0);
        }
        if self.killed.len() < classes {
            self.killed.resize(classes, 0);
        }
        self.have_gen = next_generation(self.have_gen, &mut self.have);
        self.solve.clear();
    }

    /// Forgets the kill marks of the previous divisor.
    fn next_divisor(&mut self) {
        self.kill_gen = next_generation(self.kill_gen, &mut self.killed);
    }

    fn alive(&self, idx: usize) -> bool {
        self.killed[idx] != self.kill_gen
    }

    /// Kills class `idx`; true if it was alive.
    fn kill(&mut self, idx: usize) -> bool {
        let fresh = self.killed[idx] != self.kill_gen;
        self.killed[idx] = self.kill_gen;
        fresh
    }

    /// The image of forbidden difference `i` (computed on first use in this prefix).
    fn image(&mut self, i: usize, diff: &[i64], pre: &Prefix) -> [i64; 8] {
        if self.have[i] != self.have_gen {
            pre.image(diff, &mut self.images[i]);
            self.have[i] = self.have_gen;
        }
        self.images[i]
    }
}

/// The generation after `gen`; on wrap-around the stamps are cleared so no old stamp matches.
fn next_generation(gen: u32, stamps: &mut [u32]) -> u32 {
    if gen == u32::MAX {
        stamps.iter_mut().for_each(|s| *s = 0);
        1
    } else {
        gen + 1
    }
}

thread_local! {
    /// Per-level buffers of the worker thread.
    static LEVELS: std::cell::RefCell<Vec<Level>> = const { std::cell::RefCell::new(Vec::new()) };
}

/// A level's buffers, taken from the thread's pool and given back on drop (also on the early
/// returns of a cancelled search).
struct LevelScratch {
    depth: usize,
    level: Level,
}

impl LevelScratch {
    fn take(depth: usize, n_forb: usize, classes: usize) -> LevelScratch {
        let mut level = LEVELS
            .try_with(|c| {
                c.try_borrow_mut().ok().map(|mut pool| {
                    if pool.len() <= depth {
                        pool.resize_with(depth + 1, Level::default);
                    }
                    std::mem::take(&mut pool[depth])
                })
            })
            .ok()
            .flatten()
            .unwrap_or_default();
        level.start_prefix(n_forb, classes);
        LevelScratch { depth, level }
    }
}

impl Drop for LevelScratch {
    fn drop(&mut self) {
        let level = std::mem::take(&mut self.level);
        let _ = LEVELS.try_with(|c| {
            if let Ok(mut pool) = c.try_borrow_mut() {
                if let Some(slot) = pool.get_mut(self.depth) {
                    *slot = level;
                }
            }
        });
    }
}
