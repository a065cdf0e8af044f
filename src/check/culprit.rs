//! Naming the culprit of a leaking table: the smallest change that makes the output clean.
//! Tried in order: one phase cell set to another value of its field (the values other steps
//! use, or the points of the field's grid), keeping the step's weight or re-deriving it; one
//! weight set to the value the other steps' pattern gives; a duplicated step replaced by a step
//! the cycle's group lacks; a missing step added. Candidates are screened in floating point
//! (each change touches one step, so `F(b)` is updated, not recomputed) and every reported
//! correction is confirmed by a full check of the corrected table (exact when the table is).

use super::bind::{BoundCycle, BoundOutput};
use super::evaluate::Evaluator;
use crate::cycle::{Phase, Weight, WeightSource};
use crate::exact::{reduce_turn, Cyclo, Turns};
use crate::selection::Term;
use num_complex::Complex64;
use num_traits::{CheckedAdd, CheckedMul};
use serde::Serialize;

/// Most corrections listed.
const MAX_LISTED: usize = 5;
/// Largest number of candidate changes screened (limits before work).
const MAX_CANDIDATES: usize = 200_000;
/// Largest grid (steps per turn) whose points are tried as corrections.
const MAX_GRID_TRIED: u64 = 360;

/// One explanation of a leak.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Suspect {
    /// 1-based steps involved.
    pub steps: Vec<usize>,
    /// `wrong phase`, `wrong weight`, `duplicate step` or `missing step`.
    pub kind: String,
    /// The proposed correction in words (the table is clean with it).
    pub correction: String,
}

/// A candidate change: step `step` (or a new step when `step == N`) gets `row` and, for
/// explicit weights, `weight`.
#[derive(Clone)]
pub(super) struct Change {
    pub step: usize,
    /// The one field changed (a wrong phase), or `None` for a whole-row or weight change.
    pub field: Option<usize>,
    pub row: Vec<Turns>,
    pub weight: Option<Cyclo>,
    pub kind: &'static str,
    pub text: String,
    pub involved: Vec<usize>,
}

fn e(b: &[i64], row: &[f64]) -> Complex64 {
    let x: f64 = b.iter().zip(row).map(|(&bj, p)| bj as f64 * p).sum();
    Complex64::from_polar(1.0, std::f64::consts::TAU * x.rem_euclid(1.0))
}

fn f64_row(row: &[Turns]) -> Vec<f64> {
    row.iter()
        .map(|t| *t.numer() as f64 / *t.denom() as f64)
        .collect()
}

pub(super) fn turn_text(t: &Turns) -> String {
    let t = reduce_turn(*t);
    let deg = *t.numer() as f64 * 360.0 / *t.denom() as f64;
    let deg = format!("{deg:.4}");
    let deg = deg.trim_end_matches('0').trim_end_matches('.');
    if *t.denom() == 1 {
        format!("{} turn ({deg} deg)", t.numer())
    } else {
        format!("{}/{} turn ({deg} deg)", t.numer(), t.denom())
    }
}

/// The weight step `m` would have if it followed the pattern `w = c exp(-2 pi i t.phi)` of the
/// other steps (`c` from the most common value among them), for the new `row`.
pub(super) fn pattern_weight(
    ws: &[Cyclo],
    rows: &[Vec<Turns>],
    t: &[i64],
    skip: usize,
    row: &[Turns],
) -> Option<Cyclo> {
    let tphi = |r: &[Turns]| -> Option<Turns> {
        r.iter()
            .zip(t)
            .try_fold(Turns::from_integer(0), |acc, (p, &tj)| {
                acc.checked_add(&p.checked_mul(&Turns::from_integer(tj))?)
            })
    };
    let scale = |k: usize| -> Option<Cyclo> {
        let a = reduce_turn(tphi(&rows[k])?);
        ws[k]
            .mul(&Cyclo::root_of_unity(u32::try_from(*a.denom()).ok()?, *a.numer()).ok()?)
            .ok()
    };
    let scales: Vec<(usize, Complex64)> = (0..ws.len())
        .filter(|&k| k != skip)
        .filter_map(|k| scale(k).map(|c| (k, c.to_complex())))
        .collect();
    let (k0, _) = scales.iter().max_by_key(|(_, c)| {
        scales
            .iter()
            .filter(|(_, d)| (c - d).norm() <= 1e-9 * c.norm().max(1e-300))
            .count()
    })?;
    let c = scale(*k0)?;
    let a = reduce_turn(tphi(row)?);
    c.mul(&Cyclo::root_of_unity(u32::try_from(*a.denom()).ok()?, -*a.numer()).ok()?)
        .ok()
}

/// The table as exact rows and weights for building candidates: exact cells as they are,
/// unsnapped cells as a fine placeholder fraction (only ever carried along, never proposed).
struct Table {
    rows: Vec<Vec<Turns>>,
    all_exact: bool,
    weights: Option<Vec<Cyclo>>,
}

