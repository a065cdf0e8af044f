//! The exact cycle checker (`pathsieve check`): binds a [`Cycle`] to an [`Experiment`], builds
//! each output's rejection set, and reports what the cycle keeps, what leaks (with exact
//! values), the first leak order, the conjugate terms of real detection, inseparable pairs,
//! noise efficiency, the phases used and, on request, a floating-point tolerance analysis.
//! This module owns the request and report types and the orchestration; the work is done in
//! [`bind`], [`evaluate`], [`rejected`], [`first_leak`], [`inseparable`] and [`tolerance`].
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
pub mod evaluate;
pub mod first_leak;
pub mod inseparable;
pub mod rejected;
pub mod snap_cells;
pub mod tolerance;

use crate::cycle::Cycle;
use crate::error::ModelError;
use crate::exact::ExactError;
use crate::model::Experiment;
use crate::signature::Signature;
use serde::Serialize;

pub use bind::{bind_cycle, BoundCycle, BoundOutput, SnapPolicy};
pub use evaluate::{Evaluator, NumericFilter, Value, VerdictClass};
pub use inseparable::{Inseparable, InseparableKind};
pub use rejected::{Origin, RejectionSource};
pub use snap_cells::Snap;
pub use tolerance::{ToleranceReport, ToleranceRequest};

/// Default number of orders above the requested one searched for the first leak.
pub const DEFAULT_LEAK_SEARCH_EXTRA: u32 = 4;
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
    /// From the exact-arithmetic layer.
    #[error(transparent)]
    Exact(#[from] ExactError),
}

/// What to check and how.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckRequest {
    /// Order K of the rejection set (default: the experiment's order).
    pub order: Option<u32>,
    /// Agnostic set (with or without the geometry filter) or the enumerated pathways.
    pub source: RejectionSource,
    /// Search the first leak up to this order (default: order + 4, capped by the limits).
    pub leak_search_to: Option<u32>,
    /// How approximate phases are handled.
    pub snap: SnapPolicy,
    /// Floating-point tolerance analysis, if wanted.
    pub tolerance: Option<ToleranceRequest>,
    /// At most this many leaks listed per output.
    pub max_listed: usize,
}

impl Default for CheckRequest {
    fn default() -> Self {
        CheckRequest {
            order: None,
            source: RejectionSource::Agnostic { geometry: None },
            leak_search_to: None,
            snap: SnapPolicy::default(),
            tolerance: None,
            max_listed: DEFAULT_MAX_LISTED,
        }
    }
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
    /// What `order` counts: `order` (interactions) or `coherence level |p|` (NMR).
    pub measure: String,
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
    /// First leak order among the agnostic sets searched.
    pub first_leak: Option<FirstLeak>,
    /// Pairs no cycle (on any grid, or on this grid) can separate.
    pub inseparable: Vec<Inseparable>,
    /// Noise efficiency of the first kept term.
    pub noise_efficiency: f64,
    /// Tolerance analysis, if asked for.
    pub tolerance: Option<ToleranceReport>,
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

/// Check a cycle against an experiment.
pub fn check_cycle(
    exp: &Experiment,
    cycle: &Cycle,
    req: &CheckRequest,
) -> Result<CheckReport, CheckError> {
    let k = req.order.unwrap_or(exp.order);
    if k > crate::limits::MAX_ORDER {
        return Err(CheckError::BadRequest(format!(
            "order {k} is above the limit {}; use 0..={}",
            crate::limits::MAX_ORDER,
            crate::limits::MAX_ORDER
        )));
    }
    let bound = bind_cycle(exp, cycle, &req.snap)?;
    let mut notes = bound.notes.clone();
    // NMR: every detected term carries the receiver, so the optical agnostic set (which holds
    // b = 0 and misses high coherence jumps) does not apply; use the coherence pathways.
    let nmr_req;
    let req = if matches!(exp.detection, crate::model::Detection::Nmr { .. })
        && matches!(req.source, RejectionSource::Agnostic { .. })
    {
        notes.push("NMR detection: the rejection set is every coherence-transfer pathway of the spin system (as --from-pathways); the optical agnostic set does not apply".into());
        nmr_req = CheckRequest {
            source: RejectionSource::FromPathways,
            ..req.clone()
        };
        &nmr_req
    } else {
        req
    };
    if let Ok(resolved) = crate::pathways::resolve_signals(exp) {
        notes.extend(
            crate::caveats::caveats(exp, &resolved)
                .into_iter()
                .map(|c| format!("cannot be cycled away: {c}")),
        );
    }
    let geometry = req.source.geometry(exp);
    let (search_to, search_note) = first_leak::search_bound(exp, k, req.leak_search_to)?;
    notes.extend(search_note);
    if matches!(req.source, RejectionSource::FromPathways) {
        notes.push("rejection set: the enumerated pathways through the order and their conjugates; scatter terms are not in it (the default agnostic set covers them)".into());
    }
    let mut outputs = Vec::new();
    for (oi, out) in bound.outputs.iter().enumerate() {
        let ev = Evaluator::new(&bound, out)?;
        let set = rejected::rejection_set(exp, &bound, oi, k, &req.source)?;
        outputs.push(evaluate::check_output(
            exp, &bound, out, &ev, &set, req, search_to, geometry,
        )?);
    }
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
        order: k,
        rejection: req.source.describe(exp, k),
        leak_search_to: search_to,
        exact,
        notes,
        snaps: bound.snaps.clone(),
        phases_used: bound.phases_used(exp),
        outputs,
        first_leak_order,
        clean,
    })
}
