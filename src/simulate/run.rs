//! One simulated acquisition: the ideal kept signal of every wanted output, and a phase cycle
//! run on the simulated response — delay-independent backgrounds of stated sizes, the phases
//! actually applied (offsets, random errors, quantisation, drift), noise — then combined with
//! the cycle's weights by [`crate::combine`] (the one sign convention), beside the ideal output
//! the same weights give without errors, backgrounds or noise.
//!
//! Sizes are relative to the wanted signal: `reference` is the largest modulus of the ideal
//! outputs over the grid, a background of size `s` has `|A_b| = s * reference` (for real
//! detection its conjugate `-b` comes with it), so its leak relative to the wanted signal is
//! `|F(b)| s / |F(t)|`, the product `pathsieve check` ranks. Each background's phase is drawn
//! from the seed (uniform over a turn; the unmodulated `b = 0` term is real), since a scatter
//! phase depends on path lengths nobody controls.

use super::measure::{applied_phases, measure_steps, Background, PhaseErrors, StepSeries};
use super::response::Response;
use super::rng::SplitMix;
use super::SimulationError;
use crate::check::{bind_cycle, SnapPolicy};
use crate::combine::{combine_cycle, CombineRequest, Combined, StepData};
use crate::cycle::Cycle;
use crate::model::{Backgrounds, PathwayClass};
use crate::selection::Selection;
use crate::signature::Signature;
use num_complex::Complex64;
use serde::Serialize;

/// Largest number of per-step values (steps x grid points) one run holds: 2^25 complex
/// values are 512 MiB.
pub const MAX_STEP_VALUES: usize = 1 << 25;

/// What to add to an acquisition.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RunRequest {
    /// Background size rules; only terms some rule matches are simulated.
    pub backgrounds: Backgrounds,
    /// Errors of the applied phases.
    pub errors: PhaseErrors,
    /// Standard deviation of the noise per value (per quadrature for complex data), relative
    /// to the reference amplitude.
    pub noise: f64,
    /// Seed of the background phases, the random phase errors and the noise.
    pub seed: u64,
}

/// One simulated background term.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SimulatedBackground {
    /// Its signature (for real detection the representative of `b` and `-b`).
    pub signature: Signature,
    /// Size relative to the wanted signal.
    pub size: f64,
    /// The rule that gave the size.
    pub rule: String,
    /// Complex amplitude `A_b` as (re, im).
    pub amplitude: [f64; 2],
}

/// A simulated acquisition of a cycle and its combination.
#[derive(Clone, Debug)]
pub struct CycleRun {
    /// Largest modulus of the ideal outputs over the grid (the unit of sizes and noise).
    pub reference: f64,
    /// The backgrounds added.
    pub backgrounds: Vec<SimulatedBackground>,
    /// The phases applied, steps x experiment fields, in turns.
    pub phases: Vec<Vec<f64>>,
    /// Per-step data, shape `[steps, delays...]`, in the cycle file's step order.
    pub steps: StepSeries,
    /// The outputs combined from the per-step data (what `pathsieve combine` returns).
    pub combined: Combined,
    /// Per output, what the same weights give without errors, backgrounds or noise:
    /// `s sum_t F(t) A_t` over its kept terms.
    pub ideal: Vec<Vec<Complex64>>,
}

/// The signal of kept signatures `kept`: every response term whose signature is kept, plus
/// the conjugate of every term whose `-b` is kept when the response lists one half only.
/// `gain` scales each kept signature's part (its `s F(t)`; ones for the plain sum).
pub fn kept_signal(resp: &Response, kept: &[Signature], gain: &[Complex64]) -> Vec<Complex64> {
    let mut out = vec![Complex64::new(0.0, 0.0); resp.grid.len()];
    for term in &resp.terms {
        if let Some(k) = kept.iter().position(|t| *t == term.signature) {
            for (o, v) in out.iter_mut().zip(&term.values) {
                *o += gain[k] * v;
            }
        }
        if !resp.add_conjugates {
            continue;
        }
        let conj = term.signature.conjugate();
        if let Some(k) = kept.iter().position(|t| *t == conj) {
            for (o, v) in out.iter_mut().zip(&term.values) {
                *o += gain[k] * v.conj();
            }
        }
    }
    out
}

/// The classes of the pathways an output keeps (conjugates counted as their own pathways).
pub fn kept_classes(resp: &Response, kept: &[Signature]) -> Vec<PathwayClass> {
    let mut out: Vec<PathwayClass> = Vec::new();
    for term in &resp.terms {
        let hit = kept.contains(&term.signature)
            || (resp.add_conjugates && kept.contains(&term.signature.conjugate()));
        if hit {
            for c in &term.classes {
                if !out.contains(c) {
                    out.push(*c);
                }
            }
        }
    }
    out
}

/// The ideal kept signal of every wanted output of the experiment: `(name, sum_t A_t)`.
pub fn ideal_outputs(sel: &Selection, resp: &Response) -> Vec<(String, Vec<Complex64>)> {
    sel.outputs
        .iter()
        .map(|o| {
            let ones = vec![Complex64::new(1.0, 0.0); o.kept.len()];
            (o.name.clone(), kept_signal(resp, &o.kept, &ones))
        })
        .collect()
}

fn peak(values: &[Complex64]) -> f64 {
    values.iter().map(|v| v.norm()).fold(0.0, f64::max)
}

