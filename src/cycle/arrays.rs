//! A cycle from in-memory arrays (the Python bindings' route): phases as doubles in a unit,
//! one row per step, and weights as complex doubles. Phases are read exactly as `pathsieve
//! check` reads a bare NumPy array ([`crate::export::array_import`]), so the same array gets
//! the same verdict in Python and on the command line: whole grid indices are exact `k/M`
//! turns, and so are turns or degrees whose double is exactly a simple fraction of a turn
//! (`120.0` deg); other floats carry no decimal precision and the checker snaps them within its
//! snapping tolerance, as it does `~` cells (the report lists every snap). With no field names
//! the binder assigns the columns (one per cycled field, or one per field). Weights are taken
//! as written in double precision (radius 0 plus the checker's double-precision floor). Unit
//! plausibility warnings ([`super::plausible`]) are recorded as for a CSV table.

use super::plausible::unit_warning;
use super::{Cycle, CycleMeta, CycleOutput, Weight, WeightSource, WrittenForm};
use crate::exact::PhaseUnit;
use crate::export::phase_import::to_phase;
use crate::limits::{MAX_FIELDS, MAX_STEPS};
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
    /// More columns, outputs or cells than a cycle file may hold.
    #[error("{0}")]
    TooLarge(String),
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
}

/// Refuse arrays of `steps` rows, `width` phase columns and `outputs` weight columns beyond the
/// limits a cycle file has ([`MAX_STEPS`], [`MAX_FIELDS`], [`crate::limits::MAX_OUTPUTS`],
/// [`crate::limits::MAX_CYCLE_CELLS`] over phases and weights), from the shapes alone: call it
/// before the arrays are copied (the Python bindings do; [`cycle_from_arrays`] does first).
///
/// # Errors
/// [`ArrayError::StepCount`] or [`ArrayError::TooLarge`] naming the limit and the fix.
pub fn check_array_shape(steps: usize, width: usize, outputs: usize) -> Result<(), ArrayError> {
    if steps == 0 || steps > MAX_STEPS {
        return Err(ArrayError::StepCount { steps });
    }
    if width > MAX_FIELDS {
        return Err(ArrayError::TooLarge(format!(
            "the phase array has {width} columns; an experiment has at most {MAX_FIELDS} fields, so give one column per field (steps x fields)"
        )));
    }
    super::bounds::check_outputs(outputs)
        .map_err(|m| ArrayError::TooLarge(format!("the weight array has {m}")))?;
    super::bounds::check_cells(steps, width.saturating_add(outputs)).map_err(ArrayError::TooLarge)
}

