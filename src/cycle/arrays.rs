//! A cycle from numeric arrays: phases as doubles in a unit (one row per step, one column per
//! field) and weights as complex doubles, the form NumPy users hold. Each value is taken as
//! written in double precision: its written half-width is the double-precision floor the
//! checker trusts ([`DOUBLE_FLOOR`] of a turn), so `1/3` computed in floating point snaps to
//! the exact third and a wrong cell stays wrong. Grid indices (`GridIndex(M)`) that are whole
//! numbers are exact `k/M` turns. Unit plausibility warnings ([`super::plausible`]) are
//! recorded as for a CSV table.

use super::plausible::unit_warning;
use super::{Cycle, CycleMeta, CycleOutput, Phase, Weight, WeightSource, WrittenForm};
use crate::exact::snap::DOUBLE_FLOOR;
use crate::exact::{reduce_turn, PhaseUnit, Turns};
use crate::limits::MAX_STEPS;
use num_complex::Complex64;

/// Why arrays could not be read as a cycle; every message names the cell and the fix.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ArrayError {
    /// No steps, or more than the limit.
    #[error("the phase array has {steps} rows; give one row per step (1 to {MAX_STEPS})")]
    StepCount {
        /// Rows given.
        steps: usize,
    },
    /// A row or weight column of the wrong length.
    #[error("{what} has {found} entries but {expected} are needed; {fix}")]
    Shape {
        /// What is wrong.
        what: String,
        /// Entries found.
        found: usize,
        /// Entries needed.
        expected: usize,
        /// How to fix it.
        fix: String,
    },
    /// NaN or infinity.
    #[error(
        "step {step}, column {column}: {value} is not a finite number; give every phase and weight"
    )]
    NotFinite {
        /// 1-based step.
        step: usize,
        /// Field name or `w:OUTPUT`.
        column: String,
        /// The value as text.
        value: String,
    },
    /// A grid index that is not a whole number.
    #[error("step {step}, field {field}: {value} is not a whole grid index of the {m}-step grid; give integers k (phase k/{m} turn) or another unit")]
    NotIndex {
        /// 1-based step.
        step: usize,
        /// Field name.
        field: String,
        /// The value.
        value: f64,
        /// The grid.
        m: u32,
    },
}

/// One phase value in `unit` as a phase and its written half-width in turns.
fn phase_of(value: f64, unit: PhaseUnit) -> Option<(Phase, f64)> {
    let turns = match unit {
        PhaseUnit::Turns => value,
        PhaseUnit::Degrees => value / 360.0,
        PhaseUnit::Radians => value / std::f64::consts::TAU,
        PhaseUnit::GridIndex(m) => {
            if value.fract() != 0.0 || value.abs() >= 9e15 {
                return None;
            }
            let t = Turns::new(value as i64, i64::from(m));
            return Some((Phase::Exact(reduce_turn(t)), 0.0));
        }
    };
    Some((Phase::Approx(turns), DOUBLE_FLOOR * turns.abs().max(1.0)))
}