fn table(bound: &BoundCycle, out: &BoundOutput) -> Table {
    let mut all_exact = true;
    let rows = bound
        .phases
        .iter()
        .map(|r| {
            r.iter()
                .map(|p| match p {
                    Phase::Exact(t) => *t,
                    Phase::Approx(x) => {
                        all_exact = false;
                        let k = (x.rem_euclid(1.0) * (1u64 << 40) as f64).round() as i64;
                        Turns::new(k, 1 << 40)
                    }
                })
                .collect()
        })
        .collect();
    let weights = out.exact_weights();
    Table {
        rows,
        all_exact,
        weights,
    }
}

/// Find the corrections that make output `out` clean; empty when none of the tried kinds does.
pub fn find(
    bound: &BoundCycle,
    names: &[String],
    out: &BoundOutput,
    set: &[Term],
    ev: &Evaluator,
) -> Vec<Suspect> {
    let t = out
        .derived_from
        .clone()
        .or_else(|| out.kept.first().cloned());
    let Some(t) = t else { return Vec::new() };
    let derived = matches!(out.source, WeightSource::FromSignature(_));
    let tab = table(bound, out);
    let changes = candidates(bound, names, &tab, &t.0, derived);
    if changes.len() > MAX_CANDIDATES || changes.len().saturating_mul(set.len()) > 50_000_000 {
        return Vec::new();
    }
    let screen = Screen::new(bound, out, set, ev);
    let mut found = Vec::new();
    for ch in changes {
        if found.len() >= MAX_LISTED {
            break;
        }
        if screen.passes(&ch, derived, &t.0) && confirm(bound, out, set, &ch, derived, &t.0) {
            found.push(Suspect {
                steps: ch.involved.clone(),
                kind: ch.kind.into(),
                correction: ch.text.clone(),
            });
        }
    }
    found
}

/// The candidate changes, cheapest explanations first.
fn candidates(
    bound: &BoundCycle,
    names: &[String],
    tab: &Table,
    t: &[i64],
    derived: bool,
) -> Vec<Change> {
    let rows = &tab.rows;
    let n = rows.first().map_or(0, Vec::len);
    let mut out = Vec::new();
    for j in (0..n).filter(|&j| !bound.fixed[j]) {
        let values = field_values(bound, rows, j);
        for (m, row) in rows.iter().enumerate() {
            for v in &values {
                if *v == row[j] && bound.half_width[m][j] == 0.0 {
                    continue;
                }
                let mut new = row.clone();
                new[j] = *v;
                let follow = match (&tab.weights, derived) {
                    (Some(ws), false) if tab.all_exact => pattern_weight(ws, rows, t, m, &new),
                    _ => None,
                };
                // Keeping the step's weight, then (explicit exact weights only) with the
                // weight that follows the pattern: never the same change twice.
                for weight in std::iter::once(None).chain(follow.map(Some)) {
                    let redo = weight.is_some();
                    out.push(Change {
                        step: m,
                        field: Some(j),
                        text: format!(
                            "step {}, field {}: {} -> {}{}",
                            m + 1,
                            names.get(j).map_or("?", String::as_str),
                            phase_text(&bound.phases[m][j]),
                            turn_text(v),
                            if redo {
                                " (with the weight that follows)"
                            } else {
                                ""
                            }
                        ),
                        weight,
                        row: new.clone(),
                        kind: "wrong phase",
                        involved: vec![m + 1],
                    });
                }
            }
        }
    }
    let Some(ws) = tab.weights.as_ref().filter(|_| tab.all_exact) else {
        return out;
    };
    if !derived {
        for (m, row) in rows.iter().enumerate() {
            if let Some(w) = pattern_weight(ws, rows, t, m, row).filter(|w| *w != ws[m]) {
                out.push(Change {
                    step: m,
                    field: None,
                    text: format!("step {}, weight {} -> {}", m + 1, ws[m], w),
                    weight: Some(w),
                    row: row.clone(),
                    kind: "wrong weight",
                    involved: vec![m + 1],
                });
            }
        }
    }
    out.extend(super::culprit_rows::group_changes(rows, ws, t, derived));
    out
}

fn phase_text(p: &Phase) -> String {
    match p {
        Phase::Exact(t) => turn_text(t),
        Phase::Approx(x) => format!("~{x:.6} turn (~{:.4} deg)", x * 360.0),
    }
}

