//! Binding a cycle table to an experiment: cycle fields matched to the experiment's by name
//! (omitted fixed fields get phase 0), cells snapped to exact values within their written
//! precision ([`super::snap_cells`]), and each cycle output matched to a wanted signal (its kept signatures and the
//! pathways of other classes sharing them).

use super::snap_cells::{snap_phases, snap_weights, Snap};
use super::CheckError;
use crate::cycle::{weights_from_signature, Cycle, Phase, Weight, WeightSource};
use crate::exact::Turns;
use crate::model::{Experiment, PhaseControl};
use crate::pathways::Contamination;
use crate::selection::Selection;
use crate::signature::Signature;

/// How approximate phases are turned into exact ones.
#[derive(Clone, Debug, PartialEq)]
pub struct SnapPolicy {
    /// Snap at all (otherwise evaluate numerically and mark the verdict not exact).
    pub enabled: bool,
    /// Largest distance, in turns, between a phase marked approximate (`~`, no written
    /// precision) and its snapped fraction; cells with written digits use their precision.
    pub tolerance_turns: f64,
    /// Largest denominator of a snapped fraction.
    pub max_denominator: u64,
}

impl Default for SnapPolicy {
    /// 1e-5 turn (0.0036 deg: covers radians written with 4 decimals) and denominators up to
    /// 3600 (a 0.1-degree grid).
    fn default() -> Self {
        SnapPolicy {
            enabled: true,
            tolerance_turns: 1e-5,
            max_denominator: 3600,
        }
    }
}

/// One output bound to the experiment.
#[derive(Clone, Debug, PartialEq)]
pub struct BoundOutput {
    /// Output name.
    pub name: String,
    /// Kept signatures over the experiment's fields.
    pub kept: Vec<Signature>,
    /// Step weights (snapped where the written precision allowed).
    pub weights: Vec<Weight>,
    /// Radius of the written precision left on each weight (0 when exact or snapped).
    pub weight_radius: Vec<f64>,
    /// How the weights were given.
    pub source: WeightSource,
    /// For derived weights: the signature over the experiment's fields they keep.
    pub derived_from: Option<Signature>,
    /// Unwanted pathways sharing a kept signature (from the experiment's resolution).
    pub contamination: Vec<Contamination>,
}

impl BoundOutput {
    /// All weights as exact cyclotomic numbers, if every one is exact.
    pub fn exact_weights(&self) -> Option<Vec<crate::exact::Cyclo>> {
        self.weights
            .iter()
            .map(|w| match w {
                Weight::Exact(c) => Some(c.clone()),
                Weight::Approx(_) => None,
            })
            .collect()
    }
}

/// A cycle in the experiment's field order.
#[derive(Clone, Debug, PartialEq)]
pub struct BoundCycle {
    /// Phases per step, one per experiment field (snapped where the policy allowed).
    pub phases: Vec<Vec<Phase>>,
    /// Half-width in turns of the written precision left on each phase (0 when exact or
    /// snapped), per step and experiment field.
    pub half_width: Vec<Vec<f64>>,
    /// True for the experiment's fixed fields.
    pub fixed: Vec<bool>,
    /// Grid per field from the cycle's metadata, if given (1 for omitted fields).
    pub declared_grid: Option<Vec<u64>>,
    /// Outputs.
    pub outputs: Vec<BoundOutput>,
    /// Notes for the report (snapping, derived weights, dialect, unit warnings).
    pub notes: Vec<String>,
    /// Cells snapped to exact values.
    pub snaps: Vec<Snap>,
}

impl BoundCycle {
    /// All phases as exact turns, if every one is exact.
    pub fn exact_phases(&self) -> Option<Vec<Vec<Turns>>> {
        self.phases
            .iter()
            .map(|r| r.iter().map(Phase::exact).collect())
            .collect()
    }

    /// Phases in turns as floats.
    pub fn phases_f64(&self) -> Vec<Vec<f64>> {
        self.phases
            .iter()
            .map(|r| r.iter().map(Phase::turns_f64).collect())
            .collect()
    }

