//! The rejection set of one output: the agnostic set through order K (optionally phase-matched
//! by the beam geometry) or the enumerated pathways through K with their conjugates, plus every
//! other output's kept signatures and, for real detection, the conjugate `-t` of each kept `t`
//! that the output does not itself keep. Each term records why it is there.

use super::bind::BoundCycle;
use super::CheckError;
use crate::agnostic::agnostic_set;
use crate::model::Experiment;
use crate::pathways::{for_each_pathway, Scope};
use crate::signature::Signature;
use serde::Serialize;
use std::collections::HashMap;

/// Which terms a cycle must cancel besides the other outputs and the conjugates.
#[derive(Clone, Debug, PartialEq)]
pub enum RejectionSource {
    /// The agnostic set through the order; `geometry` = drop coherent terms the beams do not
    /// phase-match (`None`: on when the experiment has beams).
    Agnostic {
        /// Geometry filter override.
        geometry: Option<bool>,
    },
    /// The enumerated pathways through the order (level-scheme specific, no scatter terms).
    FromPathways,
}

impl RejectionSource {
    /// Whether the geometry filter is in effect for `exp`.
    pub fn geometry(&self, exp: &Experiment) -> bool {
        let has_beams = exp.fields.iter().any(|f| f.beam.is_some());
        match self {
            RejectionSource::Agnostic { geometry } => geometry.unwrap_or(has_beams),
            RejectionSource::FromPathways => has_beams,
        }
    }

    /// One line for the report.
    pub fn describe(&self, exp: &Experiment, k: u32) -> String {
        match self {
            RejectionSource::Agnostic { .. } => format!(
                "agnostic set through order {k} (sum b = 0, sum |b| <= {}){}",
                k + u32::from(exp.has_reference()),
                if self.geometry(exp) {
                    ", coherent terms phase-matched by the beam geometry"
                } else {
                    ""
                }
            ),
            RejectionSource::FromPathways => {
                format!("enumerated pathways through order {k} and their conjugates")
            }
        }
    }
}

/// Why a term is in the rejection set.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind", content = "value")]
pub enum Origin {
    /// The agnostic set.
    Agnostic,
    /// An enumerated pathway (or its conjugate).
    Pathway,
    /// Kept by another output.
    OtherOutput(String),
    /// The conjugate of one of this output's kept terms.
    Conjugate,
}

/// The rejection set of output `oi`, lowest `sum |b|` first.
pub fn rejection_set(
    exp: &Experiment,
    bound: &BoundCycle,
    oi: usize,
    k: u32,
    source: &RejectionSource,
) -> Result<Vec<(Signature, Origin)>, CheckError> {
    let kept = &bound.outputs[oi].kept;
    let mut terms: Vec<(Signature, Origin)> = Vec::new();
    let mut index: HashMap<Signature, usize> = HashMap::new();
    let mut put = |b: Signature, o: Origin, terms: &mut Vec<(Signature, Origin)>| {
        if kept.contains(&b) {
            return;
        }
        match index.get(&b) {
            Some(&i) => {
                if o != Origin::Agnostic && o != Origin::Pathway {
                    terms[i].1 = o;
                }
            }
            None => {
                index.insert(b.clone(), terms.len());
                terms.push((b, o));
            }
        }
    };
    match source {
        RejectionSource::Agnostic { .. } => {
            for b in agnostic_set(exp, k, kept, source.geometry(exp))? {
                put(b, Origin::Agnostic, &mut terms);
            }
        }
        RejectionSource::FromPathways => {
            let mut sigs = Vec::new();
            let mut count = 0u64;
            for_each_pathway(exp, Scope::Through(k), |p| {
                count += 1;
                if count <= crate::limits::MAX_AGNOSTIC_TERMS {
                    sigs.push(p.signature.clone());
                }
            })?;
            if count > crate::limits::MAX_AGNOSTIC_TERMS {
                return Err(crate::error::ModelError::TooLarge {
                    what: format!("the number of pathways through order {k}"),
                    value: count,
                    limit: crate::limits::MAX_AGNOSTIC_TERMS,
                    hint: "lower --order or use the agnostic set".into(),
                }
                .into());
            }
            sigs.sort();
            sigs.dedup();
            for b in sigs {
                if exp.detection.is_real() {
                    put(b.conjugate(), Origin::Pathway, &mut terms);
                }
                put(b, Origin::Pathway, &mut terms);
            }
        }
    }
    for (j, other) in bound.outputs.iter().enumerate() {
        if j != oi {
            for t in &other.kept {
                put(
                    t.clone(),
                    Origin::OtherOutput(other.name.clone()),
                    &mut terms,
                );
            }
        }
    }
    if exp.detection.is_real() {
        for t in kept {
            put(t.conjugate(), Origin::Conjugate, &mut terms);
        }
    }
    terms.sort_by(|a, b| a.0.weight().cmp(&b.0.weight()).then_with(|| a.0.cmp(&b.0)));
    Ok(terms)
}
