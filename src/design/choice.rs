//! Stage: choosing among equal-length lattice designs: fewer distinct phases per field first,
//! then the lowest leakage under a phase-calibration error.

use super::lattice_stage::LatticeFound;
use crate::design::lattice::Lattice;
use num_complex::Complex64;
use num_rational::Ratio;
use serde::Serialize;
use std::f64::consts::PI;

/// Relative phase-scale error used to rank designs by tolerance (1 %).
pub const CALIBRATION_ERROR: f64 = 0.01;

/// The score of one candidate lattice (smaller is better, compared in field order).
#[derive(Clone, Debug, PartialEq)]
pub struct Score {
    /// Largest number of distinct phases on any one field.
    pub max_phases: u64,
    /// Total distinct phases over the fields.
    pub sum_phases: u64,
    /// Worst rejected-term leakage |F| under a 1 % phase-scale error.
    pub calibration_leak: f64,
}

fn signed_turn(r: &Ratio<i64>) -> f64 {
    let x = *r.numer() as f64 / *r.denom() as f64;
    if x > 0.5 {
        x - 1.0
    } else {
        x
    }
}

/// Leakage of every `rejected` term under phases scaled by `1 + eps` (phases taken in
/// (-1/2, 1/2] turn), weights `exp(-2 pi i t.phi)/N` from the unscaled phases.
pub fn scaled_leak(phases: &[Vec<Ratio<i64>>], t: &[i64], rejected: &[Vec<i64>], eps: f64) -> f64 {
    let n = phases.len() as f64;
    let ph: Vec<Vec<f64>> = phases
        .iter()
        .map(|p| p.iter().map(signed_turn).collect())
        .collect();
    let w: Vec<Complex64> = ph
        .iter()
        .map(|p| {
            let tp: f64 = p.iter().zip(t).map(|(a, &b)| a * b as f64).sum();
            Complex64::from_polar(1.0 / n, -2.0 * PI * tp)
        })
        .collect();
    rejected
        .iter()
        .map(|b| {
            ph.iter()
                .zip(&w)
                .map(|(p, wm)| {
                    let bp: f64 = p.iter().zip(b).map(|(a, &x)| a * x as f64).sum();
                    wm * Complex64::from_polar(1.0, 2.0 * PI * bp * (1.0 + eps))
                })
                .sum::<Complex64>()
                .norm()
        })
        .fold(0.0, f64::max)
}

/// Score a lattice for output reference `t` against the rejected set.
pub fn score(l: &Lattice, t: &[i64], rejected: &[Vec<i64>]) -> Score {
    let phases = l.dual_points();
    let counts: Vec<u64> = (0..l.dims()).map(|j| l.distinct_phases(j)).collect();
    Score {
        max_phases: counts.iter().copied().max().unwrap_or(1),
        sum_phases: counts.iter().sum(),
        calibration_leak: scaled_leak(&phases, t, rejected, CALIBRATION_ERROR),
    }
}

/// Which rule picked the design among equal-length candidates.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "rule")]
pub enum ChoiceRule {
    /// The search found one design of this length.
    Only,
    /// Fewest distinct phases per field (then in all).
    FewestPhases {
        /// Candidates compared.
        candidates: usize,
        /// Largest count on one field.
        max_phases: u64,
        /// Total over the fields.
        sum_phases: u64,
    },
    /// Equally few phases; lowest leakage under a 1 % phase-calibration error.
    Calibration {
        /// Candidates compared.
        candidates: usize,
        /// Its worst |F| under the error.
        leak: f64,
    },
    /// Every rule tied; the first in the search's canonical order.
    Tie {
        /// Candidates compared.
        candidates: usize,
    },
    /// A weighted step set shorter than every lattice design.
    WeightedShorter,
    /// A weighted step set where no lattice design exists within the limits.
    WeightedOnly,
}

/// Pick the best of several equal-length candidates; returns its index and the rule that
/// decided.
pub fn pick(scores: &[Score]) -> (usize, ChoiceRule) {
    if scores.len() <= 1 {
        return (0, ChoiceRule::Only);
    }
    let mut idx: Vec<usize> = (0..scores.len()).collect();
    idx.sort_by(|&a, &b| {
        let (x, y) = (&scores[a], &scores[b]);
        x.max_phases
            .cmp(&y.max_phases)
            .then(x.sum_phases.cmp(&y.sum_phases))
            .then(
                x.calibration_leak
                    .partial_cmp(&y.calibration_leak)
                    .unwrap_or(std::cmp::Ordering::Equal),
            )
            .then(a.cmp(&b))
    });
    let (best, second) = (&scores[idx[0]], &scores[idx[1]]);
    let candidates = scores.len();
    let rule = if best.max_phases != second.max_phases || best.sum_phases != second.sum_phases {
        ChoiceRule::FewestPhases {
            candidates,
            max_phases: best.max_phases,
            sum_phases: best.sum_phases,
        }
    } else if (best.calibration_leak - second.calibration_leak).abs() > 1e-12 {
        ChoiceRule::Calibration {
            candidates,
            leak: best.calibration_leak,
        }
    } else {
        ChoiceRule::Tie { candidates }
    };
    (idx[0], rule)
}

/// Stage: choose among the equal-length alternatives of a found design (scored for the first
/// output's reference against the rejected set).
pub fn choose(found: &LatticeFound) -> (Lattice, ChoiceRule) {
    let p = &found.problem;
    let t0 = &p.outputs[0].kept[0];
    if found.alternatives.len() > 1 {
        let scores: Vec<Score> = found
            .alternatives
            .iter()
            .map(|l| score(l, t0, &p.rejected))
            .collect();
        let (i, rule) = pick(&scores);
        (found.alternatives[i].clone(), rule)
    } else {
        (found.design.lattice.clone(), ChoiceRule::Only)
    }
}
