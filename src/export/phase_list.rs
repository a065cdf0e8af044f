//! Phase lists for acquisition software: this module owns the export model — a cycle's steps as
//! rows in a chosen unit (turns, degrees, radians or integer grid indices), one complex weight
//! per output per row, the row order (as designed or drift-robust) and the grid — plus the typed
//! errors of exporting. The byte formats are in [`super::phase_formats`], re-import in
//! [`super::phase_import`], the drift-robust order in [`super::step_order`].

use crate::cycle::text::format_weight;
use crate::cycle::{Cycle, Phase};
use crate::exact::Turns;
use crate::model::Experiment;
use num_complex::Complex64;
use num_integer::Integer;

/// Largest grid (steps per turn) accepted for index export.
pub const MAX_INDEX_GRID: u64 = 1 << 32;

/// The unit of exported phases.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ExportUnit {
    /// Fractions of a turn, float.
    Turns,
    /// Degrees, float.
    Degrees,
    /// Radians, float.
    Radians,
    /// Integer step index k on an M-step grid (phase k/M turn).
    Index,
}

impl ExportUnit {
    /// Parse `turns`, `deg`/`degrees`, `rad`/`radians` or `index`.
    ///
    /// # Errors
    /// A message naming the text and the valid choices.
    pub fn parse(text: &str) -> Result<ExportUnit, String> {
        match text.trim().to_ascii_lowercase().as_str() {
            "turns" | "turn" => Ok(ExportUnit::Turns),
            "deg" | "degrees" | "degree" => Ok(ExportUnit::Degrees),
            "rad" | "radians" | "radian" => Ok(ExportUnit::Radians),
            "index" | "indices" | "grid" => Ok(ExportUnit::Index),
            _ => Err(format!(
                "unknown export unit `{text}`; use turns, deg, rad or index"
            )),
        }
    }
}

/// Parse a unit of the one vocabulary every command takes: `turns`, `deg`, `rad`, `index`
/// (grid indices on the cycle's own grid) or `index:M` (also `grid:M`): indices on an M-step
/// grid, returned as the grid.
///
/// # Errors
/// A message naming the text and the valid choices.
pub fn parse_unit_spec(text: &str) -> Result<(ExportUnit, Option<u64>), String> {
    let t = text.trim().to_ascii_lowercase();
    if let Some(m) = t.strip_prefix("index:").or_else(|| t.strip_prefix("grid:")) {
        return match m.trim().parse::<u64>() {
            Ok(m) if (1..=MAX_INDEX_GRID).contains(&m) => Ok((ExportUnit::Index, Some(m))),
            _ => Err(format!(
                "unit `{text}`: index:M needs a step count M from 1 to {MAX_INDEX_GRID}, e.g. index:8"
            )),
        };
    }
    ExportUnit::parse(&t)
        .map(|u| (u, None))
        .map_err(|_| format!("unknown unit `{text}`; use turns, deg, rad, index or index:M"))
}

/// Why a phase list could not be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ExportError {
    /// Index export without any grid.
    #[error("grid indices need a grid: declare `grid = [...]` in the cycle file or pass --grid M")]
    NoGrid,
    /// A grid of 0 or above the limit.
    #[error("grid {m} is out of range; use 1..={MAX_INDEX_GRID} steps per turn")]
    BadGrid {
        /// The grid asked for.
        m: u64,
    },
    /// A phase that is not on the index grid.
    #[error("step {step}, field {field}: phase {phase} turn is not on the {m}-step grid; choose a grid that holds it (--grid) or another unit")]
    OffGrid {
        /// 0-based step.
        step: usize,
        /// Field name.
        field: String,
        /// The phase as text.
        phase: String,
        /// The grid.
        m: u64,
    },
    /// An approximate phase asked for as an index.
    #[error("step {step}, field {field}: phase ~{turns} turn is approximate and has no grid index; use turns, deg or rad")]
    ApproxIndex {
        /// 0-based step.
        step: usize,
        /// Field name.
        field: String,
        /// The phase in turns.
        turns: f64,
    },
    /// A cycle with no steps.
    #[error("the cycle has no steps; nothing to export")]
    NoSteps,
    /// A cycle field the experiment does not have.
    #[error("cycle field `{field}` is not a field of the experiment (fields: {known}); rename the column")]
    UnknownField {
        /// The field.
        field: String,
        /// The experiment's fields.
        known: String,
    },
    /// A row order that is not a permutation of the steps.
    #[error("step order has {found} entries or repeats a step; it must list each of the {steps} steps once")]
    BadOrder {
        /// Steps in the list.
        steps: usize,
        /// Entries in the order.
        found: usize,
    },
}