    /// Grid (steps per turn) of field `j`: the declared one, else the lcm of its phase
    /// denominators; `None` when a phase of the field is approximate or the lcm exceeds
    /// `u64` (computed with checked arithmetic: no grid is then claimed).
    pub fn grid(&self, j: usize) -> Option<u64> {
        if let Some(g) = &self.declared_grid {
            return g.get(j).copied();
        }
        let mut l = 1u64;
        for row in &self.phases {
            let d = row[j].exact()?.denom().unsigned_abs();
            l = crate::exact::checked_lcm_u64(l, d)?;
        }
        Some(l)
    }

    /// The distinct phases of every field.
    pub fn phases_used(&self, exp: &Experiment) -> Vec<super::FieldPhases> {
        (0..self.fixed.len())
            .map(|j| {
                let mut exact: Vec<Turns> =
                    self.phases.iter().filter_map(|r| r[j].exact()).collect();
                exact.sort();
                exact.dedup();
                let mut approx: Vec<f64> = self
                    .phases
                    .iter()
                    .filter_map(|r| match r[j] {
                        Phase::Approx(x) => Some(x),
                        Phase::Exact(_) => None,
                    })
                    .collect();
                approx.sort_by(f64::total_cmp);
                approx.dedup();
                let mut values: Vec<String> = exact
                    .iter()
                    .map(|t| crate::cycle::text::format_phase(&Phase::Exact(*t)))
                    .collect();
                values.extend(
                    approx
                        .iter()
                        .map(|x| format!("~{}", crate::numfmt::compact(*x))),
                );
                super::FieldPhases {
                    field: exp.fields[j].name.clone(),
                    fixed: self.fixed[j],
                    values,
                    grid: self.grid(j),
                }
            })
            .collect()
    }
}

/// Map `cycle` onto the selection's experiment and outputs.
pub fn bind_cycle(
    sel: &Selection,
    cycle: &Cycle,
    snap: &SnapPolicy,
) -> Result<BoundCycle, CheckError> {
    let exp = &sel.experiment;
    let names = exp.field_names();
    let fixed: Vec<bool> = exp
        .fields
        .iter()
        .map(|f| f.phase == PhaseControl::Fixed)
        .collect();
    let assigned;
    let mut notes = Vec::new();
    let cycle = if cycle.fields.is_empty() && !cycle.steps.is_empty() {
        assigned = assign_columns(exp, cycle)?;
        notes.push(format!(
            "the array names no fields: its columns are taken as the experiment's fields {} in order",
            assigned.fields.join(", ")
        ));
        &assigned
    } else {
        cycle
    };
    let named;
    let cycle = if !cycle.outputs.is_empty() && cycle.outputs.iter().all(|o| o.name.is_empty()) {
        named = name_outputs(sel, cycle)?;
        notes.push(format!(
            "the weight columns name no outputs: they are taken as the experiment's wanted signals {} in order, with F(b) = sum_m w_m exp(+2 pi i b.phi_m) (docs/combine.md); weights of the opposite sign convention show as a lost kept term (conjugate them)",
            named.outputs.iter().map(|o| o.name.as_str()).collect::<Vec<_>>().join(", ")
        ));
        &named
    } else {
        cycle
    };
    let mismatch = |detail: String| CheckError::FieldMismatch {
        detail,
        cycle: cycle.fields.clone(),
        experiment: names.clone(),
    };
    // Column of each experiment field in the cycle.
    let mut col = vec![None; names.len()];
    for (c, f) in cycle.fields.iter().enumerate() {
        match names.iter().position(|n| n == f) {
            Some(j) => col[j] = Some(c),
            None => {
                return Err(mismatch(format!(
                    "cycle field `{f}` is not a field of the experiment"
                )))
            }
        }
    }
    for (j, c) in col.iter().enumerate() {
        if c.is_none() && !fixed[j] {
            return Err(mismatch(format!(
                "experiment field `{}` is cycled but has no column in the cycle (only fixed fields may be omitted)",
                names[j]
            )));
        }
    }
    // Fixed fields given in the table must be constant.
    for (j, c) in col.iter().enumerate() {
        if let (true, Some(c)) = (fixed[j], *c) {
            let first = cycle.steps.first().map(|r| r[c].turns_f64());
            if let Some(m) = cycle
                .steps
                .iter()
                .position(|r| Some(r[c].turns_f64()) != first)
            {
                return Err(CheckError::FieldMismatch {
                    detail: format!(
                        "field `{}` is fixed in the experiment but the cycle changes its phase at step {}; set phase = \"cycled\" in the experiment or make the column constant",
                        names[j],
                        m + 1
                    ),
                    cycle: cycle.fields.clone(),
                    experiment: names.clone(),
                });
            }
        }
    }
    // Phases in experiment order, snapped to exact values within their written precision.
    let grid = cycle
        .meta
        .grid
        .as_deref()
        .filter(|g| g.len() == cycle.fields.len());
    let sp = snap_phases(cycle, &col, grid, snap);
    let mut snaps = sp.snaps;
    if let Some(w) = &cycle.meta.written {
        if let Some(d) = &w.dialect {
            notes.push(format!("table read as {d}"));
        }
        notes.extend(w.warnings.iter().map(|x| format!("WARNING: {x}")));
    }
    if sp.unsnapped > 0 {
        notes.push(format!(
            "{} phase(s) match no simple exact value within their written precision; outputs using them are judged against a rigorous rounding bound (zero within the table's precision, or a leak above it)",
            sp.unsnapped
        ));
    }
    let declared_grid = cycle.meta.grid.as_ref().and_then(|g| {
        if g.len() != cycle.fields.len() {
            notes.push(format!(
                "the declared grid has {} entries for {} cycle fields; ignored (grids inferred from the phases)",
                g.len(),
                cycle.fields.len()
            ));
            return None;
        }
        Some(col.iter().map(|c| c.map_or(1, |c| u64::from(g[c]))).collect())
    });
    let phases = sp.phases;
    let outputs = bind_outputs(sel, cycle, &col, &phases, snap, &mut snaps, &mut notes)?;
    if !snaps.is_empty() {
        notes.push(format!(
            "{} cell(s) snapped to the simplest exact value within their written precision; the verdict is exact for the snapped table (snaps listed)",
            snaps.len()
        ));
    }
    Ok(BoundCycle {
        phases,
        half_width: sp.half_width,
        fixed,
        declared_grid,
        outputs,
        notes,
        snaps,
    })
}

