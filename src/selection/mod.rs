//! The selection problem: one definition, built once from an experiment and a request, of what
//! every output keeps and what it must cancel, shared by `design`, `check`, `draw leakage` and
//! `export`. It owns the kept signatures per output, the rejection set with the origin of every
//! term (agnostic set or enumerated pathway class, the reference alone, scatter pairs, other
//! outputs, conjugates), the geometry rule (geometry drops coherent terms that are not phase
//! matched, never pair or scatter terms: docs/conventions.md), the first-leak search policy and
//! the NMR coherence-level rules. The terms are built in [`terms`], the leak search in [`leak`].
//!
//! ```
//! use pathsieve::experiment_file::parse_experiment;
//! use pathsieve::selection::{Selection, SelectionRequest};
//! let exp = parse_experiment(r#"
//! order = 1
//! [detection]
//! mode = "emission"
//! [[field]]
//! name = "1"
//! [[field]]
//! name = "LO"
//! kind = "lo"
//! [levels]
//! states = [{ name = "g", manifold = 0 }, { name = "e", manifold = 1 }]
//! [[signal]]
//! name = "lin"
//! signatures = [[1, -1]]
//! "#, "lin.toml".as_ref()).unwrap();
//! let sel = Selection::new(&exp, &SelectionRequest::default()).unwrap();
//! // Through order 1 with an LO: b = 0 (the LO alone) and the conjugate (-1, +1).
//! let set = sel.rejection_for(&sel.outputs[0].kept, &[]);
//! assert_eq!(set.len(), 2);
//! ```

pub mod leak;
pub mod terms;

use crate::error::ModelError;
use crate::model::{Detection, Experiment, PathwayClass};
use crate::pathways::{resolve_signals, ResolvedSignal};
use crate::signature::Signature;
use serde::Serialize;
use std::collections::HashMap;

pub use leak::{FirstLeak, LeakMeasure, LeakSearch};

/// Where the terms to cancel come from.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum RejectionSource {
    /// The agnostic set through the order (no level scheme needed; the safe default).
    #[default]
    Agnostic,
    /// The enumerated pathways through the order, their conjugates, the reference alone and
    /// every scatter pair (tighter: level-scheme specific).
    FromPathways,
}

/// What the user asks for; every command builds its [`Selection`] from one of these.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SelectionRequest {
    /// Cancel everything through this order (default: the experiment's).
    pub order: Option<u32>,
    /// Agnostic or enumerated rejection set.
    pub source: RejectionSource,
    /// Drop coherent terms the beam geometry does not phase-match (`None`: on when the
    /// experiment gives beams). Pair and scatter terms are never dropped.
    pub geometry: Option<bool>,
    /// Phase grid for a design: one value for all fields, or one per experiment field
    /// (0 = any phase).
    pub grid: Option<Vec<u32>>,
    /// Search the first leak up to this order (default: order + 4, lowered to fit the limits).
    pub leak_search_to: Option<u32>,
}

/// Why a term is in the rejection set.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind")]
pub enum Origin {
    /// `b = 0`: the reference (LO, probe, receiver) alone and every phase-free background
    /// (the pump-probe background of each pump, populations left by one field).
    Unmodulated,
    /// `e_j - e_ref`: pulse `pulse` scattered onto the detection reference `onto` (also the
    /// linear signal of that pulse). Geometry never removes it.
    Scatter {
        /// The scattered pulse.
        pulse: String,
        /// The reference it beats with.
        onto: String,
    },
    /// `e_a - e_b` between two pulses: their scatter beating on the detector. Geometry never
    /// removes it.
    PulsePair {
        /// The pulse with +1.
        plus: String,
        /// The pulse with -1.
        minus: String,
    },
    /// A term of the agnostic set (every `sum b = 0` term of this order).
    Agnostic {
        /// Order of the term.
        order: u32,
    },
    /// An enumerated pathway (or its complex conjugate).
    Pathway {
        /// Class of the first pathway with this signature.
        class: PathwayClass,
        /// Lowest order (interaction count, or NMR coherence level) with this signature.
        order: u32,
        /// True when the term is the conjugate of an enumerated pathway.
        conjugate: bool,
    },
    /// Kept by another output.
    OtherOutput {
        /// That output's name.
        output: String,
    },
    /// The conjugate of one of this output's kept terms (real detection).
    Conjugate,
}

/// One term of a rejection set.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Term {
    /// The signature over all experiment fields.
    pub signature: Signature,
    /// Order: interactions for optical detection (`sum |b|` less the reference), the
    /// coherence level for NMR.
    pub order: u32,
    /// Why it is there.
    pub origin: Origin,
}