/// Build a cycle from `phases` (rows = steps, one value per entry of `fields`, in `unit`) and
/// explicit `outputs` (name and one weight per step each; empty: the checker derives each
/// wanted signal's weights from its signature).
///
/// # Errors
/// [`ArrayError`] naming the step and column of a bad value or the wrong shape.
pub fn cycle_from_arrays(
    fields: Vec<String>,
    phases: &[Vec<f64>],
    unit: PhaseUnit,
    outputs: Vec<(String, Vec<Complex64>)>,
) -> Result<Cycle, ArrayError> {
    let n = phases.len();
    if n == 0 || n > MAX_STEPS {
        return Err(ArrayError::StepCount { steps: n });
    }
    let mut steps = Vec::with_capacity(n);
    let mut half = Vec::with_capacity(n);
    for (m, row) in phases.iter().enumerate() {
        if row.len() != fields.len() {
            return Err(ArrayError::Shape {
                what: format!("phase row {}", m + 1),
                found: row.len(),
                expected: fields.len(),
                fix: format!("give one column per field [{}]", fields.join(", ")),
            });
        }
        let mut ps = Vec::with_capacity(row.len());
        let mut hs = Vec::with_capacity(row.len());
        for (j, &v) in row.iter().enumerate() {
            if !v.is_finite() {
                return Err(ArrayError::NotFinite {
                    step: m + 1,
                    column: fields[j].clone(),
                    value: v.to_string(),
                });
            }
            let (p, h) = phase_of(v, unit).ok_or_else(|| ArrayError::NotIndex {
                step: m + 1,
                field: fields[j].clone(),
                value: v,
                m: match unit {
                    PhaseUnit::GridIndex(m) => m,
                    _ => 0,
                },
            })?;
            ps.push(p);
            hs.push(Some(h));
        }
        steps.push(ps);
        half.push(hs);
    }
    let warnings = fields
        .iter()
        .enumerate()
        .filter_map(|(j, f)| {
            let raw: Vec<f64> = steps.iter().map(|r| r[j].turns_f64()).collect();
            let raw: Vec<f64> = match unit {
                // Exact phases are reduced into [0, 1); test the values as given.
                PhaseUnit::GridIndex(m) => phases.iter().map(|r| r[j] / f64::from(m)).collect(),
                _ => raw,
            };
            unit_warning(f, unit, &raw)
        })
        .collect();
    let mut outs = Vec::with_capacity(outputs.len());
    for (name, w) in outputs {
        if w.len() != n {
            return Err(ArrayError::Shape {
                what: format!("the weights of output `{name}`"),
                found: w.len(),
                expected: n,
                fix: "give one weight per step (rows of the weight array = steps)".into(),
            });
        }
        if let Some((m, z)) = w.iter().enumerate().find(|(_, z)| !z.is_finite()) {
            return Err(ArrayError::NotFinite {
                step: m + 1,
                column: format!("w:{name}"),
                value: z.to_string(),
            });
        }
        outs.push(CycleOutput {
            name,
            weights: w.into_iter().map(Weight::Approx).collect(),
            source: WeightSource::Explicit,
        });
    }
    let weight_radius = outs.iter().map(|_| vec![Some(0.0); n]).collect();
    Ok(Cycle {
        fields,
        steps,
        outputs: outs,
        meta: CycleMeta {
            written: Some(WrittenForm {
                dialect: Some("arrays (float64 phases, complex128 weights)".into()),
                phase_half_width: half,
                weight_radius,
                warnings,
            }),
            ..CycleMeta::default()
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn thirds_computed_in_floating_point_stay_approximate_with_the_double_floor() {
        let c = cycle_from_arrays(
            vec!["1".into()],
            &[vec![0.0], vec![1.0 / 3.0], vec![2.0 / 3.0]],
            PhaseUnit::Turns,
            vec![],
        )
        .unwrap();
        assert!(matches!(c.steps[1][0], Phase::Approx(_)));
        let h = c.meta.written.as_ref().unwrap().phase_half_width[1][0].unwrap();
        assert!(h > 0.0 && h < 1e-14);
    }

    #[test]
    fn whole_grid_indices_are_exact_and_fractional_ones_are_refused() {
        let c = cycle_from_arrays(
            vec!["1".into()],
            &[vec![0.0], vec![5.0]],
            PhaseUnit::GridIndex(4),
            vec![],
        )
        .unwrap();
        assert_eq!(c.steps[1][0], Phase::Exact(Turns::new(1, 4)));
        let e = cycle_from_arrays(
            vec!["1".into()],
            &[vec![0.5]],
            PhaseUnit::GridIndex(4),
            vec![],
        )
        .unwrap_err();
        assert!(e.to_string().contains("step 1, field 1"), "{e}");
    }

    #[test]
    fn nan_and_shape_errors_name_the_cell() {
        let e = cycle_from_arrays(
            vec!["1".into(), "2".into()],
            &[vec![0.0, f64::NAN]],
            PhaseUnit::Turns,
            vec![],
        )
        .unwrap_err();
        assert!(e.to_string().contains("step 1, column 2"), "{e}");
        let e = cycle_from_arrays(
            vec!["1".into()],
            &[vec![0.0], vec![0.5]],
            PhaseUnit::Turns,
            vec![("R".into(), vec![Complex64::new(0.5, 0.0)])],
        )
        .unwrap_err();
        assert!(e.to_string().contains("output `R`"), "{e}");
    }

    #[test]
    fn degrees_in_a_turns_array_are_warned_about() {
        let c = cycle_from_arrays(
            vec!["1".into()],
            &[vec![0.0], vec![90.0], vec![180.0], vec![270.0]],
            PhaseUnit::Turns,
            vec![],
        )
        .unwrap();
        let w = &c.meta.written.as_ref().unwrap().warnings;
        assert_eq!(w.len(), 1, "{w:?}");
    }
}