/// A cycle whose columns carry no field names (a bare NumPy array): one column per cycled field
/// of the experiment, or one per field, in the experiment's order.
fn assign_columns(exp: &Experiment, cycle: &Cycle) -> Result<Cycle, CheckError> {
    let width = cycle.steps[0].len();
    let cycled: Vec<String> = exp
        .fields
        .iter()
        .filter(|f| f.phase != PhaseControl::Fixed)
        .map(|f| f.name.clone())
        .collect();
    let fields = if width == cycled.len() {
        cycled
    } else if width == exp.fields.len() {
        exp.field_names()
    } else {
        return Err(CheckError::FieldMismatch {
            detail: format!(
                "the array has {width} columns but the experiment has {} cycled fields and {} fields in all; save one column per cycled field in the experiment's order, or export with pathsieve (its sidecar names the fields)",
                cycled.len(),
                exp.fields.len()
            ),
            cycle: Vec::new(),
            experiment: exp.field_names(),
        });
    };
    Ok(Cycle {
        fields,
        ..cycle.clone()
    })
}

/// A cycle whose weight columns carry no names (an archive's `weights` member without a
/// sidecar): one column per wanted signal of the experiment, in its order.
fn name_outputs(sel: &Selection, cycle: &Cycle) -> Result<Cycle, CheckError> {
    let wanted: Vec<String> = sel.outputs.iter().map(|r| r.name.clone()).collect();
    if wanted.len() != cycle.outputs.len() {
        return Err(CheckError::OutputMismatch(format!(
            "the weights have {} column(s) with no names but the experiment wants {} signal(s) [{}]; save one weight column per wanted signal in that order, or export with pathsieve (its sidecar names the outputs)",
            cycle.outputs.len(),
            wanted.len(),
            wanted.join(", ")
        )));
    }
    let mut c = cycle.clone();
    for (o, name) in c.outputs.iter_mut().zip(wanted) {
        o.name = name;
    }
    Ok(c)
}

