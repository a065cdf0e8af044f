//! The level scheme: states grouped in manifolds by excitation number, and the allowed
//! dipole transitions between adjacent manifolds.

use serde::Serialize;

/// One state of the level scheme.
#[derive(Clone, Debug, Serialize)]
pub struct State {
    /// Label, e.g. `g`, `e1`, `f`.
    pub name: String,
    /// Excitation number: 0 for the ground manifold, 1 for singly excited, ...
    pub manifold: u32,
    /// Optional energy (any unit the user chooses; used for display only).
    pub energy: Option<f64>,
    /// Relative detection yield of this state as a final population (population detection).
    pub yield_weight: f64,
}

/// An allowed transition between a lower and an upper state one manifold apart.
#[derive(Clone, Debug, Serialize)]
pub struct Transition {
    /// Index of the lower state.
    pub lower: usize,
    /// Index of the upper state.
    pub upper: usize,
    /// Relative transition dipole (amplitude factor per interaction).
    pub dipole: f64,
}

/// States and transitions, with adjacency lists for fast enumeration.
#[derive(Clone, Debug, Serialize)]
pub struct LevelScheme {
    /// All states; index 0 need not be the ground state, see `ground`.
    pub states: Vec<State>,
    /// All allowed transitions.
    pub transitions: Vec<Transition>,
    /// The state whose population the system starts in.
    pub ground: usize,
    /// For each state, the transitions (index) leading up from it.
    #[serde(skip)]
    pub up: Vec<Vec<usize>>,
    /// For each state, the transitions (index) leading down from it.
    #[serde(skip)]
    pub down: Vec<Vec<usize>>,
}

impl LevelScheme {
    /// Build the adjacency lists from states and transitions.
    pub fn new(states: Vec<State>, transitions: Vec<Transition>, ground: usize) -> Self {
        let mut up = vec![Vec::new(); states.len()];
        let mut down = vec![Vec::new(); states.len()];
        for (i, t) in transitions.iter().enumerate() {
            up[t.lower].push(i);
            down[t.upper].push(i);
        }
        LevelScheme {
            states,
            transitions,
            ground,
            up,
            down,
        }
    }

    /// Manifold of a state.
    pub fn manifold(&self, state: usize) -> u32 {
        self.states[state].manifold
    }

    /// Name of a state.
    pub fn name(&self, state: usize) -> &str {
        &self.states[state].name
    }

    /// True when a transition joins the two states (in either order).
    pub fn connects(&self, a: usize, b: usize) -> bool {
        self.up[a].iter().any(|&t| self.transitions[t].upper == b)
            || self.up[b].iter().any(|&t| self.transitions[t].upper == a)
    }

    /// The dipole joining two states, if a transition exists.
    pub fn dipole_between(&self, a: usize, b: usize) -> Option<f64> {
        self.up[a]
            .iter()
            .chain(&self.up[b])
            .map(|&t| &self.transitions[t])
            .find(|t| (t.lower == a && t.upper == b) || (t.lower == b && t.upper == a))
            .map(|t| t.dipole)
    }
}
