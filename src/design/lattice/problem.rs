//! The design problem (kept and rejected signatures over the cycled fields), its
//! validation, and its reduction to difference vectors: the forbidden set that must
//! stay outside the lattice and the required set that must lie in it.

use super::hnf::Lattice;
use super::DesignError;

/// Largest number of cycled fields the designer accepts.
pub const MAX_DIMS: usize = 8;
const MAX_ENTRY: i64 = 1_000_000;
/// Search bitmaps are as large as a prefix index, so steps are capped at 1e7.
const MAX_STEPS_LIMIT: u64 = 10_000_000;

/// One output of the design: the kept signatures, the first being the reference `t`
/// whose weight exponents are reported.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct OutputSpec {
    /// Name of the output (e.g. "rephasing").
    pub name: String,
    /// Kept signatures; all must lie in `t + L` for the reference `t = kept[0]`.
    pub kept: Vec<Vec<i64>>,
}

/// A lattice-design problem over the cycled fields only.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LatticeProblem {
    /// Number of cycled fields n (1..=8).
    pub dims: usize,
    /// Per field: steps per turn `M_j` of the phase grid (0 = any rational phase).
    pub grid: Vec<u32>,
    /// Outputs, each with its kept signatures.
    pub outputs: Vec<OutputSpec>,
    /// Signatures every output must cancel.
    pub rejected: Vec<Vec<i64>>,
    /// Largest number of steps to consider.
    pub max_steps: u64,
    /// Optional cap on the number of distinct phases of any one field.
    pub max_phases_per_field: Option<u32>,
}

/// A difference vector with the output it belongs to and what produced it.
#[derive(Clone, Debug)]
pub(crate) struct Forbidden {
    pub diff: Vec<i64>,
    pub output: usize,
    pub other: Vec<i64>,
}

/// Problem reduced to difference vectors.
#[derive(Clone, Debug)]
pub(crate) struct Reduced {
    /// Forbidden differences with provenance (not deduplicated).
    pub forbidden: Vec<Forbidden>,
    /// Forbidden differences, sign-normalised (last non-zero positive), deduplicated.
    pub forb: Vec<Vec<i64>>,
    /// Required differences, sign-normalised, deduplicated, non-zero.
    pub req: Vec<Vec<i64>>,
}

impl LatticeProblem {
    /// Checks sizes and limits up front.
    pub fn validate(&self) -> Result<(), DesignError> {
        if self.dims == 0 || self.dims > MAX_DIMS {
            return Err(DesignError::BadDims {
                dims: self.dims,
                max: MAX_DIMS,
            });
        }
        if self.grid.len() != self.dims {
            return Err(DesignError::WrongLength {
                expected: self.dims,
                found: self.grid.len(),
            });
        }
        if self.outputs.is_empty() {
            return Err(DesignError::NoOutputs);
        }
        if self.max_steps == 0 || self.max_steps > MAX_STEPS_LIMIT {
            return Err(DesignError::BadMaxSteps(self.max_steps));
        }
        let all = self
            .outputs
            .iter()
            .flat_map(|o| o.kept.iter())
            .chain(self.rejected.iter());
        for v in all {
            if v.len() != self.dims {
                return Err(DesignError::WrongLength {
                    expected: self.dims,
                    found: v.len(),
                });
            }
            if let Some(&e) = v.iter().find(|e| e.abs() > MAX_ENTRY) {
                return Err(DesignError::EntryTooLarge(e));
            }
        }
        if let Some(o) = self.outputs.iter().find(|o| o.kept.is_empty()) {
            return Err(DesignError::EmptyOutput(o.name.clone()));
        }
        Ok(())
    }

    /// Reduces the problem to difference vectors (call after `validate`).
    pub(crate) fn reduce(&self) -> Reduced {
        let mut forbidden = Vec::new();
        let mut req = Vec::new();
        for (o, out) in self.outputs.iter().enumerate() {
            let t = &out.kept[0];
            for k in &out.kept[1..] {
                req.push(sub(k, t));
            }
            for b in &self.rejected {
                forbidden.push(Forbidden {
                    diff: sub(b, t),
                    output: o,
                    other: b.clone(),
                });
            }
            for (p, other) in self.outputs.iter().enumerate() {
                if p != o {
                    for k in &other.kept {
                        forbidden.push(Forbidden {
                            diff: sub(k, t),
                            output: o,
                            other: k.clone(),
                        });
                    }
                }
            }
        }
        let mut forb: Vec<Vec<i64>> = forbidden.iter().map(|f| normalise(&f.diff)).collect();
        sort_forbidden(&mut forb);
        forb.dedup();
        let mut req: Vec<Vec<i64>> = req
            .iter()
            .map(|v| normalise(v))
            .filter(|v| v.iter().any(|&x| x != 0))
            .collect();
        req.sort();
        req.dedup();
        Reduced {
            forbidden,
            forb,
            req,
        }
    }
}

/// The order the engine meets forbidden differences in: shortest (l1) first, then
/// lexicographic.
pub(crate) fn sort_forbidden(forb: &mut [Vec<i64>]) {
    forb.sort_by(|a, b| l1(a).cmp(&l1(b)).then_with(|| a.cmp(b)));
}

/// `a - b` componentwise.
pub(crate) fn sub(a: &[i64], b: &[i64]) -> Vec<i64> {
    a.iter().zip(b).map(|(x, y)| x - y).collect()
}

fn l1(v: &[i64]) -> i64 {
    v.iter().map(|x| x.abs()).sum()
}

/// Sign normalisation: the last non-zero entry positive (lattices are symmetric).
pub(crate) fn normalise(v: &[i64]) -> Vec<i64> {
    let mut w = v.to_vec();
    normalise_in_place(&mut w);
    w
}

/// [`normalise`] without allocating.
pub(crate) fn normalise_in_place(v: &mut [i64]) {
    if v.iter().rev().find(|&&x| x != 0).is_some_and(|&x| x < 0) {
        v.iter_mut().for_each(|x| *x = -*x);
    }
}

/// Index of the last non-zero entry (the level at which the search can decide it).
pub(crate) fn top(v: &[i64]) -> Option<usize> {
    v.iter().rposition(|&x| x != 0)
}

/// Independent validity check of a lattice for a problem, by exact membership:
/// kept differences in L, forbidden differences outside, grid vectors `M_j e_j` in
/// L, and the per-field phase cap respected.
pub fn is_valid(problem: &LatticeProblem, lattice: &Lattice) -> bool {
    if lattice.dims() != problem.dims || problem.validate().is_err() {
        return false;
    }
    let r = problem.reduce();
    if r.req.iter().any(|q| !lattice.contains(q)) || r.forb.iter().any(|d| lattice.contains(d)) {
        return false;
    }
    for (j, &m) in problem.grid.iter().enumerate() {
        if m > 0 {
            let mut e = vec![0; problem.dims];
            e[j] = m as i64;
            if !lattice.contains(&e) {
                return false;
            }
        }
        if let Some(cap) = problem.max_phases_per_field {
            if lattice.distinct_phases(j) > cap as u64 {
                return false;
            }
        }
    }
    lattice.index() <= problem.max_steps
}