fn bind_outputs(
    sel: &Selection,
    cycle: &Cycle,
    col: &[Option<usize>],
    phases: &[Vec<Phase>],
    policy: &SnapPolicy,
    snaps: &mut Vec<Snap>,
    notes: &mut Vec<String>,
) -> Result<Vec<BoundOutput>, CheckError> {
    let (exp, resolved) = (&sel.experiment, &sel.outputs);
    let wanted_names: Vec<String> = resolved.iter().map(|r| r.name.clone()).collect();
    let embed = |t: &Signature| -> Signature {
        Signature(col.iter().map(|c| c.map_or(0, |c| t.0[c])).collect())
    };
    let mut out = Vec::new();
    if cycle.outputs.is_empty() {
        if resolved.is_empty() {
            return Err(CheckError::OutputMismatch(
                "the cycle gives no weights and the experiment names no wanted signal; add [[output]] tables (or w:NAME columns) or [[signal]]s".into(),
            ));
        }
        crate::cycle::bounds::check_cells(phases.len(), col.len() + resolved.len())
            .map_err(CheckError::BadRequest)?;
        notes.push("the cycle gives no weights: each wanted signal's weights are derived from its first kept signature, w_m = exp(-2 pi i t.phi_m) / N".into());
        for r in resolved {
            let t = r.kept[0].clone();
            out.push(BoundOutput {
                name: r.name.clone(),
                weight_radius: vec![0.0; phases.len()],
                derived_from: Some(t.clone()),
                weights: weights_from_signature(phases, &t.0),
                source: WeightSource::FromSignature(t),
                kept: r.kept.clone(),
                contamination: r.contamination.clone(),
            });
        }
        return Ok(out);
    }
    let given: Vec<&str> = cycle.outputs.iter().map(|o| o.name.as_str()).collect();
    let missing: Vec<&String> = wanted_names
        .iter()
        .filter(|n| !given.contains(&n.as_str()))
        .collect();
    if !missing.is_empty() {
        return Err(CheckError::OutputMismatch(format!(
            "the cycle gives weights for [{}] but not for the wanted signal(s) [{}] of the experiment; add a weight column w:NAME (CSV) or an [[output]] (TOML) for each, or remove the signal from the experiment",
            given.join(", "),
            missing.iter().map(|s| s.as_str()).collect::<Vec<_>>().join(", ")
        )));
    }
    for (oi, o) in cycle.outputs.iter().enumerate() {
        if o.weights.len() != cycle.len() {
            return Err(CheckError::OutputMismatch(format!(
                "output `{}` has {} weights for {} steps",
                o.name,
                o.weights.len(),
                cycle.len()
            )));
        }
        let r = resolved.iter().find(|r| r.name == o.name);
        let (kept, contamination) = match (r, &o.source) {
            (Some(r), _) => (r.kept.clone(), r.contamination.clone()),
            (None, WeightSource::FromSignature(t)) => {
                let t = embed(t);
                if exp.detection.order_parity().is_some() && t.sum() != 0 {
                    return Err(CheckError::OutputMismatch(format!(
                        "output `{}`: signature {t} over the experiment's fields does not sum to 0; add the omitted fixed field column(s) to the cycle or name the output after a signal of the experiment",
                        o.name
                    )));
                }
                (vec![t], Vec::new())
            }
            (None, WeightSource::Explicit) => {
                return Err(CheckError::OutputMismatch(format!(
                    "output `{}` is not a wanted signal of the experiment (signals: [{}]) and gives explicit weights, so what it keeps is unknown; rename it or give from_signature",
                    o.name,
                    wanted_names.join(", ")
                )))
            }
        };
        // Weights derived from a signature follow the (possibly snapped) phases.
        let (weights, weight_radius) = match &o.source {
            WeightSource::FromSignature(t) => (
                weights_from_signature(phases, &embed(t).0),
                vec![0.0; phases.len()],
            ),
            WeightSource::Explicit => {
                let s = snap_weights(cycle, oi, policy);
                snaps.extend(s.snaps);
                (s.weights, s.radius)
            }
        };
        out.push(BoundOutput {
            name: o.name.clone(),
            kept,
            weights,
            weight_radius,
            derived_from: match &o.source {
                WeightSource::FromSignature(t) => Some(embed(t)),
                WeightSource::Explicit => None,
            },
            source: o.source.clone(),
            contamination,
        });
    }
    Ok(out)
}
