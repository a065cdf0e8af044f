//! The exact cycle checker (`pathsieve check`): binds a [`Cycle`] to a [`Selection`] (the
//! experiment with its kept and rejected terms, built once for every command), and reports
//! what the cycle keeps, what leaks (with exact values), the first leak order, the conjugate
//! terms of real detection, inseparable pairs, noise efficiency, the phases used and, on
//! request, a floating-point tolerance analysis, and which leaks matter given the sizes of
//! their backgrounds. This module owns the options and report types and the orchestration;
//! the work is done in [`bind`], [`evaluate`], [`inseparable`], [`tolerance`] and [`impact`];
//! the rejection sets and the first-leak search come from the selection.
//!
//! ```
//! use pathsieve::check::{check_cycle, CheckRequest};
//! use pathsieve::cycle::read_cycle_toml;
//! use pathsieve::experiment_file::parse_experiment;
//! let exp = parse_experiment(r#"
//! order = 2
//! [detection]
//! mode = "population"
//! [[field]]
//! name = "1"
//! phase = "fixed"
//! [[field]]
//! name = "2"
//! [levels]
//! states = [{ name = "g", manifold = 0 }, { name = "e", manifold = 1 }]
//! [[signal]]
//! name = "lin"
//! signatures = [[1, -1]]
//! "#, "lin.toml".as_ref()).unwrap();
//! let cycle = read_cycle_toml(r#"
//! [cycle]
//! unit = "degrees"
//! fields = ["2"]
//! steps = [["0"], ["120"], ["240"]]
//! [[output]]
//! name = "lin"
//! from_signature = [-1]
//! "#, "c.toml".as_ref(), None).unwrap();
//! let report = check_cycle(&exp, &cycle, &CheckRequest::default()).unwrap();
//! assert!(report.clean); // b = 0 and the conjugate (-1, 1) are cancelled exactly
//! ```

pub mod bind;
pub mod culprit;
mod culprit_rows;
pub mod evaluate;
pub mod impact;
pub mod inseparable;
pub mod snap_cells;
pub mod tolerance;

use crate::cycle::Cycle;
use crate::error::ModelError;
use crate::exact::ExactError;
use crate::model::Experiment;
use crate::selection::{LeakMeasure, Origin, Selection, SelectionError, SelectionRequest};
use crate::signature::Signature;
use serde::Serialize;

pub use bind::{bind_cycle, BoundCycle, BoundOutput, SnapPolicy};
pub use culprit::Suspect;
pub use evaluate::{Evaluator, ExactFallback, NumericFilter, Value, VerdictClass};
pub use impact::{Impact, ImpactRequest};
pub use inseparable::{Inseparable, InseparableKind};
pub use snap_cells::Snap;
pub use tolerance::{ToleranceReport, ToleranceRequest};
/// Default cap on the number of leaks listed per output (all are counted).
pub const DEFAULT_MAX_LISTED: usize = 1000;

/// Errors of the checker: every message names the bad value and the fix.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CheckError {
    /// The cycle's fields do not match the experiment's.
    #[error("the cycle's fields do not match the experiment: {detail}; cycle fields: [{}], experiment fields: [{}] (fixed fields may be omitted)", cycle.join(", "), experiment.join(", "))]
    FieldMismatch {
        /// What is wrong.
        detail: String,
        /// The cycle's field names.
        cycle: Vec<String>,
        /// The experiment's field names.
        experiment: Vec<String>,
    },
    /// The cycle's outputs do not match the experiment's wanted signals.
    #[error("{0}")]
    OutputMismatch(String),
    /// A request value out of range.
    #[error("{0}")]
    BadRequest(String),
    /// From the experiment model (e.g. an oversize agnostic set).
    #[error(transparent)]
    Model(#[from] ModelError),
    /// From building the selection (order, grid, set sizes).
    #[error(transparent)]
    Selection(#[from] SelectionError),
    /// From the exact-arithmetic layer.
    #[error(transparent)]
    Exact(#[from] ExactError),
}

/// How to check (what to check is the [`Selection`]).
#[derive(Clone, Debug, PartialEq)]
pub struct CheckOptions {
    /// How approximate phases are handled.
    pub snap: SnapPolicy,
    /// Floating-point tolerance analysis, if wanted.
    pub tolerance: Option<ToleranceRequest>,
    /// At most this many leaks listed per output.
    pub max_listed: usize,
    /// Background sizes laid over the experiment's and the threshold for leaks that matter.
    pub impact: ImpactRequest,
}

impl Default for CheckOptions {
    fn default() -> Self {
        CheckOptions {
            snap: SnapPolicy::default(),
            tolerance: None,
            max_listed: DEFAULT_MAX_LISTED,
            impact: ImpactRequest::default(),
        }
    }
}

/// A selection request and check options together, for [`check_cycle`].
#[derive(Clone, Debug, Default, PartialEq)]
pub struct CheckRequest {
    /// What the cycle must keep and cancel.
    pub selection: SelectionRequest,
    /// How to check.
    pub options: CheckOptions,
}

/// Phases of one field used by the cycle.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FieldPhases {
    /// Field name.
    pub field: String,
    /// True when the experiment holds this field's phase fixed.
    pub fixed: bool,
    /// Distinct phases in turns (`p/q`, or `~x` when approximate), sorted.
    pub values: Vec<String>,
    /// Smallest grid (steps per turn) holding them; `None` for approximate phases.
    pub grid: Option<u64>,
}

/// A wanted term and the value the cycle gives it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct KeptTerm {
    /// The kept signature.
    pub signature: Signature,
    /// `F(t)`.
    pub value: Value,
    /// `|F(t)| / sqrt(N * sum |w_m|^2)`.
    pub noise_efficiency: f64,
}

