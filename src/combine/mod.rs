//! Combining measured per-step data with a cycle's weights: this module owns the one
//! convention by which pathsieve turns the N measurements of a phase cycle into its outputs.
//!
//! **Convention.** Step m of the cycle sets the phases `phi_m` (in turns). A term of phase
//! signature b contributes `A_b exp(+i 2 pi b.phi_m)` to the signal measured at step m
//! (domain notes section 1: ket-side interactions add `+phi`), so the measured data are
//! `S_m = sum_b A_b exp(+i 2 pi b.phi_m)`. Output o is
//!
//! ```text
//! C_o = s_o * sum_m w_{o,m} S_m,      so that  C_o = s_o * sum_b F_o(b) A_b,
//! F_o(b) = sum_m w_{o,m} exp(+i 2 pi b.phi_m)
//! ```
//!
//! with the cycle's weights `w` and a scale `s_o`. A checked cycle has `F_o(b) = 0` for every
//! rejected b. By default `s_o = 1 / F_o(t)` when every kept term t of the output has the same
//! `F_o(t)`, so `C_o` is the kept amplitude itself (`sum_t A_t`) whether the weights were
//! written as `exp(-i 2 pi t.phi)/N` (`F = 1`, `s = 1`) or as hand-written +-1 (`F = N`,
//! `s = 1/N`); [`Normalise::AsWritten`] keeps `s_o = 1`. The sign matters: the opposite
//! convention `exp(-i ...)` returns the complex conjugate (a mirrored spectrum).
//!
//! **Step order.** Data position p holds cycle step `order[p]`. A drift-reordered export
//! records that map in its metadata (`source_steps`); [`order_from_export`] reads it and checks
//! every exported row against the cycle, so data acquired from an export combine correctly
//! whatever its `step_order`.
//!
//! **Real data.** Detected signals are real. An output that keeps a term t without its
//! conjugate -t is complex even for real data (its real and imaginary parts are the two
//! quadratures of that term); [`CombinedOutput::unpaired`] lists those terms.
//!
//! Inputs are plain: a shape and a flat C-order vector (no array crate), so callers such as the
//! simulator and the Python bindings pass what they have. Reading and writing data files lives
//! in [`data_file`].
//!
//! ```
//! use num_complex::Complex64;
//! use pathsieve::combine::{apply_weights, StepData};
//! // Two steps at 0 and 1/2 turn, weights (1/2, -1/2): keeps b = 1, cancels b = 0.
//! let (a0, a1) = (5.0, Complex64::new(0.3, 0.4));
//! let s: Vec<Complex64> = [0.0, 0.5]
//!     .iter()
//!     .map(|phi: &f64| a0 + a1 * Complex64::from_polar(1.0, std::f64::consts::TAU * phi))
//!     .collect();
//! let data = StepData::complex(vec![2], s).unwrap();
//! let w = [Complex64::new(0.5, 0.0), Complex64::new(-0.5, 0.0)];
//! let c = apply_weights(&w, &data, 0, &[0, 1]).unwrap();
//! assert!((c[0] - a1).norm() < 1e-15);
//! ```

pub mod data_file;
mod order;
#[cfg(test)]
mod tests;

pub use order::order_from_export;

use crate::check::{bind_cycle, SnapPolicy};
use crate::cycle::Cycle;
use crate::selection::Selection;
use crate::signature::Signature;
use num_complex::Complex64;
use serde::Serialize;

/// Largest number of data values (all steps) accepted: 2^28 complex values are 4 GiB.
pub const MAX_DATA_VALUES: usize = 1 << 28;

/// Why data could not be combined; every message names the value and the fix.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CombineError {
    /// The data's step axis does not hold one entry per cycle step.
    #[error("the data hold {found} entries along the step axis (axis {axis} of shape {shape:?}) but the cycle has {steps} steps; pass --step-axis to name the axis that holds the steps, or measure every step once")]
    StepCount {
        /// Steps in the cycle.
        steps: usize,
        /// Entries found along the axis.
        found: usize,
        /// The step axis.
        axis: usize,
        /// The data's shape.
        shape: Vec<usize>,
    },
    /// The step axis is not an axis of the data.
    #[error("step axis {axis} does not exist: the data have {ndim} axes (shape {shape:?}); use 0..{ndim}")]
    NoSuchAxis {
        /// Requested axis.
        axis: usize,
        /// Number of axes.
        ndim: usize,
        /// The data's shape.
        shape: Vec<usize>,
    },
    /// Shape and values disagree, or the data are too large.
    #[error("{0}")]
    BadData(String),
    /// The step order is not a permutation of the cycle's steps, or the export does not match.
    #[error("{0}")]
    StepOrder(String),
    /// The cycle does not fit the experiment.
    #[error(transparent)]
    Check(#[from] crate::check::CheckError),
}

/// Measured values, real or complex, in C (row-major) order.
#[derive(Clone, Debug, PartialEq)]
pub enum Samples {
    /// Real-valued detection (intensity, fluorescence, current).
    Real(Vec<f64>),
    /// Complex data (e.g. after spectral interferometry or lock-in quadratures).
    Complex(Vec<Complex64>),
}