/// The delay-independent backgrounds of a run: every term some output must cancel that is no
/// signal term of the response, sized by the first matching rule (terms no rule matches are
/// left out), one of each `+-b` pair for real detection.
fn backgrounds(
    sel: &Selection,
    resp: &Response,
    rules: &Backgrounds,
    reference: f64,
    real: bool,
    rng: &mut SplitMix,
) -> Vec<SimulatedBackground> {
    let exp = &sel.experiment;
    let is_signal = |b: &Signature| {
        resp.terms
            .iter()
            .any(|t| t.signature == *b || (resp.add_conjugates && t.signature.conjugate() == *b))
    };
    let mut reps: Vec<Signature> = sel
        .rejected_by_all()
        .into_iter()
        .map(|b| {
            let c = b.conjugate();
            if real && c > b {
                c
            } else {
                b
            }
        })
        .filter(|b| !(is_signal(b) || (real && is_signal(&b.conjugate()))))
        .collect();
    reps.sort();
    reps.dedup();
    let mut out = Vec::new();
    for b in reps {
        let Some(size) = rules.matching(exp, &b) else {
            continue;
        };
        let modulus = size.size * reference;
        let amplitude = if b.is_zero() {
            // Real detection doubles the real part of a b = 0 term.
            Complex64::new(if real { modulus / 2.0 } else { modulus }, 0.0)
        } else {
            Complex64::from_polar(modulus, std::f64::consts::TAU * rng.uniform())
        };
        out.push(SimulatedBackground {
            signature: b,
            size: size.size,
            rule: size.rule,
            amplitude: [amplitude.re, amplitude.im],
        });
    }
    out
}

/// Simulate the acquisition of `cycle` on the response `resp` of the selection's experiment
/// and combine it; see the module documentation for sizes and phases.
///
/// # Errors
/// [`SimulationError`] when the cycle does not fit the experiment, the run exceeds
/// [`MAX_STEP_VALUES`], or sizes are asked for a wanted signal that is zero on the grid.
pub fn simulate_cycle(
    sel: &Selection,
    cycle: &Cycle,
    resp: &Response,
    req: &RunRequest,
) -> Result<CycleRun, SimulationError> {
    let exp = &sel.experiment;
    let bound = bind_cycle(sel, cycle, &SnapPolicy::default())
        .map_err(|e| SimulationError::Combine(e.into()))?;
    let n = bound.phases.len();
    let points = resp.grid.len();
    if n.checked_mul(points).is_none_or(|v| v > MAX_STEP_VALUES) {
        return Err(SimulationError::BadRequest(format!(
            "{n} steps x {points} delay points are above the limit of {MAX_STEP_VALUES} values; take fewer or coarser delays"
        )));
    }
    if req.errors.offsets.len() > exp.fields.len() {
        return Err(SimulationError::BadRequest(format!(
            "{} phase offsets for {} fields",
            req.errors.offsets.len(),
            exp.fields.len()
        )));
    }
    let real = exp.detection.is_real();
    // The ideal outputs: the same weights on the kept terms alone.
    let nominal = bound.phases_f64();
    // Gains and scales of the outputs (from one value per step; the data do not matter).
    let probe = StepData::real(vec![n], vec![0.0; n])?;
    let ideal_combined = combine_cycle(sel, cycle, &probe, &CombineRequest::default())?;
    let ideal: Vec<Vec<Complex64>> = ideal_combined
        .outputs
        .iter()
        .map(|o| {
            let g: Vec<Complex64> = o
                .gain
                .iter()
                .map(|g| Complex64::new(g[0], g[1]) * Complex64::new(o.scale[0], o.scale[1]))
                .collect();
            kept_signal(resp, &o.kept, &g)
        })
        .collect();
    let reference = ideal.iter().map(|v| peak(v)).fold(0.0, f64::max);
    let wants_sizes = !req.backgrounds.is_empty() || req.noise > 0.0;
    if wants_sizes && reference <= 0.0 {
        return Err(SimulationError::BadRequest(
            "the wanted signal is zero on this delay grid, so background sizes and noise relative to it mean nothing; check the delays and the level scheme".into(),
        ));
    }
    let mut rng = SplitMix::new(req.seed);
    let bgs = backgrounds(sel, resp, &req.backgrounds, reference, real, &mut rng);
    let cycled: Vec<bool> = bound.fixed.iter().map(|f| !f).collect();
    let phases = applied_phases(&nominal, &cycled, &req.errors, &mut rng);
    let terms: Vec<Background> = bgs
        .iter()
        .map(|b| Background {
            signature: b.signature.clone(),
            amplitude: Complex64::new(b.amplitude[0], b.amplitude[1]),
        })
        .collect();
    let steps = measure_steps(resp, &phases, &terms, req.noise * reference, real, &mut rng);
    let combined = combine_cycle(sel, cycle, &step_data(&steps)?, &CombineRequest::default())?;
    Ok(CycleRun {
        reference,
        backgrounds: bgs,
        phases,
        steps,
        combined,
        ideal,
    })
}

/// Per-step data as `combine` takes them (real values for real detection).
pub fn step_data(s: &StepSeries) -> Result<StepData, SimulationError> {
    let data = if s.real {
        StepData::real(s.shape.clone(), s.values.iter().map(|v| v.re).collect())
    } else {
        StepData::complex(s.shape.clone(), s.values.clone())
    };
    Ok(data?)
}

/// How the excitation axis of an output's spectrum is read from the classes it keeps:
/// rephasing alone flipped, rephasing with anything else folded (the absorptive sum), the
/// rest direct.
pub fn excitation_axis(classes: &[PathwayClass]) -> super::ExcitationAxis {
    use super::ExcitationAxis::{Direct, Flipped, Folded};
    let r = classes.contains(&PathwayClass::Rephasing);
    match (r, classes.len()) {
        (true, 1) => Flipped,
        (true, _) => Folded,
        _ => Direct,
    }
}
