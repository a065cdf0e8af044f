//! The streaming pathway enumerator: a depth-first walk over field interactions that hands each
//! detected pathway to a visitor, reusing one buffer, so memory does not grow with the count.

use super::classify::{classify, delay_ends};
use super::nmr;
use super::size::check_size;
use super::{Direction, Element, Interaction, Pathway, Side};
use crate::error::ModelError;
use crate::model::{Detection, Experiment, LevelScheme, PathwayClass};
use crate::signature::Signature;

/// Which pathways to enumerate.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Scope {
    /// The signal pathways: every pulse acts exactly its `interactions` times (default once),
    /// for a total equal to the experiment's order.
    Signal,
    /// Every pathway through this order: each pulse may act any number of times (also zero),
    /// every total interaction count up to the order that the detection can see. This is the
    /// level-scheme-specific rejection set (lower orders, pump-probe backgrounds, ...).
    Through(u32),
}

struct Walker<'a, F: FnMut(&Pathway)> {
    exp: &'a Experiment,
    levels: &'a LevelScheme,
    pulses: Vec<usize>,
    /// The time block of each pulse slot (overlapping pulses share one).
    blocks: Vec<usize>,
    /// For each pulse slot, the first slot of its time block.
    block_start: Vec<usize>,
    remaining: Vec<u32>,
    /// Interactions so far that act before an earlier pulse of their group.
    reordered: u32,
    scope: Scope,
    max_depth: u32,
    path: Pathway,
    visit: F,
    ket: usize,
    bra: usize,
    amplitude: f64,
    /// Reused buffer: the index of the element held in each delay.
    ends: Vec<usize>,
}

/// Call `visit` for every detected pathway of `exp` in `scope`, in a deterministic order.
/// The `Pathway` passed is a reused buffer: clone it to keep it. The enumeration's size is
/// bounded first ([`check_size`]): a request above the limit is refused before any work.
pub fn for_each_pathway<F: FnMut(&Pathway)>(
    exp: &Experiment,
    scope: Scope,
    visit: F,
) -> Result<(), ModelError> {
    check_size(exp, scope)?;
    walk(exp, scope, visit);
    Ok(())
}

/// The enumeration itself, once its size is known to be within the limit.
fn walk<F: FnMut(&Pathway)>(exp: &Experiment, scope: Scope, visit: F) {
    if let Detection::Nmr { .. } = exp.detection {
        nmr::for_each_coherence_path(exp, visit);
        return;
    }
    let Some(levels) = exp.levels.as_ref() else {
        return;
    };
    let pulses = exp.pulse_indices();
    let remaining = pulses.iter().map(|&j| exp.fields[j].interactions).collect();
    let max_depth = match scope {
        Scope::Signal => exp.order,
        Scope::Through(k) => k,
    };
    let n_fields = exp.fields.len();
    let blocks = exp.overlap.blocks(&pulses);
    let block_start = (0..pulses.len())
        .map(|slot| {
            blocks
                .iter()
                .position(|&b| b == blocks[slot])
                .unwrap_or(slot)
        })
        .collect();
    let mut walker = Walker {
        exp,
        levels,
        pulses,
        blocks,
        block_start,
        remaining,
        reordered: 0,
        scope,
        max_depth,
        path: Pathway {
            interactions: Vec::with_capacity(max_depth as usize),
            elements: Vec::with_capacity(max_depth as usize),
            delays: Vec::new(),
            signature: Signature::zero(n_fields),
            sign: 1,
            class: PathwayClass::Other,
            population_class: None,
            final_element: Element {
                ket: levels.ground,
                bra: levels.ground,
            },
            weight: 1.0,
            coherence_orders: Vec::new(),
            conjugate: false,
            time_ordered: true,
        },
        visit,
        ket: levels.ground,
        bra: levels.ground,
        amplitude: 1.0,
        ends: Vec::with_capacity(max_depth as usize),
    };
    walker.descend(0);
}

/// Call `visit` for every row of a listing: each detected pathway, followed by its
/// complex-conjugate partner when `conjugates` is set and the detection lists only the
/// positive-frequency half ([`super::needs_conjugate_rows`]). Each row carries its own
/// signature, sign and weight, so a filter applied to the rows sees what is listed.
pub fn for_each_row<F: FnMut(&Pathway)>(
    exp: &Experiment,
    scope: Scope,
    conjugates: bool,
    mut visit: F,
) -> Result<(), ModelError> {
    let add_conjugates = conjugates && super::needs_conjugate_rows(exp);
    for_each_pathway(exp, scope, |p| {
        visit(p);
        if add_conjugates {
            visit(&p.conjugated());
        }
    })
}

/// Count the detected pathways without keeping any (size-checked like [`for_each_pathway`]).
pub fn count_pathways(exp: &Experiment, scope: Scope) -> Result<u64, ModelError> {
    let mut n = 0u64;
    for_each_pathway(exp, scope, |_| n += 1)?;
    Ok(n)
}

