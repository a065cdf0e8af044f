//! Evaluating one output's filter over its kept terms, conjugates and rejection set: exactly
//! (cyclotomic arithmetic via [`ExactFilter`]) when every phase and weight is exact, otherwise
//! numerically with a stated error bound (and the verdict marked not exact).

use super::bind::{BoundCycle, BoundOutput};
use super::rejected::Origin;
use super::{first_leak, inseparable, tolerance};
use super::{CheckError, CheckRequest, ConjugateTerm, KeptTerm, Leak, OutputReport};
use crate::cycle::{Weight, WeightSource};
use crate::exact::{Cyclo, ExactFilter};
use crate::model::Experiment;
use crate::signature::Signature;
use num_complex::Complex64;
use num_traits::ToPrimitive;
use serde::Serialize;

/// Relative size of the rounding in weights written as approximate decimals, used in the
/// numeric threshold: a 4-significant-digit weight errs by up to 5e-4 of its size.
pub const APPROX_WEIGHT_RESOLUTION: f64 = 5e-4;

/// A filter value for the report.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Value {
    /// The exact form (e.g. `1`, `-1/2 + 1/2i`, `1/3*z3`), when exact and at most
    /// [`crate::exact::filter::MAX_WRITTEN_TERMS`] terms long.
    pub exact: Option<String>,
    /// Real part.
    pub re: f64,
    /// Imaginary part.
    pub im: f64,
    /// Modulus.
    pub abs: f64,
}

impl Value {
    fn from_complex(z: Complex64, exact: Option<String>) -> Value {
        Value {
            exact,
            re: z.re,
            im: z.im,
            abs: z.norm(),
        }
    }
}

/// The evaluator of one output's filter.
#[derive(Clone, Debug)]
pub enum Evaluator {
    /// Exact cyclotomic evaluation.
    Exact(ExactFilter),
    /// Floating-point evaluation; `|F| <= threshold` counts as zero.
    Numeric {
        /// Phases in turns, step-major.
        phases: Vec<Vec<f64>>,
        /// Weights.
        weights: Vec<Complex64>,
        /// Zero threshold (float error bound plus the weight resolution if weights are approximate).
        threshold: f64,
    },
}

impl Evaluator {
    /// Build the evaluator of `out` on `bound`: exact when possible.
    pub fn new(bound: &BoundCycle, out: &BoundOutput) -> Result<Evaluator, CheckError> {
        let exact_w: Option<Vec<Cyclo>> = out
            .weights
            .iter()
            .map(|w| match w {
                Weight::Exact(c) => Some(c.clone()),
                Weight::Approx(_) => None,
            })
            .collect();
        if let (Some(p), Some(w)) = (bound.exact_phases(), exact_w.as_ref()) {
            if let Ok(f) = ExactFilter::new(&p, w) {
                return Ok(Evaluator::Exact(f));
            }
        }
        let weights: Vec<Complex64> = out.weights.iter().map(Weight::to_complex).collect();
        let sum_abs: f64 = weights.iter().map(|w| w.norm()).sum();
        let approx_w = exact_w.is_none();
        let n = weights.len() as f64;
        let threshold = 64.0 * n * f64::EPSILON * sum_abs.max(f64::MIN_POSITIVE)
            + if approx_w {
                APPROX_WEIGHT_RESOLUTION * sum_abs
            } else {
                0.0
            };
        Ok(Evaluator::Numeric {
            phases: bound.phases_f64(),
            weights,
            threshold,
        })
    }

    /// True for exact evaluation.
    pub fn is_exact(&self) -> bool {
        matches!(self, Evaluator::Exact(_))
    }

    /// `F(b) == 0` (exactly, or within the numeric threshold).
    pub fn is_zero(&self, b: &[i64]) -> Result<bool, CheckError> {
        match self {
            Evaluator::Exact(f) => Ok(f.is_zero(b)?),
            Evaluator::Numeric { threshold, .. } => Ok(self.approx(b).norm() <= *threshold),
        }
    }

    /// `F(b)` as a float (display).
    pub fn approx(&self, b: &[i64]) -> Complex64 {
        match self {
            Evaluator::Exact(f) => f.approx(b).unwrap_or_default(),
            Evaluator::Numeric {
                phases, weights, ..
            } => float_filter(phases, weights, b),
        }
    }

