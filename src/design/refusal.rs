//! Refusals: the three statements the designer makes when it returns no cycle, each only when
//! shown, with the terms involved and a remedy that can help:
//! * **no phase cycle at all**: two terms have identical signatures on the cycled fields
//!   (unwanted pathways sharing a kept signature, or a term differing from a kept one only on
//!   fixed fields); distinct characters of the torus are linearly independent, so nothing else
//!   is ever inseparable (domain.md section 9);
//! * **no cycle on this grid**: two terms are equal modulo the phase grid; a finer grid lifts it;
//! * **no lattice design** within the limits, after both class arrangements of several kept
//!   signatures were searched.

use crate::model::PathwayClass;
use crate::signature::Signature;
use serde::Serialize;

/// Which of the three refusals, with its remedy where it is a limit.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum Refusal {
    /// Identical signatures on the cycled fields: no phase cycle at all separates them.
    NoPhaseCycleAtAll,
    /// Terms equal modulo the phase grid: no cycle on this grid.
    NoCycleOnThisGrid,
    /// Every lattice design within the limits was ruled out (tested, or the image of a tested one
    /// under a symmetry of the problem).
    NoLatticeDesign {
        /// What could help.
        remedy: LimitRemedy,
    },
}

/// What could lift a "no lattice design" refusal.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "raise")]
pub enum LimitRemedy {
    /// Raise `--max-steps` (no phase cap binds).
    MaxSteps {
        /// The current cap.
        current: u64,
        /// Steps of a valid nested cycle found above the cap, if any.
        known_valid: Option<u64>,
    },
    /// Raise `--max-phases`: with this cap every lattice design has at most `bound` steps,
    /// all of which were tested, so more steps cannot help.
    MaxPhases {
        /// The current cap.
        current: u32,
        /// `cap ^ cycled fields`, the largest step count the cap allows.
        bound: u64,
    },
    /// Raise either cap.
    Either {
        /// The step cap.
        max_steps: u64,
        /// The phase cap.
        max_phases: u32,
    },
}

/// One reason a request cannot be met.
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
    /// Rejected terms differ from a kept one only on fixed-phase fields (grouped).
    FixedFields {
        /// Output name.
        output: String,
        /// The kept signature.
        kept: Signature,
        /// The rejected signatures.
        rejected: Vec<Signature>,
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
    /// A rejected term is identical to a kept one on the cycled fields.
    Identical {
        /// Output name.
        output: String,
        /// The rejected signature over the cycled fields.
        rejected: Vec<i64>,
    },
}