/// A cycle laid out for export: rows in export order.
#[derive(Clone, Debug, PartialEq)]
pub struct PhaseList {
    /// Field names, one per phase column.
    pub fields: Vec<String>,
    /// Phases per row (export order), one per field.
    pub phases: Vec<Vec<Phase>>,
    /// Steps per turn per field: the cycle's declared grid, else derived from exact phases.
    pub grid: Option<Vec<u64>>,
    /// Output names.
    pub outputs: Vec<String>,
    /// Weights per row, one per output.
    pub weights: Vec<Vec<Complex64>>,
    /// The exact text of each weight ([`format_weight`]), per row and output.
    pub weight_texts: Vec<Vec<String>>,
    /// For each row, the 0-based step of the cycle it comes from.
    pub source_steps: Vec<usize>,
}

/// A phase value in the export unit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Cell {
    /// A float (turns, degrees, radians).
    Float(f64),
    /// A grid index.
    Index(i64),
}

impl PhaseList {
    /// Lay out a cycle as designed (row m = step m).
    ///
    /// # Errors
    /// [`ExportError::NoSteps`].
    pub fn from_cycle(cycle: &Cycle) -> Result<PhaseList, ExportError> {
        if cycle.is_empty() {
            return Err(ExportError::NoSteps);
        }
        let n = cycle.len();
        let grid = match &cycle.meta.grid {
            Some(g) if g.len() == cycle.fields.len() => {
                Some(g.iter().map(|&x| u64::from(x)).collect())
            }
            _ => derived_grid(cycle),
        };
        let weights = (0..n)
            .map(|m| {
                cycle
                    .outputs
                    .iter()
                    .map(|o| {
                        o.weights
                            .get(m)
                            .map_or(Complex64::default(), |w| w.to_complex())
                    })
                    .collect()
            })
            .collect();
        let weight_texts = (0..n)
            .map(|m| {
                cycle
                    .outputs
                    .iter()
                    .map(|o| o.weights.get(m).map_or("0".into(), format_weight))
                    .collect()
            })
            .collect();
        Ok(PhaseList {
            fields: cycle.fields.clone(),
            phases: cycle.steps.clone(),
            grid,
            outputs: cycle.outputs.iter().map(|o| o.name.clone()).collect(),
            weights,
            weight_texts,
            source_steps: (0..n).collect(),
        })
    }

    /// Insert the experiment's fields the cycle omits (fixed fields, phase 0, grid 1) and put
    /// the columns in the experiment's field order, so that a lab program gets one column per
    /// field it drives.
    ///
    /// # Errors
    /// [`ExportError::UnknownField`] for a cycle field the experiment lacks.
    pub fn with_experiment_fields(mut self, exp: &Experiment) -> Result<PhaseList, ExportError> {
        let names = exp.field_names();
        let mut src: Vec<Option<usize>> = vec![None; names.len()];
        for (c, f) in self.fields.iter().enumerate() {
            match names.iter().position(|n| n == f) {
                Some(j) => src[j] = Some(c),
                None => {
                    return Err(ExportError::UnknownField {
                        field: f.clone(),
                        known: names.join(", "),
                    })
                }
            }
        }
        self.phases = self
            .phases
            .iter()
            .map(|row| {
                src.iter()
                    .map(|s| s.map_or(Phase::Exact(Turns::from_integer(0)), |c| row[c].clone()))
                    .collect()
            })
            .collect();
        self.grid = self
            .grid
            .map(|g| src.iter().map(|s| s.map_or(1, |c| g[c])).collect());
        self.fields = names;
        Ok(self)
    }

    /// Put the rows in `order` (a permutation of the current rows).
    ///
    /// # Errors
    /// [`ExportError::BadOrder`] when `order` is not a permutation.
    pub fn reordered(mut self, order: &[usize]) -> Result<PhaseList, ExportError> {
        let n = self.phases.len();
        let mut seen = vec![false; n];
        if order.len() != n
            || order
                .iter()
                .any(|&m| m >= n || std::mem::replace(&mut seen[m], true))
        {
            return Err(ExportError::BadOrder {
                steps: n,
                found: order.len(),
            });
        }
        self.phases = order.iter().map(|&m| self.phases[m].clone()).collect();
        self.weights = order.iter().map(|&m| self.weights[m].clone()).collect();
        self.weight_texts = order
            .iter()
            .map(|&m| self.weight_texts[m].clone())
            .collect();
        self.source_steps = order.iter().map(|&m| self.source_steps[m]).collect();
        Ok(self)
    }

    /// Number of rows.
    pub fn len(&self) -> usize {
        self.phases.len()
    }

    /// True when there are no rows.
    pub fn is_empty(&self) -> bool {
        self.phases.is_empty()
    }

    /// Phases in turns as floats, per row.
    pub fn turns_f64(&self) -> Vec<Vec<f64>> {
        self.phases
            .iter()
            .map(|r| r.iter().map(Phase::turns_f64).collect())
            .collect()
    }