    /// `F(b)` for the report.
    pub fn value(&self, b: &[i64]) -> Result<Value, CheckError> {
        match self {
            Evaluator::Exact(f) => {
                let shown = f.shown_value(b)?;
                // A Gaussian rational gives correctly rounded parts (no float noise such as
                // 6e-17 in the real part of -i); other values are summed in floats.
                let z = match &shown.gaussian {
                    Some((re, im)) => Complex64::new(
                        re.to_f64().unwrap_or(f64::NAN),
                        im.to_f64().unwrap_or(f64::NAN),
                    ),
                    None => f.approx(b)?,
                };
                Ok(Value::from_complex(z, shown.text))
            }
            Evaluator::Numeric { .. } => Ok(Value::from_complex(self.approx(b), None)),
        }
    }
}

/// A straightforward float evaluation `sum_m w_m exp(2 pi i b.phi_m)` (phases in turns).
pub fn float_filter(phases: &[Vec<f64>], weights: &[Complex64], b: &[i64]) -> Complex64 {
    phases
        .iter()
        .zip(weights)
        .map(|(row, w)| {
            let x: f64 = row.iter().zip(b).map(|(p, &bj)| p * bj as f64).sum();
            w * Complex64::from_polar(1.0, std::f64::consts::TAU * x.rem_euclid(1.0))
        })
        .sum()
}

/// Check one output: kept terms, conjugates, leaks, first leak, inseparable pairs, tolerance.
#[allow(clippy::too_many_arguments)]
pub fn check_output(
    exp: &Experiment,
    bound: &BoundCycle,
    out: &BoundOutput,
    ev: &Evaluator,
    set: &[(Signature, Origin)],
    req: &CheckRequest,
    search_to: u32,
    geometry: bool,
) -> Result<OutputReport, CheckError> {
    let n = out.weights.len() as f64;
    let sum_sq: f64 = out.weights.iter().map(|w| w.to_complex().norm_sqr()).sum();
    let mut kept = Vec::new();
    let mut lost = Vec::new();
    for t in &out.kept {
        let value = ev.value(&t.0)?;
        let eff = if sum_sq > 0.0 {
            value.abs / (n * sum_sq).sqrt()
        } else {
            0.0
        };
        if ev.is_zero(&t.0)? {
            lost.push(t.clone());
        }
        kept.push(KeptTerm {
            signature: t.clone(),
            value,
            noise_efficiency: eff,
        });
    }
    let ref_abs = kept
        .first()
        .map_or(1.0, |k| k.value.abs)
        .max(f64::MIN_POSITIVE);
    let mut conjugates = Vec::new();
    let mut leaks = Vec::new();
    let mut leak_count = 0usize;
    for (b, origin) in set {
        let zero = ev.is_zero(&b.0)?;
        if *origin == Origin::Conjugate {
            conjugates.push(ConjugateTerm {
                signature: b.clone(),
                value: ev.value(&b.0)?,
                cancelled: zero,
            });
            continue;
        }
        if zero {
            continue;
        }
        leak_count += 1;
        if leaks.len() < req.max_listed {
            let value = ev.value(&b.0)?;
            leaks.push(Leak {
                signature: b.clone(),
                weight: b.weight(),
                order: exp.term_order(b),
                direction: exp.signal_direction(b),
                origin: origin.clone(),
                relative: value.abs / ref_abs,
                value,
            });
        }
    }
    let first = first_leak::first_leak(exp, ev, &out.kept, search_to, geometry)?;
    let insep = inseparable::find(exp, bound, out, &leaks, &conjugates);
    let tol = req
        .tolerance
        .as_ref()
        .map(|t| tolerance::analyse(bound, out, set, ref_abs, t));
    let clean = leak_count == 0
        && lost.is_empty()
        && conjugates.iter().all(|c| c.cancelled)
        && out.contamination.is_empty();
    Ok(OutputReport {
        name: out.name.clone(),
        weights: match &out.source {
            WeightSource::Explicit => "explicit".into(),
            WeightSource::FromSignature(t) => format!("from signature {t} (cycle fields)"),
        },
        exact: ev.is_exact(),
        noise_efficiency: kept.first().map_or(0.0, |k| k.noise_efficiency),
        kept,
        lost,
        conjugates,
        rejected_checked: set.len(),
        leak_count,
        leaks,
        first_leak: first,
        inseparable: insep,
        tolerance: tol,
        clean,
    })
}
