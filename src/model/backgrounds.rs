//! Background sizes: how large each rejected term is in the detected signal, relative to the
//! wanted signal's amplitude (a scatter or pump-probe background is often 10^3 times the
//! signal). A leak matters in proportion to `|F(b)| x size(b)`, so the checker ranks leaks by
//! that product. Sizes are given by signature, by class (`unmodulated`, `scatter`, `pair`), by
//! order (`order-K`) or as a `default`; the most specific rule wins. This module owns the keys,
//! their parsing and the lookup; the experiment file's `[backgrounds]` table and the
//! `--background KEY=SIZE` option both go through [`parse_key`].

use crate::model::{Experiment, FieldKind};
use crate::signature::Signature;
use serde::Serialize;

/// The class of a term, for background sizes: decided from the signature alone.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum BackgroundClass {
    /// `b = 0`: the reference (LO, probe) alone, the pump-probe background (each pump acting
    /// twice), populations left by one pulse: nothing in it depends on a phase.
    Unmodulated,
    /// `b = e_j - e_ref`: pulse `j` scattered onto the detection reference (also the linear
    /// signal of that pulse).
    Scatter,
    /// `b = e_a - e_b` between two pulses: their scatter beating on the detector, or in
    /// population detection the two-pulse (second-order) population.
    Pair,
}

impl BackgroundClass {
    /// The key naming the class.
    pub fn key(self) -> &'static str {
        match self {
            BackgroundClass::Unmodulated => "unmodulated",
            BackgroundClass::Scatter => "scatter",
            BackgroundClass::Pair => "pair",
        }
    }

    /// The class of `b` in `exp`, if it has one.
    pub fn of(exp: &Experiment, b: &Signature) -> Option<BackgroundClass> {
        if b.is_zero() {
            return Some(BackgroundClass::Unmodulated);
        }
        let nz: Vec<usize> = (0..b.0.len()).filter(|&j| b.0[j] != 0).collect();
        let [x, y] = nz[..] else { return None };
        if b.0[x] + b.0[y] != 0 || b.0[x].abs() != 1 {
            return None;
        }
        let refj = exp.detector_field();
        if refj == Some(x) || refj == Some(y) {
            return Some(BackgroundClass::Scatter);
        }
        let pulse = |j: usize| exp.fields[j].kind == FieldKind::Pulse;
        (pulse(x) && pulse(y)).then_some(BackgroundClass::Pair)
    }
}

/// What a background size applies to.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind", content = "value")]
pub enum BackgroundKey {
    /// One signature over the experiment's fields.
    Signature(Signature),
    /// A class of terms.
    Class(BackgroundClass),
    /// Every term of this perturbative order (`sum |b|`, less one where a reference enters).
    Order(i64),
    /// Every other term.
    Default,
}

impl BackgroundKey {
    /// Rank of the rule: lower is more specific and wins.
    fn rank(&self) -> u8 {
        match self {
            BackgroundKey::Signature(_) => 0,
            BackgroundKey::Class(_) => 1,
            BackgroundKey::Order(_) => 2,
            BackgroundKey::Default => 3,
        }
    }

    /// The key as written in files and on the command line.
    pub fn text(&self) -> String {
        match self {
            BackgroundKey::Signature(s) => s.to_string(),
            BackgroundKey::Class(c) => c.key().to_string(),
            BackgroundKey::Order(k) => format!("order-{k}"),
            BackgroundKey::Default => "default".into(),
        }
    }
}

/// One size rule.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BackgroundRule {
    /// What it applies to.
    pub key: BackgroundKey,
    /// Amplitude relative to the wanted signal's (`> 0`).
    pub size: f64,
    /// Where it was given, e.g. `experiment file line 40` or `--background`.
    pub given_in: String,
}

/// Background sizes (empty: every term has size 1, the wanted signal's own).
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct Backgrounds {
    /// The rules; a later rule with the same key replaces an earlier one.
    pub rules: Vec<BackgroundRule>,
}

/// The size a term gets and the rule that gave it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BackgroundSize {
    /// Amplitude relative to the wanted signal's.
    pub size: f64,
    /// The key of the rule applied (`default` when none was given).
    pub rule: String,
}

impl Backgrounds {
    /// True when no size was given.
    pub fn is_empty(&self) -> bool {
        self.rules.is_empty()
    }

