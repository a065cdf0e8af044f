//! The experiment model: fields in time order, the level scheme, the detection mode, the
//! perturbative order and the wanted signals. Built from a file by [`crate::experiment_file`]
//! and validated there; everything downstream takes it as correct.

pub mod backgrounds;
pub mod geometry;
mod levels;
mod overlap;

pub use backgrounds::Backgrounds;
pub use levels::{LevelScheme, State, Transition};
pub use overlap::Overlap;

use crate::signature::Signature;
use serde::Serialize;

/// Whether a field is a pulse that drives the sample or the detection reference.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum FieldKind {
    /// A pulse that interacts with the sample.
    Pulse,
    /// A local oscillator (heterodyne detection) or, for NMR, the receiver reference phase.
    Reference,
}

/// Whether the phase of a field is stepped by the cycle or held fixed.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum PhaseControl {
    /// The cycle may set this field's phase.
    Cycled,
    /// The phase is the same in every step (e.g. a probe with no modulator).
    Fixed,
}

/// One field of the experiment.
#[derive(Clone, Debug, Serialize)]
pub struct Field {
    /// Short label, e.g. `p1` or `LO`.
    pub name: String,
    /// Pulse or reference.
    pub kind: FieldKind,
    /// Cycled or fixed phase.
    pub phase: PhaseControl,
    /// Beam direction as a transverse wavevector; `None` means collinear with everything else.
    pub beam: Option<Vec<num_rational::Ratio<i64>>>,
    /// How many times the pulse acts in the signal scope (default 1; 2 for a single pump).
    pub interactions: u32,
    /// Transitions (indices into [`LevelScheme::transitions`]) this pulse can drive; `None` = all.
    pub drives: Option<Vec<usize>>,
}

/// How the signal is detected; decides which final elements count and how the reference enters.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "mode")]
pub enum Detection {
    /// Coherent emission heterodyned with an LO field: the final element is a coherence with the
    /// ket one quantum above the bra, and the LO enters with coefficient -1.
    Emission,
    /// Pump-probe (self-heterodyne) geometry: the last pulse is also the LO.
    PumpProbe,
    /// Population (action) detection: fluorescence, photocurrent, photo-ions.
    Population,
    /// NMR coherence-transfer pathways with a receiver reference.
    Nmr {
        /// Largest |coherence order| the spin system supports (2I for a spin I).
        max_coherence: i32,
        /// The detected coherence order (usually -1).
        detected: i32,
    },
}

impl Detection {
    /// True when the detected quantity is real, so every term `b` comes with its conjugate `-b`.
    pub fn is_real(&self) -> bool {
        !matches!(self, Detection::Nmr { .. })
    }

    /// Parity of the interaction count this detection needs: odd for emission, even for
    /// population; `None` when any count works (NMR).
    pub fn order_parity(&self) -> Option<u32> {
        match self {
            Detection::Emission | Detection::PumpProbe => Some(1),
            Detection::Population => Some(0),
            Detection::Nmr { .. } => None,
        }
    }

    /// A short name for tables.
    pub fn label(&self) -> &'static str {
        match self {
            Detection::Emission => "emission (heterodyne, LO)",
            Detection::PumpProbe => "pump-probe (self-heterodyne)",
            Detection::Population => "population (action)",
            Detection::Nmr { .. } => "NMR coherence orders",
        }
    }
}

/// The class of a pathway by its coherences (see `docs/conventions.md`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum PathwayClass {
    /// First-delay and detection-delay coherences oscillate with opposite sign (photon echo).
    Rephasing,
    /// First-delay and detection-delay coherences oscillate with the same sign.
    NonRephasing,
    /// A two-quantum coherence in the second delay.
    DoubleQuantum,
    /// Anything else (pump-probe-type, lower or higher orders, NMR paths).
    Other,
}

