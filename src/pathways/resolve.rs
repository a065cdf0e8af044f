//! Resolution of the wanted signals (by class, signature or coherence path) to the signatures
//! each output keeps, with the pathways that share those signatures but belong to other classes
//! (the contamination no phase cycle can remove).

use super::{for_each_pathway, Scope};
use crate::error::ModelError;
use crate::model::{Detection, Experiment, PathwayClass, WantedItem, WantedSignal};
use crate::signature::Signature;
use serde::Serialize;
use std::collections::{BTreeMap, BTreeSet};

/// Pathways of an unwanted class carried by a kept signature.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Contamination {
    /// The kept signature.
    pub kept: Signature,
    /// The unwanted class.
    pub class: PathwayClass,
    /// True when the pathways arrive as complex conjugates (their own signature is `-kept`).
    pub via_conjugate: bool,
    /// How many pathways.
    pub count: u64,
}

/// Pathways out of pulse order (possible only while pulses overlap) that a kept signature
/// carries: they pass with the kept ones, and no phase cycle separates them.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Reordered {
    /// The kept signature.
    pub kept: Signature,
    /// True when the pathways arrive as complex conjugates (their own signature is `-kept`).
    pub via_conjugate: bool,
    /// How many pathways.
    pub count: u64,
}

/// One output with the signatures it keeps.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ResolvedSignal {
    /// Output name.
    pub name: String,
    /// Kept signatures (the first is the reference the weights are built from).
    pub kept: Vec<Signature>,
    /// Classes the output asked for (empty when given by signature only).
    pub classes: Vec<PathwayClass>,
    /// Time-ordered pathways of other classes that share a kept signature: inseparable by
    /// any cycle.
    pub contamination: Vec<Contamination>,
    /// Pathways out of pulse order (overlapping pulses) that share a kept signature.
    pub reordered: Vec<Reordered>,
}

/// What the signal pathways carry, per signature: the classes of the time-ordered pathways,
/// and how many pathways are out of pulse order.
struct Carried {
    classes: BTreeMap<Signature, BTreeMap<PathwayClass, u64>>,
    reordered: BTreeMap<Signature, u64>,
}

/// Resolve every wanted signal of the experiment. Classes are read from the time-ordered
/// pathways; pathways that only overlapping pulses allow are counted apart ([`Reordered`]).
pub fn resolve_signals(exp: &Experiment) -> Result<Vec<ResolvedSignal>, ModelError> {
    use super::summary::{check_nmr_signatures, too_many, MAX_SUMMARY_SIGNATURES};
    check_nmr_signatures(exp, Scope::Signal)?;
    let mut carried = Carried {
        classes: BTreeMap::new(),
        reordered: BTreeMap::new(),
    };
    let mut overflow = false;
    for_each_pathway(exp, Scope::Signal, |p| {
        let known = carried.classes.contains_key(&p.signature)
            || carried.reordered.contains_key(&p.signature);
        let held = (carried.classes.len() + carried.reordered.len()) as u64;
        if !known && held >= MAX_SUMMARY_SIGNATURES {
            overflow = true;
            return;
        }
        if p.time_ordered {
            *carried
                .classes
                .entry(p.signature.clone())
                .or_default()
                .entry(p.class)
                .or_insert(0) += 1;
        } else {
            *carried.reordered.entry(p.signature.clone()).or_insert(0) += 1;
        }
    })?;
    if overflow {
        return Err(too_many(MAX_SUMMARY_SIGNATURES + 1));
    }
    let mut out = Vec::new();
    for w in &exp.wanted {
        let (kept, classes) = kept_signatures(exp, w, &carried)?;
        let (contamination, reordered) = shares(exp, &kept, &classes, &carried);
        out.push(ResolvedSignal {
            name: w.name.clone(),
            kept,
            classes,
            contamination,
            reordered,
        });
    }
    Ok(out)
}

