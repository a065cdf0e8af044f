//! NMR coherence-transfer pathways: every sequence of coherence orders from 0 to the detected
//! order, each pulse changing the order by any amount within the spin system's range.

use super::{Element, Pathway};
use crate::model::{Detection, Experiment, PathwayClass};
use crate::signature::Signature;

/// Visit every coherence-transfer pathway; pulse `j` contributes `-dp_j` to the signature and
/// the receiver enters with the detected order (so the signature sums to zero).
pub(super) fn for_each_coherence_path<F: FnMut(&Pathway)>(exp: &Experiment, mut visit: F) {
    let Detection::Nmr {
        max_coherence,
        detected,
    } = exp.detection
    else {
        return;
    };
    let pulses = exp.pulse_indices();
    if pulses.is_empty() {
        return;
    }
    let mut path = Pathway {
        interactions: Vec::new(),
        elements: Vec::new(),
        delays: Vec::new(),
        signature: Signature::zero(exp.fields.len()),
        sign: 1,
        class: PathwayClass::Other,
        population_class: None,
        final_element: Element { ket: 0, bra: 0 },
        weight: 1.0,
        coherence_orders: vec![0; pulses.len() + 1],
        conjugate: false,
        time_ordered: true,
    };
    if let Some(r) = exp.reference_index() {
        path.signature.0[r] = i64::from(detected);
    }
    walk(&pulses, 0, max_coherence, detected, &mut path, &mut visit);
}

fn walk<F: FnMut(&Pathway)>(
    pulses: &[usize],
    j: usize,
    max: i32,
    detected: i32,
    path: &mut Pathway,
    visit: &mut F,
) {
    let before = path.coherence_orders[j];
    let last = j + 1 == pulses.len();
    let range: Vec<i32> = if last {
        vec![detected]
    } else {
        (-max..=max).collect()
    };
    for p in range {
        path.coherence_orders[j + 1] = p;
        path.signature.0[pulses[j]] = -i64::from(p - before);
        if last {
            visit(path);
        } else {
            walk(pulses, j + 1, max, detected, path, visit);
        }
    }
    path.signature.0[pulses[j]] = 0;
}