impl Samples {
    fn len(&self) -> usize {
        match self {
            Samples::Real(v) => v.len(),
            Samples::Complex(v) => v.len(),
        }
    }

    fn get(&self, i: usize) -> Complex64 {
        match self {
            Samples::Real(v) => Complex64::new(v[i], 0.0),
            Samples::Complex(v) => v[i],
        }
    }
}

/// Per-step data: an array of any rank, one axis of which runs over the steps.
#[derive(Clone, Debug, PartialEq)]
pub struct StepData {
    /// Extent of each axis.
    pub shape: Vec<usize>,
    /// The values, C order.
    pub values: Samples,
}

impl StepData {
    /// Real data; the shape must multiply to `values.len()`.
    pub fn real(shape: Vec<usize>, values: Vec<f64>) -> Result<StepData, CombineError> {
        StepData::new(shape, Samples::Real(values))
    }

    /// Complex data; the shape must multiply to `values.len()`.
    pub fn complex(shape: Vec<usize>, values: Vec<Complex64>) -> Result<StepData, CombineError> {
        StepData::new(shape, Samples::Complex(values))
    }

    /// Data from a shape and samples, checked.
    pub fn new(shape: Vec<usize>, values: Samples) -> Result<StepData, CombineError> {
        let count = shape.iter().try_fold(1usize, |a, &d| a.checked_mul(d));
        if count != Some(values.len()) {
            return Err(CombineError::BadData(format!(
                "shape {shape:?} does not hold the {} values given",
                values.len()
            )));
        }
        if values.len() > MAX_DATA_VALUES {
            return Err(CombineError::BadData(format!(
                "{} values are above the limit of {MAX_DATA_VALUES}; combine the data in blocks (e.g. per delay)",
                values.len()
            )));
        }
        Ok(StepData { shape, values })
    }

    /// True for real-valued samples.
    pub fn is_real(&self) -> bool {
        matches!(self.values, Samples::Real(_))
    }
}

/// `sum_p weights[order[p]] * data[.., p, ..]` along `step_axis`: data position p holds cycle
/// step `order[p]`. Returns the result in C order over the data's shape without the step axis.
///
/// # Errors
/// [`CombineError::NoSuchAxis`], [`CombineError::StepCount`] when the axis does not hold one
/// entry per weight, [`CombineError::StepOrder`] when `order` is not a permutation.
pub fn apply_weights(
    weights: &[Complex64],
    data: &StepData,
    step_axis: usize,
    order: &[usize],
) -> Result<Vec<Complex64>, CombineError> {
    let ndim = data.shape.len();
    if step_axis >= ndim {
        return Err(CombineError::NoSuchAxis {
            axis: step_axis,
            ndim,
            shape: data.shape.clone(),
        });
    }
    let n = data.shape[step_axis];
    if n != weights.len() {
        return Err(CombineError::StepCount {
            steps: weights.len(),
            found: n,
            axis: step_axis,
            shape: data.shape.clone(),
        });
    }
    check_permutation(order, n)?;
    let inner: usize = data.shape[step_axis + 1..].iter().product();
    let outer: usize = data.shape[..step_axis].iter().product();
    let mut out = vec![Complex64::new(0.0, 0.0); outer * inner];
    for o in 0..outer {
        for (p, &m) in order.iter().enumerate() {
            let w = weights[m];
            let base = (o * n + p) * inner;
            for (i, acc) in out[o * inner..(o + 1) * inner].iter_mut().enumerate() {
                *acc += w * data.values.get(base + i);
            }
        }
    }
    Ok(out)
}

/// Check that `order` lists each of `0..n` once.
fn check_permutation(order: &[usize], n: usize) -> Result<(), CombineError> {
    let mut seen = vec![false; n];
    if order.len() != n {
        return Err(CombineError::StepOrder(format!(
            "the step order lists {} steps but the cycle has {n}",
            order.len()
        )));
    }
    for (p, &m) in order.iter().enumerate() {
        if m >= n || std::mem::replace(&mut seen[m], true) {
            return Err(CombineError::StepOrder(format!(
                "the step order is not a permutation of the cycle's {n} steps: position {p} names step {m}{}",
                if m >= n { " (out of range)" } else { " a second time" }
            )));
        }
    }
    Ok(())
}

/// How the outputs are scaled.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Normalise {
    /// Divide by `F(t)` when every kept term of the output shares it: the output is the kept
    /// amplitude (the default).
    #[default]
    KeptAmplitude,
    /// Use the weights as written (`s = 1`).
    AsWritten,
}

/// What to combine and how.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct CombineRequest {
    /// The axis of the data that runs over the steps.
    pub step_axis: usize,
    /// Data position p holds cycle step `order[p]`; `None` = the cycle file's order.
    pub order: Option<Vec<usize>>,
    /// Output scaling.
    pub normalise: Normalise,
}

