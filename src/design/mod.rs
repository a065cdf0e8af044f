//! The designer: from an experiment and a request to a finished, minimal phase cycle with
//! its report. The pure mathematics lives in two submodules kept apart from the pipeline:
//! [`lattice`] (Hermite-normal-form lattices and the pruned exhaustive search for the minimal
//! index) and [`weighted`] (exhaustive search over weighted step sets with exact cyclotomic
//! certificates). The pipeline prepares the problem ([`prepare`]), runs the lattice search,
//! chooses among equal-length designs ([`choice`]), compares with the nested and cogwheel
//! cycles ([`yardsticks`]), tries shorter weighted step sets ([`weighted_stage`]) and builds the
//! cycle ([`to_cycle`]).

pub mod choice;
pub mod lattice;
mod prepare;
mod report;
pub mod to_cycle;
pub mod weighted;
pub mod weighted_stage;
pub mod yardsticks;

pub use prepare::{cycled_fields, prepare, restrict, Prepared};
pub use report::{design, DesignKind, DesignReport};

use crate::error::ModelError;
use crate::model::PathwayClass;
use crate::signature::Signature;
use serde::Serialize;
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

/// A request no phase cycle can meet, with the reason in words.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum Impossibility {
    /// Pathways of an unwanted class share a kept signature.
    Contaminated {
        /// Output name.
        output: String,
        /// The kept signature.
        kept: Signature,
        /// The unwanted class.
        class: PathwayClass,
        /// True when they arrive as complex conjugates.
        via_conjugate: bool,
        /// Why, and what would separate them.
        explanation: String,
    },
    /// A rejected term differs from a kept one only on fixed-phase fields.
    FixedFields {
        /// Output name.
        output: String,
        /// The kept signature.
        kept: Signature,
        /// The rejected signature.
        rejected: Signature,
        /// The fixed fields; cycling one of them would separate the terms.
        fields: Vec<String>,
    },
    /// A rejected term equals a kept one modulo the phase grid.
    Aliased {
        /// Output name.
        output: String,
        /// The rejected signature over the cycled fields.
        rejected: Vec<i64>,
        /// A grid (steps per turn, one per experiment field) on which nothing aliases.
        finer_grid: Vec<u32>,
    },
}

impl Impossibility {
    /// One sentence for people.
    pub fn describe(&self) -> String {
        match self {
            Impossibility::Contaminated { output, kept, explanation, .. } => {
                format!("output `{output}` keeps {kept}, but {explanation}")
            }
            Impossibility::FixedFields { output, kept, rejected, fields } => format!(
                "output `{output}`: {rejected} differs from the kept {kept} only on the fixed field(s) {}; no cycle with those phases fixed separates them — make one of them cycled",
                fields.join(", ")
            ),
            Impossibility::Aliased { output, rejected, finer_grid } if !finer_grid.is_empty() => format!(
                "output `{output}`: the rejected term {rejected:?} (cycled fields) equals the kept one modulo the phase grid; a grid on which nothing aliases: `--grid {}` (steps per turn, one per field)",
                finer_grid.iter().map(|g| g.to_string()).collect::<Vec<_>>().join(",")
            ),
            Impossibility::Aliased { output, rejected, .. } => format!(
                "output `{output}`: the rejected term {rejected:?} (cycled fields) equals a kept one; no phase cycle separates them"
            ),
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