/// A conjugate term `-t` of real detection.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ConjugateTerm {
    /// `-t`.
    pub signature: Signature,
    /// `F(-t)`.
    pub value: Value,
    /// True when `F(-t) = 0`.
    pub cancelled: bool,
}

/// A rejected term the cycle lets through.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Leak {
    /// The signature `b`.
    pub signature: Signature,
    /// `sum |b|`.
    pub weight: i64,
    /// Perturbative order of the term: `sum |b|`, less one where a reference (LO, receiver,
    /// probe) enters.
    pub order: i64,
    /// Phase-matching direction.
    pub direction: String,
    /// Why it is in the rejection set.
    pub origin: Origin,
    /// `F(b)`.
    pub value: Value,
    /// `|F(b)| / |F(t)|` with `t` the output's first kept signature.
    pub relative: f64,
}

/// The lowest order at which something leaks.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FirstLeak {
    /// The order K (NMR: the largest |coherence order| on the leaking path).
    pub order: u32,
    /// What `order` counts: interactions or the NMR coherence level.
    pub measure: LeakMeasure,
    /// One leaking signature at that order.
    pub signature: Signature,
    /// `|F(b)|` of it.
    pub abs: f64,
}

/// Everything checked for one output.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OutputReport {
    /// Output name.
    pub name: String,
    /// Where its weights came from (`explicit` or the signature).
    pub weights: String,
    /// True when this output's verdict is exact (as written or after snapping).
    pub exact: bool,
    /// How the verdict was reached: exact, exact after snapping, within the written precision.
    pub class: VerdictClass,
    /// Set when every cell is exact but exact arithmetic passed a limit: which limit, which
    /// value, and the way back to an exact verdict (the class is then
    /// [`VerdictClass::FloatBeyondExactLimit`]).
    pub exact_fallback: Option<ExactFallback>,
    /// Within the written precision: the largest rounding bound over the rejected terms (a
    /// term is zero within precision when `|F|` is below its own bound). `None` when exact.
    pub rounding_bound: Option<f64>,
    /// Kept terms.
    pub kept: Vec<KeptTerm>,
    /// Kept terms with `F(t) = 0` (the output loses what it wants).
    pub lost: Vec<Signature>,
    /// Conjugate terms (real detection).
    pub conjugates: Vec<ConjugateTerm>,
    /// Size of the rejection set checked (conjugates included).
    pub rejected_checked: usize,
    /// Number of leaking rejected terms (conjugates excluded).
    pub leak_count: usize,
    /// Leaks, lowest `sum |b|` first (at most `max_listed`).
    pub leaks: Vec<Leak>,
    /// First leak among the selection's terms through the leak-search bound.
    pub first_leak: Option<FirstLeak>,
    /// Pairs no cycle (on any grid, or on this grid) can separate.
    pub inseparable: Vec<Inseparable>,
    /// Noise efficiency of the first kept term.
    pub noise_efficiency: f64,
    /// Tolerance analysis, if asked for.
    pub tolerance: Option<ToleranceReport>,
    /// Every rejected term weighted by its background size, ranked, with threshold verdicts.
    pub impact: Impact,
    /// When the output is not clean: 1-based steps of the smallest changes found that make it
    /// clean (union over [`Self::suspects`]).
    pub suspect_steps: Vec<usize>,
    /// The changes found, each with its proposed correction.
    pub suspects: Vec<Suspect>,
    /// True when nothing leaks, no conjugate passes, no kept term is lost and no unwanted
    /// pathway shares a kept signature.
    pub clean: bool,
}

/// The whole report.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CheckReport {
    /// Experiment title.
    pub experiment: String,
    /// Experiment field names in order.
    pub fields: Vec<String>,
    /// Detection mode label.
    pub detection: String,
    /// Number of steps N.
    pub steps: usize,
    /// Order K of the rejection set.
    pub order: u32,
    /// What the rejection set is.
    pub rejection: String,
    /// First-leak search bound actually used.
    pub leak_search_to: u32,
    /// What the leak orders count (interactions, or the NMR coherence level).
    pub leak_measure: LeakMeasure,
    /// True when every verdict is exact.
    pub exact: bool,
    /// Notes on snapping, numeric evaluation, limits, the table's dialect and unit warnings.
    pub notes: Vec<String>,
    /// Cells snapped to exact values within their written precision.
    pub snaps: Vec<Snap>,
    /// Phases used per field.
    pub phases_used: Vec<FieldPhases>,
    /// One report per output.
    pub outputs: Vec<OutputReport>,
    /// Lowest first-leak order over the outputs.
    pub first_leak_order: Option<u32>,
    /// True when every output is clean through the order.
    pub clean: bool,
}

