//! Per-step data of a phase cycle from simulated terms: at step m every term of signature b
//! contributes `A_b(t) exp(+2 pi i b.phi_m)` (the sign convention of `crate::combine`), with the
//! phases actually applied (nominal phases plus fixed offsets, random errors, quantisation to a
//! B-bit grid and a linear drift across the steps), delay-independent backgrounds of given
//! sizes, and additive Gaussian noise. Real detection adds each term's conjugate.

use super::response::Response;
use super::rng::SplitMix;
use crate::signature::Signature;
use num_complex::Complex64;
use serde::Serialize;
use std::f64::consts::TAU;

/// Errors of the applied phases, all in turns.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct PhaseErrors {
    /// A fixed offset per experiment field (empty = none).
    pub offsets: Vec<f64>,
    /// Standard deviation of independent Gaussian errors per step and cycled field.
    pub rms: f64,
    /// Quantise every applied phase to `2^bits` steps per turn.
    pub bits: Option<u32>,
    /// Linear drift: the error grows from 0 at the first step to this at the last step.
    pub drift: f64,
}

/// A delay-independent background term.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Background {
    /// Its signature over all fields.
    pub signature: Signature,
    /// Its complex amplitude.
    pub amplitude: Complex64,
}

/// Per-step data: shape `[steps, delays...]`, C order.
#[derive(Clone, Debug, PartialEq)]
pub struct StepSeries {
    /// `[N, n_t1, n_t2, ...]`.
    pub shape: Vec<usize>,
    /// True for real detection (the imaginary parts are zero).
    pub real: bool,
    /// Values, C order.
    pub values: Vec<Complex64>,
}

/// The phases actually applied (turns), step by step over all experiment fields. Only the
/// fields with `cycled[j]` err randomly, drift or are quantised; offsets apply to every field.
pub fn applied_phases(
    nominal: &[Vec<f64>],
    cycled: &[bool],
    errors: &PhaseErrors,
    rng: &mut SplitMix,
) -> Vec<Vec<f64>> {
    let n = nominal.len();
    nominal
        .iter()
        .enumerate()
        .map(|(m, row)| {
            row.iter()
                .enumerate()
                .map(|(j, &phi)| {
                    let mut p = phi + errors.offsets.get(j).copied().unwrap_or(0.0);
                    if cycled[j] {
                        if errors.rms > 0.0 {
                            p += errors.rms * rng.normal();
                        }
                        if n > 1 {
                            p += errors.drift * m as f64 / (n - 1) as f64;
                        }
                        if let Some(b) = errors.bits {
                            let q = 2f64.powi(b.min(52) as i32);
                            p = (p * q).round() / q;
                        }
                    }
                    p
                })
                .collect()
        })
        .collect()
}

fn phase_factor(b: &Signature, phi: &[f64]) -> Complex64 {
    let x: f64 = b.0.iter().zip(phi).map(|(&bj, &p)| bj as f64 * p).sum();
    Complex64::from_polar(1.0, TAU * x)
}

/// The data of every step at the applied `phases` (steps x fields, turns): signal terms,
/// backgrounds and noise of standard deviation `noise` per value (per quadrature for complex
/// data). `real` detection adds each signal term's conjugate when the response lists only
/// one half, and each background's conjugate.
pub fn measure_steps(
    resp: &Response,
    phases: &[Vec<f64>],
    backgrounds: &[Background],
    noise: f64,
    real: bool,
    rng: &mut SplitMix,
) -> StepSeries {
    let points = resp.grid.len();
    let mut shape = vec![phases.len()];
    shape.extend(resp.grid.shape());
    let mut values = vec![Complex64::new(0.0, 0.0); phases.len() * points];
    for (m, phi) in phases.iter().enumerate() {
        let row = &mut values[m * points..(m + 1) * points];
        for term in &resp.terms {
            let f = phase_factor(&term.signature, phi);
            let fc = f.conj();
            for (v, s) in row.iter_mut().zip(&term.values) {
                *v += s * f;
                if resp.add_conjugates {
                    *v += s.conj() * fc;
                }
            }
        }
        let mut constant = Complex64::new(0.0, 0.0);
        for bg in backgrounds {
            let f = phase_factor(&bg.signature, phi);
            constant += bg.amplitude * f;
            if real {
                constant += (bg.amplitude * f).conj();
            }
        }
        for v in row.iter_mut() {
            *v += constant;
            if real {
                // Rounding leaves ~1e-16 imaginary parts; the detected value is real.
                v.im = 0.0;
            }
            if noise > 0.0 {
                v.re += noise * rng.normal();
                if !real {
                    v.im += noise * rng.normal();
                }
            }
        }
    }
    StepSeries {
        shape,
        real,
        values,
    }
}
