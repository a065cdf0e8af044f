//! Reading experiment files (TOML, format in `docs/experiment-format.md`) into a validated
//! [`Experiment`]. Every error names the file, the line and the key, and says how to fix it.

use crate::error::InputError;
pub use crate::input_text::read_text;
use crate::limits::{
    MAX_COHERENCE, MAX_FIELDS, MAX_INTERACTIONS_PER_PULSE, MAX_ORDER, MAX_OUTPUTS, MAX_STATES,
};
use crate::model::{
    Detection, Experiment, Field, FieldKind, LevelScheme, PathwayClass, PhaseControl, State,
    Transition, WantedItem, WantedSignal,
};
use crate::signature::Signature;
use num_rational::Ratio;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use toml::Spanned;

mod backgrounds;
mod beams;
mod numbers;
mod overlap;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawExperiment {
    title: Option<String>,
    order: Option<Spanned<i64>>,
    overlap: Option<Spanned<toml::Value>>,
    #[serde(default)]
    swap_rnr_labels: bool,
    detection: Spanned<RawDetection>,
    #[serde(rename = "field")]
    fields: Option<Spanned<Vec<Spanned<RawField>>>>,
    levels: Option<Spanned<RawLevels>>,
    #[serde(default, rename = "signal")]
    signals: Vec<Spanned<RawSignal>>,
    /// Read by `crate::simulate::parse_dynamics`; accepted here so the key is not unknown.
    #[serde(default, rename = "dynamics")]
    _dynamics: Option<toml::Value>,
    backgrounds: Option<Spanned<BTreeMap<String, Spanned<toml::Value>>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDetection {
    mode: Spanned<String>,
    max_coherence: Option<Spanned<i64>>,
    detected_coherence: Option<Spanned<i64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawField {
    name: Spanned<String>,
    kind: Option<Spanned<String>>,
    phase: Option<Spanned<String>>,
    beam: Option<Spanned<toml::Value>>,
    interactions: Option<Spanned<i64>>,
    drives: Option<Vec<Spanned<String>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLevels {
    states: Spanned<Vec<Spanned<RawState>>>,
    transitions: Option<Vec<Spanned<RawTransition>>>,
    ground: Option<Spanned<String>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawState {
    name: Spanned<String>,
    manifold: Spanned<i64>,
    energy: Option<Spanned<f64>>,
    #[serde(rename = "yield")]
    yield_weight: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTransition {
    from: Spanned<String>,
    to: Spanned<String>,
    dipole: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSignal {
    name: Spanned<String>,
    classes: Option<Vec<Spanned<String>>>,
    signatures: Option<Vec<Spanned<Vec<i64>>>>,
    coherence_path: Option<Spanned<Vec<i64>>>,
}

/// Read and validate an experiment file.
pub fn read_experiment(path: &Path) -> Result<Experiment, InputError> {
    let text = read_text(path)?;
    parse_experiment(&text, path)
}

/// Parse and validate experiment text; `path` is used in error messages only.
pub fn parse_experiment(text: &str, path: &Path) -> Result<Experiment, InputError> {
    let ctx = Ctx {
        path: path.to_path_buf(),
        text,
    };
    let raw: RawExperiment = toml::from_str(text).map_err(|e| ctx.toml_error(&e))?;
    build(&ctx, raw)
}

struct Ctx<'a> {
    path: PathBuf,
    text: &'a str,
}

impl Ctx<'_> {
    fn line_of(&self, offset: usize) -> usize {
        self.text.as_bytes()[..offset.min(self.text.len())]
            .iter()
            .filter(|&&c| c == b'\n')
            .count()
            + 1
    }

    /// 1-based column (in characters) of a byte offset on its line.
    fn column_of(&self, offset: usize) -> usize {
        let before = &self.text.as_bytes()[..offset.min(self.text.len())];
        let start = before
            .iter()
            .rposition(|&c| c == b'\n')
            .map_or(0, |i| i + 1);
        String::from_utf8_lossy(&before[start..]).chars().count() + 1
    }

    fn err(&self, span: std::ops::Range<usize>, key: &str, msg: impl Into<String>) -> InputError {
        InputError::new(&self.path, Some(self.line_of(span.start)), Some(key), msg)
            .at_column(self.column_of(span.start))
    }

    fn toml_error(&self, e: &toml::de::Error) -> InputError {
        let line = e.span().map(|s| self.line_of(s.start));
        let column = e.span().map(|s| self.column_of(s.start));
        // Rust type names mean nothing to a lab: say what to write instead.
        let msg = e
            .message()
            .trim()
            .replace("expected f64", "expected a number")
            .replace("expected i64", "expected a whole number")
            .replace("expected u32", "expected a whole number")
            .replace("expected u64", "expected a whole number");
        let names_key = msg.starts_with("unknown field") || msg.starts_with("missing field");
        let key = names_key
            .then(|| msg.split('`').nth(1).map(str::to_string))
            .flatten();
        let hint = if msg.starts_with("unknown field") {
            "; remove or rename the key (see docs/experiment-format.md)"
        } else if msg.starts_with("missing field") {
            "; add the key (see docs/experiment-format.md)"
        } else if msg.starts_with("invalid type: string") {
            "; write the value without quotes"
        } else if msg.starts_with("expected") || msg.starts_with("invalid") {
            "; TOML syntax at that point: one `key = value` per line, no trailing commas, strings in double quotes"
        } else {
            ""
        };
        let err = InputError::new(&self.path, line, key.as_deref(), format!("{msg}{hint}"));
        match column {
            Some(c) => err.at_column(c),
            None => err,
        }
    }
}

fn build(ctx: &Ctx, raw: RawExperiment) -> Result<Experiment, InputError> {
    let det_span = raw.detection.span();
    let det = raw.detection.into_inner();
    let mode = det.mode.get_ref().trim().to_ascii_lowercase();
    let detection = match mode.as_str() {
        "emission" | "heterodyne" => Detection::Emission,
        "pump-probe" => Detection::PumpProbe,
        "population" | "action" | "fluorescence" => Detection::Population,
        "nmr" => {
            let Some(maxc) = &det.max_coherence else {
                return Err(ctx.err(
                    det_span,
                    "detection.max_coherence",
                    "NMR detection needs `max_coherence` (2I for a spin I, e.g. 3 for spin 3/2)",
                ));
            };
            let m = *maxc.get_ref();
            if !(1..=i64::from(MAX_COHERENCE)).contains(&m) {
                return Err(ctx.err(
                    maxc.span(),
                    "detection.max_coherence",
                    format!("{m} is out of range; use 1..={MAX_COHERENCE}"),
                ));
            }
            let d = det
                .detected_coherence
                .as_ref()
                .map(|s| *s.get_ref())
                .unwrap_or(-1);
            if !(-m..=m).contains(&d) {
                return Err(ctx.err(
                    det_span,
                    "detection.detected_coherence",
                    format!("{d} lies outside -{m}..={m}"),
                ));
            }
            // Both lie in -MAX_COHERENCE..=MAX_COHERENCE (checked above), so they fit i32.
            Detection::Nmr {
                max_coherence: i32::try_from(m).unwrap_or(MAX_COHERENCE),
                detected: i32::try_from(d).unwrap_or(-1),
            }
        }
        other => {
            return Err(ctx.err(
                det.mode.span(),
                "detection.mode",
                format!("unknown mode `{other}`; use one of emission, pump-probe, population, nmr"),
            ))
        }
    };
    if !matches!(detection, Detection::Nmr { .. }) {
        if let Some(m) = &det.max_coherence {
            return Err(ctx.err(
                m.span(),
                "detection.max_coherence",
                "only NMR detection takes `max_coherence`; remove it",
            ));
        }
    }

    let Some(raw_fields) = raw.fields else {
        return Err(InputError::new(
            &ctx.path,
            None,
            Some("field"),
            "no fields: add one `[[field]]` table per pulse (and one for the LO or receiver)",
        ));
    };
    let fields_span = raw_fields.span();
    let raw_fields = raw_fields.into_inner();
    if raw_fields.is_empty() || raw_fields.len() > MAX_FIELDS {
        return Err(ctx.err(
            fields_span,
            "field",
            format!("{} fields given; use 1..={MAX_FIELDS}", raw_fields.len()),
        ));
    }

    let levels = match (&detection, raw.levels) {
        (Detection::Nmr { .. }, Some(l)) => {
            return Err(ctx.err(l.span(), "levels", "NMR experiments use coherence orders, not a level scheme; remove [levels]"))
        }
        (Detection::Nmr { .. }, None) => None,
        (_, None) => {
            return Err(InputError::new(&ctx.path, None, Some("levels"), "a [levels] table is needed for this detection mode (states and, optionally, transitions)"))
        }
        (_, Some(l)) => Some(build_levels(ctx, l)?),
    };

    let mut geometry = BeamReading::default();
    let fields = build_fields(ctx, raw_fields, levels.as_ref(), &mut geometry)?;
    check_reference(ctx, fields_span, &fields, &detection)?;

    let n_pulses = fields.iter().filter(|f| f.kind == FieldKind::Pulse).count() as u32;
    let order = match (&detection, raw.order) {
        (Detection::Nmr { .. }, None) => n_pulses,
        (_, None) => {
            return Err(InputError::new(&ctx.path, None, Some("order"), "missing `order`: add `order = N` at the top of the file, N = number of field interactions of the wanted signal (3 for third-order emission, 4 for population-detected 2D)"))
        }
        (_, Some(o)) => {
            let v = *o.get_ref();
            if !(1..=i64::from(MAX_ORDER)).contains(&v) {
                return Err(ctx.err(o.span(), "order", format!("order {v} is out of range; use 1..={MAX_ORDER}")));
            }
            let v = v as u32;
            if let Some(p) = detection.order_parity() {
                if v % 2 != p {
                    let what = if p == 1 { "odd (emission: the final element is a coherence)" } else { "even (population: the final element is a population)" };
                    return Err(ctx.err(o.span(), "order", format!("order {v} cannot be detected this way; it must be {what}")));
                }
            }
            if !matches!(detection, Detection::Nmr { .. }) {
                let acts: u32 = fields.iter().filter(|f| f.kind == FieldKind::Pulse).map(|f| f.interactions).sum();
                if acts != v {
                    return Err(ctx.err(o.span(), "order", format!("the pulses act {acts} times in the signal but order = {v}; set `interactions = 2` on a pulse that acts twice (e.g. a single pump) or fix `order`")));
                }
            } else if v != n_pulses {
                return Err(ctx.err(o.span(), "order", format!("for NMR, order is the number of pulses ({n_pulses}); remove it or set it to {n_pulses}")));
            }
            v
        }
    };

    let overlap = overlap::build_overlap(ctx, raw.overlap, &fields, &detection)?;
    let mut exp = Experiment {
        title: raw.title.unwrap_or_else(|| "untitled experiment".into()),
        fields,
        levels,
        detection,
        order,
        overlap,
        swap_rnr_labels: raw.swap_rnr_labels,
        wanted: Vec::new(),
        backgrounds: crate::model::Backgrounds::default(),
        beam_notes: geometry.notes,
        beam_rounding: geometry.rounded,
    };
    exp.wanted = build_signals(ctx, raw.signals, &exp)?;
    exp.backgrounds = backgrounds::build_backgrounds(ctx, raw.backgrounds, &exp)?;
    Ok(exp)
}

fn build_levels(ctx: &Ctx, raw: Spanned<RawLevels>) -> Result<LevelScheme, InputError> {
    let raw = raw.into_inner();
    let states_span = raw.states.span();
    let raw_states = raw.states.into_inner();
    if raw_states.is_empty() || raw_states.len() > MAX_STATES {
        return Err(ctx.err(
            states_span,
            "levels.states",
            format!("{} states given; use 1..={MAX_STATES}", raw_states.len()),
        ));
    }
    let mut index = BTreeMap::new();
    let mut states = Vec::new();
    for s in raw_states {
        let span = s.span();
        let s = s.into_inner();
        let name = s.name.get_ref().trim().to_string();
        if name.is_empty() {
            return Err(ctx.err(span, "levels.states.name", "a state needs a non-empty name"));
        }
        if index.insert(name.clone(), states.len()).is_some() {
            return Err(ctx.err(
                s.name.span(),
                "levels.states.name",
                format!("state `{name}` is listed twice; state names must be unique"),
            ));
        }
        let m = *s.manifold.get_ref();
        if !(0..=16).contains(&m) {
            return Err(ctx.err(
                s.manifold.span(),
                "levels.states.manifold",
                format!("manifold {m} is out of range; use the excitation number 0..=16"),
            ));
        }
        let default_yield = if m == 0 { 0.0 } else { 1.0 };
        let y = match &s.yield_weight {
            Some(y) => numbers::yield_weight(ctx, y)?,
            None => default_yield,
        };
        let energy = numbers::energy(ctx, &s.energy)?;
        states.push(State {
            name,
            manifold: m as u32,
            energy,
            yield_weight: y,
        });
    }
    let names_in_order: Vec<String> = states.iter().map(|s| s.name.clone()).collect();
    let lookup = |n: &Spanned<String>, key: &str| -> Result<usize, InputError> {
        index.get(n.get_ref().trim()).copied().ok_or_else(|| {
            ctx.err(
                n.span(),
                key,
                format!(
                    "unknown state `{}`; declared states are: {}",
                    n.get_ref(),
                    names_in_order.join(", ")
                ),
            )
        })
    };
    let mut transitions = Vec::new();
    match raw.transitions {
        Some(list) => {
            for t in list {
                let span = t.span();
                let t = t.into_inner();
                let a = lookup(&t.from, "levels.transitions.from")?;
                let b = lookup(&t.to, "levels.transitions.to")?;
                let (ma, mb) = (states[a].manifold, states[b].manifold);
                let (lower, upper) = if ma + 1 == mb {
                    (a, b)
                } else if mb + 1 == ma {
                    (b, a)
                } else {
                    return Err(ctx.err(span, "levels.transitions", format!("`{}` (manifold {ma}) and `{}` (manifold {mb}) are not in adjacent manifolds; a dipole transition changes the excitation number by one", states[a].name, states[b].name)));
                };
                let dipole = t.dipole.as_ref().map(|d| *d.get_ref()).unwrap_or(1.0);
                if !dipole.is_finite() || dipole == 0.0 {
                    return Err(ctx.err(span, "levels.transitions.dipole", "dipole must be a finite nonzero number; drop the transition instead of a zero dipole"));
                }
                if transitions
                    .iter()
                    .any(|x: &Transition| x.lower == lower && x.upper == upper)
                {
                    return Err(ctx.err(
                        span,
                        "levels.transitions",
                        format!(
                            "transition {}-{} is listed twice",
                            states[lower].name, states[upper].name
                        ),
                    ));
                }
                transitions.push(Transition {
                    lower,
                    upper,
                    dipole,
                });
            }
        }
        None => {
            for lower in 0..states.len() {
                for upper in 0..states.len() {
                    if states[lower].manifold + 1 == states[upper].manifold {
                        transitions.push(Transition {
                            lower,
                            upper,
                            dipole: 1.0,
                        });
                    }
                }
            }
        }
    }
    let ground = match &raw.ground {
        Some(g) => {
            let i = lookup(g, "levels.ground")?;
            if states[i].manifold != 0 {
                return Err(ctx.err(
                    g.span(),
                    "levels.ground",
                    format!(
                        "`{}` is in manifold {}; the starting state must be in manifold 0",
                        states[i].name, states[i].manifold
                    ),
                ));
            }
            i
        }
        None => states.iter().position(|s| s.manifold == 0).ok_or_else(|| {
            ctx.err(
                states_span.clone(),
                "levels.states",
                "no state has manifold 0; add the ground state",
            )
        })?,
    };
    Ok(LevelScheme::new(states, transitions, ground))
}

fn build_fields(
    ctx: &Ctx,
    raw: Vec<Spanned<RawField>>,
    levels: Option<&LevelScheme>,
    geometry: &mut BeamReading,
) -> Result<Vec<Field>, InputError> {
    let mut labels: Vec<String> = Vec::new();
    let mut numeric_dims = 0usize;
    let mut pending = Vec::new();
    let mut names = Vec::new();
    for f in raw {
        let span = f.span();
        let f = f.into_inner();
        let name = f.name.get_ref().trim().to_string();
        if name.is_empty() || name.contains(|c: char| c.is_whitespace() || c == ',') {
            return Err(ctx.err(
                f.name.span(),
                "field.name",
                format!("field name `{name}` must be non-empty, without spaces or commas"),
            ));
        }
        if names.contains(&name) {
            return Err(ctx.err(
                f.name.span(),
                "field.name",
                format!("field `{name}` is listed twice; names must be unique"),
            ));
        }
        names.push(name.clone());
        let kind = match f
            .kind
            .as_ref()
            .map(|k| k.get_ref().trim().to_ascii_lowercase())
        {
            None => FieldKind::Pulse,
            Some(k) if k == "pulse" => FieldKind::Pulse,
            Some(k) if k == "lo" || k == "receiver" || k == "reference" => FieldKind::Reference,
            Some(k) => {
                return Err(ctx.err(
                    f.kind.as_ref().map(|k| k.span()).unwrap_or(span),
                    "field.kind",
                    format!("unknown kind `{k}`; use pulse, lo or receiver"),
                ))
            }
        };
        let phase = match f
            .phase
            .as_ref()
            .map(|p| p.get_ref().trim().to_ascii_lowercase())
        {
            None => PhaseControl::Cycled,
            Some(p) if p == "cycled" => PhaseControl::Cycled,
            Some(p) if p == "fixed" => PhaseControl::Fixed,
            Some(p) => {
                return Err(ctx.err(
                    f.phase.as_ref().map(|x| x.span()).unwrap_or(span),
                    "field.phase",
                    format!("unknown phase control `{p}`; use cycled or fixed"),
                ))
            }
        };
        let interactions = match &f.interactions {
            None => 1,
            Some(n) => {
                let v = *n.get_ref();
                if kind == FieldKind::Reference {
                    return Err(ctx.err(
                        n.span(),
                        "field.interactions",
                        "the LO/receiver does not act on the sample; remove `interactions`",
                    ));
                }
                if !(1..=i64::from(MAX_INTERACTIONS_PER_PULSE)).contains(&v) {
                    return Err(ctx.err(n.span(), "field.interactions", format!("{v} is out of range; a pulse acts 1..={MAX_INTERACTIONS_PER_PULSE} times in the signal")));
                }
                v as u32
            }
        };
        let drives = match (&f.drives, levels) {
            (None, _) => None,
            (Some(_), None) => {
                return Err(ctx.err(
                    span,
                    "field.drives",
                    "`drives` needs a level scheme; NMR pulses take no transition list",
                ))
            }
            (Some(list), Some(l)) => {
                let mut out = Vec::new();
                for d in list {
                    let text = d.get_ref().trim();
                    let Some((a, b)) = text.split_once('-') else {
                        return Err(ctx.err(d.span(), "field.drives", format!("`{text}` is not a transition; write it as `lower-upper`, e.g. `g-e`")));
                    };
                    let find = |n: &str| l.states.iter().position(|s| s.name == n.trim());
                    let t = match (find(a), find(b)) {
                        (Some(x), Some(y)) => l.transitions.iter().position(|t| {
                            (t.lower == x && t.upper == y) || (t.lower == y && t.upper == x)
                        }),
                        _ => None,
                    };
                    match t {
                        Some(t) => out.push(t),
                        None => {
                            return Err(ctx.err(
                                d.span(),
                                "field.drives",
                                format!(
                                    "`{text}` is not an allowed transition of the level scheme"
                                ),
                            ))
                        }
                    }
                }
                Some(out)
            }
        };
        let beam = match &f.beam {
            None => BeamSpec::None,
            Some(b) => match b.get_ref() {
                toml::Value::String(s) => {
                    let s = s.trim().to_string();
                    if !labels.contains(&s) {
                        labels.push(s.clone());
                    }
                    BeamSpec::Label(s)
                }
                toml::Value::Array(a) if (1..=3).contains(&a.len()) => {
                    let texts = beams::element_texts(ctx.text.get(b.span()).unwrap_or(""));
                    let line = ctx.line_of(b.span().start);
                    let mut v = Vec::new();
                    for (d, x) in a.iter().enumerate() {
                        let text = (texts.len() == a.len()).then(|| texts[d].as_str());
                        let c = beams::component(ctx, line, (pending.len(), &name), d, x, text)?;
                        geometry.notes.extend(c.note);
                        geometry.rounded.extend(c.rounded);
                        v.push(c.value);
                    }
                    numeric_dims = numeric_dims.max(v.len());
                    BeamSpec::Vector(v)
                }
                _ => {
                    return Err(ctx.err(b.span(), "field.beam", "beam is a label (fields with the same label are collinear, different labels independent directions) or a transverse direction [x, y]"))
                }
            },
        };
        pending.push((name, kind, phase, beam, interactions, drives));
    }
    Ok(pending
        .into_iter()
        .map(|(name, kind, phase, beam, interactions, drives)| {
            let beam = match beam {
                BeamSpec::None => None,
                BeamSpec::Vector(mut v) => {
                    v.resize(numeric_dims + labels.len(), Ratio::from_integer(0));
                    Some(v)
                }
                BeamSpec::Label(l) => {
                    let mut v = vec![Ratio::from_integer(0); numeric_dims + labels.len()];
                    let k = labels.iter().position(|x| *x == l).unwrap_or(0);
                    v[numeric_dims + k] = Ratio::from_integer(1);
                    Some(v)
                }
            };
            Field {
                name,
                kind,
                phase,
                beam,
                interactions,
                drives,
            }
        })
        .collect())
}

/// What reading numeric beam directions found: snapping notes and components kept at their
/// rounded written values.
#[derive(Default)]
struct BeamReading {
    notes: Vec<String>,
    rounded: Vec<crate::model::geometry::RoundedComponent>,
}

enum BeamSpec {
    None,
    Label(String),
    Vector(Vec<Ratio<i64>>),
}

fn check_reference(
    ctx: &Ctx,
    span: std::ops::Range<usize>,
    fields: &[Field],
    detection: &Detection,
) -> Result<(), InputError> {
    let refs: Vec<usize> = (0..fields.len())
        .filter(|&j| fields[j].kind == FieldKind::Reference)
        .collect();
    let pulses = fields.len() - refs.len();
    if refs.len() > 1 {
        return Err(ctx.err(
            span,
            "field.kind",
            "more than one LO/receiver field; keep one",
        ));
    }
    if let Some(&r) = refs.first() {
        if r + 1 != fields.len() {
            return Err(ctx.err(
                span,
                "field.kind",
                format!(
                    "the LO/receiver `{}` must be the last field",
                    fields[r].name
                ),
            ));
        }
    }
    let need = |cond: bool, msg: &str| {
        if cond {
            Ok(())
        } else {
            Err(ctx.err(span.clone(), "field", msg.to_string()))
        }
    };
    match detection {
        Detection::Emission => need(refs.len() == 1, "emission detection needs a local oscillator: add a last `[[field]]` with kind = \"lo\"")?,
        Detection::PumpProbe => {
            need(refs.is_empty(), "in pump-probe geometry the probe is its own LO; remove the lo field")?;
            need(pulses >= 2, "pump-probe needs at least one pump and the probe (the last pulse)")?;
        }
        Detection::Population => need(refs.is_empty(), "population detection has no LO; remove the lo field")?,
        Detection::Nmr { .. } => need(refs.len() == 1, "NMR detection needs the receiver: add a last `[[field]]` with kind = \"receiver\"")?,
    }
    need(pulses >= 1, "at least one pulse is needed")
}

fn build_signals(
    ctx: &Ctx,
    raw: Vec<Spanned<RawSignal>>,
    exp: &Experiment,
) -> Result<Vec<WantedSignal>, InputError> {
    if raw.len() > MAX_OUTPUTS {
        return Err(ctx.err(
            raw[MAX_OUTPUTS].span(),
            "signal",
            format!(
                "{} [[signal]] tables; at most {MAX_OUTPUTS} are allowed (each is one output of every cycle)",
                raw.len()
            ),
        ));
    }
    let mut out: Vec<WantedSignal> = Vec::new();
    for s in raw {
        let span = s.span();
        let s = s.into_inner();
        let name = s.name.get_ref().trim().to_string();
        if name.is_empty() || out.iter().any(|o| o.name == name) {
            return Err(ctx.err(
                s.name.span(),
                "signal.name",
                format!("signal name `{name}` must be non-empty and unique"),
            ));
        }
        let mut items = Vec::new();
        for c in s.classes.iter().flatten() {
            match PathwayClass::parse(c.get_ref()) {
                Some(PathwayClass::Other) | None => {
                    return Err(ctx.err(c.span(), "signal.classes", format!("unknown class `{}`; use rephasing, non-rephasing or double-quantum (or give `signatures`)", c.get_ref())))
                }
                Some(class) => items.push(WantedItem::Class(class)),
            }
        }
        for sig in s.signatures.iter().flatten() {
            let v = sig.get_ref();
            if v.len() != exp.fields.len() {
                return Err(ctx.err(sig.span(), "signal.signatures", format!("signature has {} components but the experiment has {} fields ({}); give one integer per field, LO included", v.len(), exp.fields.len(), exp.field_names().join(", "))));
            }
            let sig = Signature(numbers::signature_entries(ctx, sig, "signal.signatures")?);
            if sig.sum() != 0 {
                return Err(ctx.err(span.clone(), "signal.signatures", format!("signature {sig} sums to {}; every detected term sums to 0 over all fields (include the LO or receiver)", sig.sum())));
            }
            items.push(WantedItem::Signature(sig));
        }
        if let Some(p) = &s.coherence_path {
            let Detection::Nmr {
                max_coherence,
                detected,
            } = exp.detection
            else {
                return Err(ctx.err(
                    p.span(),
                    "signal.coherence_path",
                    "coherence paths are for NMR detection; use classes or signatures",
                ));
            };
            let path: Vec<i32> = p
                .get_ref()
                .iter()
                .map(|&x| x.clamp(-1000, 1000) as i32)
                .collect();
            if path.iter().any(|x| x.abs() > max_coherence) || path.last() != Some(&detected) {
                return Err(ctx.err(p.span(), "signal.coherence_path", format!("orders must lie in -{max_coherence}..={max_coherence} and end at the detected order {detected}")));
            }
            crate::pathways::coherence_signature(exp, &path)
                .map_err(|e| ctx.err(p.span(), "signal.coherence_path", e.to_string()))?;
            items.push(WantedItem::CoherencePath(path));
        }
        if items.is_empty() {
            return Err(ctx.err(span, "signal", format!("signal `{name}` keeps nothing; give `classes`, `signatures` or `coherence_path`")));
        }
        out.push(WantedSignal { name, items });
    }
    Ok(out)
}
