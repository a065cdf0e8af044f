//! The grouped summary: pathways counted per signature, streamed so that memory grows with the
//! number of distinct signatures, never with the number of pathways. That number is bounded
//! too ([`MAX_SUMMARY_SIGNATURES`]): before work for NMR, where every coherence path has its own
//! signature, and while streaming otherwise.

use super::{for_each_pathway, Pathway, Scope};
use crate::error::ModelError;
use crate::model::{Experiment, PathwayClass};
use crate::signature::Signature;
use serde::Serialize;
use std::collections::BTreeMap;

/// Pathway counts for one signature.
#[derive(Clone, Debug, Serialize)]
pub struct SignatureSummary {
    /// The signature over all fields.
    pub signature: Signature,
    /// Phase-matching direction over the pulses, e.g. `-kp1+kp2+kp3`.
    pub direction: String,
    /// Pathways with this signature.
    pub count: u64,
    /// Of those, how many are complex-conjugate partner rows.
    pub conjugates: u64,
    /// Of those, how many have interactions out of pulse order (overlapping pulses).
    pub reordered: u64,
    /// Counts per class.
    pub classes: BTreeMap<PathwayClass, u64>,
    /// Sum of the pathways' relative weights (sign, dipoles, yields).
    pub weight_sum: f64,
    /// True when the term survives the beam geometry, by the selection's rule
    /// ([`Experiment::passes_geometry`]: pair terms always, coherent terms when phase matched).
    pub phase_matched: bool,
    /// Names of the outputs that keep this signature.
    pub wanted_by: Vec<String>,
}

/// Largest number of distinct signatures a summary holds (each entry takes a few hundred
/// bytes, so about 200 MB at the limit).
pub const MAX_SUMMARY_SIGNATURES: u64 = 500_000;

/// Refuse before work an NMR enumeration whose distinct signatures (one per coherence path)
/// exceed [`MAX_SUMMARY_SIGNATURES`].
pub(crate) fn check_nmr_signatures(exp: &Experiment, scope: Scope) -> Result<(), ModelError> {
    if let crate::model::Detection::Nmr { .. } = exp.detection {
        let paths = super::size::pathway_bound(exp, scope);
        if paths > MAX_SUMMARY_SIGNATURES as f64 {
            return Err(too_many(paths.min(u64::MAX as f64) as u64));
        }
    }
    Ok(())
}

/// The error for more than [`MAX_SUMMARY_SIGNATURES`] distinct signatures.
pub(crate) fn too_many(value: u64) -> ModelError {
    ModelError::TooLarge {
        what: "the number of distinct signatures in the summary".into(),
        value,
        limit: MAX_SUMMARY_SIGNATURES,
        hint: "each needs memory of its own; lower max_coherence or the number of pulses (NMR), or the order".into(),
    }
}

/// The summary of an enumeration.
#[derive(Clone, Debug, Serialize)]
pub struct Summary {
    /// All pathways counted (conjugate rows included when asked for).
    pub total: u64,
    /// One entry per signature, sorted by order then signature.
    pub signatures: Vec<SignatureSummary>,
}

/// Count pathways per signature. With `conjugates`, emission-type detection also counts each
/// pathway's complex-conjugate partner (population detection lists both already).
/// `wanted` pairs an output name with the signatures it keeps. Refused before work when the
/// enumeration is above the size limit.
pub fn summarize(
    exp: &Experiment,
    scope: Scope,
    conjugates: bool,
    wanted: &[(String, Vec<Signature>)],
) -> Result<Summary, ModelError> {
    check_nmr_signatures(exp, scope)?;
    let mut map: BTreeMap<Signature, SignatureSummary> = BTreeMap::new();
    let mut total = 0u64;
    let mut overflow = false;
    let add_conjugates = conjugates && needs_conjugate_rows(exp);
    let mut add = |p: &Pathway, conj: bool| {
        total += 1;
        let signature = if conj {
            p.signature.conjugate()
        } else {
            p.signature.clone()
        };
        if map.len() as u64 >= MAX_SUMMARY_SIGNATURES && !map.contains_key(&signature) {
            overflow = true;
            return;
        }
        let entry = map
            .entry(signature)
            .or_insert_with_key(|signature| SignatureSummary {
                signature: signature.clone(),
                direction: exp.signal_direction(signature),
                count: 0,
                conjugates: 0,
                reordered: 0,
                classes: BTreeMap::new(),
                weight_sum: 0.0,
                phase_matched: false, // set below by the selection's rule
                wanted_by: wanted
                    .iter()
                    .filter(|(_, sigs)| sigs.contains(signature))
                    .map(|(n, _)| n.clone())
                    .collect(),
            });
        entry.count += 1;
        entry.conjugates += u64::from(conj);
        entry.reordered += u64::from(!p.time_ordered);
        *entry.classes.entry(p.class).or_insert(0) += 1;
        entry.weight_sum += if conj { p.conjugate_weight() } else { p.weight };
    };
    for_each_pathway(exp, scope, |p| {
        add(p, false);
        if add_conjugates {
            add(p, true);
        }
    })?;
    if overflow {
        return Err(too_many(MAX_SUMMARY_SIGNATURES + 1));
    }
    let mut signatures: Vec<SignatureSummary> = map.into_values().collect();
    for e in &mut signatures {
        e.phase_matched = exp.passes_geometry(&e.signature)?;
    }
    signatures.sort_by(|a, b| {
        a.signature
            .weight()
            .cmp(&b.signature.weight())
            .then_with(|| b.signature.cmp(&a.signature))
    });
    Ok(Summary { total, signatures })
}

/// True when the enumerator lists only the positive-frequency half of a real signal, so the
/// conjugate partners must be added as rows of their own.
pub fn needs_conjugate_rows(exp: &Experiment) -> bool {
    matches!(
        exp.detection,
        crate::model::Detection::Emission | crate::model::Detection::PumpProbe
    )
}
