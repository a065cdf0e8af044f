//! Evaluating one output's filter over its kept terms, conjugates and rejection set: exactly
//! (cyclotomic arithmetic via [`ExactFilter`]) when every phase and weight is exact (as written
//! or snapped), otherwise at the written values with a rigorous bound from the table's written
//! precision ([`NumericFilter::bound`]), and the verdict class says which.

use super::bind::{BoundCycle, BoundOutput};
use super::{impact, inseparable, tolerance};
use super::{CheckError, CheckOptions, ConjugateTerm, FirstLeak, KeptTerm, Leak, OutputReport};
use crate::cycle::{Weight, WeightSource};
use crate::exact::{Cyclo, ExactFilter, Turns};
use crate::model::Experiment;
use crate::selection::{Origin, Term};
use num_complex::Complex64;
use num_traits::ToPrimitive;
use serde::Serialize;

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
    /// For a value judged at the table's written precision: every table within that precision
    /// has `|F|` within this distance of `abs` (rounding of the written digits plus float
    /// error). `None` when exact.
    pub bound: Option<f64>,
}

impl Value {
    fn from_complex(z: Complex64, exact: Option<String>, bound: Option<f64>) -> Value {
        Value {
            exact,
            re: z.re,
            im: z.im,
            abs: z.norm(),
            bound,
        }
    }
}

/// How a verdict was reached, from strongest to weakest.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum VerdictClass {
    /// Every phase and weight exact as written; cyclotomic arithmetic.
    Exact,
    /// Exact for the table with its cells snapped to exact values within their written
    /// precision (snaps listed).
    ExactAfterSnapping,
    /// Some cell matches no simple exact value: each `F(b)` is zero within the table's
    /// precision (`|F| <=` a rigorous rounding bound) or a leak provably above it.
    WithinPrecision,
    /// Every cell is exact, but exact arithmetic would pass a limit ([`ExactFallback`] says
    /// which): each `F(b)` is evaluated in double precision and judged against a rigorous
    /// bound on the float error.
    FloatBeyondExactLimit,
}

/// Why an output whose cells are all exact was evaluated in floating point.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ExactFallback {
    /// The limit passed: `cyclotomic order` (the common order of the phases and weights, the
    /// field `Q(zeta_L)` every value lies in) or `128-bit coefficients`.
    pub limit: String,
    /// The value that passed it (the common order), when it is a number that fits `u64`.
    pub value: Option<u64>,
    /// The limit (e.g. [`crate::exact::MAX_ORDER`]), when it is a number.
    pub max: Option<u64>,
    /// What was given up, why, and the way back to an exact verdict.
    pub reason: String,
}

impl ExactFallback {
    fn of(err: &crate::exact::ExactError, phases: &[Vec<Turns>], weights: &[Cyclo]) -> Self {
        use crate::exact::ExactError;
        let done = "F is evaluated in double precision with a rigorous bound on the float error";
        match err {
            ExactError::OrderTooLarge { .. } => Self::order(phases, weights),
            other => {
                let largest = weights
                    .iter()
                    .map(|w| w.to_complex().norm())
                    .fold(0.0, f64::max);
                ExactFallback {
                    limit: "128-bit coefficients".into(),
                    value: None,
                    max: None,
                    reason: format!(
                        "exact arithmetic not used: the exact coefficients of the weights (largest |w| = {}) pass the 128-bit integer range of exact evaluation ({other}); {done}; scale the weights down (a common factor changes no verdict) for an exact verdict",
                        crate::numfmt::short(largest)
                    ),
                }
            }
        }
    }
}

impl ExactFallback {
    /// The common order of `phases` and `weights` passes [`crate::exact::MAX_ORDER`].
    fn order(phases: &[Vec<Turns>], weights: &[Cyclo]) -> Self {
        let max = crate::exact::MAX_ORDER;
        let order = common_order(phases, weights);
        let shown = order.map_or_else(|| "above 2^64".to_string(), |l| l.to_string());
        ExactFallback {
            limit: "cyclotomic order".into(),
            value: order,
            max: Some(u64::from(max)),
            reason: format!(
                "exact arithmetic not used: the common order of the phases and weights (lcm of the phase denominators and weight orders) is {shown}, above the exact limit {max}; F is evaluated in double precision with a rigorous bound on the float error; put the phases on a coarser grid (smaller denominators) for an exact verdict"
            ),
        }
    }
}

/// The lcm of the phase denominators and the weight orders, `None` beyond `u64`.
fn common_order(phases: &[Vec<Turns>], weights: &[Cyclo]) -> Option<u64> {
    let dens = phases.iter().flatten().map(|p| p.denom().unsigned_abs());
    let orders = weights.iter().map(|w| u64::from(w.order()));
    dens.chain(orders)
        .try_fold(1u64, crate::exact::checked_lcm_u64)
}

