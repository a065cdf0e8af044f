//! Which leaks matter: every rejected term's leak weighted by the size of its background
//! (`|F(b)| x size(b) / |F(t)|`, sizes from [`crate::model::Backgrounds`]), with the tolerance
//! figures weighted the same way, ranked, and a threshold verdict per figure saying whether the
//! largest weighted leak is above a fraction of the wanted signal the user sets. Every figure
//! carries the class of its claim (exact, precision bound, worst-case bound, RMS expectation,
//! floating point).

use super::tolerance::TermTolerance;
use crate::model::backgrounds::BackgroundSize;
use crate::model::{Backgrounds, Experiment};
use crate::selection::{Origin, Term};
use crate::signature::Signature;
use serde::Serialize;

/// Default threshold: a weighted leak above 1% of the wanted signal is flagged (a choice of
/// this tool, not a standard).
pub const DEFAULT_THRESHOLD: f64 = 0.01;

/// What the user asks of the ranking.
#[derive(Clone, Debug, PartialEq)]
pub struct ImpactRequest {
    /// Sizes laid over the experiment file's `[backgrounds]` (the command line's).
    pub backgrounds: Backgrounds,
    /// A weighted leak above this fraction of the wanted signal is flagged.
    pub threshold: f64,
}

impl Default for ImpactRequest {
    fn default() -> Self {
        ImpactRequest {
            backgrounds: Backgrounds::default(),
            threshold: DEFAULT_THRESHOLD,
        }
    }
}

/// The kind of claim a figure makes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum FigureClass {
    /// The modulus of an exact value (rounded only for display).
    Exact,
    /// An upper bound from the table's written precision (written value plus rounding bound).
    PrecisionBound,
    /// An upper bound over every applied phase error up to the stated delta.
    WorstCaseBound,
    /// The root-mean-square over independent Gaussian phase errors (an expectation, not a
    /// bound).
    RmsExpectation,
    /// A floating-point evaluation (quantised phases).
    Numeric,
}

impl FigureClass {
    /// The class in words.
    pub fn label(self) -> &'static str {
        match self {
            FigureClass::Exact => "exact",
            FigureClass::PrecisionBound => "bound from the written precision",
            FigureClass::WorstCaseBound => "worst-case bound",
            FigureClass::RmsExpectation => "RMS expectation",
            FigureClass::Numeric => "floating point",
        }
    }
}

/// Which figure a verdict is about.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Figure {
    /// The leak of the table as checked.
    Leak,
    /// The worst case under phase errors up to delta.
    WorstCase,
    /// The RMS under Gaussian phase errors.
    Rms,
    /// After B-bit quantisation.
    Quantised,
}

impl Figure {
    /// The figure in words.
    pub fn label(self) -> &'static str {
        match self {
            Figure::Leak => "leak of the table",
            Figure::WorstCase => "worst case under phase errors",
            Figure::Rms => "RMS under phase errors",
            Figure::Quantised => "after quantisation",
        }
    }
}

/// One rejected term, weighted by its background.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TermImpact {
    /// The rejected signature.
    pub signature: Signature,
    /// Why it is rejected.
    pub origin: Origin,
    /// Its size relative to the wanted signal and the rule that gave it.
    pub background: BackgroundSize,
    /// `|F(b)| / |F(t)|` of the table as checked (an upper bound when judged at the written
    /// precision); 0 when cancelled exactly.
    pub leak: f64,
    /// `leak x background`.
    pub weighted: f64,
    /// Tolerance figures, unweighted (relative to `|F(t)|`), when asked for.
    pub tolerance: Option<TermTolerance>,
}

/// Whether the largest weighted figure of one kind is above the threshold.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ThresholdVerdict {
    /// The figure.
    pub figure: Figure,
    /// The class of its claim.
    pub class: FigureClass,
    /// The largest weighted value (relative to the wanted signal).
    pub largest: f64,
    /// The term that gives it (`None` when the rejection set is empty).
    pub signature: Option<Signature>,
    /// True when `largest > threshold`.
    pub above: bool,
}

