//! Choosing among equal-length lattice designs and ordering the steps: fewer distinct phases
//! per field first, then the lowest leakage under a phase-calibration error. The step order
//! against slow drift is chosen by [`crate::export::step_order::drift_order_for`].

use crate::design::lattice::Lattice;
use num_complex::Complex64;
use num_rational::Ratio;
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

/// Pick the best of several equal-length candidates; returns its index and the rule that
/// decided (a sentence for the report).
pub fn pick(scores: &[Score]) -> (usize, String) {
    if scores.len() <= 1 {
        return (
            0,
            "the search found one design of this length (unit-modulus weights, noise efficiency 1)"
                .into(),
        );
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
    let rule = if best.max_phases != second.max_phases || best.sum_phases != second.sum_phases {
        format!(
            "among {} equal-length lattice designs (all unit-modulus, noise efficiency 1), the one with the fewest distinct phases per field ({} at most, {} in all)",
            scores.len(), best.max_phases, best.sum_phases
        )
    } else if (best.calibration_leak - second.calibration_leak).abs() > 1e-12 {
        format!(
            "among {} equal-length lattice designs with equally few phases, the one with the lowest leakage under a 1 % phase-calibration error (|F| <= {:.2e})",
            scores.len(), best.calibration_leak
        )
    } else {
        format!("{} equal-length lattice designs tie on every rule; the first in the search's canonical order", scores.len())
    };
    (idx[0], rule)
}
