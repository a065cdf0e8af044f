//! Floating-point tolerance analysis of one output (floats are right here, domain.md 7): the
//! leakage of each rejected term when every applied phase of a cycled field errs by up to
//! `delta` (worst-case bound) or by independent Gaussian errors of standard deviation `delta`
//! (closed-form RMS), under quantisation of the phases to a `B`-bit grid, and the first moment
//! of the lowest-order backgrounds under a slow linear drift of the signal over the cycle. The
//! figures are per rejected term ([`per_term`]); [`summarise`] gives the maxima and rankings.

use super::bind::{BoundCycle, BoundOutput};
use super::evaluate::float_filter;
use crate::cycle::Weight;
use crate::selection::Term;
use crate::signature::Signature;
use num_complex::Complex64;
use serde::Serialize;

/// Number of terms listed in each ranking.
pub const TOP: usize = 10;

/// What to analyse.
#[derive(Clone, Debug, PartialEq)]
pub struct ToleranceRequest {
    /// Phase error, in turns.
    pub delta_turns: f64,
    /// Quantise the phases to `2^bits` steps per turn (e.g. a shaper's phase resolution).
    pub bits: Option<u32>,
}

/// One term of a ranking.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TermFigure {
    /// The rejected signature.
    pub signature: Signature,
    /// The figure, relative to `|F(t)|`.
    pub relative: f64,
}

/// The analysis of one output. All figures are relative to `|F(t)|` of the first kept term.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ToleranceReport {
    /// The phase error analysed, in turns.
    pub delta_turns: f64,
    /// The same in degrees.
    pub delta_degrees: f64,
    /// Largest worst-case leakage over the rejected set.
    pub worst_case_max: f64,
    /// The terms with the largest worst-case leakage.
    pub worst_case: Vec<TermFigure>,
    /// Largest RMS leakage for random errors.
    pub rms_max: f64,
    /// The terms with the largest RMS leakage.
    pub rms: Vec<TermFigure>,
    /// Bits of the quantisation analysed.
    pub bits: Option<u32>,
    /// Largest leakage after quantising the phases.
    pub quantised_max: Option<f64>,
    /// The terms with the largest leakage after quantisation.
    pub quantised: Vec<TermFigure>,
    /// First moment `|sum_m (m/(N-1) - 1/2) w_m exp(2 pi i b.phi_m)|` of the backgrounds with
    /// `sum |b| <= 2` (reference alone, linear and scatter terms) for this step order: the
    /// leakage per unit relative drift of the signal across the cycle. Largest first.
    pub drift: Vec<TermFigure>,
}

fn top(mut v: Vec<TermFigure>) -> (f64, Vec<TermFigure>) {
    v.sort_by(|a, b| b.relative.total_cmp(&a.relative));
    let max = v.first().map_or(0.0, |f| f.relative);
    v.truncate(TOP);
    (max, v)
}

/// The tolerance figures of one rejected term, relative to `|F(t)|`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TermTolerance {
    /// The rejected signature.
    pub signature: Signature,
    /// Worst case over every applied phase error up to `delta` (a bound).
    pub worst_case: f64,
    /// RMS over independent Gaussian phase errors of standard deviation `delta` (an
    /// expectation, closed form).
    pub rms: f64,
    /// After quantising the phases to `2^B` steps per turn (floating point), if asked for.
    pub quantised: Option<f64>,
    /// First moment under a slow linear drift, for terms with `sum |b| <= 2`.
    pub drift: Option<f64>,
}

