//! Pathway classes: rephasing / non-rephasing / double-quantum from the coherences in the
//! delays, and GSB / SE / ESA from the first delay that holds a population (conventions in
//! `docs/conventions.md`).

use super::{Element, Interaction};
use crate::model::{Detection, LevelScheme, PathwayClass, PopulationClass};

/// Fill `ends` with the index (into the element list) of the element held in each delay:
/// after each run of interactions with one pulse, where the next interaction belongs to
/// another field (for time-ordered pulses, after each pulse's last interaction; with
/// overlapping pulses a pulse may have several runs).
pub(super) fn delay_ends(interactions: &[Interaction], ends: &mut Vec<usize>) {
    ends.clear();
    for i in 0..interactions.len() {
        let block_ends =
            i + 1 == interactions.len() || interactions[i + 1].field != interactions[i].field;
        if block_ends {
            ends.push(i);
        }
    }
}

/// Classify a pathway from its elements and the indices of the elements held in its delays.
///
/// With `d_k` the excitation difference (ket manifold minus bra manifold) in delay `k`, and
/// three delays before detection: double-quantum when `|d_1| = 1` and `d_2 = 2 d_1`;
/// rephasing when `d_2 = 0` and `d_3 = -d_1`; non-rephasing when `d_2 = 0` and `d_3 = d_1`.
/// The population class comes from the first delay with `d_k = 0`, whatever the coherence
/// class (a double-quantum pathway can hold a population in a later delay): GSB in the ground
/// manifold, ESA when a higher manifold is reached afterwards, SE otherwise.
/// The rule is invariant under complex conjugation, so a pathway and its partner share a class.
pub(super) fn classify(
    levels: &LevelScheme,
    elements: &[Element],
    ends: &[usize],
    detection: &Detection,
) -> (PathwayClass, Option<PopulationClass>) {
    let diff = |e: &Element| i64::from(levels.manifold(e.ket)) - i64::from(levels.manifold(e.bra));
    let mut ends = ends;
    if matches!(detection, Detection::Population) {
        // The final population is the detected quantity, not a delay of the response.
        ends = &ends[..ends.len().saturating_sub(1)];
    }
    let d: Vec<i64> = ends.iter().map(|&i| diff(&elements[i])).collect();
    let class = coherence_class(&d);
    let pop = d.iter().position(|&x| x == 0).map(|k| {
        let at = ends[k];
        let m = levels.manifold(elements[at].ket);
        let higher_afterwards = elements[at + 1..]
            .iter()
            .any(|e| levels.manifold(e.ket) > m || levels.manifold(e.bra) > m);
        if m == 0 {
            PopulationClass::Gsb
        } else if higher_afterwards {
            PopulationClass::Esa
        } else {
            PopulationClass::Se
        }
    });
    (class, pop)
}

/// R / NR / 2Q / other from the excitation differences in the delays.
fn coherence_class(d: &[i64]) -> PathwayClass {
    if d.len() != 3 || d[0].abs() != 1 {
        return PathwayClass::Other;
    }
    if d[1] == 2 * d[0] {
        PathwayClass::DoubleQuantum
    } else if d[1] == 0 && d[2] == -d[0] {
        PathwayClass::Rephasing
    } else if d[1] == 0 && d[2] == d[0] {
        PathwayClass::NonRephasing
    } else {
        PathwayClass::Other
    }
}