/// The ranking of one output.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Impact {
    /// The threshold, as a fraction of the wanted signal.
    pub threshold: f64,
    /// True when some background size was given (else every size is 1).
    pub backgrounds_given: bool,
    /// The rejected terms, largest weighted figure first (at most the listing cap).
    pub terms: Vec<TermImpact>,
    /// One verdict per figure computed: the leak, and with a tolerance analysis the worst
    /// case, the RMS and the quantised leak.
    pub verdicts: Vec<ThresholdVerdict>,
}

/// The inputs of [`rank`] for one output.
pub struct RankInput<'a> {
    /// The experiment (term classes and orders).
    pub exp: &'a Experiment,
    /// The rejection set, conjugates included.
    pub set: &'a [Term],
    /// `|F(b)| / |F(t)|` per term of `set` (an upper bound when not exact).
    pub leaks: &'a [f64],
    /// True when the leaks are exact moduli, false for precision bounds.
    pub exact: bool,
    /// Per-term tolerance figures in the order of `set`, when asked for.
    pub tolerance: Option<Vec<TermTolerance>>,
    /// At most this many terms listed.
    pub max_listed: usize,
}

/// Picks one tolerance figure of a term.
type Pick = fn(&TermTolerance) -> Option<f64>;

/// Weight every term by its background, rank, and judge against the threshold.
pub fn rank(input: RankInput, req: &ImpactRequest) -> Impact {
    let sizes = input.exp.backgrounds.overlaid(&req.backgrounds);
    let mut tol = input.tolerance.map(Vec::into_iter);
    let mut terms: Vec<TermImpact> = input
        .set
        .iter()
        .zip(input.leaks)
        .map(|(t, &leak)| {
            let background = sizes.size_of(input.exp, &t.signature);
            TermImpact {
                signature: t.signature.clone(),
                origin: t.origin.clone(),
                weighted: leak * background.size,
                leak,
                background,
                tolerance: tol.as_mut().and_then(Iterator::next),
            }
        })
        .collect();
    let weighted_tol = |t: &TermImpact, f: Pick| {
        t.tolerance
            .as_ref()
            .and_then(f)
            .map(|x| x * t.background.size)
    };
    let mut verdicts = vec![verdict(
        &terms,
        Figure::Leak,
        if input.exact {
            FigureClass::Exact
        } else {
            FigureClass::PrecisionBound
        },
        req.threshold,
        |t| Some(t.weighted),
    )];
    if terms.iter().any(|t| t.tolerance.is_some()) {
        let kinds: [(Figure, FigureClass, Pick); 3] = [
            (Figure::WorstCase, FigureClass::WorstCaseBound, |x| {
                Some(x.worst_case)
            }),
            (Figure::Rms, FigureClass::RmsExpectation, |x| Some(x.rms)),
            (Figure::Quantised, FigureClass::Numeric, |x| x.quantised),
        ];
        for (figure, class, f) in kinds {
            if terms.iter().any(|t| weighted_tol(t, f).is_some()) {
                verdicts.push(verdict(&terms, figure, class, req.threshold, |t| {
                    weighted_tol(t, f)
                }));
            }
        }
    }
    let key = |t: &TermImpact| {
        (
            t.weighted,
            weighted_tol(t, |x| Some(x.worst_case)).unwrap_or(0.0),
        )
    };
    terms.sort_by(|a, b| {
        let (ka, kb) = (key(a), key(b));
        kb.0.total_cmp(&ka.0).then(kb.1.total_cmp(&ka.1))
    });
    terms.truncate(input.max_listed);
    Impact {
        threshold: req.threshold,
        backgrounds_given: !sizes.is_empty(),
        terms,
        verdicts,
    }
}

fn verdict(
    terms: &[TermImpact],
    figure: Figure,
    class: FigureClass,
    threshold: f64,
    value: impl Fn(&TermImpact) -> Option<f64>,
) -> ThresholdVerdict {
    let best = terms
        .iter()
        .filter_map(|t| value(t).map(|v| (v, t)))
        .max_by(|a, b| a.0.total_cmp(&b.0));
    ThresholdVerdict {
        figure,
        class,
        largest: best.map_or(0.0, |b| b.0),
        // An all-zero figure has no largest term.
        signature: best.filter(|b| b.0 > 0.0).map(|b| b.1.signature.clone()),
        above: best.is_some_and(|b| b.0 > threshold),
    }
}
