//! Lattice phase-cycle design: the pure mathematics of choosing a full-rank sublattice
//! L of Z^n whose dual group is the step table of a phase cycle (domain notes,
//! section 6). Owns the problem and outcome types, the lattice type, the plain
//! sublattice enumerator, and the pruned exhaustive search for the minimal index.
//!
//! No file formats and no command-line handling live here.
//!
//! ```
//! use std::sync::atomic::AtomicBool;
//! use pathsieve::design::lattice::{search, LatticeProblem, OutputSpec, SearchControl, SearchOutcome};
//! // One cycled field: keep b = 0, cancel b = 2. Every lattice design needs 3 steps.
//! let problem = LatticeProblem {
//!     dims: 1,
//!     grid: vec![0],
//!     outputs: vec![OutputSpec { name: "keep".into(), kept: vec![vec![0]] }],
//!     rejected: vec![vec![2]],
//!     max_steps: 100,
//!     max_phases_per_field: None,
//! };
//! let cancel = AtomicBool::new(false);
//! match search(&problem, &SearchControl::new(&cancel)).unwrap() {
//!     SearchOutcome::Found(d) => assert_eq!(d.steps, 3),
//!     other => panic!("{other:?}"),
//! }
//! ```

#![allow(clippy::needless_range_loop)] // dense index arithmetic reads better with indices

mod classify;
mod engine;
pub mod enumerate;
mod field_order;
mod group;
mod hnf;
mod problem;
mod search;
mod seed;
mod symmetry;
#[cfg(test)]
mod symmetry_tests;
#[cfg(test)]
mod tests;

pub use enumerate::{sublattice_count, sublattices, Sublattices};
pub use hnf::Lattice;
pub use problem::{is_valid, LatticeProblem, OutputSpec, MAX_DIMS};
pub use search::{
    all_minimal, search, search_with_alternatives, Design, OutputWeights, Progress, SearchControl,
    SearchOutcome,
};

/// Errors for malformed design problems or lattice input; each names the bad value.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum DesignError {
    /// The number of cycled fields is outside the supported range.
    #[error("{dims} cycled fields requested; the lattice designer supports 1..={max}")]
    BadDims {
        /// Requested number of fields.
        dims: usize,
        /// Largest supported number.
        max: usize,
    },
    /// A signature or grid vector has the wrong number of entries.
    #[error("a vector has {found} entries but the problem has {expected} cycled fields")]
    WrongLength {
        /// Expected length.
        expected: usize,
        /// Length found.
        found: usize,
    },
    /// An output lists no kept signature.
    #[error("output {0:?} keeps no signature; give at least its reference signature")]
    EmptyOutput(String),
    /// The problem has no outputs.
    #[error("no outputs given; list at least one kept signature")]
    NoOutputs,
    /// A signature entry is too large for exact lattice arithmetic.
    #[error("signature entry {0} exceeds the limit of 1e6 in magnitude")]
    EntryTooLarge(i64),
    /// `max_steps` is zero or beyond the supported limit.
    #[error("max_steps = {0} is outside 1..=10000000")]
    BadMaxSteps(u64),
    /// A number overflowed the integer type used.
    #[error("{0} is too large for exact arithmetic")]
    TooLarge(&'static str),
    /// Given rows are not a Hermite normal form of the documented shape.
    #[error("not a lower-triangular Hermite normal form: {0}")]
    NotHnf(String),
    /// Generators do not span a full-rank lattice.
    #[error("the generators do not span a full-rank lattice in Z^{dims}; add independent vectors")]
    NotFullRank {
        /// Ambient dimension.
        dims: usize,
    },
}
