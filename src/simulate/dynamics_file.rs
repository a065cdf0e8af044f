//! Reading the optional `[dynamics]` table of an experiment file (format in
//! `docs/experiment-format.md`): units, dephasing, lifetimes and inhomogeneous width, with
//! state energies taken from `[levels]`. Errors name the file, line and key and say the fix.

use super::dynamics::Dynamics;
use super::units::{EnergyUnit, TimeUnit};
use crate::error::InputError;
use crate::model::LevelScheme;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::path::Path;
use toml::Spanned;

#[derive(Deserialize)]
struct RawDoc {
    dynamics: Option<Spanned<RawDynamics>>,
    levels: Option<RawLevelEnergies>,
}

#[derive(Deserialize)]
struct RawLevelEnergies {
    states: Vec<RawStateEnergy>,
}

#[derive(Deserialize)]
struct RawStateEnergy {
    name: String,
    energy: Option<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDynamics {
    energy_unit: Spanned<String>,
    time_unit: Option<Spanned<String>>,
    dephasing: Option<Spanned<f64>>,
    #[serde(default)]
    coherences: Vec<Spanned<RawCoherence>>,
    #[serde(default)]
    lifetimes: BTreeMap<String, Spanned<f64>>,
    inhomogeneous: Option<Spanned<f64>>,
    correlation: Option<Spanned<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCoherence {
    between: String,
    dephasing: f64,
}

fn line_of(text: &str, offset: usize) -> usize {
    text.as_bytes()[..offset.min(text.len())]
        .iter()
        .filter(|&&c| c == b'\n')
        .count()
        + 1
}

/// Read the `[dynamics]` table of the experiment text; `Ok(None)` when the file has none.
/// `levels` is the already validated level scheme of the same file.
pub fn parse_dynamics(
    text: &str,
    path: &Path,
    levels: &LevelScheme,
) -> Result<Option<Dynamics>, InputError> {
    let err = |span: std::ops::Range<usize>, key: &str, msg: String| {
        InputError::new(path, Some(line_of(text, span.start)), Some(key), msg)
    };
    let doc: RawDoc = toml::from_str(text).map_err(|e| {
        let line = e.span().map(|s| line_of(text, s.start));
        InputError::new(path, line, Some("dynamics"), e.message().trim().to_string())
    })?;
    let Some(raw) = doc.dynamics else {
        return Ok(None);
    };
    let span = raw.span();
    let raw = raw.into_inner();
    let unit = EnergyUnit::parse(raw.energy_unit.get_ref()).ok_or_else(|| {
        err(
            raw.energy_unit.span(),
            "energy_unit",
            format!(
                "unknown energy unit `{}`; use cm-1, eV or THz",
                raw.energy_unit.get_ref()
            ),
        )
    })?;
    let time_unit = match &raw.time_unit {
        None => TimeUnit::Femtosecond,
        Some(t) => TimeUnit::parse(t.get_ref()).ok_or_else(|| {
            err(
                t.span(),
                "time_unit",
                format!("unknown time unit `{}`; use fs or ps", t.get_ref()),
            )
        })?,
    };
    let nonneg = |v: &Option<Spanned<f64>>, key: &str| -> Result<f64, InputError> {
        match v {
            None => Ok(0.0),
            Some(x) if x.get_ref().is_finite() && *x.get_ref() >= 0.0 => Ok(*x.get_ref()),
            Some(x) => Err(err(
                x.span(),
                key,
                format!("{} must be a finite number >= 0", x.get_ref()),
            )),
        }
    };
    let dephasing = nonneg(&raw.dephasing, "dephasing")?;
    let inhomogeneous = nonneg(&raw.inhomogeneous, "inhomogeneous")?;
    let correlation = match &raw.correlation {
        None => 1.0,
        Some(c) if (0.0..=1.0).contains(c.get_ref()) => *c.get_ref(),
        Some(c) => {
            return Err(err(
                c.span(),
                "correlation",
                format!(
                "{} is outside 0..=1; 1 = every transition shifts together, 0 = independent states",
                c.get_ref()
            ),
            ))
        }
    };
    let state_index = |name: &str| levels.states.iter().position(|s| s.name == name);
    let names = || {
        levels
            .states
            .iter()
            .map(|s| s.name.as_str())
            .collect::<Vec<_>>()
            .join(", ")
    };
    let mut pair_dephasing = Vec::new();
    for c in &raw.coherences {
        let parts: Vec<&str> = c.get_ref().between.split('-').collect();
        let found = match parts.as_slice() {
            [a, b] => state_index(a.trim()).zip(state_index(b.trim())),
            _ => None,
        };
        let Some((a, b)) = found.filter(|(a, b)| a != b) else {
            return Err(err(
                c.span(),
                "between",
                format!(
                    "`{}` is not two different states joined by `-` (e.g. \"g-e\"); states: {}",
                    c.get_ref().between,
                    names()
                ),
            ));
        };
        let w = c.get_ref().dephasing;
        if !(w.is_finite() && w >= 0.0) {
            return Err(err(c.span(), "dephasing", format!("{w} must be >= 0")));
        }
        pair_dephasing.push((a, b, w));
    }
    let mut lifetimes = vec![None; levels.states.len()];
    for (name, t1) in &raw.lifetimes {
        let Some(a) = state_index(name) else {
            return Err(err(
                t1.span(),
                "lifetimes",
                format!("no state `{name}` in [levels]; states: {}", names()),
            ));
        };
        if !(t1.get_ref().is_finite() && *t1.get_ref() > 0.0) {
            return Err(err(
                t1.span(),
                "lifetimes",
                format!(
                    "lifetime {} of `{name}` must be > 0 ({})",
                    t1.get_ref(),
                    time_unit.label()
                ),
            ));
        }
        lifetimes[a] = Some(*t1.get_ref());
    }
    let written: BTreeMap<String, Option<f64>> = doc
        .levels
        .map(|l| l.states.into_iter().map(|s| (s.name, s.energy)).collect())
        .unwrap_or_default();
    let mut energies = Vec::with_capacity(levels.states.len());
    for (i, s) in levels.states.iter().enumerate() {
        match written.get(&s.name).copied().flatten() {
            Some(e) if e.is_finite() => energies.push(e),
            _ if i == levels.ground => energies.push(0.0),
            _ => {
                return Err(err(
                    span.clone(),
                    "dynamics",
                    format!(
                        "state `{}` has no energy; give it one in [levels], e.g. {{ name = \"{}\", manifold = {}, energy = ... }} in {}",
                        s.name, s.name, s.manifold, unit.label()
                    ),
                ))
            }
        }
    }
    Ok(Some(Dynamics {
        energy_unit: unit,
        time_unit,
        energies,
        dephasing,
        pair_dephasing,
        lifetimes,
        inhomogeneous,
        correlation,
    }))
}