impl<'a, F: FnMut(&Pathway)> Walker<'a, F> {
    fn descend(&mut self, depth: u32) {
        let at_end = match self.scope {
            Scope::Signal => depth == self.max_depth,
            Scope::Through(_) => depth >= 1,
        };
        if at_end {
            self.try_emit(depth);
        }
        if depth == self.max_depth {
            return;
        }
        let last_pulse_slot = self
            .path
            .interactions
            .last()
            .and_then(|i| self.pulses.iter().position(|&p| p == i.field));
        for slot in 0..self.pulses.len() {
            if !self.slot_allowed(slot, last_pulse_slot) {
                continue;
            }
            let field = self.pulses[slot];
            let back = u32::from(last_pulse_slot.is_some_and(|l| slot < l));
            self.reordered += back;
            if matches!(self.scope, Scope::Signal) {
                self.remaining[slot] -= 1;
            }
            self.interact(depth, field, Side::Ket);
            self.interact(depth, field, Side::Bra);
            if matches!(self.scope, Scope::Signal) {
                self.remaining[slot] += 1;
            }
            self.reordered -= back;
        }
    }

    /// Time order by blocks: a pulse may act once every pulse of an earlier block is done
    /// (signal scope), or when its block is not earlier than the last interaction's (every
    /// pathway through the order); pulses of one block (overlapping) act in any order.
    fn slot_allowed(&self, slot: usize, last: Option<usize>) -> bool {
        match self.scope {
            Scope::Signal => {
                self.remaining[slot] > 0
                    && self.remaining[..self.block_start[slot]]
                        .iter()
                        .all(|&r| r == 0)
            }
            Scope::Through(_) => last.is_none_or(|l| self.blocks[slot] >= self.blocks[l]),
        }
    }

    fn interact(&mut self, depth: u32, field: usize, side: Side) {
        let levels = self.levels;
        let current = match side {
            Side::Ket => self.ket,
            Side::Bra => self.bra,
        };
        let drives = self.exp.fields[field].drives.as_deref();
        for direction in [Direction::Up, Direction::Down] {
            let list = match direction {
                Direction::Up => &levels.up[current],
                Direction::Down => &levels.down[current],
            };
            for &t in list {
                if drives.is_some_and(|d| !d.contains(&t)) {
                    continue;
                }
                let tr = &levels.transitions[t];
                let to = match direction {
                    Direction::Up => tr.upper,
                    Direction::Down => tr.lower,
                };
                let step = Interaction {
                    field,
                    side,
                    direction,
                    from: current,
                    to,
                };
                let saved = (self.ket, self.bra, self.amplitude);
                match side {
                    Side::Ket => self.ket = to,
                    Side::Bra => self.bra = to,
                }
                self.amplitude *= tr.dipole;
                self.path.signature.0[field] += step.phase_sign();
                self.path.interactions.push(step);
                self.path.elements.push(Element {
                    ket: self.ket,
                    bra: self.bra,
                });
                self.descend(depth + 1);
                self.path.elements.pop();
                self.path.interactions.pop();
                self.path.signature.0[field] -= step.phase_sign();
                (self.ket, self.bra, self.amplitude) = saved;
            }
        }
    }

    fn try_emit(&mut self, depth: u32) {
        let exp = self.exp;
        let levels = self.levels;
        if let Some(parity) = exp.detection.order_parity() {
            if depth % 2 != parity {
                return;
            }
        }
        let (mk, mb) = (levels.manifold(self.ket), levels.manifold(self.bra));
        let detected_factor = match exp.detection {
            Detection::Emission | Detection::PumpProbe => {
                if mk != mb + 1 {
                    return;
                }
                match levels.dipole_between(self.ket, self.bra) {
                    Some(mu) => mu,
                    None => return,
                }
            }
            Detection::Population => {
                if self.ket != self.bra {
                    return;
                }
                let y = levels.states[self.ket].yield_weight;
                if y == 0.0 {
                    return;
                }
                y
            }
            Detection::Nmr { .. } => return,
        };
        // The reference enters with -1: a separate LO, or the probe in pump-probe geometry.
        let reference = match exp.detection {
            Detection::Emission => exp.reference_index(),
            Detection::PumpProbe => exp.detector_field(),
            _ => None,
        };
        if let Some(r) = reference {
            self.path.signature.0[r] -= 1;
        }
        let bra_count = self
            .path
            .interactions
            .iter()
            .filter(|i| i.side == Side::Bra)
            .count();
        self.path.sign = if bra_count % 2 == 0 { 1 } else { -1 };
        self.path.final_element = Element {
            ket: self.ket,
            bra: self.bra,
        };
        self.path.weight = f64::from(self.path.sign) * self.amplitude * detected_factor;
        self.path.time_ordered = self.reordered == 0;
        delay_ends(&self.path.interactions, &mut self.ends);
        self.path.delays.clear();
        let elements = &self.path.elements;
        self.path
            .delays
            .extend(self.ends.iter().map(|&i| elements[i]));
        let (class, pop) = classify(levels, elements, &self.ends, &exp.detection);
        self.path.class = if exp.swap_rnr_labels {
            match class {
                PathwayClass::Rephasing => PathwayClass::NonRephasing,
                PathwayClass::NonRephasing => PathwayClass::Rephasing,
                c => c,
            }
        } else {
            class
        };
        self.path.population_class = pop;
        (self.visit)(&self.path);
        if let Some(r) = reference {
            self.path.signature.0[r] += 1;
        }
    }
}
