//! Pathway classes: rephasing / non-rephasing / double-quantum from the coherences in the
//! delays, and GSB / SE / ESA from the waiting-time population (conventions in
//! `docs/conventions.md`).

use super::{Element, Interaction};
use crate::model::{Detection, LevelScheme, PathwayClass, PopulationClass};

/// Fill `out` with the element in each delay: after the last interaction of each pulse block
/// (time-ordered pulses) or after every interaction (overlapping pulses).
pub(super) fn delay_elements(
    interactions: &[Interaction],
    elements: &[Element],
    overlap: bool,
    out: &mut Vec<Element>,
) {
    out.clear();
    for (i, e) in elements.iter().enumerate() {
        let block_ends = overlap
            || i + 1 == interactions.len()
            || interactions[i + 1].field != interactions[i].field;
        if block_ends {
            out.push(*e);
        }
    }
}

/// Classify a pathway from its delay elements.
///
/// With `d_k` the excitation difference (ket manifold minus bra manifold) in delay `k`, and
/// three delays before detection: double-quantum when `|d_1| = 1` and `d_2 = 2 d_1`;
/// rephasing when `d_2 = 0` and `d_3 = -d_1`; non-rephasing when `d_2 = 0` and `d_3 = d_1`.
/// The rule is invariant under complex conjugation, so a pathway and its partner share a class.
pub(super) fn classify(
    levels: &LevelScheme,
    delays: &[Element],
    elements: &[Element],
    detection: &Detection,
) -> (PathwayClass, Option<PopulationClass>) {
    let diff = |e: &Element| i64::from(levels.manifold(e.ket)) - i64::from(levels.manifold(e.bra));
    let mut d: Vec<i64> = delays.iter().map(diff).collect();
    let mut waiting_candidates = delays.to_vec();
    if matches!(detection, Detection::Population) {
        // The final population is the detected quantity, not a delay of the response.
        d.pop();
        waiting_candidates.pop();
    }
    let class = if d.len() == 3 && d[0].abs() == 1 {
        if d[1] == 2 * d[0] {
            PathwayClass::DoubleQuantum
        } else if d[1] == 0 && d[2] == -d[0] {
            PathwayClass::Rephasing
        } else if d[1] == 0 && d[2] == d[0] {
            PathwayClass::NonRephasing
        } else {
            PathwayClass::Other
        }
    } else {
        PathwayClass::Other
    };
    if class == PathwayClass::DoubleQuantum {
        return (class, None);
    }
    let waiting = d
        .iter()
        .position(|&x| x == 0)
        .map(|w| waiting_candidates[w]);
    let pop = waiting.map(|w| {
        let m = levels.manifold(w.ket);
        if m == 0 {
            PopulationClass::Gsb
        } else {
            let higher = elements
                .iter()
                .any(|e| levels.manifold(e.ket) > m || levels.manifold(e.bra) > m);
            if higher {
                PopulationClass::Esa
            } else {
                PopulationClass::Se
            }
        }
    });
    (class, pop)
}