/// One combined output.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CombinedOutput {
    /// Output name (the cycle's).
    pub name: String,
    /// Shape of `values`: the data's shape without the step axis.
    pub shape: Vec<usize>,
    /// The combined values, C order.
    #[serde(skip)]
    pub values: Vec<Complex64>,
    /// True when the values are real (real data and real scaled weights); the imaginary parts
    /// are then exactly zero.
    pub real: bool,
    /// Every signature (over the experiment's fields) the output keeps.
    pub kept: Vec<Signature>,
    /// `F(t)` of the kept terms with the weights as written (floating point).
    pub gain: Vec<[f64; 2]>,
    /// The scale `s` applied, as (re, im).
    pub scale: [f64; 2],
    /// Kept terms whose conjugate the output does not keep: with real data the output is
    /// complex because of them.
    pub unpaired: Vec<Signature>,
}

/// The result of [`combine_cycle`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Combined {
    /// Number of cycle steps N.
    pub steps: usize,
    /// The step axis of the data.
    pub step_axis: usize,
    /// Data position p holds cycle step `order[p]`.
    pub order: Vec<usize>,
    /// True when the input data were real.
    pub real_data: bool,
    /// How the outputs were scaled.
    pub normalise: Normalise,
    /// One entry per cycle output, in the cycle's order.
    pub outputs: Vec<CombinedOutput>,
}

/// Combine per-step data into the cycle's outputs (see the module documentation for the
/// convention). The cycle is bound to the selection's experiment first (field names, kept
/// signatures, derived weights for outputs without explicit ones); it is not checked for leaks
/// here ([`crate::check::check`] does that with the same selection).
///
/// # Errors
/// [`CombineError`] for a cycle that does not fit the experiment, a wrong step count, a bad
/// step axis or step order.
pub fn combine_cycle(
    sel: &Selection,
    cycle: &Cycle,
    data: &StepData,
    req: &CombineRequest,
) -> Result<Combined, CombineError> {
    let bound = bind_cycle(sel, cycle, &SnapPolicy::default())?;
    let n = bound.phases.len();
    let order = req.order.clone().unwrap_or_else(|| (0..n).collect());
    let phases = bound.phases_f64();
    let mut outputs = Vec::with_capacity(bound.outputs.len());
    for out in &bound.outputs {
        let w: Vec<Complex64> = out.weights.iter().map(|w| w.to_complex()).collect();
        let gain: Vec<Complex64> = out.kept.iter().map(|t| filter(&w, &phases, t)).collect();
        let scale = match req.normalise {
            Normalise::KeptAmplitude => {
                common_gain(&gain).map_or(Complex64::new(1.0, 0.0), |g| g.inv())
            }
            Normalise::AsWritten => Complex64::new(1.0, 0.0),
        };
        let scaled: Vec<Complex64> = w.iter().map(|x| x * scale).collect();
        let mut values = apply_weights(&scaled, data, req.step_axis, &order)?;
        let real = data.is_real() && weights_are_real(&scaled);
        if real {
            values.iter_mut().for_each(|v| v.im = 0.0);
        }
        let mut shape = data.shape.clone();
        shape.remove(req.step_axis);
        outputs.push(CombinedOutput {
            name: out.name.clone(),
            shape,
            values,
            real,
            kept: out.kept.clone(),
            gain: gain.iter().map(|g| [g.re, g.im]).collect(),
            scale: [scale.re, scale.im],
            unpaired: out
                .kept
                .iter()
                .filter(|t| !out.kept.contains(&t.conjugate()))
                .cloned()
                .collect(),
        });
    }
    Ok(Combined {
        steps: n,
        step_axis: req.step_axis,
        order,
        real_data: data.is_real(),
        normalise: req.normalise,
        outputs,
    })
}

/// `F(b) = sum_m w_m exp(+i 2 pi b.phi_m)` in floating point (`phases` in turns).
pub fn filter(weights: &[Complex64], phases: &[Vec<f64>], b: &Signature) -> Complex64 {
    weights
        .iter()
        .zip(phases)
        .map(|(w, row)| {
            let x: f64 = row
                .iter()
                .zip(b.as_slice())
                .map(|(p, &k)| p * k as f64)
                .sum();
            w * Complex64::from_polar(1.0, std::f64::consts::TAU * x)
        })
        .sum()
}

/// The common value of the gains, when they agree to 1e-9 relative and are not zero.
fn common_gain(gain: &[Complex64]) -> Option<Complex64> {
    let g = *gain.first()?;
    let agree = gain.iter().all(|x| (x - g).norm() <= 1e-9 * g.norm());
    (agree && g.norm() > 1e-12).then_some(g)
}

/// True when every weight is real within rounding (1e-12 of the largest modulus).
fn weights_are_real(w: &[Complex64]) -> bool {
    let big = w.iter().map(|x| x.norm()).fold(0.0, f64::max);
    w.iter().all(|x| x.im.abs() <= 1e-12 * big)
}
