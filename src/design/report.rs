//! The design report as data: what was designed, what is proven and over which class, the
//! yardsticks, the verification by the checker, or the refusal with its terms. Sentences are
//! rendered from it in `crate::render::design_summary`.

use super::choice::ChoiceRule;
use super::lattice_stage::ClassLayout;
use super::refusal::{Impossibility, Refusal};
use super::step_order::StepOrder;
use super::verify::Verification;
use super::weighted_stage::BeyondSummary;
use super::yardsticks::CogwheelScan;
use super::Prepared;
use crate::cycle::Cycle;
use crate::selection::{RejectionSource, Selection};
use crate::signature::Signature;
use serde::Serialize;

/// What kind of design the result is.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum DesignKind {
    /// A nested cycle: each cycled field stepped independently.
    Nested {
        /// Steps per cycled field.
        steps_per_field: Vec<u64>,
    },
    /// A cogwheel cycle `phi_j = nu_j m / N`.
    Cogwheel {
        /// N.
        n: u64,
        /// Winding numbers, one per cycled field.
        winding: Vec<i64>,
    },
    /// A general lattice design, given by its Hermite-normal-form basis.
    Lattice {
        /// Basis rows.
        basis: Vec<Vec<i64>>,
    },
    /// A weighted step set that is not a lattice design (unequal weights).
    Weighted {
        /// Steps.
        steps: usize,
    },
}

/// The result of a design run.
#[derive(Clone, Debug, Serialize)]
pub struct DesignReport {
    /// Experiment title.
    pub experiment: String,
    /// All field names.
    pub fields: Vec<String>,
    /// Fields the design steps.
    pub cycled_fields: Vec<String>,
    /// Fields held at phase 0 (fixed in the experiment or by the global-phase freedom).
    pub fixed_fields: Vec<String>,
    /// The field fixed by the global-phase freedom, if one was.
    pub global_phase_field: Option<String>,
    /// Order through which everything else is cancelled (NMR: coherence level).
    pub order: u32,
    /// Agnostic or enumerated rejection set.
    pub rejection: RejectionSource,
    /// Number of distinct rejected terms (over all fields, all outputs).
    pub rejected_terms: usize,
    /// Phase grid per cycled field (0 = any).
    pub grid: Vec<u32>,
    /// Outputs with their reference signatures.
    pub outputs: Vec<(String, Signature)>,
    /// Every signature each output keeps (the reference first).
    pub kept: Vec<(String, Vec<Signature>)>,
    /// Steps of the design, if one was found.
    pub steps: Option<u64>,
    /// Nested, cogwheel, general lattice or weighted.
    pub kind: Option<DesignKind>,
    /// Kept signatures in one lattice class or each in its own.
    pub layout: Option<ClassLayout>,
    /// True when every lattice design with fewer steps was shown invalid (both layouts).
    pub proven_minimal: bool,
    /// Every lattice design with fewer steps than this is impossible.
    pub excluded_below: u64,
    /// Candidate lattice rows examined by the search.
    pub lattices_tested: u64,
    /// The smallest nested cycle (what a lab would use by default).
    pub nested_steps: Option<u64>,
    /// The smallest cogwheel cycle.
    pub cogwheel: Option<CogwheelScan>,
    /// Which rule picked this design among equal-length ones.
    pub choice: Option<ChoiceRule>,
    /// How the steps were ordered (`None` for weighted designs: as found).
    pub step_order: Option<StepOrder>,
    /// First order at which the written cycle leaks, as the checker finds it.
    pub first_leak_order: Option<u32>,
    /// Orders (NMR: coherence levels) searched for the first leak.
    pub first_leak_searched_to: u32,
    /// The checker's verdict on the written cycle.
    pub verified: Option<Verification>,
    /// True for NMR detection (first leak counted in coherence level, not order).
    pub detection_nmr: bool,
    /// Noise efficiency `|F(t)| / sqrt(N sum |w|^2)`, lowest over the outputs.
    pub noise_efficiency: f64,
    /// The search over weighted non-lattice step sets below the lattice optimum.
    pub beyond: Option<BeyondSummary>,
    /// The lattice optimum when a shorter weighted design replaced it.
    pub lattice_steps: Option<u64>,
    /// Terms no phase cycle can remove that affect the kept signals, in words.
    pub caveats: Vec<String>,
    /// Which refusal, when no design is returned.
    pub refusal: Option<Refusal>,
    /// The lattice class's refusal when a weighted design was found instead.
    pub lattice_refusal: Option<Refusal>,
    /// The terms behind the refusal, grouped.
    pub impossible: Vec<Impossibility>,
    /// True when the search was interrupted (the design is then not proven minimal).
    pub cancelled: bool,
    /// Wall time of the run in seconds.
    pub seconds: f64,
    /// The cycle table.
    #[serde(skip)]
    pub cycle: Option<Cycle>,
}

impl DesignReport {
    /// The report before any search: the problem as prepared.
    pub fn new(sel: &Selection, prep: &Prepared) -> DesignReport {
        let exp = &sel.experiment;
        let name = |j: usize| exp.fields[j].name.clone();
        DesignReport {
            experiment: exp.title.clone(),
            fields: exp.field_names(),
            cycled_fields: prep.cycled.iter().map(|&j| name(j)).collect(),
            fixed_fields: (0..exp.fields.len())
                .filter(|j| !prep.cycled.contains(j))
                .map(name)
                .collect(),
            global_phase_field: prep.fixed_by_global_phase.map(name),
            order: sel.order,
            rejection: sel.source,
            rejected_terms: prep.rejected.len(),
            grid: prep.problem.grid.clone(),
            outputs: prep
                .outputs
                .iter()
                .map(|o| (o.name.clone(), o.kept[0].clone()))
                .collect(),
            kept: prep
                .outputs
                .iter()
                .map(|o| (o.name.clone(), o.kept.clone()))
                .collect(),
            steps: None,
            kind: None,
            layout: None,
            proven_minimal: false,
            excluded_below: 0,
            lattices_tested: 0,
            nested_steps: None,
            cogwheel: None,
            choice: None,
            step_order: None,
            first_leak_order: None,
            first_leak_searched_to: sel.leak_search.to,
            verified: None,
            detection_nmr: sel.is_nmr(),
            noise_efficiency: 0.0,
            beyond: None,
            lattice_steps: None,
            caveats: crate::caveats::caveats(exp, &prep.outputs),
            refusal: None,
            lattice_refusal: None,
            impossible: prep.impossible.clone(),
            cancelled: false,
            seconds: 0.0,
            cycle: None,
        }
    }
}
