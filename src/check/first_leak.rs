//! The first leak order: the smallest K at which the agnostic set (geometry-filtered like the
//! main check) holds a term, other than the output's kept ones, that the cycle passes. Terms
//! are visited in order of increasing `sum |b|`, so the search stops at the first leak.

use super::evaluate::Evaluator;
use super::{CheckError, FirstLeak, DEFAULT_LEAK_SEARCH_EXTRA};
use crate::agnostic::{agnostic_count, sum_zero_ball};
use crate::model::Experiment;
use crate::signature::Signature;

/// Largest agnostic set the first-leak search walks; the bound is lowered to fit.
pub const MAX_SEARCH_TERMS: u64 = 1_000_000;

/// The search bound: the requested one (at least the order), or order + 4, lowered until the
/// agnostic set fits [`MAX_SEARCH_TERMS`] and capped by the order limit. Returns a note when
/// it had to be lowered.
pub fn search_bound(
    exp: &Experiment,
    k: u32,
    requested: Option<u32>,
) -> Result<(u32, Option<String>), CheckError> {
    let max = crate::limits::MAX_ORDER + DEFAULT_LEAK_SEARCH_EXTRA;
    let want = requested.unwrap_or(k + DEFAULT_LEAK_SEARCH_EXTRA).max(k);
    if want > max {
        return Err(CheckError::BadRequest(format!(
            "first-leak search to order {want} is above the limit {max}; lower --leak-search"
        )));
    }
    let r = u32::from(exp.has_reference());
    let n = exp.fields.len();
    let mut to = want;
    while to > k && agnostic_count(n, to + r) > MAX_SEARCH_TERMS {
        to -= 1;
    }
    let note = (to < want).then(|| {
        format!("first-leak search lowered from order {want} to {to}: the agnostic set above it exceeds {MAX_SEARCH_TERMS} terms")
    });
    Ok((to, note))
}

/// The first leak of `ev` through order `to`, or `None` if nothing leaks.
pub fn first_leak(
    exp: &Experiment,
    ev: &Evaluator,
    kept: &[Signature],
    to: u32,
    geometry: bool,
) -> Result<Option<FirstLeak>, CheckError> {
    if let crate::model::Detection::Nmr {
        max_coherence,
        detected,
    } = exp.detection
    {
        return nmr_first_leak(
            exp,
            ev,
            kept,
            max_coherence.max(detected.abs()) + DEFAULT_LEAK_SEARCH_EXTRA as i32,
            detected,
        );
    }
    let r = i64::from(exp.has_reference());
    for b in sum_zero_ball(exp.fields.len(), to + r as u32) {
        if kept.contains(&b) || (geometry && b.weight() > 2 && !exp.is_phase_matched(&b)) {
            continue;
        }
        if !ev.is_zero(&b.0)? {
            let order = (b.weight() - r).max(0) as u32;
            let abs = ev.approx(&b.0).norm();
            return Ok(Some(FirstLeak {
                order,
                measure: "order".into(),
                signature: b,
                abs,
            }));
        }
    }
    Ok(None)
}

/// NMR: the "order" of a coherence path is its largest |coherence order|; search every path
/// `0 -> p1 -> .. -> detected` with `|p_i| <= level` for level = 0, 1, .. up to `max_level`.
fn nmr_first_leak(
    exp: &Experiment,
    ev: &Evaluator,
    kept: &[Signature],
    max_level: i32,
    detected: i32,
) -> Result<Option<FirstLeak>, CheckError> {
    let inner = exp.pulse_indices().len().saturating_sub(1);
    for level in detected.abs()..=max_level {
        let width = (2 * level + 1) as u64;
        let total = width.checked_pow(inner as u32).unwrap_or(u64::MAX);
        if total > MAX_SEARCH_TERMS {
            break;
        }
        for code in 0..total {
            let mut path = vec![0i32];
            let mut c = code;
            for _ in 0..inner {
                path.push((c % width) as i32 - level);
                c /= width;
            }
            path.push(detected);
            if path.iter().all(|p| p.abs() < level) {
                continue; // seen at a lower level
            }
            let b = crate::pathways::coherence_signature(exp, &path)?;
            if kept.contains(&b) || ev.is_zero(&b.0)? {
                continue;
            }
            let abs = ev.approx(&b.0).norm();
            return Ok(Some(FirstLeak {
                order: level as u32,
                measure: "coherence level |p|".into(),
                signature: b,
                abs,
            }));
        }
    }
    Ok(None)
}