/// The signatures one output keeps (first occurrence order, no repeats) and its classes.
fn kept_signatures(
    exp: &Experiment,
    w: &WantedSignal,
    carried: &Carried,
) -> Result<(Vec<Signature>, Vec<PathwayClass>), ModelError> {
    let closed_under_conjugation = matches!(exp.detection, Detection::Population);
    let mut kept: Vec<Signature> = Vec::new();
    let mut classes = Vec::new();
    for item in &w.items {
        match item {
            WantedItem::Class(c) => {
                classes.push(*c);
                let sigs: BTreeSet<Signature> = carried
                    .classes
                    .iter()
                    .filter(|(_, cl)| cl.contains_key(c))
                    .map(|(s, _)| canonical(s, closed_under_conjugation))
                    .collect();
                if sigs.is_empty() {
                    return Err(ModelError::EmptyClass {
                        output: w.name.clone(),
                        class: c.short().to_string(),
                    });
                }
                kept.extend(sigs);
            }
            WantedItem::Signature(s) => kept.push(s.clone()),
            WantedItem::CoherencePath(path) => kept.push(coherence_signature(exp, path)?),
        }
    }
    let mut seen = BTreeSet::new();
    kept.retain(|s| seen.insert(s.clone()));
    Ok((kept, classes))
}

/// What else the kept signatures carry: time-ordered pathways of classes the output did not
/// ask for (only when it asked by class), and pathways out of pulse order.
fn shares(
    exp: &Experiment,
    kept: &[Signature],
    classes: &[PathwayClass],
    carried: &Carried,
) -> (Vec<Contamination>, Vec<Reordered>) {
    let mut contamination = Vec::new();
    let mut reordered = Vec::new();
    let conjugates_too = matches!(exp.detection, Detection::Emission | Detection::PumpProbe);
    for t in kept {
        let mut sources = vec![(t.clone(), false)];
        if conjugates_too {
            sources.push((t.conjugate(), true));
        }
        for (s, via_conjugate) in sources {
            if let Some(&count) = carried.reordered.get(&s) {
                reordered.push(Reordered {
                    kept: t.clone(),
                    via_conjugate,
                    count,
                });
            }
            let Some(cl) = carried.classes.get(&s).filter(|_| !classes.is_empty()) else {
                continue;
            };
            for (class, &count) in cl.iter().filter(|(c, _)| !classes.contains(c)) {
                contamination.push(Contamination {
                    kept: t.clone(),
                    class: *class,
                    via_conjugate,
                    count,
                });
            }
        }
    }
    (contamination, reordered)
}

/// For detection whose enumeration holds both halves of each real term (population), pick one
/// of `b` and `-b`: the one whose last nonzero component is negative (the last interaction
/// lowers, as an LO would).
fn canonical(s: &Signature, closed_under_conjugation: bool) -> Signature {
    if !closed_under_conjugation {
        return s.clone();
    }
    match s.0.iter().rev().find(|&&b| b != 0) {
        Some(&b) if b > 0 => s.conjugate(),
        _ => s.clone(),
    }
}

/// The signature of an NMR coherence-order path `0 -> p1 -> ... -> pn`.
pub fn coherence_signature(exp: &Experiment, path: &[i32]) -> Result<Signature, ModelError> {
    let pulses = exp.pulse_indices();
    if path.len() != pulses.len() + 1 {
        return Err(ModelError::BadCoherencePath {
            reason: format!(
                "a path lists the order before the first pulse and after each of the {} pulses: {} numbers, not {}",
                pulses.len(),
                pulses.len() + 1,
                path.len()
            ),
        });
    }
    if path[0] != 0 {
        return Err(ModelError::BadCoherencePath {
            reason: "a coherence path starts at order 0 (equilibrium)".into(),
        });
    }
    let mut sig = Signature::zero(exp.fields.len());
    for (k, &j) in pulses.iter().enumerate() {
        sig.0[j] = -i64::from(path[k + 1] - path[k]);
    }
    if let Some(r) = exp.reference_index() {
        sig.0[r] = i64::from(*path.last().unwrap_or(&0));
    }
    Ok(sig)
}
