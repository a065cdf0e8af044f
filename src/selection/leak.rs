//! The first-leak search policy, one for every command: how far above the order the search
//! goes, in which measure (interaction order, or the coherence level for NMR), and the search
//! itself over the selection's own terms, so a first leak is always a term of the same kind
//! of set as the rejection set (agnostic, or enumerated pathways with the scatter pairs).

use super::{RejectionSource, Selection, SelectionError, Term};
use crate::agnostic::{agnostic_count, check_agnostic_size};
use crate::error::ModelError;
use crate::limits::{MAX_AGNOSTIC_TERMS, MAX_ORDER};
use crate::model::{Detection, Experiment};
use crate::pathways::{check_size, pathway_bound, Scope};
use crate::signature::Signature;
use serde::Serialize;

/// Orders searched above the requested one by default.
pub const DEFAULT_LEAK_SEARCH_EXTRA: u32 = 4;
/// Largest agnostic set the first-leak search walks; the bound is lowered to fit.
pub const MAX_SEARCH_TERMS: u64 = 1_000_000;
/// Largest estimated number of pathways enumerated for the first-leak search.
pub const MAX_SEARCH_PATHWAYS: f64 = 2e6;

/// What a first-leak order counts.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum LeakMeasure {
    /// Interactions (`sum |b|` less the reference).
    Order,
    /// NMR: the largest |coherence order| on the path.
    CoherenceLevel,
}

impl LeakMeasure {
    /// The word for tables: `order` or `coherence level |p|`.
    pub fn label(&self) -> &'static str {
        match self {
            LeakMeasure::Order => "order",
            LeakMeasure::CoherenceLevel => "coherence level |p|",
        }
    }
}

/// How far the first-leak search goes.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LeakSearch {
    /// Highest order (or coherence level) searched.
    pub to: u32,
    /// The bound asked for (default: order + 4); above `to` when the limits lowered it.
    pub wanted: u32,
    /// What the orders count.
    pub measure: LeakMeasure,
}

/// The lowest-order term a cycle passes.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FirstLeak {
    /// The order (or coherence level).
    pub order: u32,
    /// What `order` counts.
    pub measure: LeakMeasure,
    /// The leaking term.
    pub signature: Signature,
}

/// The order of the rejection set (NMR: the largest coherence level) and the leak search.
pub(super) fn plan(
    exp: &Experiment,
    order: u32,
    source: RejectionSource,
    requested: Option<u32>,
) -> Result<(u32, LeakSearch), SelectionError> {
    if let Detection::Nmr {
        max_coherence,
        detected,
    } = exp.detection
    {
        let cutoff = max_coherence.max(detected.abs()) as u32;
        let wanted = requested
            .unwrap_or(cutoff + DEFAULT_LEAK_SEARCH_EXTRA)
            .max(cutoff);
        let inner = exp.pulse_indices().len().saturating_sub(1) as u32;
        let size = |l: u32| u64::from(2 * l + 1).checked_pow(inner).unwrap_or(u64::MAX);
        if size(cutoff) > MAX_AGNOSTIC_TERMS {
            return Err(too_large("the coherence paths of the spin system", size(cutoff)).into());
        }
        let mut to = wanted;
        while to > cutoff && size(to) > MAX_SEARCH_TERMS {
            to -= 1;
        }
        let measure = LeakMeasure::CoherenceLevel;
        return Ok((
            cutoff,
            LeakSearch {
                to,
                wanted,
                measure,
            },
        ));
    }
    let limit = MAX_ORDER + DEFAULT_LEAK_SEARCH_EXTRA;
    let wanted = requested
        .unwrap_or(order + DEFAULT_LEAK_SEARCH_EXTRA)
        .max(order);
    if wanted > limit {
        return Err(SelectionError::LeakSearchTooHigh { to: wanted, limit });
    }
    let r = u32::from(exp.has_reference());
    let n = exp.fields.len();
    let mut to = wanted;
    match source {
        RejectionSource::Agnostic => {
            check_agnostic_size(n, order, order + r)?;
            while to > order && agnostic_count(n, to + r) > MAX_SEARCH_TERMS {
                to -= 1;
            }
        }
        RejectionSource::FromPathways => {
            check_size(exp, Scope::Through(order))?;
            while to > order && pathway_bound(exp, Scope::Through(to)) > MAX_SEARCH_PATHWAYS {
                to -= 1;
            }
        }
    }
    let measure = LeakMeasure::Order;
    Ok((
        order,
        LeakSearch {
            to,
            wanted,
            measure,
        },
    ))
}

fn too_large(what: &str, value: u64) -> ModelError {
    ModelError::TooLarge {
        what: what.to_string(),
        value,
        limit: MAX_AGNOSTIC_TERMS,
        hint: "lower the order or use the enumerated set from the level scheme".into(),
    }
}

impl Selection {
    /// The first term of `set` (from [`Selection::search_set_for`]) that `passes`, i.e. the
    /// output's first leak; `None` when it is clean through the search bound.
    ///
    /// # Errors
    /// Whatever `passes` returns.
    pub fn first_leak<E>(
        &self,
        set: &[Term],
        mut passes: impl FnMut(&Signature) -> Result<bool, E>,
    ) -> Result<Option<FirstLeak>, E> {
        for t in set {
            if passes(&t.signature)? {
                return Ok(Some(FirstLeak {
                    order: t.order,
                    measure: self.leak_search.measure,
                    signature: t.signature.clone(),
                }));
            }
        }
        Ok(None)
    }
}