/// Build a cycle from `phases` (rows = steps, one value per entry of `fields`, in `unit`; with
/// `fields` empty, rows of any one width whose columns the binder assigns) and explicit
/// `outputs` (name and one weight per step each; empty: the checker derives each wanted
/// signal's weights from its signature).
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
    let width = if fields.is_empty() {
        phases.first().map_or(0, Vec::len)
    } else {
        fields.len()
    };
    check_array_shape(n, width, outputs.len())?;
    let column = |j: usize| {
        fields
            .get(j)
            .cloned()
            .unwrap_or_else(|| (j + 1).to_string())
    };
    let mut steps = Vec::with_capacity(n);
    for (m, row) in phases.iter().enumerate() {
        if row.len() != width || width == 0 {
            return Err(ArrayError::Shape {
                what: format!("phase row {}", m + 1),
                found: row.len(),
                expected: width.max(1),
                fix: if fields.is_empty() {
                    "give every row the same number of columns (steps x fields)".into()
                } else {
                    format!("give one column per field [{}]", fields.join(", "))
                },
            });
        }
        if let Some(j) = row.iter().position(|v| !v.is_finite()) {
            return Err(ArrayError::NotFinite {
                step: m + 1,
                column: column(j),
                value: row[j].to_string(),
            });
        }
        steps.push(
            row.iter()
                .map(|&v| to_phase(v, unit, None))
                .collect::<Vec<_>>(),
        );
    }
    let warnings = (0..width)
        .filter_map(|j| {
            let factor = match unit {
                PhaseUnit::Turns => 1.0,
                PhaseUnit::Degrees => 1.0 / 360.0,
                PhaseUnit::Radians => 1.0 / std::f64::consts::TAU,
                PhaseUnit::GridIndex(m) => 1.0 / f64::from(m),
            };
            // The values as given (exact phases are reduced into [0, 1)), in turns.
            let raw: Vec<f64> = phases.iter().map(|r| r[j] * factor).collect();
            unit_warning(&column(j), unit, &raw)
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
                dialect: Some(format!(
                    "arrays (float64 phases in {}, complex128 weights)",
                    super::text::unit_name(unit)
                )),
                // No recorded half-width: floats snap within the checker's tolerance.
                phase_half_width: Vec::new(),
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
    use crate::cycle::Phase;
    use crate::exact::Turns;

    #[test]
    fn float_phases_are_approximate_without_a_recorded_precision() {
        let c = cycle_from_arrays(
            vec!["1".into()],
            &[vec![0.0], vec![1.0 / 3.0], vec![2.0 / 3.0]],
            PhaseUnit::Turns,
            vec![],
        )
        .unwrap();
        assert!(matches!(c.steps[1][0], Phase::Approx(_)));
        let form = c.meta.written.as_ref().unwrap();
        assert!(form.phase_half_width.is_empty());
        assert_eq!(
            WrittenForm::phase_half_width(Some(form), 1, 0, &c.steps[1][0]),
            None
        );
    }

    #[test]
    fn whole_grid_indices_are_exact_and_fractional_ones_approximate() {
        let c = cycle_from_arrays(
            vec!["1".into()],
            &[vec![0.0], vec![5.0]],
            PhaseUnit::GridIndex(4),
            vec![],
        )
        .unwrap();
        assert_eq!(c.steps[1][0], Phase::Exact(Turns::new(1, 4)));
        let c = cycle_from_arrays(vec![], &[vec![0.5]], PhaseUnit::GridIndex(4), vec![]).unwrap();
        assert_eq!(c.steps[0][0], Phase::Approx(0.125));
        assert!(c.fields.is_empty());
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

    // Arrays are held to the limits of a cycle file (src/limits.rs) from their shapes, before
    // anything is copied: 1e6 steps x 4 columns is the cell limit, one more column passes it.
    #[test]
    fn array_shapes_are_held_to_the_file_limits() {
        use crate::limits::{MAX_CYCLE_CELLS, MAX_OUTPUTS};
        assert!(check_array_shape(MAX_CYCLE_CELLS / 4, 4, 0).is_ok());
        let e = check_array_shape(MAX_CYCLE_CELLS / 4, 4, 1).unwrap_err();
        assert!(
            e.to_string().contains("exceed the limit of 4000000 cells"),
            "{e}"
        );
        assert!(matches!(
            check_array_shape(MAX_STEPS + 1, 1, 0),
            Err(ArrayError::StepCount { .. })
        ));
        let e = check_array_shape(10, MAX_FIELDS + 1, 0).unwrap_err();
        assert!(e.to_string().contains("at most 12 fields"), "{e}");
        let e = check_array_shape(10, 2, MAX_OUTPUTS + 1).unwrap_err();
        assert!(e.to_string().contains("at most 64"), "{e}");
        assert!(check_array_shape(usize::MAX, usize::MAX, usize::MAX).is_err());
        // The library route refuses too: 13 columns of a 1-step array.
        let e = cycle_from_arrays(vec![], &[vec![0.0; 13]], PhaseUnit::Turns, vec![]).unwrap_err();
        assert!(matches!(e, ArrayError::TooLarge(_)), "{e}");
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