/// Errors building a selection; each names the bad value and the fix.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SelectionError {
    /// Order above the supported limit.
    #[error("order {order} is above the limit {limit}; use --order 0..={limit}")]
    OrderTooHigh {
        /// Requested order.
        order: u32,
        /// The limit.
        limit: u32,
    },
    /// Order below the order of the wanted signals.
    #[error("--order {order} is below the order of the wanted signals ({signal}): the kept terms themselves would lie outside the rejection set's order; use --order {signal} or higher")]
    OrderBelowSignal {
        /// Requested order.
        order: u32,
        /// The experiment's signal order.
        signal: u32,
    },
    /// Leak search bound out of range.
    #[error("first-leak search to order {to} is above the limit {limit}; lower --leak-search")]
    LeakSearchTooHigh {
        /// Requested bound.
        to: u32,
        /// The limit.
        limit: u32,
    },
    /// Bad grid request.
    #[error("--grid takes one value for every field or one per field ({fields} fields: {names}); got {got}")]
    BadGrid {
        /// Number of fields.
        fields: usize,
        /// Their names.
        names: String,
        /// Values given.
        got: usize,
    },
    /// From the model (oversize sets, bad signals).
    #[error(transparent)]
    Model(#[from] ModelError),
}

/// The selection problem shared by every command.
#[derive(Clone, Debug)]
pub struct Selection {
    /// The experiment.
    pub experiment: Experiment,
    /// Order K of the rejection set (NMR: the spin system's largest coherence level).
    pub order: u32,
    /// The rejection source in effect (NMR always uses the coherence pathways).
    pub source: RejectionSource,
    /// True when the beam geometry filter is in effect.
    pub geometry: bool,
    /// Phase grid per experiment field, `None` when not given (0 = any phase).
    pub grid: Option<Vec<u32>>,
    /// The wanted outputs with their kept signatures and contamination.
    pub outputs: Vec<ResolvedSignal>,
    /// The first-leak search bound and measure.
    pub leak_search: LeakSearch,
    /// Every term through the leak-search bound, lowest order first; the rejection set is
    /// the prefix with `order <= self.order`.
    terms: Vec<Term>,
}

impl Selection {
    /// Build the selection of `exp` for `req`.
    ///
    /// # Errors
    /// [`SelectionError`] for orders out of range, a malformed grid or oversize sets.
    pub fn new(exp: &Experiment, req: &SelectionRequest) -> Result<Selection, SelectionError> {
        let nmr = matches!(exp.detection, Detection::Nmr { .. });
        let order = req.order.unwrap_or(exp.order);
        let limit = crate::limits::MAX_ORDER;
        if order > limit {
            return Err(SelectionError::OrderTooHigh { order, limit });
        }
        let outputs = resolve_signals(exp)?;
        if !nmr && order < exp.order && !outputs.is_empty() {
            return Err(SelectionError::OrderBelowSignal {
                order,
                signal: exp.order,
            });
        }
        let grid = resolve_grid(exp, req.grid.as_deref())?;
        let has_beams = exp.fields.iter().any(|f| f.beam.is_some());
        let geometry = req.geometry.unwrap_or(has_beams) && has_beams;
        let source = if nmr {
            RejectionSource::FromPathways
        } else {
            req.source
        };
        let (cutoff, leak_search) = leak::plan(exp, order, source, req.leak_search_to)?;
        let terms = terms::build(exp, source, geometry, leak_search.to)?;
        Ok(Selection {
            experiment: exp.clone(),
            order: cutoff,
            source,
            geometry,
            grid,
            outputs,
            leak_search,
            terms,
        })
    }

    /// Every signature any experiment output keeps.
    pub fn all_kept(&self) -> Vec<Signature> {
        self.outputs.iter().flat_map(|o| o.kept.clone()).collect()
    }

    /// The common rejection terms through the order (no output's kept terms removed yet).
    pub fn common_terms(&self) -> &[Term] {
        let end = self.terms.partition_point(|t| t.order <= self.order);
        &self.terms[..end]
    }

    /// Every term through the leak-search bound, lowest order first.
    pub fn search_terms(&self) -> &[Term] {
        &self.terms
    }

    /// The rejection set of an output keeping `own`, with `others` the other outputs' names
    /// and kept terms: the common terms less `own`, each other output's kept terms (origin
    /// [`Origin::OtherOutput`]) and, for real detection, the conjugate of every own kept term
    /// not itself kept ([`Origin::Conjugate`]). Lowest `sum |b|` first.
    pub fn rejection_for(&self, own: &[Signature], others: &[(&str, &[Signature])]) -> Vec<Term> {
        let mut set = self.set_for(own, others, self.order);
        set.sort_by(|a, b| {
            (a.signature.weight().cmp(&b.signature.weight()))
                .then_with(|| a.signature.cmp(&b.signature))
        });
        set
    }

