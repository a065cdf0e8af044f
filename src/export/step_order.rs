//! Drift-robust step order for exported phase lists: this module owns choosing the row order
//! so that a slow linear drift of the signal across the cycle leaks the low-order backgrounds
//! least. With drift, step m (at position p) is measured with gain (1 + eps * p), so a cancelled
//! background b leaks `eps * sum_p p * w_m exp(2 pi i b.phi_m)`: the first moment (domain notes
//! section 7). The backgrounds are every signature over the exported fields with
//! `sum |b| <= 2` (reference or population alone, pulse-reference and pulse-pulse scatter)
//! that the output cancels in the designed order, for every output. Floats are right here: it
//! is a tolerance figure, not a leak decision; reordering never changes any F(b).
//!
//! The designer uses the same descent ([`drift_order_for`]) with its own background list (the
//! rejected terms with `sum |b| <= 2`); exported cycles use every low-order signature.

use num_complex::Complex64;

/// Most rows reordered; longer lists keep the designed order (the descent is O(N^2) a pass).
pub const MAX_REORDER_STEPS: usize = 4096;
/// Largest number of swap evaluations.
const BUDGET: usize = 50_000_000;

/// The outcome of [`drift_order`].
#[derive(Clone, Debug, PartialEq)]
pub struct DriftOrder {
    /// Row order: `order[p]` is the designed row measured at position p.
    pub order: Vec<usize>,
    /// Largest |first moment| / (N * sum |w|) over backgrounds and outputs, designed order.
    pub before: f64,
    /// The same for `order`.
    pub after: f64,
    /// Number of (output, background) pairs considered.
    pub backgrounds: usize,
}

/// Every integer vector of length n with `sum |b| <= 2`.
fn low_order_signatures(n: usize) -> Vec<Vec<i64>> {
    let mut out = vec![vec![0; n]];
    for i in 0..n {
        for s in [1, -1] {
            let mut b = vec![0; n];
            b[i] = s;
            out.push(b.clone());
            b[i] = 2 * s;
            out.push(b);
        }
    }
    for i in 0..n {
        for j in (i + 1)..n {
            for (si, sj) in [(1, 1), (1, -1), (-1, 1), (-1, -1)] {
                let mut b = vec![0; n];
                b[i] = si;
                b[j] = sj;
                out.push(b);
            }
        }
    }
    out
}

/// Order rows (`turns[m]`: phases in turns; `weights[m][o]`: weight of output o) by
/// deterministic pairwise-swap descent on the largest first moment of the cancelled low-order
/// backgrounds. Lists longer than [`MAX_REORDER_STEPS`] keep the designed order.
pub fn drift_order(turns: &[Vec<f64>], weights: &[Vec<Complex64>]) -> DriftOrder {
    let fields = turns.first().map_or(0, Vec::len);
    drift_order_for(turns, weights, &low_order_signatures(fields))
}

/// [`drift_order`] with the backgrounds given (signatures over the same fields as `turns`);
/// only those each output cancels in the designed order count.
pub fn drift_order_for(
    turns: &[Vec<f64>],
    weights: &[Vec<Complex64>],
    backgrounds: &[Vec<i64>],
) -> DriftOrder {
    let n = turns.len();
    let outputs = weights.first().map_or(0, Vec::len);
    // z[s][m] = w_m exp(2 pi i b.phi_m) for each series s = (output, cancelled background).
    let mut series: Vec<Vec<Complex64>> = Vec::new();
    let mut norms: Vec<f64> = Vec::new();
    for o in 0..outputs {
        let sum_abs: f64 = weights.iter().map(|w| w[o].norm()).sum();
        if sum_abs == 0.0 {
            continue;
        }
        for b in backgrounds {
            let z: Vec<Complex64> = turns
                .iter()
                .zip(weights)
                .map(|(p, w)| {
                    let x: f64 = p.iter().zip(b).map(|(a, &k)| a * k as f64).sum();
                    w[o] * Complex64::from_polar(1.0, std::f64::consts::TAU * x)
                })
                .collect();
            let f: Complex64 = z.iter().sum();
            if f.norm() <= 1e-9 * sum_abs {
                series.push(z);
                norms.push(n as f64 * sum_abs);
            }
        }
    }
    let mut order: Vec<usize> = (0..n).collect();
    let mut moments: Vec<Complex64> = series
        .iter()
        .map(|z| z.iter().enumerate().map(|(p, v)| v * p as f64).sum())
        .collect();
    let worst = |m: &[Complex64]| {
        m.iter()
            .zip(&norms)
            .map(|(v, d)| v.norm() / d)
            .fold(0.0, f64::max)
    };
    let before = worst(&moments);
    let mut best = before;
    if (3..=MAX_REORDER_STEPS).contains(&n) && !series.is_empty() {
        let mut evaluations = 0usize;
        let mut trial = moments.clone();
        let mut improved = true;
        'outer: while improved {
            improved = false;
            for i in 0..n {
                for j in (i + 1)..n {
                    // Swapping positions i < j changes each moment by (j - i) (z_a - z_b).
                    let (a, b) = (order[i], order[j]);
                    let d = (j - i) as f64;
                    for (t, (m, z)) in trial.iter_mut().zip(moments.iter().zip(&series)) {
                        *t = m + (z[a] - z[b]) * d;
                    }
                    let w = worst(&trial);
                    if w + 1e-12 < best {
                        best = w;
                        order.swap(i, j);
                        moments.clone_from(&trial);
                        improved = true;
                    }
                    evaluations += series.len();
                    if evaluations >= BUDGET {
                        break 'outer;
                    }
                }
            }
        }
    }
    DriftOrder {
        order,
        before,
        after: best,
        backgrounds: series.len(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Two-step cycle {0, 1/2} with weights (1, -1) cancels b = 0; hand computation: the first
    // moment of b = 0 is 0*1 + 1*(-1) = -1 whatever the order of two steps, so nothing improves.
    #[test]
    fn two_steps_cannot_be_improved() {
        let d = drift_order(
            &[vec![0.0], vec![0.5]],
            &[
                vec![Complex64::new(1.0, 0.0)],
                vec![Complex64::new(-1.0, 0.0)],
            ],
        );
        assert_eq!(d.order, vec![0, 1]);
        assert!((d.before - 0.25).abs() < 1e-12); // |-1| / (N=2 * sum|w|=2)
    }

    // Four steps at one phase with weights (1, -1, 1, -1) cancel every b alike; hand
    // computation: designed moment 0 - 1 + 2 - 3 = -2, while the order 1, -1, -1, 1 gives
    // 0 - 1 - 2 + 3 = 0, which the descent must find.
    #[test]
    fn descent_finds_the_zero_moment_order_and_keeps_a_permutation() {
        let turns = vec![vec![0.0]; 4];
        let w: Vec<Vec<Complex64>> = [1.0, -1.0, 1.0, -1.0]
            .iter()
            .map(|&x| vec![Complex64::new(x, 0.0)])
            .collect();
        let d = drift_order(&turns, &w);
        assert!((d.before - 2.0 / 16.0).abs() < 1e-12, "{d:?}");
        assert!(d.after < 1e-12, "{d:?}");
        let mut o = d.order.clone();
        o.sort_unstable();
        assert_eq!(o, vec![0, 1, 2, 3]);
    }
}