    /// Add a rule, replacing one with the same key.
    pub fn set(&mut self, rule: BackgroundRule) {
        self.rules.retain(|r| r.key != rule.key);
        self.rules.push(rule);
    }

    /// `self` with every rule of `other` added on top (other's rules win on equal keys).
    pub fn overlaid(&self, other: &Backgrounds) -> Backgrounds {
        let mut out = self.clone();
        for r in &other.rules {
            out.set(r.clone());
        }
        out
    }

    /// The size of term `b` in `exp`: the most specific matching rule, else 1.
    pub fn size_of(&self, exp: &Experiment, b: &Signature) -> BackgroundSize {
        self.matching(exp, b).unwrap_or(BackgroundSize {
            size: 1.0,
            rule: "none given (size 1)".into(),
        })
    }

    /// The size the most specific rule matching `b` gives, `None` when no rule matches.
    pub fn matching(&self, exp: &Experiment, b: &Signature) -> Option<BackgroundSize> {
        let class = BackgroundClass::of(exp, b);
        let order = exp.term_order(b);
        self.rules
            .iter()
            .filter(|r| match &r.key {
                BackgroundKey::Signature(s) => s == b,
                BackgroundKey::Class(c) => Some(*c) == class,
                BackgroundKey::Order(k) => *k == order,
                BackgroundKey::Default => true,
            })
            .min_by_key(|r| r.key.rank())
            .map(|r| BackgroundSize {
                size: r.size,
                rule: r.key.text(),
            })
    }
}

/// The valid key forms, for error messages.
pub const KEY_FORMS: &str = "`default`, `unmodulated`, `scatter`, `pair`, `order-K` (e.g. `order-2`) or a signature over every field such as `(+1,-1,0,0)`";

/// Parse a key: a class name, `order-K`, `default`, or a signature with one integer per field
/// of `exp` (brackets, parentheses, `+` signs and spaces optional: `(+1,-1,0,0)`, `[1, -1, 0, 0]`).
///
/// # Errors
/// A message naming the key and the valid forms.
pub fn parse_key(key: &str, exp: &Experiment) -> Result<BackgroundKey, String> {
    let k = key.trim();
    let lower = k.to_ascii_lowercase();
    match lower.as_str() {
        "default" => return Ok(BackgroundKey::Default),
        "unmodulated" | "pump-probe" => {
            return Ok(BackgroundKey::Class(BackgroundClass::Unmodulated))
        }
        "scatter" => return Ok(BackgroundKey::Class(BackgroundClass::Scatter)),
        "pair" => return Ok(BackgroundKey::Class(BackgroundClass::Pair)),
        _ => {}
    }
    if let Some(o) = lower.strip_prefix("order-") {
        return match o.parse::<i64>() {
            Ok(v) if (0..=i64::from(crate::limits::MAX_ORDER) + 1).contains(&v) => {
                Ok(BackgroundKey::Order(v))
            }
            _ => Err(format!(
                "`{k}`: the order must be a whole number 0..={}",
                crate::limits::MAX_ORDER + 1
            )),
        };
    }
    let inner = k.trim_matches(|c| matches!(c, '(' | ')' | '[' | ']' | ' '));
    let parts: Result<Vec<i64>, _> = inner
        .split(',')
        .map(|p| p.trim().trim_start_matches('+').parse::<i64>())
        .collect();
    match parts {
        Ok(v) if v.len() == exp.fields.len() && v.iter().all(|x| x.abs() <= 64) => {
            Ok(BackgroundKey::Signature(Signature(v)))
        }
        Ok(v) if v.len() != exp.fields.len() => Err(format!(
            "`{k}` has {} entries but the experiment has {} fields ({}); give one integer per field",
            v.len(),
            exp.fields.len(),
            exp.field_names().join(", ")
        )),
        _ => Err(format!("`{k}` is not a background key; use {KEY_FORMS}")),
    }
}

/// Parse a size: a finite number above 0.
///
/// # Errors
/// A message naming the value and the fix.
pub fn check_size(key: &str, size: f64) -> Result<f64, String> {
    if size.is_finite() && size > 0.0 && size <= 1e30 {
        Ok(size)
    } else {
        Err(format!(
            "background `{key}` = {size}: give the amplitude relative to the wanted signal, a number above 0 (e.g. 1e3)"
        ))
    }
}