/// Build the selection of `exp` for `req.selection` and check `cycle` against it.
///
/// # Errors
/// [`CheckError`] for a bad request or a cycle that does not fit the experiment.
pub fn check_cycle(
    exp: &Experiment,
    cycle: &Cycle,
    req: &CheckRequest,
) -> Result<CheckReport, CheckError> {
    check(&Selection::new(exp, &req.selection)?, cycle, &req.options)
}

/// Check a cycle against a selection.
///
/// # Errors
/// [`CheckError`] when the cycle does not fit the experiment.
pub fn check(
    sel: &Selection,
    cycle: &Cycle,
    opts: &CheckOptions,
) -> Result<CheckReport, CheckError> {
    let exp = &sel.experiment;
    let bound = bind_cycle(sel, cycle, &opts.snap)?;
    let mut notes = bound.notes.clone();
    notes.extend(selection_notes(sel));
    let mut outputs = Vec::new();
    for (oi, out) in bound.outputs.iter().enumerate() {
        let ev = Evaluator::new(&bound, out)?;
        let others = crate::selection::other_outputs(&bound.outputs, oi, |o| {
            (o.name.as_str(), o.kept.as_slice())
        });
        let set = sel.rejection_for(&out.kept, &others);
        let first = sel
            .first_leak(&sel.search_set_for(&out.kept, &others), |b| {
                ev.is_zero(&b.0).map(|z| !z)
            })?
            .map(|f| FirstLeak {
                abs: ev.approx(&f.signature.0).norm(),
                order: f.order,
                measure: f.measure,
                signature: f.signature,
            });
        outputs.push(evaluate::check_output(
            exp, &bound, out, &ev, &set, first, opts,
        )?);
    }
    notes.extend(outputs.iter().filter_map(|o| {
        o.exact_fallback
            .as_ref()
            .map(|f| format!("output `{}`: {}", o.name, f.reason))
    }));
    let exact = outputs.iter().all(|o| o.exact);
    let first_leak_order = outputs
        .iter()
        .filter_map(|o| o.first_leak.as_ref().map(|f| f.order))
        .min();
    let clean = outputs.iter().all(|o| o.clean);
    Ok(CheckReport {
        experiment: exp.title.clone(),
        fields: exp.field_names(),
        detection: exp.detection.label().to_string(),
        steps: cycle.len(),
        order: sel.order,
        rejection: describe_rejection(sel),
        leak_search_to: sel.leak_search.to,
        leak_measure: sel.leak_search.measure,
        exact,
        notes,
        snaps: bound.snaps.clone(),
        phases_used: bound.phases_used(exp),
        outputs,
        first_leak_order,
        clean,
    })
}

/// Notes on the selection: NMR rules, caveats, a lowered leak search.
fn selection_notes(sel: &Selection) -> Vec<String> {
    let mut notes = Vec::new();
    if sel.is_nmr() {
        notes.push("NMR detection: the rejection set is every coherence-transfer pathway of the spin system, by coherence level; the optical agnostic set does not apply".into());
    }
    notes.extend(
        crate::caveats::caveats(&sel.experiment, &sel.outputs)
            .into_iter()
            .map(|c| format!("cannot be cycled away: {c}")),
    );
    if sel.geometry {
        notes.extend(sel.experiment.beam_notes.iter().cloned());
        let rounded: Vec<String> = sel
            .experiment
            .beam_rounding
            .iter()
            .map(|r| format!("`{}` ({})", r.text, r.location))
            .collect();
        if !rounded.is_empty() {
            notes.push(format!(
                "beam components {} match no simple exact value and keep their written values; equal written values are taken as equal, and no phase-matching decision depends on their rounding",
                rounded.join(", ")
            ));
        }
    }
    let s = &sel.leak_search;
    if s.to < s.wanted {
        notes.push(format!(
            "first-leak search lowered from {} {} to {}: the set above it exceeds the search limits",
            s.measure.label(),
            s.wanted,
            s.to
        ));
    }
    notes
}

/// One line for the report: what the rejection set is.
pub fn describe_rejection(sel: &Selection) -> String {
    let exp = &sel.experiment;
    let k = sel.order;
    let geometry = if sel.geometry {
        ", coherent terms phase-matched by the beam geometry (pair and scatter terms always)"
    } else {
        ""
    };
    match sel.source {
        _ if sel.is_nmr() => format!("coherence-transfer pathways through coherence level {k}"),
        crate::selection::RejectionSource::Agnostic => format!(
            "agnostic set through order {k} (sum b = 0, sum |b| <= {}){geometry}",
            k + u32::from(exp.has_reference()),
        ),
        crate::selection::RejectionSource::FromPathways => format!(
            "enumerated pathways through order {k} and their conjugates, the reference alone and every scatter pair{geometry}"
        ),
    }
}
