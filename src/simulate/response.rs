//! Third- (and higher-) order response functions in the impulsive limit with the
//! rotating-wave approximation (Mukamel 1995, ch. 6; Hamm & Zanni 2011, ch. 4): every signal
//! pathway contributes its weight (sign, dipoles, final yield or radiating dipole) times, for
//! each delay `t_k` holding the element `|a><b|`, `exp(-i w_ab t_k - G_ab t_k)`. A static
//! Gaussian distribution of the energies is averaged exactly: the phase `sum_k dw_k t_k` is a
//! Gaussian variable, so the average multiplies by `exp(-var/2)`. Pathways are summed per phase
//! signature, which is what a phase cycle sees.

use super::dynamics::{Dynamics, Propagator};
use super::grid::{DelayGrid, MAX_GRID_POINTS};
use super::SimulationError;
use crate::model::{Detection, Experiment, PathwayClass};
use crate::pathways::{for_each_pathway, Pathway, Scope};
use crate::signature::Signature;
use num_complex::Complex64;
use serde::Serialize;
use std::collections::BTreeMap;

/// Largest number of signal pathways simulated.
pub const MAX_SIMULATED_PATHWAYS: usize = 10_000;

/// The summed response of every signal pathway with one phase signature.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TermSignal {
    /// The phase signature over all fields.
    pub signature: Signature,
    /// The distinct classes of its pathways.
    pub classes: Vec<PathwayClass>,
    /// How many pathways it sums.
    pub pathways: usize,
    /// Complex signal on the delay grid, C order.
    #[serde(skip)]
    pub values: Vec<Complex64>,
}

/// Every signal term of an experiment on a delay grid.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Response {
    /// The grid.
    pub grid: DelayGrid,
    /// One entry per distinct signature, in the enumerator's order of first appearance.
    pub terms: Vec<TermSignal>,
    /// True when the enumerator lists only the positive-frequency half (emission, pump-probe):
    /// the detected real signal then adds every term's complex conjugate with signature `-b`.
    pub add_conjugates: bool,
    /// Signatures of signal pathways left out because the beams do not phase-match them
    /// (they radiate away from the detector).
    pub unmatched: Vec<Signature>,
}

/// Names of the delays of `exp`: `t1..tn`, one per pulse (after each pulse's interactions),
/// less the final population for population detection.
pub fn delay_names(exp: &Experiment) -> Result<Vec<String>, SimulationError> {
    if exp.levels.is_none() || matches!(exp.detection, Detection::Nmr { .. }) {
        return Err(SimulationError::Unsupported(
            "the simulator needs a level scheme; NMR coherence paths carry no energies".into(),
        ));
    }
    if !exp.overlap.is_empty() {
        return Err(SimulationError::Unsupported(
            "overlapping pulses (`overlap`) have no well-defined delays; the impulsive simulator needs time-ordered pulses".into(),
        ));
    }
    let pulses = exp.pulse_indices().len();
    let n = match exp.detection {
        Detection::Population => pulses.saturating_sub(1),
        _ => pulses,
    };
    Ok((1..=n).map(|k| format!("t{k}")).collect())
}