impl PathwayClass {
    /// Short label used in tables: `R`, `NR`, `2Q`, `other`.
    pub fn short(&self) -> &'static str {
        match self {
            PathwayClass::Rephasing => "R",
            PathwayClass::NonRephasing => "NR",
            PathwayClass::DoubleQuantum => "2Q",
            PathwayClass::Other => "other",
        }
    }

    /// Parse a class name as written in experiment files.
    pub fn parse(text: &str) -> Option<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "rephasing" | "r" => Some(PathwayClass::Rephasing),
            "non-rephasing" | "nonrephasing" | "nr" => Some(PathwayClass::NonRephasing),
            "double-quantum" | "2q" | "dq" => Some(PathwayClass::DoubleQuantum),
            "other" => Some(PathwayClass::Other),
            _ => None,
        }
    }
}

/// Ground-state bleach, stimulated emission or excited-state absorption, by the population
/// held during the waiting time.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
pub enum PopulationClass {
    /// Waiting time spent in the ground manifold.
    #[serde(rename = "GSB")]
    Gsb,
    /// Waiting time in an excited manifold, no higher state reached afterwards.
    #[serde(rename = "SE")]
    Se,
    /// Waiting time in an excited manifold, a higher manifold reached afterwards.
    #[serde(rename = "ESA")]
    Esa,
}

impl PopulationClass {
    /// `GSB`, `SE` or `ESA`.
    pub fn short(&self) -> &'static str {
        match self {
            PopulationClass::Gsb => "GSB",
            PopulationClass::Se => "SE",
            PopulationClass::Esa => "ESA",
        }
    }
}

/// One item an output wants to keep.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "by", content = "value")]
pub enum WantedItem {
    /// Every pathway of this class (signal scope).
    Class(PathwayClass),
    /// An explicit signature over all fields.
    Signature(Signature),
    /// An NMR coherence-order path, starting at 0 and ending at the detected order.
    CoherencePath(Vec<i32>),
}

/// A wanted signal: one output of the cycle with its own weight vector.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct WantedSignal {
    /// Output name, e.g. `R`.
    pub name: String,
    /// What it keeps.
    pub items: Vec<WantedItem>,
}

/// A whole experiment as read from a file.
#[derive(Clone, Debug, Serialize)]
pub struct Experiment {
    /// Free-text title.
    pub title: String,
    /// Fields in time order, the reference last if present.
    pub fields: Vec<Field>,
    /// The level scheme (absent for NMR).
    pub levels: Option<LevelScheme>,
    /// Detection mode.
    pub detection: Detection,
    /// Perturbative order of the wanted signal (number of field interactions).
    pub order: u32,
    /// Which pulses overlap in time, so that their interactions need not follow pulse order.
    pub overlap: Overlap,
    /// Use the other labelling found in part of the literature: swap the R and NR names.
    pub swap_rnr_labels: bool,
    /// The wanted signals (outputs).
    pub wanted: Vec<WantedSignal>,
    /// Sizes of the rejected terms relative to the wanted signal (`[backgrounds]`), for
    /// ranking leaks by how much they matter.
    pub backgrounds: Backgrounds,
    /// Notes on beam components snapped to exact values within their written precision.
    pub beam_notes: Vec<String>,
    /// Beam components kept at their rounded written values (no simple exact value fits).
    pub beam_rounding: Vec<geometry::RoundedComponent>,
}

impl Experiment {
    /// Field labels in order.
    pub fn field_names(&self) -> Vec<String> {
        self.fields.iter().map(|f| f.name.clone()).collect()
    }

    /// Wavevector labels `k<name>` used in direction expressions.
    pub fn wavevector_labels(&self) -> Vec<String> {
        self.fields.iter().map(|f| format!("k{}", f.name)).collect()
    }

    /// Index of the reference field (LO or receiver), if any.
    pub fn reference_index(&self) -> Option<usize> {
        self.fields
            .iter()
            .position(|f| f.kind == FieldKind::Reference)
    }

    /// Index of the field that acts as the detection reference: the LO/receiver, or in
    /// pump-probe geometry the last pulse.
    pub fn detector_field(&self) -> Option<usize> {
        match self.detection {
            Detection::PumpProbe => self.fields.iter().rposition(|f| f.kind == FieldKind::Pulse),
            _ => self.reference_index(),
        }
    }