/// The evaluator of one output's filter.
#[derive(Clone, Debug)]
pub enum Evaluator {
    /// Exact cyclotomic evaluation.
    Exact(ExactFilter),
    /// Floating-point evaluation at the written values with a rigorous bound from their
    /// precision: `|F| <= bound(b)` counts as zero.
    Numeric(Box<NumericFilter>),
}

/// The data of [`Evaluator::Numeric`].
#[derive(Clone, Debug)]
pub struct NumericFilter {
    /// Phases in turns, step-major.
    pub phases: Vec<Vec<f64>>,
    /// Weights.
    pub weights: Vec<Complex64>,
    /// Half-width in turns of each phase, step-major.
    pub half_width: Vec<Vec<f64>>,
    /// Radius of each weight.
    pub weight_radius: Vec<f64>,
    /// For weights derived from a signature `t` (`w_m = exp(-2 pi i t.phi_m)/N`, following
    /// the phases): `t`, so that the bound uses `b - t`.
    pub derived_from: Option<Vec<i64>>,
    /// Set when every cell is exact but exact arithmetic passed a limit.
    pub fallback: Option<ExactFallback>,
}

impl NumericFilter {
    /// Rigorous bound on `|F_true(b) - F_computed(b)|` for every table within the written
    /// precision: `sum_m |w_m| min(2, 2 pi sum_j |b_j| h_mj) + r_m` (with `b - t` for derived
    /// weights, whose radius is then 0), plus the float evaluation error
    /// `eps sum |w| (32 (|b|_1 + 4) + 2N)`; rounded up. The float term covers the rounding of
    /// phases below one turn, of the sums `b.phi`, of `2 pi x` and of the sums over steps, and
    /// assumes the platform's `sin`/`cos` err by at most a few ulp: it is a generous bound,
    /// not a machine-checked one (no interval `sin`/`cos` is used).
    pub fn bound(&self, b: &[i64]) -> f64 {
        let shifted: Vec<i64> = match &self.derived_from {
            Some(t) => b.iter().zip(t).map(|(x, y)| x - y).collect(),
            None => b.to_vec(),
        };
        let mut total = 0.0;
        let mut sum_abs = 0.0;
        for ((w, h), r) in self
            .weights
            .iter()
            .zip(&self.half_width)
            .zip(&self.weight_radius)
        {
            let spread: f64 = shifted
                .iter()
                .zip(h)
                .map(|(&bj, &hj)| (bj as f64).abs() * hj)
                .sum();
            let a = w.norm();
            sum_abs += a;
            total += a * (std::f64::consts::TAU * spread).min(2.0) + r;
        }
        let l1: f64 = b.iter().map(|&x| (x as f64).abs()).sum();
        let float = f64::EPSILON * sum_abs * (32.0 * (l1 + 4.0) + 2.0 * self.weights.len() as f64);
        (total + float) * (1.0 + 1e-12)
    }
}

impl Evaluator {
    /// Build the evaluator of `out` on `bound`: exact when every phase and weight is exact
    /// (as written or snapped), numeric with the precision bound otherwise.
    pub fn new(bound: &BoundCycle, out: &BoundOutput) -> Result<Evaluator, CheckError> {
        let exact_w = out.exact_weights();
        let mut fallback = None;
        let derived = matches!(out.source, WeightSource::FromSignature(_));
        match (bound.exact_phases(), exact_w.as_ref()) {
            (Some(p), Some(w)) => match ExactFilter::new(&p, w) {
                Ok(f) => return Ok(Evaluator::Exact(f)),
                Err(e) => fallback = Some(ExactFallback::of(&e, &p, w)),
            },
            // Weights derived from exact phases are inexact only when their root of unity
            // passes the order limit.
            (Some(p), None) if derived => fallback = Some(ExactFallback::order(&p, &[])),
            _ => {}
        }
        let derived_from = match &out.source {
            WeightSource::FromSignature(_) => out.derived_from.as_ref().map(|t| t.0.clone()),
            WeightSource::Explicit => None,
        };
        // Each phase reduced into [0, 1) turn (exact in floating point, F unchanged), so the
        // float-error term of `NumericFilter::bound`, which assumes phases below one turn,
        // holds for tables written with phases such as 400 deg.
        let phases = bound
            .phases_f64()
            .into_iter()
            .map(|r| r.into_iter().map(|p| p.rem_euclid(1.0)).collect())
            .collect();
        Ok(Evaluator::Numeric(Box::new(NumericFilter {
            phases,
            weights: out.weights.iter().map(Weight::to_complex).collect(),
            half_width: bound.half_width.clone(),
            weight_radius: out.weight_radius.clone(),
            derived_from,
            fallback,
        })))
    }

