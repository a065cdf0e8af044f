//! Snapping a table's cells to exact values at bind time, using each cell's written precision
//! ([`crate::cycle::WrittenForm`]): a cell written exactly stays as it is; a decimal is snapped
//! to the simplest exact value inside the interval its digits stand for
//! ([`crate::exact::snap`]); a cell that does not snap keeps its centre and half-width (radius),
//! which the numeric evaluator turns into a rigorous bound. Every snap that changes the written
//! value is recorded so that the report can show it.

use super::bind::SnapPolicy;
use crate::cycle::{text::format_phase, Cycle, Phase, Weight, WrittenForm};
use crate::exact::snap::{snap_phase, snap_weight, DOUBLE_FLOOR};
use crate::exact::{reduce_turn, Turns};
use serde::Serialize;

/// One snapped cell, for the report.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Snap {
    /// 1-based step.
    pub step: usize,
    /// The column: a field name or `w:OUTPUT`.
    pub column: String,
    /// The value as written (turns for phases).
    pub written: String,
    /// The exact value it was snapped to.
    pub exact: String,
}

/// Phases of the bound cycle: the (snapped) phases, the half-width in turns left on each cell
/// (0 when exact), and the snaps made.
pub struct SnappedPhases {
    /// Per step, per experiment field.
    pub phases: Vec<Vec<Phase>>,
    /// Per step, per experiment field: remaining half-width in turns.
    pub half_width: Vec<Vec<f64>>,
    /// Snaps that changed a written value.
    pub snaps: Vec<Snap>,
    /// Number of cells left unsnapped (with an interval).
    pub unsnapped: usize,
}

/// Snap the phases of `cycle`, column `col[j]` feeding experiment field `j` (`None`: an
/// omitted fixed field, phase 0). `grid[c]` is the declared grid of cycle column `c`.
pub fn snap_phases(
    cycle: &Cycle,
    col: &[Option<usize>],
    grid: Option<&[u32]>,
    policy: &SnapPolicy,
) -> SnappedPhases {
    let form = cycle.meta.written.as_ref();
    let mut out = SnappedPhases {
        phases: Vec::with_capacity(cycle.len()),
        half_width: Vec::with_capacity(cycle.len()),
        snaps: Vec::new(),
        unsnapped: 0,
    };
    for (m, row) in cycle.steps.iter().enumerate() {
        let mut ps = Vec::with_capacity(col.len());
        let mut hs = Vec::with_capacity(col.len());
        for c in col {
            let Some(c) = *c else {
                ps.push(Phase::Exact(Turns::from_integer(0)));
                hs.push(0.0);
                continue;
            };
            let p = &row[c];
            let written = WrittenForm::phase_half_width(form, m, c, p);
            let g = grid.and_then(|g| g.get(c)).map(|&g| u64::from(g));
            let (q, h) = snap_one_phase(p, written, g, policy);
            if h > 0.0 {
                out.unsnapped += 1;
            } else if q != *p {
                out.snaps.push(Snap {
                    step: m + 1,
                    column: cycle.fields[c].clone(),
                    written: format!("{} turn", crate::numfmt::compact(p.turns_f64())),
                    exact: format!("{} turn", format_phase(&q)),
                });
            }
            ps.push(q);
            hs.push(h);
        }
        out.phases.push(ps);
        out.half_width.push(hs);
    }
    out
}

/// One phase: the snapped (or kept) phase and the half-width left on it.
fn snap_one_phase(
    p: &Phase,
    written: Option<f64>,
    grid: Option<u64>,
    policy: &SnapPolicy,
) -> (Phase, f64) {
    if let (Phase::Exact(_), Some(h)) = (p, written) {
        if h == 0.0 || !policy.enabled {
            return (p.clone(), 0.0);
        }
    }
    let x = p.turns_f64();
    // Cells with written digits: their interval (never below double precision). Cells marked
    // approximate without one: the policy's tolerance, without the simplicity test.
    let (h, guard) = match written {
        Some(h) => (h.max(DOUBLE_FLOOR * x.abs().max(1.0)), true),
        None => (policy.tolerance_turns, false),
    };
    if policy.enabled {
        if let Some(t) = snap_phase(x, h, policy.max_denominator, grid, guard) {
            return (Phase::Exact(reduce_turn(t)), 0.0);
        }
    }
    let h = if written.is_some() { h } else { 0.0 };
    (Phase::Approx(x.rem_euclid(1.0)), h)
}

/// Weights of one output: the (snapped) weights, the radius left on each, and the snaps made.
pub struct SnappedWeights {
    /// One per step.
    pub weights: Vec<Weight>,
    /// Remaining radius per step (0 when exact).
    pub radius: Vec<f64>,
    /// Snaps that changed a written value.
    pub snaps: Vec<Snap>,
}

/// Relative resolution assumed for a weight marked approximate (`~`) without written digits:
/// four significant digits.
pub const APPROX_WEIGHT_RESOLUTION: f64 = 5e-4;

/// Snap the explicit weights of output `o` of `cycle`.
pub fn snap_weights(cycle: &Cycle, o: usize, policy: &SnapPolicy) -> SnappedWeights {
    let form = cycle.meta.written.as_ref();
    let out = &cycle.outputs[o];
    let col_max = out
        .weights
        .iter()
        .map(|w| w.to_complex().norm())
        .fold(0.0, f64::max);
    let mut s = SnappedWeights {
        weights: Vec::with_capacity(out.weights.len()),
        radius: Vec::with_capacity(out.weights.len()),
        snaps: Vec::new(),
    };
    for (m, w) in out.weights.iter().enumerate() {
        let written = WrittenForm::weight_radius(form, o, m, w);
        let exact_as_written = matches!(w, Weight::Exact(_)) && written == Some(0.0);
        if exact_as_written || (matches!(w, Weight::Exact(_)) && !policy.enabled) {
            s.weights.push(w.clone());
            s.radius.push(0.0);
            continue;
        }
        let z = w.to_complex();
        let r = match written {
            Some(r) => r.max(DOUBLE_FLOOR * col_max),
            None => APPROX_WEIGHT_RESOLUTION * z.norm().max(DOUBLE_FLOOR * col_max),
        };
        match snap_weight(z, r).filter(|_| policy.enabled) {
            Some((c, _)) => {
                let changed = !matches!(w, Weight::Exact(x) if *x == c);
                if changed {
                    s.snaps.push(Snap {
                        step: m + 1,
                        column: format!("w:{}", out.name),
                        written: format!(
                            "{}{}{}i",
                            crate::numfmt::compact(z.re),
                            if z.im < 0.0 { "-" } else { "+" },
                            crate::numfmt::compact(z.im.abs())
                        ),
                        exact: crate::cycle::text::format_weight(&Weight::Exact(c.clone())),
                    });
                }
                s.weights.push(Weight::Exact(c));
                s.radius.push(0.0);
            }
            None => {
                s.weights.push(Weight::Approx(z));
                s.radius.push(r);
            }
        }
    }
    s
}
