//! The designer: from a [`crate::selection::Selection`] to a finished, minimal phase cycle
//! with its report, as a pipeline of stages, each a function with typed input and output
//! ([`pipeline`] runs them in order):
//!
//! problem ([`prepare`]) -> lattice search, kept signatures in one class or each in its own
//! ([`lattice_stage`]) -> choice among equal designs ([`choice`]) -> step order against drift
//! ([`step_order`]) -> cycle table ([`to_cycle`]) -> yardsticks, nested and cogwheel
//! ([`yardsticks`]) -> weighted search below the lattice optimum ([`weighted_stage`]) ->
//! verification by the checker ([`verify`]).
//!
//! The report is data ([`report`]); refusals are typed ([`refusal`]); the summary is rendered
//! in `crate::render::design_summary`. The pure mathematics lives apart from the pipeline:
//! [`lattice`] (Hermite-normal-form lattices and the pruned exhaustive search for the minimal
//! index) and [`weighted`] (exhaustive search over weighted step sets with exact cyclotomic
//! certificates).

pub mod choice;
pub mod lattice;
pub mod lattice_stage;
pub mod pipeline;
mod prepare;
pub mod refusal;
pub mod report;
pub mod step_order;
pub mod to_cycle;
pub mod verify;
pub mod weighted;
pub mod weighted_stage;
pub mod yardsticks;

pub use pipeline::design;
pub use prepare::{cycled_fields, prepare, restrict, Prepared};
pub use refusal::{Impossibility, LimitRemedy, Refusal};
pub use report::{DesignKind, DesignReport};

use crate::error::ModelError;
use thiserror::Error;

/// Default work limit of the weighted search in a design run: step sets through the origin.
pub const DEFAULT_BEYOND_STEP_SETS: u64 = 250_000;

/// How hard the designer searches (what it must keep and cancel is the [`crate::selection::Selection`]).
#[derive(Clone, Debug)]
pub struct DesignOptions {
    /// Cap on the number of steps.
    pub max_steps: u64,
    /// Cap on distinct phases per field.
    pub max_phases_per_field: Option<u32>,
    /// Work limit of the search beyond lattice designs: step sets through the origin over
    /// all levels (0 = skip it). Deterministic: no clock is involved.
    pub beyond_step_sets: u64,
    /// Largest step count the beyond-lattice search tries.
    pub beyond_max_steps: usize,
}

impl Default for DesignOptions {
    fn default() -> Self {
        DesignOptions {
            max_steps: 4096,
            max_phases_per_field: None,
            beyond_step_sets: DEFAULT_BEYOND_STEP_SETS,
            beyond_max_steps: weighted::MAX_BEYOND_STEPS,
        }
    }
}

/// Errors of the designer front end.
#[derive(Debug, Error)]
pub enum PlanError {
    /// The experiment has no `[[signal]]`.
    #[error("the experiment lists no wanted signal: add a [[signal]] table with `classes` or `signatures`")]
    NoSignals,
    /// Every field is fixed.
    #[error(
        "no field has a cycled phase: set `phase = \"cycled\"` on the pulses the shaper controls"
    )]
    NothingCycled,
    /// From building the selection.
    #[error(transparent)]
    Selection(#[from] crate::selection::SelectionError),
    /// From the model.
    #[error(transparent)]
    Model(#[from] ModelError),
    /// From the lattice search.
    #[error(transparent)]
    Design(#[from] lattice::DesignError),
    /// From exact arithmetic.
    #[error(transparent)]
    Exact(#[from] crate::exact::ExactError),
    /// From the checker verifying the written cycle.
    #[error("verifying the designed cycle: {0}")]
    Check(crate::check::CheckError),
}