    /// Why exact arithmetic was not used although every cell is exact.
    pub fn fallback(&self) -> Option<&ExactFallback> {
        match self {
            Evaluator::Exact(_) => None,
            Evaluator::Numeric(n) => n.fallback.as_ref(),
        }
    }

    /// True for exact evaluation.
    pub fn is_exact(&self) -> bool {
        matches!(self, Evaluator::Exact(_))
    }

    /// `F(b) == 0` (exactly, or within the precision bound).
    pub fn is_zero(&self, b: &[i64]) -> Result<bool, CheckError> {
        match self {
            Evaluator::Exact(f) => Ok(f.is_zero(b)?),
            Evaluator::Numeric(n) => Ok(self.approx(b).norm() <= n.bound(b)),
        }
    }

    /// `F(b)` as a float (display).
    pub fn approx(&self, b: &[i64]) -> Complex64 {
        match self {
            Evaluator::Exact(f) => f.approx(b).unwrap_or_default(),
            Evaluator::Numeric(n) => float_filter(&n.phases, &n.weights, b),
        }
    }

    /// The precision bound on `|F(b)|` (`None` when exact).
    pub fn bound(&self, b: &[i64]) -> Option<f64> {
        match self {
            Evaluator::Exact(_) => None,
            Evaluator::Numeric(n) => Some(n.bound(b)),
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
                Ok(Value::from_complex(z, shown.text, None))
            }
            Evaluator::Numeric(_) => Ok(Value::from_complex(self.approx(b), None, self.bound(b))),
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

/// Check one output: kept terms, conjugates, leaks, inseparable pairs, tolerance; `first` is
/// its first leak as the selection's search found it.
pub fn check_output(
    exp: &Experiment,
    bound: &BoundCycle,
    out: &BoundOutput,
    ev: &Evaluator,
    set: &[Term],
    first: Option<FirstLeak>,
    req: &CheckOptions,
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
    // |F(b)| / |F(t)| per term: the exact modulus (0 when cancelled), or the written value
    // plus its precision bound.
    let mut figures = Vec::with_capacity(set.len());
    for Term {
        signature: b,
        origin,
        ..
    } in set
    {
        let zero = ev.is_zero(&b.0)?;
        figures.push(match ev.bound(&b.0) {
            Some(r) => (ev.approx(&b.0).norm() + r) / ref_abs,
            None if zero => 0.0,
            None => ev.approx(&b.0).norm() / ref_abs,
        });
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
    let rounding_bound = set
        .iter()
        .filter_map(|t| ev.bound(&t.signature.0))
        .fold(None, |m: Option<f64>, x| Some(m.map_or(x, |m| m.max(x))));
    let insep = inseparable::find(exp, bound, out, &leaks, &conjugates);
    let per_term = req.tolerance.as_ref().map(|t| {
        let upper = |b: &crate::signature::Signature| {
            ev.approx(&b.0).norm() + ev.bound(&b.0).unwrap_or(0.0)
        };
        tolerance::per_term(bound, out, set, ref_abs, t, upper)
    });
    let tol = req
        .tolerance
        .as_ref()
        .zip(per_term.as_ref())
        .map(|(t, terms)| tolerance::summarise(t, terms));
    let impact = impact::rank(
        impact::RankInput {
            exp,
            set,
            leaks: &figures,
            exact: ev.is_exact(),
            tolerance: per_term,
            max_listed: req.max_listed,
        },
        &req.impact,
    );
    let clean = leak_count == 0
        && lost.is_empty()
        && conjugates.iter().all(|c| c.cancelled)
        && out.contamination.is_empty();
    let suspects = if clean || !out.contamination.is_empty() {
        Vec::new()
    } else {
        super::culprit::find(bound, &exp.field_names(), out, set, ev)
    };
    let mut suspect_steps: Vec<usize> = suspects.iter().flat_map(|s| s.steps.clone()).collect();
    suspect_steps.sort_unstable();
    suspect_steps.dedup();
    Ok(OutputReport {
        name: out.name.clone(),
        weights: match &out.source {
            WeightSource::Explicit => "explicit".into(),
            WeightSource::FromSignature(t) => format!("from signature {t} (cycle fields)"),
        },
        exact: ev.is_exact(),
        exact_fallback: ev.fallback().cloned(),
        class: if ev.fallback().is_some() {
            VerdictClass::FloatBeyondExactLimit
        } else if !ev.is_exact() {
            VerdictClass::WithinPrecision
        } else if bound
            .snaps
            .iter()
            .any(|s| !s.column.starts_with("w:") || s.column == format!("w:{}", out.name))
        {
            VerdictClass::ExactAfterSnapping
        } else {
            VerdictClass::Exact
        },
        rounding_bound,
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
        impact,
        suspect_steps,
        suspects,
        clean,
    })
}
