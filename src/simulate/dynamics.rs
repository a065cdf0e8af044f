//! The dynamics of the level scheme for the simulator: state energies, homogeneous dephasing
//! per coherence, population lifetimes per state, and a static Gaussian inhomogeneous
//! distribution of the state energies with a stated correlation between states. Compiled into
//! per-element complex rates `-i w_ab - G_ab` (rad/fs) and the linear maps from the random
//! energy offsets to each element's frequency offset.

use super::units::{EnergyUnit, TimeUnit};
use crate::model::LevelScheme;
use crate::pathways::Element;
use num_complex::Complex64;
use serde::Serialize;

/// The `[dynamics]` table of an experiment file, with state names resolved to indices.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Dynamics {
    /// Unit of energies, widths and the rotating frame.
    pub energy_unit: EnergyUnit,
    /// Unit of lifetimes (and, by default, of delays).
    pub time_unit: TimeUnit,
    /// Energy of each state in `energy_unit` (the ground state defaults to 0).
    pub energies: Vec<f64>,
    /// Pure-dephasing rate of every coherence without its own entry: the half width at half
    /// maximum of its Lorentzian, in `energy_unit`.
    pub dephasing: f64,
    /// Pure-dephasing rates of particular coherences `(a, b, width)`, either order.
    pub pair_dephasing: Vec<(usize, usize, f64)>,
    /// Population lifetime `T1` of each state in `time_unit`; `None` = no decay.
    pub lifetimes: Vec<Option<f64>>,
    /// Standard deviation of the static Gaussian offset of each single-quantum transition, in
    /// `energy_unit` (0 = homogeneous only).
    pub inhomogeneous: f64,
    /// Correlation in [0, 1] between the offsets of different states, per quantum: state `a`
    /// of manifold `m_a` is offset by `sigma m_a (sqrt(c) Z_0 + sqrt(1 - c) Z_a)` with
    /// independent standard normal `Z`. With `c = 1` every transition of the same manifold
    /// step shifts together (one environment coordinate).
    pub correlation: f64,
}

impl Dynamics {
    /// Homogeneous dynamics with every energy given and one dephasing width, no lifetimes and
    /// no inhomogeneity.
    pub fn homogeneous(energy_unit: EnergyUnit, energies: Vec<f64>, dephasing: f64) -> Dynamics {
        let n = energies.len();
        Dynamics {
            energy_unit,
            time_unit: TimeUnit::Femtosecond,
            energies,
            dephasing,
            pair_dephasing: Vec::new(),
            lifetimes: vec![None; n],
            inhomogeneous: 0.0,
            correlation: 1.0,
        }
    }

    fn pure_dephasing(&self, a: usize, b: usize) -> f64 {
        self.pair_dephasing
            .iter()
            .find(|&&(x, y, _)| (x, y) == (a, b) || (x, y) == (b, a))
            .map_or(self.dephasing, |&(_, _, w)| w)
    }

    fn decay_rate(&self, a: usize) -> f64 {
        self.lifetimes[a].map_or(0.0, |t1| 1.0 / (t1 * self.time_unit.fs()))
    }
}

/// Dynamics compiled for evaluation: everything in rad/fs.
#[derive(Clone, Debug)]
pub struct Propagator {
    /// `-i (w_ab - d_ab w_frame) - G_ab` for every element `(a, b)`, row-major by `a`.
    rates: Vec<Complex64>,
    /// Offset coefficients of each state on the random variables `Z_0, Z_1..Z_n` (rad/fs).
    offsets: Vec<Vec<f64>>,
    states: usize,
}

impl Propagator {
    /// Compile `dyn_` for `levels`, in a frame rotating at `frame` (in the energy unit) per
    /// quantum of excitation difference.
    pub fn new(levels: &LevelScheme, dyn_: &Dynamics, frame: f64) -> Propagator {
        let n = levels.states.len();
        let unit = dyn_.energy_unit;
        let w_frame = unit.to_angular(frame);
        let mut rates = Vec::with_capacity(n * n);
        for a in 0..n {
            for b in 0..n {
                let d = f64::from(levels.manifold(a)) - f64::from(levels.manifold(b));
                let w = unit.to_angular(dyn_.energies[a] - dyn_.energies[b]) - d * w_frame;
                let g = if a == b {
                    dyn_.decay_rate(a)
                } else {
                    unit.to_angular(dyn_.pure_dephasing(a, b))
                        + 0.5 * (dyn_.decay_rate(a) + dyn_.decay_rate(b))
                };
                rates.push(Complex64::new(-g, -w));
            }
        }
        let sigma = unit.to_angular(dyn_.inhomogeneous);
        let c = dyn_.correlation.clamp(0.0, 1.0);
        let offsets = (0..n)
            .map(|a| {
                let m = f64::from(levels.manifold(a));
                let mut v = vec![0.0; n + 1];
                v[0] = sigma * m * c.sqrt();
                v[a + 1] = sigma * m * (1.0 - c).sqrt();
                v
            })
            .collect();
        Propagator {
            rates,
            offsets,
            states: n,
        }
    }

    /// `-i w - G` of an element, rad/fs.
    pub fn rate(&self, e: &Element) -> Complex64 {
        self.rates[e.ket * self.states + e.bra]
    }

    /// The frequency offset of an element on the random variables (rad/fs per unit `Z`).
    pub fn offset(&self, e: &Element) -> Vec<f64> {
        self.offsets[e.ket]
            .iter()
            .zip(&self.offsets[e.bra])
            .map(|(a, b)| a - b)
            .collect()
    }

    /// True when the inhomogeneous width is zero.
    pub fn is_homogeneous(&self) -> bool {
        self.offsets.iter().flatten().all(|&x| x == 0.0)
    }
}

/// The frequency window `[lo, hi]` (in the energy unit) that holds every transition of the
/// level scheme with room for its lines: the transition energies widened on each side by
/// five times the broadest line (dephasing plus twice the inhomogeneous width) or a tenth of
/// their spread, and at least 2 % of the highest. `None` without transitions.
pub fn transition_window(levels: &LevelScheme, dyn_: &Dynamics) -> Option<[f64; 2]> {
    let energies: Vec<f64> = levels
        .transitions
        .iter()
        .map(|t| (dyn_.energies[t.upper] - dyn_.energies[t.lower]).abs())
        .collect();
    let lo = energies.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = energies.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if !lo.is_finite() || !hi.is_finite() {
        return None;
    }
    let widest = dyn_
        .pair_dephasing
        .iter()
        .map(|p| p.2)
        .fold(dyn_.dephasing, f64::max);
    let margin = (5.0 * (widest + 2.0 * dyn_.inhomogeneous))
        .max(0.1 * (hi - lo))
        .max(0.02 * hi.abs())
        .max(f64::MIN_POSITIVE);
    Some([lo - margin, hi + margin])
}
