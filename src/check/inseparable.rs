//! Inseparable pairs, explained in words: (a) unwanted pathways sharing a kept signature
//! (physical: no phase cycle on any grid helps), (b) leaks differing from a kept term only on
//! fixed fields (no cycle with those fields fixed helps), (c) leaks differing from a kept term
//! by a multiple of the phase grid (aliasing: a finer grid helps).

use super::bind::{BoundCycle, BoundOutput};
use super::{ConjugateTerm, Leak};
use crate::model::Experiment;
use crate::signature::Signature;
use serde::Serialize;

/// Why a pair cannot be separated.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum InseparableKind {
    /// Same signature (directly or through the conjugate of a real signal): no phase cycle.
    Physical,
    /// Differ only on fixed fields: no cycle that keeps those fields fixed.
    FixedFields,
    /// Differ by a multiple of the grid: no cycle on this grid.
    GridAliasing,
}

/// One inseparable pair.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Inseparable {
    /// The kind.
    pub kind: InseparableKind,
    /// The kept signature.
    pub kept: Signature,
    /// The unwanted signature (or, for physical pairs, the signature the unwanted pathways
    /// arrive with).
    pub other: Signature,
    /// What happens, in words.
    pub explanation: String,
    /// What would separate them.
    pub remedy: String,
}

/// All inseparable pairs of an output.
pub fn find(
    exp: &Experiment,
    bound: &BoundCycle,
    out: &BoundOutput,
    leaks: &[Leak],
    conjugates: &[ConjugateTerm],
) -> Vec<Inseparable> {
    let names = exp.field_names();
    let mut v = Vec::new();
    for c in &out.contamination {
        let own = if c.via_conjugate {
            c.kept.conjugate()
        } else {
            c.kept.clone()
        };
        let explanation = if c.via_conjugate {
            format!(
                "{} {} pathway(s) have signature {own}; the detected signal is real, so their complex conjugate arrives at {} with exactly the phase dependence of the kept term: no phase cycle on any grid separates them",
                c.count, c.class.short(), c.kept
            )
        } else {
            format!(
                "{} {} pathway(s) share the kept signature {}: no phase cycle on any grid separates them",
                c.count, c.class.short(), c.kept
            )
        };
        let remedy = if c.via_conjugate {
            "keep both classes (e.g. R + NR, the absorptive spectrum), or separate them by another handle: non-collinear beam geometry with a separate LO, a delayed LO with Fourier filtering (spectral interferometry), or chopping/pulse-order reversal".into()
        } else {
            "use another handle: intensity dependence (order), chopping, pulse-order reversal, or beam geometry".into()
        };
        v.push(Inseparable {
            kind: super::InseparableKind::Physical,
            kept: c.kept.clone(),
            other: own,
            explanation,
            remedy,
        });
    }
    let grids: Vec<Option<u64>> = (0..names.len()).map(|j| bound.grid(j)).collect();
    let candidates = leaks.iter().map(|l| &l.signature).chain(
        conjugates
            .iter()
            .filter(|c| !c.cancelled)
            .map(|c| &c.signature),
    );
    for b in candidates {
        for t in &out.kept {
            let d = b.minus(t);
            let support: Vec<usize> = (0..d.len()).filter(|&j| d.0[j] != 0).collect();
            if support.iter().all(|&j| bound.fixed[j]) {
                let f: Vec<&str> = support.iter().map(|&j| names[j].as_str()).collect();
                v.push(Inseparable {
                    kind: InseparableKind::FixedFields,
                    kept: t.clone(),
                    other: b.clone(),
                    explanation: format!("{b} differs from the kept {t} only on the fixed field(s) {}: every cycle that holds them fixed passes both alike", f.join(", ")),
                    remedy: format!("cycle the phase of {} (set phase = \"cycled\" in the experiment)", f.join(" or ")),
                });
                break;
            }
            let aliased = (0..d.len()).all(|j| {
                bound.fixed[j] || matches!(grids[j], Some(m) if d.0[j].rem_euclid(m as i64) == 0)
            });
            if aliased {
                let worst: Vec<String> = support
                    .iter()
                    .filter(|&&j| !bound.fixed[j])
                    .map(|&j| {
                        format!(
                            "{} (grid {}, difference {})",
                            names[j],
                            grids[j].unwrap_or(1),
                            d.0[j]
                        )
                    })
                    .collect();
                v.push(Inseparable {
                    kind: InseparableKind::GridAliasing,
                    kept: t.clone(),
                    other: b.clone(),
                    explanation: format!("{b} - {t} = {d} is a multiple of the phase grid on every cycled field: aliasing, every cycle on this grid passes {b} like {t}"),
                    remedy: format!("use a finer grid (more than |difference| steps per turn, not dividing it) on {}", worst.join(", ")),
                });
                break;
            }
        }
    }
    v
}
