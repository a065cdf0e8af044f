//! Building the terms of a selection through the leak-search bound, each with its order and
//! origin: the agnostic set (every `sum b = 0` term), or the enumerated pathways with their
//! conjugates plus the reference alone and every pair term, or for NMR every coherence path
//! by coherence level. The geometry filter drops coherent terms (`sum |b| > 2`) that the beams
//! do not phase-match and never a pair or scatter term (docs/conventions.md); it refuses when a
//! decision depends on the rounding of a written beam component ([`crate::model::geometry`]).

use super::{Origin, RejectionSource, Term};
use crate::agnostic::sum_zero_ball;
use crate::error::ModelError;
use crate::model::{Detection, Experiment};
use crate::pathways::{coherence_signature, for_each_pathway, Scope};
use crate::signature::Signature;
use std::collections::HashMap;

/// Every term through order `to` (NMR: coherence level), lowest order first.
pub fn build(
    exp: &Experiment,
    source: RejectionSource,
    geometry: bool,
    to: u32,
) -> Result<Vec<Term>, ModelError> {
    let mut terms = if let Detection::Nmr { detected, .. } = exp.detection {
        nmr_terms(exp, detected, to)?
    } else {
        match source {
            RejectionSource::Agnostic => agnostic_terms(exp, to),
            RejectionSource::FromPathways => pathway_terms(exp, to)?,
        }
    };
    if geometry {
        // The one rule (pair terms always; never decided by the rounding of a beam component).
        let mut kept = Vec::with_capacity(terms.len());
        for t in terms {
            if exp.passes_geometry(&t.signature)? {
                kept.push(t);
            }
        }
        terms = kept;
    }
    terms.sort_by(|a, b| {
        (a.order.cmp(&b.order))
            .then_with(|| a.signature.weight().cmp(&b.signature.weight()))
            .then_with(|| a.signature.cmp(&b.signature))
    });
    Ok(terms)
}

/// The origin of an agnostic-set term: the reference alone, a scatter pair, or its order.
pub fn agnostic_origin(exp: &Experiment, b: &Signature) -> Origin {
    if b.weight() == 0 {
        return Origin::Unmodulated;
    }
    if b.weight() == 2 {
        let plus = b.0.iter().position(|&x| x > 0).unwrap_or(0);
        let minus = b.0.iter().position(|&x| x < 0).unwrap_or(0);
        let name = |j: usize| exp.fields[j].name.clone();
        return match exp.detector_field() {
            Some(d) if d == minus => Origin::Scatter {
                pulse: name(plus),
                onto: name(d),
            },
            Some(d) if d == plus => Origin::Scatter {
                pulse: name(minus),
                onto: name(d),
            },
            _ => Origin::PulsePair {
                plus: name(plus),
                minus: name(minus),
            },
        };
    }
    Origin::Agnostic {
        order: exp.term_order(b) as u32,
    }
}

fn agnostic_terms(exp: &Experiment, to: u32) -> Vec<Term> {
    let radius = to + u32::from(exp.has_reference());
    sum_zero_ball(exp.fields.len(), radius)
        .into_iter()
        .map(|b| Term {
            order: exp.term_order(&b) as u32,
            origin: agnostic_origin(exp, &b),
            signature: b,
        })
        .collect()
}

/// Enumerated pathways through `to` and their conjugates (real detection), after the terms
/// every optical experiment has whatever its level scheme: the reference alone and every pair.
fn pathway_terms(exp: &Experiment, to: u32) -> Result<Vec<Term>, ModelError> {
    let mut terms: Vec<Term> = sum_zero_ball(exp.fields.len(), 2)
        .into_iter()
        .map(|b| Term {
            order: exp.term_order(&b) as u32,
            origin: agnostic_origin(exp, &b),
            signature: b,
        })
        .filter(|t| t.order <= to)
        .collect();
    let mut index: HashMap<Signature, usize> = terms
        .iter()
        .enumerate()
        .map(|(i, t)| (t.signature.clone(), i))
        .collect();
    let real = exp.detection.is_real();
    for_each_pathway(exp, Scope::Through(to), |p| {
        let order = p.interactions.len() as u32;
        let mut add = |b: Signature, conjugate: bool| match index.get(&b) {
            Some(&i) => {
                if let Origin::Pathway { order: o, .. } = &mut terms[i].origin {
                    *o = (*o).min(order);
                    terms[i].order = terms[i].order.min(order);
                }
            }
            None => {
                index.insert(b.clone(), terms.len());
                terms.push(Term {
                    signature: b,
                    order,
                    origin: Origin::Pathway {
                        class: p.class,
                        order,
                        conjugate,
                    },
                });
            }
        };
        add(p.signature.clone(), false);
        if real {
            add(p.signature.conjugate(), true);
        }
    })?;
    Ok(terms)
}

/// NMR: every coherence path `0 -> p_1 -> .. -> detected`, its order the coherence level
/// `max(|p_i|, |detected|)`, for levels up to `to`.
fn nmr_terms(exp: &Experiment, detected: i32, to: u32) -> Result<Vec<Term>, ModelError> {
    let inner = exp.pulse_indices().len().saturating_sub(1);
    let base = detected.unsigned_abs();
    let level = to.max(base) as i32;
    let width = (2 * level + 1) as u64;
    let total = width.checked_pow(inner as u32).unwrap_or(u64::MAX);
    let mut terms: HashMap<Signature, Term> = HashMap::new();
    for code in 0..total {
        let mut path = vec![0i32];
        let mut c = code;
        for _ in 0..inner {
            path.push((c % width) as i32 - level);
            c /= width;
        }
        path.push(detected);
        let order = path
            .iter()
            .map(|p| p.unsigned_abs())
            .max()
            .unwrap_or(0)
            .max(base);
        let b = coherence_signature(exp, &path)?;
        let t = terms.entry(b.clone()).or_insert(Term {
            signature: b,
            order,
            origin: Origin::Pathway {
                class: crate::model::PathwayClass::Other,
                order,
                conjugate: false,
            },
        });
        if order < t.order {
            t.order = order;
            t.origin = Origin::Pathway {
                class: crate::model::PathwayClass::Other,
                order,
                conjugate: false,
            };
        }
    }
    Ok(terms.into_values().collect())
}