    /// The same set through the leak-search bound, lowest order first: the first term of it
    /// the cycle passes is the output's first leak.
    pub fn search_set_for(&self, own: &[Signature], others: &[(&str, &[Signature])]) -> Vec<Term> {
        let mut set = self.set_for(own, others, self.leak_search.to);
        set.sort_by(|a, b| {
            (a.order.cmp(&b.order))
                .then_with(|| a.signature.weight().cmp(&b.signature.weight()))
                .then_with(|| a.signature.cmp(&b.signature))
        });
        set
    }

    fn set_for(
        &self,
        own: &[Signature],
        others: &[(&str, &[Signature])],
        through: u32,
    ) -> Vec<Term> {
        let mut terms: Vec<Term> = Vec::new();
        let mut index: HashMap<Signature, usize> = HashMap::new();
        let mut put = |t: Term, special: bool, terms: &mut Vec<Term>| {
            if own.contains(&t.signature) || t.order > through {
                return;
            }
            match index.get(&t.signature) {
                Some(&i) if special => terms[i].origin = t.origin,
                Some(_) => {}
                None => {
                    index.insert(t.signature.clone(), terms.len());
                    terms.push(t);
                }
            }
        };
        let end = self.terms.partition_point(|t| t.order <= through);
        for t in &self.terms[..end] {
            put(t.clone(), false, &mut terms);
        }
        for (name, kept) in others {
            for k in *kept {
                let origin = Origin::OtherOutput {
                    output: name.to_string(),
                };
                put(self.term(k, origin), true, &mut terms);
            }
        }
        if self.experiment.detection.is_real() {
            for k in own {
                put(
                    self.term(&k.conjugate(), Origin::Conjugate),
                    true,
                    &mut terms,
                );
            }
        }
        terms
    }

    /// The rejection set of experiment output `oi` (see [`Selection::rejection_for`]).
    pub fn rejection_of_output(&self, oi: usize) -> Vec<Term> {
        let others = other_outputs(&self.outputs, oi, |o| (o.name.as_str(), o.kept.as_slice()));
        self.rejection_for(&self.outputs[oi].kept, &others)
    }

    /// Every signature some output must cancel and no output keeps (the designer's set).
    pub fn rejected_by_all(&self) -> Vec<Signature> {
        let kept = self.all_kept();
        let mut set: Vec<Signature> = self
            .common_terms()
            .iter()
            .map(|t| t.signature.clone())
            .chain(
                kept.iter()
                    .filter(|_| self.experiment.detection.is_real())
                    .map(Signature::conjugate),
            )
            .filter(|b| !kept.contains(b))
            .collect();
        set.sort();
        set.dedup();
        set
    }

    /// The largest backgrounds, which slow drift leaks first: every rejected term with
    /// `sum |b| <= 2` (the reference alone, scatter pairs) that no output keeps.
    pub fn backgrounds(&self) -> Vec<Signature> {
        let kept = self.all_kept();
        self.common_terms()
            .iter()
            .filter(|t| t.signature.weight() <= 2 && !kept.contains(&t.signature))
            .map(|t| t.signature.clone())
            .collect()
    }

    /// A term for a kept signature of some output: always in the set, at its own order
    /// (optical) but never above the set's order, so every command sees it.
    fn term(&self, b: &Signature, origin: Origin) -> Term {
        let natural = if self.is_nmr() {
            self.order
        } else {
            self.experiment.term_order(b) as u32
        };
        Term {
            signature: b.clone(),
            order: natural.min(self.order),
            origin,
        }
    }

    /// True for NMR detection (orders are coherence levels).
    pub fn is_nmr(&self) -> bool {
        matches!(self.experiment.detection, Detection::Nmr { .. })
    }
}

/// The grid per experiment field from `--grid` (one value for all, or one per field).
fn resolve_grid(
    exp: &Experiment,
    grid: Option<&[u32]>,
) -> Result<Option<Vec<u32>>, SelectionError> {
    let n = exp.fields.len();
    match grid {
        None => Ok(None),
        Some([g]) => Ok(Some(vec![*g; n])),
        Some(g) if g.len() == n => Ok(Some(g.to_vec())),
        Some(g) => Err(SelectionError::BadGrid {
            fields: n,
            names: exp.field_names().join(", "),
            got: g.len(),
        }),
    }
}

/// Every output but `oi`, as `(name, kept terms)`: what [`Selection::rejection_for`] and
/// [`Selection::search_set_for`] take as the terms other outputs keep.
pub fn other_outputs<'a, T>(
    outputs: &'a [T],
    oi: usize,
    view: impl Fn(&'a T) -> (&'a str, &'a [Signature]),
) -> Vec<(&'a str, &'a [Signature])> {
    outputs
        .iter()
        .enumerate()
        .filter(|(j, _)| *j != oi)
        .map(|(_, o)| view(o))
        .collect()
}
