//! Stage: the step order against slow drift. Steps are reordered by pairwise-swap descent
//! ([`crate::export::step_order::drift_order_for`]) so that a slow linear drift leaks the
//! largest backgrounds (the selection's reference-alone and scatter terms) least.

use super::Prepared;
use crate::selection::Selection;
use num_complex::Complex64;
use num_rational::Ratio;
use serde::Serialize;

/// The chosen step order and its drift figures.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StepOrder {
    /// Step indices in the order to run them.
    #[serde(skip)]
    pub order: Vec<usize>,
    /// True when the descent changed the natural lattice order.
    pub reordered: bool,
    /// Largest first moment on the backgrounds in natural order, per unit drift per step.
    pub moment_natural: f64,
    /// The same after reordering.
    pub moment_ordered: f64,
}

/// Float weights per step of each output: the sum over `kept` (signatures over the cycled
/// fields) of `exp(-2 pi i t.phi_m) / N`.
pub fn float_weights(phases: &[Vec<Ratio<i64>>], kept: &[Vec<Vec<i64>>]) -> Vec<Vec<Complex64>> {
    let n = phases.len() as f64;
    phases
        .iter()
        .map(|p| {
            kept.iter()
                .map(|ts| {
                    ts.iter()
                        .map(|t| {
                            let tp: f64 = p
                                .iter()
                                .zip(t)
                                .map(|(a, &b)| *a.numer() as f64 / *a.denom() as f64 * b as f64)
                                .sum();
                            Complex64::from_polar(1.0 / n, -std::f64::consts::TAU * tp)
                        })
                        .sum()
                })
                .collect()
        })
        .collect()
}

/// Order the steps of `phases` (over the cycled fields) with per-output `weights`.
pub fn order_steps(
    sel: &Selection,
    prep: &Prepared,
    phases: &[Vec<Ratio<i64>>],
    weights: &[Vec<Complex64>],
) -> StepOrder {
    let backgrounds: Vec<Vec<i64>> = sel
        .backgrounds()
        .iter()
        .map(|b| super::restrict(b, &prep.cycled))
        .collect();
    let turns: Vec<Vec<f64>> = phases
        .iter()
        .map(|p| {
            p.iter()
                .map(|r| *r.numer() as f64 / *r.denom() as f64)
                .collect()
        })
        .collect();
    let n = turns.len() as f64;
    let drift = crate::export::step_order::drift_order_for(&turns, weights, &backgrounds);
    // The moment as |sum_p (p / N) exp(2 pi i (b - t).phi)|, per unit drift per step.
    let (before, after) = (drift.before * n, drift.after * n);
    StepOrder {
        order: drift.order,
        reordered: after + 1e-12 < before,
        moment_natural: before,
        moment_ordered: after,
    }
}