    /// Indices of the pulses, in time order.
    pub fn pulse_indices(&self) -> Vec<usize> {
        (0..self.fields.len())
            .filter(|&j| self.fields[j].kind == FieldKind::Pulse)
            .collect()
    }

    /// The signal's phase-matching direction `k_s` over the pulses for a detected term `b`:
    /// the pulses' components, with the probe's LO coefficient added back in pump-probe
    /// geometry (the term is `b = b_pathway - e_probe`, or for a complex-conjugate term
    /// `b = b_pathway + e_probe`; the one with the smaller probe coefficient is shown, the
    /// first on a tie), e.g. `-kpu1+kpu2+kpr`.
    pub fn signal_direction(&self, b: &Signature) -> String {
        let pulses = self.pulse_indices();
        let probe = match self.detection {
            Detection::PumpProbe => self.detector_field(),
            _ => None,
        };
        let part = Signature(
            pulses
                .iter()
                .map(|&j| match probe {
                    Some(p) if p == j && b.0[j] > 0 => b.0[j] - 1,
                    Some(p) if p == j => b.0[j] + 1,
                    _ => b.0[j],
                })
                .collect(),
        );
        let labels: Vec<String> = pulses
            .iter()
            .map(|&j| format!("k{}", self.fields[j].name))
            .collect();
        part.direction(&labels)
    }

    /// The order of a term: `sum |b|` less the reference's one unit where a reference enters.
    pub fn term_order(&self, b: &Signature) -> i64 {
        (b.weight() - i64::from(self.has_reference())).max(0)
    }

    /// True when a reference field (LO, receiver, or the probe in pump-probe) enters the
    /// signature; the agnostic set then allows one more unit of `sum |b|`.
    pub fn has_reference(&self) -> bool {
        self.detector_field().is_some()
    }

    /// True when the term `b` is phase matched: `sum_j b_j k_j = 0` over all fields, with
    /// beams given as transverse directions. Collinear fields (no beam) never constrain.
    pub fn is_phase_matched(&self, b: &Signature) -> bool {
        let beams = self.beams();
        let dims = beams.iter().flatten().map(|v| v.len()).max().unwrap_or(0);
        // Big rationals: sums of many-digit components never overflow.
        (0..dims).all(|d| num_traits::Zero::is_zero(&geometry::exact_sum(&beams, b, d)))
    }

    /// The one geometry rule every command applies (the selection of `design`, `check`,
    /// `export` and `draw`, the `agnostic --geometry` listing and the `pathways` phase-matched
    /// column): a pair term (`sum |b| <= 2`: the reference alone, scatter of one pulse onto
    /// another or the detector) always passes, since scatter reaches the detector whatever
    /// the beam directions; a coherent term passes when the beams phase-match it
    /// ([`Self::is_phase_matched`]).
    ///
    /// # Errors
    /// [`ModelError::BeamRounding`] when the decision for a coherent term depends on how a
    /// rounded beam component is read.
    pub fn passes_geometry(&self, b: &Signature) -> Result<bool, crate::error::ModelError> {
        if b.weight() <= 2 {
            return Ok(true);
        }
        if let Some(detail) = self.phase_matching_depends_on_rounding(b) {
            return Err(crate::error::ModelError::BeamRounding { detail });
        }
        Ok(self.is_phase_matched(b))
    }

    /// The beam direction of each field (`None`: collinear, no constraint).
    pub fn beams(&self) -> Vec<Option<&[num_rational::Ratio<i64>]>> {
        self.fields.iter().map(|f| f.beam.as_deref()).collect()
    }

    /// When whether `b` is phase matched depends on how rounded beam components are read
    /// (see [`geometry`]), the reason; `None` when every reading within the written precision
    /// decides alike.
    pub fn phase_matching_depends_on_rounding(&self, b: &Signature) -> Option<String> {
        if self.beam_rounding.is_empty() {
            return None;
        }
        geometry::rounding_dependence(&self.beams(), &self.beam_rounding, b)
    }
}