/// Simulate every signal pathway of `exp` on `grid` (one axis per delay name) in a frame
/// rotating at `frame` (energy unit of `dyn_`) per quantum. Refuses a grid whose step aliases
/// a frequency present in that delay unless `undersample` is set.
pub fn simulate_response(
    exp: &Experiment,
    dyn_: &Dynamics,
    frame: f64,
    grid: &DelayGrid,
    undersample: bool,
) -> Result<Response, SimulationError> {
    let names = delay_names(exp)?;
    if grid.axes.len() != names.len() {
        return Err(SimulationError::BadRequest(format!(
            "the experiment has {} delays ({}) but the grid has {} axes",
            names.len(),
            names.join(", "),
            grid.axes.len()
        )));
    }
    if grid.is_empty() || grid.len() > MAX_GRID_POINTS {
        return Err(SimulationError::BadRequest(format!(
            "the delay grid has {} points; give 1..={MAX_GRID_POINTS} (fewer or coarser delays)",
            grid.len()
        )));
    }
    let levels = exp.levels.as_ref().expect("checked by delay_names");
    let prop = Propagator::new(levels, dyn_, frame);
    let mut paths: Vec<Pathway> = Vec::new();
    let mut too_many = false;
    for_each_pathway(exp, Scope::Signal, |p| {
        if paths.len() < MAX_SIMULATED_PATHWAYS {
            paths.push(p.clone());
        } else {
            too_many = true;
        }
    })?;
    if too_many {
        return Err(SimulationError::BadRequest(format!(
            "more than {MAX_SIMULATED_PATHWAYS} signal pathways; simplify the level scheme"
        )));
    }
    // With beam directions, the detector sees only the phase-matched terms (the selection's
    // geometry rule: coherent terms with sum |b| > 2 that the beams do not phase-match).
    let mut unmatched: Vec<Signature> = Vec::new();
    if exp.fields.iter().any(|f| f.beam.is_some()) {
        paths.retain(|p| {
            let keep = p.signature.weight() <= 2 || exp.is_phase_matched(&p.signature);
            if !keep && !unmatched.contains(&p.signature) {
                unmatched.push(p.signature.clone());
            }
            keep
        });
    }
    check_sampling(&paths, &prop, grid, dyn_, undersample)?;
    let mut index: BTreeMap<Vec<i64>, usize> = BTreeMap::new();
    let mut terms: Vec<TermSignal> = Vec::new();
    for p in &paths {
        let i = *index.entry(p.signature.0.clone()).or_insert_with(|| {
            terms.push(TermSignal {
                signature: p.signature.clone(),
                classes: Vec::new(),
                pathways: 0,
                values: vec![Complex64::new(0.0, 0.0); grid.len()],
            });
            terms.len() - 1
        });
        let t = &mut terms[i];
        t.pathways += 1;
        if !t.classes.contains(&p.class) {
            t.classes.push(p.class);
        }
        add_pathway(p, &prop, grid, &mut t.values);
    }
    Ok(Response {
        grid: grid.clone(),
        terms,
        add_conjugates: matches!(exp.detection, Detection::Emission | Detection::PumpProbe),
        unmatched,
    })
}

/// Add one pathway's response to `out`.
fn add_pathway(p: &Pathway, prop: &Propagator, grid: &DelayGrid, out: &mut [Complex64]) {
    let n = grid.axes.len();
    let rates: Vec<Complex64> = p.delays[..n].iter().map(|e| prop.rate(e)).collect();
    let offsets: Vec<Vec<f64>> = p.delays[..n].iter().map(|e| prop.offset(e)).collect();
    let homogeneous = prop.is_homogeneous();
    let mut t = vec![0.0; n];
    for (i, v) in out.iter_mut().enumerate() {
        grid.point(i, &mut t);
        let mut exponent: Complex64 = rates.iter().zip(&t).map(|(r, &tk)| r * tk).sum();
        if !homogeneous {
            let var: f64 = (0..offsets[0].len())
                .map(|z| {
                    let s: f64 = offsets.iter().zip(&t).map(|(o, &tk)| o[z] * tk).sum();
                    s * s
                })
                .sum();
            exponent -= 0.5 * var;
        }
        *v += p.weight * exponent.exp();
    }
}

/// Refuse a delay step that aliases a frequency held in that delay (unless undersampling).
fn check_sampling(
    paths: &[Pathway],
    prop: &Propagator,
    grid: &DelayGrid,
    dyn_: &Dynamics,
    undersample: bool,
) -> Result<(), SimulationError> {
    if undersample {
        return Ok(());
    }
    for (k, axis) in grid.axes.iter().enumerate() {
        let Some(dt) = axis.step() else { continue };
        let w_max = paths
            .iter()
            .map(|p| prop.rate(&p.delays[k]).im.abs())
            .fold(0.0, f64::max);
        if w_max * dt >= std::f64::consts::PI {
            let unit = dyn_.energy_unit;
            return Err(SimulationError::Aliased {
                axis: axis.name.clone(),
                step_fs: dt,
                max_step_fs: std::f64::consts::PI / w_max,
                frequency: unit.from_angular(w_max),
                unit: unit.label().to_string(),
            });
        }
    }
    Ok(())
}
