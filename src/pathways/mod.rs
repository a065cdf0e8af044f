//! Liouville pathways (double-sided diagrams): their types, the streaming enumerator, the
//! classifier, the summary by signature, and the resolution of wanted signals to signatures.

mod classify;
mod enumerate;
mod nmr;
mod resolve;
mod size;
mod summary;

pub use enumerate::{count_pathways, for_each_pathway, for_each_row, Scope};
pub use resolve::{coherence_signature, resolve_signals, Contamination, Reordered, ResolvedSignal};
pub use size::{check_size, pathway_bound, MAX_VISITED_PATHWAYS};
pub use summary::{needs_conjugate_rows, summarize, SignatureSummary, Summary};

use crate::model::{PathwayClass, PopulationClass};
use crate::signature::Signature;
use serde::Serialize;

/// Which side of the density matrix an interaction acts on.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Side {
    /// The ket (left line of the diagram).
    Ket,
    /// The bra (right line of the diagram).
    Bra,
}

/// Whether an interaction raises or lowers the state on its side.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Direction {
    /// Absorption on that side: one manifold up.
    Up,
    /// Emission on that side: one manifold down.
    Down,
}

/// One field interaction of a pathway.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub struct Interaction {
    /// Index of the field in the experiment.
    pub field: usize,
    /// Ket or bra.
    pub side: Side,
    /// Up or down.
    pub direction: Direction,
    /// State before the interaction on that side.
    pub from: usize,
    /// State after the interaction on that side.
    pub to: usize,
}

impl Interaction {
    /// The interaction's contribution to the phase signature of its field (domain.md 2):
    /// ket up +1, ket down -1, bra up -1, bra down +1.
    pub fn phase_sign(&self) -> i64 {
        match (self.side, self.direction) {
            (Side::Ket, Direction::Up) | (Side::Bra, Direction::Down) => 1,
            (Side::Ket, Direction::Down) | (Side::Bra, Direction::Up) => -1,
        }
    }
}

/// A density-matrix element `|ket><bra|` given by state indices.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
pub struct Element {
    /// Ket state index.
    pub ket: usize,
    /// Bra state index.
    pub bra: usize,
}

/// One enumerated pathway with everything the tables, diagrams and checks need.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Pathway {
    /// Interactions in time order (empty for NMR coherence paths).
    pub interactions: Vec<Interaction>,
    /// The element after each interaction.
    pub elements: Vec<Element>,
    /// The element in each delay, in time order: after each run of interactions with one
    /// pulse (for time-ordered pulses, after each pulse's last interaction).
    pub delays: Vec<Element>,
    /// Phase signature over all fields, the reference included as the detection mode says.
    pub signature: Signature,
    /// `(-1)^(number of bra interactions)`.
    pub sign: i8,
    /// Rephasing, non-rephasing, double-quantum or other.
    pub class: PathwayClass,
    /// GSB / SE / ESA where the pathway has a waiting-time population.
    pub population_class: Option<PopulationClass>,
    /// Final element.
    pub final_element: Element,
    /// Relative amplitude: sign times dipole product times yield (population) or radiating
    /// dipole (emission).
    pub weight: f64,
    /// NMR only: coherence order before the first pulse and after each pulse.
    pub coherence_orders: Vec<i32>,
    /// True for the complex-conjugate partner row of a real-detection term.
    pub conjugate: bool,
    /// True when the interactions follow the pulses' time order; false for an ordering that
    /// only overlapping pulses allow (a later pulse of a group acting before an earlier one).
    pub time_ordered: bool,
}

impl Pathway {
    /// The sign of the complex-conjugate partner: `(-1)^(bra interactions of the partner)`,
    /// i.e. of this pathway's ket interactions.
    pub fn conjugate_sign(&self) -> i8 {
        let kets = self
            .interactions
            .iter()
            .filter(|i| i.side == Side::Ket)
            .count();
        if kets % 2 == 0 {
            1
        } else {
            -1
        }
    }

    /// The weight of the complex-conjugate partner: the same amplitude with the partner's sign.
    pub fn conjugate_weight(&self) -> f64 {
        self.weight * f64::from(self.conjugate_sign()) * f64::from(self.sign)
    }

    /// The complex-conjugate partner: every interaction moved to the other side, signature
    /// negated. Used for emission-type detection where the enumerator lists only the
    /// positive-frequency half.
    pub fn conjugated(&self) -> Pathway {
        let swap_side = |s: Side| match s {
            Side::Ket => Side::Bra,
            Side::Bra => Side::Ket,
        };
        let flip = |e: &Element| Element {
            ket: e.bra,
            bra: e.ket,
        };
        Pathway {
            interactions: self
                .interactions
                .iter()
                .map(|i| Interaction {
                    side: swap_side(i.side),
                    ..*i
                })
                .collect(),
            elements: self.elements.iter().map(flip).collect(),
            delays: self.delays.iter().map(flip).collect(),
            signature: self.signature.conjugate(),
            sign: self.conjugate_sign(),
            class: self.class,
            population_class: self.population_class,
            final_element: flip(&self.final_element),
            weight: self.conjugate_weight(),
            coherence_orders: self.coherence_orders.iter().map(|p| -p).collect(),
            conjugate: !self.conjugate,
            time_ordered: self.time_ordered,
        }
    }
}