    /// The common index grid: `m` if given, else the lcm of the per-field grid.
    ///
    /// # Errors
    /// [`ExportError::NoGrid`] or [`ExportError::BadGrid`].
    pub fn index_grid(&self, m: Option<u64>) -> Result<u64, ExportError> {
        let m = match (m, &self.grid) {
            (Some(m), _) => m,
            (None, Some(g)) => g
                .iter()
                .try_fold(1u64, |a, &b| {
                    let l = a.lcm(&b.max(1));
                    (l <= MAX_INDEX_GRID).then_some(l)
                })
                .ok_or(ExportError::BadGrid {
                    m: MAX_INDEX_GRID + 1,
                })?,
            (None, None) => return Err(ExportError::NoGrid),
        };
        if m == 0 || m > MAX_INDEX_GRID {
            return Err(ExportError::BadGrid { m });
        }
        Ok(m)
    }

    /// The phases in `unit` (`grid` is the index grid, used only for [`ExportUnit::Index`]).
    /// Exact phases convert exactly where the unit allows (1/3 turn is 120 degrees exactly).
    ///
    /// # Errors
    /// For indices: [`ExportError::OffGrid`] or [`ExportError::ApproxIndex`].
    pub fn cells(&self, unit: ExportUnit, grid: u64) -> Result<Vec<Vec<Cell>>, ExportError> {
        let mut out = Vec::with_capacity(self.len());
        for (m, row) in self.phases.iter().enumerate() {
            let mut r = Vec::with_capacity(row.len());
            for (j, p) in row.iter().enumerate() {
                r.push(match (unit, p) {
                    (ExportUnit::Index, Phase::Exact(t)) => {
                        let num = i128::from(*t.numer()) * i128::from(grid);
                        let den = i128::from(*t.denom());
                        if num % den != 0 {
                            return Err(ExportError::OffGrid {
                                step: m,
                                field: self.fields[j].clone(),
                                phase: crate::cycle::text::format_phase(p),
                                m: grid,
                            });
                        }
                        Cell::Index((num / den) as i64)
                    }
                    (ExportUnit::Index, Phase::Approx(x)) => {
                        return Err(ExportError::ApproxIndex {
                            step: m,
                            field: self.fields[j].clone(),
                            turns: *x,
                        })
                    }
                    (u, Phase::Exact(t)) => {
                        let (n, d) = (*t.numer() as f64, *t.denom() as f64);
                        Cell::Float(match u {
                            ExportUnit::Degrees => n * 360.0 / d,
                            ExportUnit::Radians => n / d * std::f64::consts::TAU,
                            _ => n / d,
                        })
                    }
                    (u, Phase::Approx(x)) => Cell::Float(match u {
                        ExportUnit::Degrees => x * 360.0,
                        ExportUnit::Radians => x * std::f64::consts::TAU,
                        _ => *x,
                    }),
                });
            }
            out.push(r);
        }
        Ok(out)
    }

    /// The unit's name as written in metadata (`grid:M` for indices, which the cycle CSV reader
    /// understands).
    pub fn unit_name(unit: ExportUnit, grid: u64) -> String {
        match unit {
            ExportUnit::Turns => "turns".into(),
            ExportUnit::Degrees => "degrees".into(),
            ExportUnit::Radians => "radians".into(),
            ExportUnit::Index => format!("grid:{grid}"),
        }
    }
}

/// Per-field grid from exact phases: the lcm of each field's denominators.
fn derived_grid(cycle: &Cycle) -> Option<Vec<u64>> {
    let exact = cycle.exact_phases()?;
    let mut g = vec![1u64; cycle.fields.len()];
    for row in &exact {
        for (j, t) in row.iter().enumerate() {
            let d = u64::try_from(*t.denom()).ok()?;
            g[j] = g[j].lcm(&d);
            if g[j] > MAX_INDEX_GRID {
                return None;
            }
        }
    }
    Some(g)
}

#[cfg(test)]
mod unit_tests {
    use super::*;

    #[test]
    fn the_unit_vocabulary_reads_index_with_its_grid() {
        assert_eq!(parse_unit_spec("index:8"), Ok((ExportUnit::Index, Some(8))));
        assert_eq!(parse_unit_spec("grid:3"), Ok((ExportUnit::Index, Some(3))));
        assert_eq!(parse_unit_spec("deg"), Ok((ExportUnit::Degrees, None)));
        assert_eq!(parse_unit_spec("index"), Ok((ExportUnit::Index, None)));
        assert!(parse_unit_spec("index:0").unwrap_err().contains("index:M"));
        assert!(parse_unit_spec("grad").unwrap_err().contains("index:M"));
    }
}
