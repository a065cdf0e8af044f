//! The phase-cycle model shared by the checker, the designer and the exporters: steps with a
//! phase per field, one weight vector per output, and metadata. File formats live in the
//! submodules; this module holds only the data and its exact/float views.

pub mod toml_format;

use crate::exact::{Cyclo, Turns};
use crate::signature::Signature;
use num_complex::Complex64;
use serde::Serialize;

/// One phase of one step.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind", content = "value")]
pub enum Phase {
    /// An exact fraction of a turn, reduced into [0, 1).
    Exact(Turns),
    /// A phase known only approximately, in turns.
    Approx(f64),
}

impl Phase {
    /// The phase in turns as a float.
    pub fn turns_f64(&self) -> f64 {
        match self {
            Phase::Exact(t) => *t.numer() as f64 / *t.denom() as f64,
            Phase::Approx(x) => *x,
        }
    }

    /// The exact value, if known.
    pub fn exact(&self) -> Option<Turns> {
        match self {
            Phase::Exact(t) => Some(*t),
            Phase::Approx(_) => None,
        }
    }
}

/// One weight of one step for one output.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind", content = "value")]
pub enum Weight {
    /// An exact element of a cyclotomic field.
    Exact(Cyclo),
    /// A weight known only approximately.
    Approx(Complex64),
}

impl Weight {
    /// The weight as a complex float.
    pub fn to_complex(&self) -> Complex64 {
        match self {
            Weight::Exact(c) => c.to_complex(),
            Weight::Approx(z) => *z,
        }
    }
}

/// How an output's weights were given.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum WeightSource {
    /// Listed per step in the file.
    Explicit,
    /// Derived from a wanted signature: `w_m = exp(-2 pi i t . phi_m) / N`.
    FromSignature(Signature),
}

/// One output of the cycle (one combination of the steps).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CycleOutput {
    /// Output name, matched against the experiment's wanted signals.
    pub name: String,
    /// One weight per step.
    pub weights: Vec<Weight>,
    /// Where the weights came from.
    pub source: WeightSource,
}

/// Descriptive metadata of a cycle file.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct CycleMeta {
    /// Free-text title.
    pub title: Option<String>,
    /// Phase grid, steps per turn per field, when the cycle lies on one.
    pub grid: Option<Vec<u32>>,
    /// How the cycle was made (e.g. `pathsieve design 0.1.0, lattice search`).
    pub made_by: Option<String>,
    /// The experiment file it was made for, if recorded.
    pub experiment: Option<String>,
    /// Free notes.
    pub notes: Vec<String>,
}

/// A whole phase cycle.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Cycle {
    /// Field names, one per phase column, in the experiment's field order.
    pub fields: Vec<String>,
    /// Steps: one phase per field.
    pub steps: Vec<Vec<Phase>>,
    /// Outputs: one weight per step each.
    pub outputs: Vec<CycleOutput>,
    /// Metadata.
    pub meta: CycleMeta,
}

impl Cycle {
    /// Number of steps N.
    pub fn len(&self) -> usize {
        self.steps.len()
    }

    /// True when the cycle has no steps.
    pub fn is_empty(&self) -> bool {
        self.steps.is_empty()
    }

    /// True when every phase and every weight is exact.
    pub fn is_exact(&self) -> bool {
        self.steps
            .iter()
            .flatten()
            .all(|p| matches!(p, Phase::Exact(_)))
            && self
                .outputs
                .iter()
                .flat_map(|o| &o.weights)
                .all(|w| matches!(w, Weight::Exact(_)))
    }

    /// All phases as exact turns, if every one is exact.
    pub fn exact_phases(&self) -> Option<Vec<Vec<Turns>>> {
        self.steps
            .iter()
            .map(|s| s.iter().map(Phase::exact).collect())
            .collect()
    }

    /// Phases in turns as floats.
    pub fn phases_f64(&self) -> Vec<Vec<f64>> {
        self.steps
            .iter()
            .map(|s| s.iter().map(Phase::turns_f64).collect())
            .collect()
    }
}
