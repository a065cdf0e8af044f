//! The data of the leakage chart: for every output of a checked cycle, |F(b)| of each term of
//! its rejection set (the selection's, as the exact checker uses it), its order, whether F is
//! exactly zero (cyclotomic arithmetic) or only numerically, and the kept terms. Rendering is
//! [`super::leakage_svg`]'s job.

use crate::check::{bind_cycle, CheckError, Evaluator, SnapPolicy};
use crate::cycle::Cycle;
use crate::selection::{LeakMeasure, Origin, Selection};
use crate::signature::Signature;

/// What a plotted term is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TermKind {
    /// Wanted by this output.
    Wanted,
    /// In the rejection set (agnostic, pathway, or kept by another output).
    Rejected,
    /// The conjugate of a wanted term (real detection).
    Conjugate,
}

/// One plotted term.
#[derive(Clone, Debug, PartialEq)]
pub struct TermPoint {
    /// The signature over the experiment's fields.
    pub signature: Signature,
    /// The term's order (the selection's: interactions, or the NMR coherence level).
    pub order: i64,
    /// |F(b)|.
    pub abs: f64,
    /// True when F(b) = 0 was decided exactly.
    pub exact_zero: bool,
    /// True when F(b) counts as zero (exactly, or within the numeric bound).
    pub zero: bool,
    /// What the term is.
    pub kind: TermKind,
}

/// One output's series.
#[derive(Clone, Debug, PartialEq)]
pub struct LeakageSeries {
    /// Output name.
    pub name: String,
    /// True when the evaluation was exact.
    pub exact: bool,
    /// The terms, wanted first, then by order and |F|.
    pub terms: Vec<TermPoint>,
}

impl LeakageSeries {
    /// Terms of the rejection set (conjugates of wanted terms included), as `check` reports
    /// `rejected_checked`.
    pub fn rejected_checked(&self) -> usize {
        self.terms
            .iter()
            .filter(|t| t.kind != TermKind::Wanted)
            .count()
    }

    /// Rejected terms (conjugates excluded) with F(b) != 0, as `check` counts `leak_count`:
    /// the same rejection set and the same exact (or precision-bounded) zero test.
    pub fn leak_count(&self) -> usize {
        self.terms
            .iter()
            .filter(|t| t.kind == TermKind::Rejected && !t.zero)
            .count()
    }

    /// Conjugates of wanted terms that the cycle lets through.
    pub fn conjugates_passing(&self) -> usize {
        self.terms
            .iter()
            .filter(|t| t.kind == TermKind::Conjugate && !t.zero)
            .count()
    }

    /// Wanted terms with F(t) = 0 (the output loses them).
    pub fn lost(&self) -> usize {
        self.terms
            .iter()
            .filter(|t| t.kind == TermKind::Wanted && t.zero)
            .count()
    }
}

/// The chart's data.
#[derive(Clone, Debug, PartialEq)]
pub struct LeakageChart {
    /// Experiment title.
    pub title: String,
    /// Number of steps.
    pub steps: usize,
    /// Order K of the rejection set.
    pub order: u32,
    /// What the orders count.
    pub measure: LeakMeasure,
    /// One series per output.
    pub series: Vec<LeakageSeries>,
}

/// Evaluate every rejected and wanted term of every output of `cycle` against the
/// selection `sel` (the same sets the checker uses).
///
/// # Errors
/// [`CheckError`] as from [`crate::check::check`].
pub fn leakage_chart(
    sel: &Selection,
    cycle: &Cycle,
    snap: &SnapPolicy,
) -> Result<LeakageChart, CheckError> {
    let bound = bind_cycle(sel, cycle, snap)?;
    let mut series = Vec::new();
    for (oi, out) in bound.outputs.iter().enumerate() {
        let ev = Evaluator::new(&bound, out)?;
        let others = crate::selection::other_outputs(&bound.outputs, oi, |o| {
            (o.name.as_str(), o.kept.as_slice())
        });
        let set = sel.rejection_for(&out.kept, &others);
        let mut terms = Vec::with_capacity(set.len() + out.kept.len());
        for t in &out.kept {
            let order = sel.experiment.term_order(t);
            terms.push(point(&ev, t, order, TermKind::Wanted)?);
        }
        for t in &set {
            let kind = if t.origin == Origin::Conjugate {
                TermKind::Conjugate
            } else {
                TermKind::Rejected
            };
            terms.push(point(&ev, &t.signature, i64::from(t.order), kind)?);
        }
        terms.sort_by(|a, b| {
            (a.kind != TermKind::Wanted)
                .cmp(&(b.kind != TermKind::Wanted))
                .then(a.order.cmp(&b.order))
                .then(b.abs.total_cmp(&a.abs))
        });
        series.push(LeakageSeries {
            name: out.name.clone(),
            exact: ev.is_exact(),
            terms,
        });
    }
    Ok(LeakageChart {
        title: sel.experiment.title.clone(),
        steps: cycle.len(),
        order: sel.order,
        measure: sel.leak_search.measure,
        series,
    })
}

fn point(
    ev: &Evaluator,
    b: &Signature,
    order: i64,
    kind: TermKind,
) -> Result<TermPoint, CheckError> {
    let zero = ev.is_zero(&b.0)?;
    Ok(TermPoint {
        signature: b.clone(),
        order,
        abs: if zero && ev.is_exact() {
            0.0
        } else {
            ev.approx(&b.0).norm()
        },
        exact_zero: zero && ev.is_exact(),
        zero,
        kind,
    })
}