/// Per-term tolerance figures of `out` over its rejection set `set` (conjugates included).
/// `upper(b)` is an upper bound on `|F(b)|` of the table as checked (its exact modulus, or the
/// written value plus its precision bound).
pub fn per_term(
    bound: &BoundCycle,
    out: &BoundOutput,
    set: &[Term],
    ref_abs: f64,
    req: &ToleranceRequest,
    upper: impl Fn(&Signature) -> f64,
) -> Vec<TermTolerance> {
    let phases = bound.phases_f64();
    let w: Vec<Complex64> = out.weights.iter().map(Weight::to_complex).collect();
    let sum_abs: f64 = w.iter().map(|x| x.norm()).sum();
    let sum_sq: f64 = w.iter().map(|x| x.norm_sqr()).sum();
    let n = w.len();
    let d = req.delta_turns.abs();
    let qphases: Option<Vec<Vec<f64>>> = req.bits.map(|bits| {
        let m = 2f64.powi(bits.min(52) as i32);
        phases
            .iter()
            .map(|r| r.iter().map(|p| (p * m).round() / m).collect())
            .collect()
    });
    let mut terms = Vec::with_capacity(set.len());
    for Term { signature: b, .. } in set {
        let f_abs = upper(b);
        // Only cycled fields err; fixed fields keep one phase throughout.
        let (l1, l2sq) =
            b.0.iter()
                .zip(&bound.fixed)
                .filter(|(_, &fx)| !fx)
                .fold((0.0, 0.0), |(a, s), (&x, _)| {
                    (a + (x as f64).abs(), s + (x as f64).powi(2))
                });
        // |exp(i a) - 1| <= 2 sin(min(a, pi)/2) with |a| <= 2 pi delta |b|_1 per step.
        let a = (std::f64::consts::TAU * d * l1).min(std::f64::consts::PI);
        let wc = f_abs + sum_abs * 2.0 * (a / 2.0).sin();
        // Gaussian errors: alpha_m ~ N(0, s2), E e^{i alpha} = e^{-s2/2};
        // E|F'|^2 = |F|^2 e^{-s2} + sum |w|^2 (1 - e^{-s2}).
        let s2 = (std::f64::consts::TAU * d).powi(2) * l2sq;
        let e = (-s2).exp();
        let r = (f_abs * f_abs * e + sum_sq * (1.0 - e)).max(0.0).sqrt();
        let quantised = qphases
            .as_ref()
            .map(|q| float_filter(q, &w, &b.0).norm() / ref_abs);
        let drift = (b.weight() <= 2 && n > 1).then(|| {
            let mom: Complex64 = phases
                .iter()
                .zip(&w)
                .enumerate()
                .map(|(m, (row, wm))| {
                    let x: f64 = row.iter().zip(&b.0).map(|(p, &bj)| p * bj as f64).sum();
                    let s = m as f64 / (n - 1) as f64 - 0.5;
                    wm * s * Complex64::from_polar(1.0, std::f64::consts::TAU * x)
                })
                .sum();
            mom.norm() / ref_abs
        });
        terms.push(TermTolerance {
            signature: b.clone(),
            worst_case: wc / ref_abs,
            rms: r / ref_abs,
            quantised,
            drift,
        });
    }
    terms
}

/// The summary of per-term figures: maxima and the top terms of each ranking.
pub fn summarise(req: &ToleranceRequest, terms: &[TermTolerance]) -> ToleranceReport {
    let fig = |f: &dyn Fn(&TermTolerance) -> Option<f64>| -> Vec<TermFigure> {
        terms
            .iter()
            .filter_map(|t| {
                f(t).map(|relative| TermFigure {
                    signature: t.signature.clone(),
                    relative,
                })
            })
            .collect()
    };
    let (worst_case_max, worst_case) = top(fig(&|t| Some(t.worst_case)));
    let (rms_max, rms) = top(fig(&|t| Some(t.rms)));
    let (qmax, quantised) = top(fig(&|t| t.quantised));
    let (_, drift) = top(fig(&|t| t.drift));
    let d = req.delta_turns.abs();
    ToleranceReport {
        delta_turns: d,
        delta_degrees: d * 360.0,
        worst_case_max,
        worst_case,
        rms_max,
        rms,
        bits: req.bits,
        quantised_max: req.bits.map(|_| qmax),
        quantised,
        drift,
    }
}
