//! Terms no phase cycle can remove, stated in words wherever a kept signal is affected
//! (domain.md section 4): scatter pairs with the wanted signature, incoherent mixing in
//! population detection, higher orders with the same signature, and wanted terms the beam
//! geometry never lets reach the detector, and pathways out of pulse order while pulses
//! overlap.

use crate::model::{Detection, Experiment, FieldKind};
use crate::pathways::ResolvedSignal;

/// Caveats for the wanted outputs of an experiment, one sentence each.
pub fn caveats(exp: &Experiment, outputs: &[ResolvedSignal]) -> Vec<String> {
    let mut out = Vec::new();
    let heterodyne = matches!(exp.detection, Detection::Emission | Detection::PumpProbe);
    for o in outputs {
        for t in &o.kept {
            if !exp.is_phase_matched(t) {
                out.push(format!(
                    "output `{}` keeps {t}, which this beam geometry does not phase-match: it never reaches the detector; check the beam directions or drop it",
                    o.name
                ));
            }
            let pulses: Vec<usize> = (0..t.len())
                .filter(|&j| t.0[j] != 0 && exp.fields[j].kind == FieldKind::Pulse)
                .collect();
            let pair_of_pulses = t.weight() == 2 && pulses.len() == 2 && heterodyne;
            if pair_of_pulses
                && !matches!(exp.detection, Detection::PumpProbe if pulses.contains(&exp.detector_field().unwrap_or(usize::MAX)))
            {
                let (a, b) = if t.0[pulses[0]] > 0 {
                    (pulses[0], pulses[1])
                } else {
                    (pulses[1], pulses[0])
                };
                out.push(format!(
                    "output `{}` keeps {t}, which is also the signature of scatter of pulse {} beating with scatter of pulse {} on the detector; no phase cycle removes it (block or chop a beam, or use a geometry that keeps scatter out)",
                    o.name, exp.fields[a].name, exp.fields[b].name
                ));
            }
        }
    }
    out.extend(reordered_note(exp, outputs));
    if matches!(exp.detection, Detection::Population) && exp.order >= 4 && !outputs.is_empty() {
        out.push("population detection: incoherent mixing (products of two lower-order excitations that later interact) carries exactly the signatures of the wanted signals; no phase cycle removes it (vary the intensity or the sample density to separate it)".into());
    }
    if !outputs.is_empty() && !matches!(exp.detection, Detection::Nmr { .. }) {
        out.push(format!(
            "terms of order {} and up that carry a kept signature itself (the wanted pathways with extra interaction pairs) pass with the wanted signals whatever order the cycle cancels through; separate them by their intensity dependence",
            exp.order + 2
        ));
    }
    out
}

/// The overlap groups in words, e.g. `1, 2; 4, 5`.
pub fn overlap_label(exp: &Experiment) -> String {
    exp.overlap
        .groups
        .iter()
        .map(|g| {
            g.iter()
                .map(|&j| exp.fields[j].name.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        })
        .collect::<Vec<_>>()
        .join("; ")
}

/// One sentence for every output whose kept signatures also carry pathways out of pulse
/// order (overlapping pulses), grouped: `None` when there are none.
pub fn reordered_note(exp: &Experiment, outputs: &[ResolvedSignal]) -> Option<String> {
    let parts: Vec<String> = outputs
        .iter()
        .filter(|o| !o.reordered.is_empty())
        .map(|o| {
            let mut sigs: Vec<String> = o.reordered.iter().map(|r| r.kept.to_string()).collect();
            sigs.dedup();
            let total: u64 = o.reordered.iter().map(|r| r.count).sum();
            let conj: u64 = o
                .reordered
                .iter()
                .filter(|r| r.via_conjugate)
                .map(|r| r.count)
                .sum();
            let conj = if conj > 0 {
                format!(", {conj} as complex conjugates")
            } else {
                String::new()
            };
            format!("`{}` {} by {total}{conj}", o.name, sigs.join(" "))
        })
        .collect();
    if parts.is_empty() {
        return None;
    }
    Some(format!(
        "while pulses overlap (groups: {}), pathways with interactions out of pulse order also carry the kept signatures ({}); no phase cycle separates them from the time-ordered ones (they fade as the pulses separate in time)",
        overlap_label(exp),
        parts.join("; ")
    ))
}