/// Values tried for field `j`: the values other steps use and the points of the field's grid.
fn field_values(bound: &BoundCycle, rows: &[Vec<Turns>], j: usize) -> Vec<Turns> {
    let mut v: Vec<Turns> = rows.iter().map(|r| reduce_turn(r[j])).collect();
    // The grid of the cells known exactly (placeholders of unsnapped cells excluded).
    let grid = rows
        .iter()
        .zip(&bound.half_width)
        .filter(|(_, h)| h[j] == 0.0)
        .try_fold(1u64, |l, (r, _)| {
            crate::exact::checked_lcm_u64(l, r[j].denom().unsigned_abs())
        });
    if let Some(grid) = grid.filter(|&g| g <= MAX_GRID_TRIED) {
        v.extend((0..grid as i64).map(|k| Turns::new(k, grid as i64)));
    }
    v.sort();
    v.dedup();
    v
}

/// Float screening with an incremental update of `F(b)`.
struct Screen {
    terms: Vec<(Vec<i64>, Complex64, f64)>,
    kept: Vec<(Vec<i64>, Complex64)>,
    rows: Vec<Vec<f64>>,
    w: Vec<Complex64>,
}

impl Screen {
    fn new(bound: &BoundCycle, out: &BoundOutput, set: &[Term], ev: &Evaluator) -> Screen {
        let rows = bound.phases_f64();
        let w: Vec<Complex64> = out.weights.iter().map(Weight::to_complex).collect();
        let kept = &out.kept;
        let sum_abs: f64 = w.iter().map(|x| x.norm()).sum();
        let f = |b: &[i64]| -> Complex64 { rows.iter().zip(&w).map(|(r, wm)| wm * e(b, r)).sum() };
        let terms = set
            .iter()
            .map(|term| {
                let b = &term.signature.0;
                let tol = ev.bound(b).unwrap_or(0.0) + 1e-9 * sum_abs.max(1e-300);
                (b.clone(), f(b), tol)
            })
            .collect();
        let kept = kept.iter().map(|k| (k.0.clone(), f(&k.0))).collect();
        Screen {
            terms,
            kept,
            rows,
            w,
        }
    }

    fn passes(&self, ch: &Change, derived: bool, t: &[i64]) -> bool {
        if ch.step >= self.rows.len() {
            // A new step (and, for derived weights, a new N): left to the full check.
            return true;
        }
        let old = (&self.rows[ch.step], self.w[ch.step]);
        let new_row = match ch.field {
            Some(j) => {
                let mut r = old.0.clone();
                r[j] = f64_row(&ch.row[j..=j])[0];
                r
            }
            None => f64_row(&ch.row),
        };
        let minus_t: Vec<i64> = t.iter().map(|x| -x).collect();
        let new_w = if derived {
            e(&minus_t, &new_row) / self.rows.len() as f64
        } else {
            ch.weight.as_ref().map_or(old.1, Cyclo::to_complex)
        };
        let delta = |b: &[i64]| new_w * e(b, &new_row) - old.1 * e(b, old.0);
        self.terms
            .iter()
            .all(|(b, f, tol)| (f + delta(b)).norm() <= *tol)
            && self.kept.iter().all(|(b, f)| (f + delta(b)).norm() > 1e-6)
    }
}

/// Check the corrected table fully (exact when the table is exact).
fn confirm(
    bound: &BoundCycle,
    out: &BoundOutput,
    set: &[Term],
    ch: &Change,
    derived: bool,
    t: &[i64],
) -> bool {
    let mut b2 = bound.clone();
    let mut o2 = out.clone();
    let row: Vec<Phase> = ch
        .row
        .iter()
        .map(|x| Phase::Exact(reduce_turn(*x)))
        .collect();
    if ch.step >= b2.phases.len() {
        b2.phases.push(row);
        b2.half_width.push(vec![0.0; ch.row.len()]);
        o2.weight_radius.push(0.0);
        o2.weights
            .push(Weight::Exact(ch.weight.clone().unwrap_or_else(|| {
                Cyclo::from_rational(&crate::exact::Q::from_integer(0.into()))
            })));
    } else {
        match ch.field {
            Some(j) => {
                // A value taken from an unsnapped cell keeps that field's precision.
                let h = bound.half_width.iter().map(|r| r[j]).fold(0.0, f64::max);
                b2.phases[ch.step][j] = row[j].clone();
                b2.half_width[ch.step][j] = h;
            }
            None => {
                b2.phases[ch.step] = row;
                b2.half_width[ch.step] = vec![0.0; ch.row.len()];
            }
        }
        if let Some(w) = &ch.weight {
            o2.weights[ch.step] = Weight::Exact(w.clone());
        }
    }
    if derived {
        o2.weights = crate::cycle::weights_from_signature(&b2.phases, t);
        o2.weight_radius = vec![0.0; o2.weights.len()];
    }
    let Ok(ev) = Evaluator::new(&b2, &o2) else {
        return false;
    };
    set.iter()
        .all(|term| ev.is_zero(&term.signature.0).unwrap_or(false))
        && o2.kept.iter().all(|k| !ev.is_zero(&k.0).unwrap_or(true))
}
