//! `Cycle`: a phase cycle (steps x fields phases, steps x outputs weights) from a design, a
//! cycle file or NumPy arrays, with the design report when it came from `design`.

use crate::arrays::{array_columns, array_rows, table_to_array};
use crate::experiment::PyExperiment;
use crate::lib_err;
use num_complex::Complex64;
use numpy::{PyArray2, PyReadonlyArray2};
use pathsieve::cycle::text::format_weight;
use pathsieve::cycle::{
    check_array_shape, cycle_from_arrays, read_cycle, read_cycle_csv, read_cycle_toml,
    write_cycle_csv, write_cycle_toml, Cycle, Phase,
};
use pathsieve::limits::MAX_FILE_BYTES;
use pyo3::prelude::*;
use std::path::{Path, PathBuf};

/// A phase cycle: one phase per field per step, one weight per output per step.
#[pyclass(frozen, name = "Cycle", module = "pathsieve")]
pub struct PyCycle {
    pub(crate) cycle: Cycle,
    /// The design report (JSON text) when the cycle came from `design`.
    pub(crate) report: Option<String>,
    /// The design summary paragraph when the cycle came from `design`.
    pub(crate) summary: Option<String>,
}

impl PyCycle {
    pub(crate) fn plain(cycle: Cycle) -> PyCycle {
        PyCycle {
            cycle,
            report: None,
            summary: None,
        }
    }
}

#[pymethods]
impl PyCycle {
    /// Read a cycle table (TOML cycle file or CSV/TSV table) as `pathsieve check` does;
    /// `unit` supplies the phase unit when the file declares none.
    #[staticmethod]
    #[pyo3(signature = (path, unit = None))]
    fn from_file(path: PathBuf, unit: Option<&str>) -> PyResult<Self> {
        let u = unit.map(crate::arrays::unit).transpose()?;
        Ok(PyCycle::plain(read_cycle(&path, u).map_err(lib_err)?))
    }

    /// Parse cycle text: TOML, or a CSV/TSV table when `name` ends in .csv, .tsv or .txt.
    #[staticmethod]
    #[pyo3(signature = (text, name = "cycle.toml", unit = None))]
    fn from_text(text: &str, name: &str, unit: Option<&str>) -> PyResult<Self> {
        if text.len() as u64 > MAX_FILE_BYTES {
            return Err(lib_err(format!(
                "{name}: the text is {} bytes, above the limit of {MAX_FILE_BYTES}",
                text.len()
            )));
        }
        let u = unit.map(crate::arrays::unit).transpose()?;
        let path = Path::new(name);
        let csv = [".csv", ".tsv", ".txt"]
            .iter()
            .any(|e| name.to_ascii_lowercase().ends_with(e));
        let c = if csv {
            read_cycle_csv(text, path, u)
        } else {
            read_cycle_toml(text, path, u)
        };
        Ok(PyCycle::plain(c.map_err(lib_err)?))
    }

    /// A cycle from arrays: `phases` (steps x fields, in `unit`), optional `weights` (steps x
    /// outputs, complex). Without `fields` the columns are the experiment's cycled fields or
    /// all its fields (by count); `outputs` defaults to its wanted signals. Phases are read as
    /// `pathsieve check` reads a bare NumPy array.
    #[staticmethod]
    #[pyo3(signature = (experiment, phases, weights = None, unit = "turns", fields = None, outputs = None))]
    fn from_arrays(
        experiment: PyRef<'_, PyExperiment>,
        phases: PyReadonlyArray2<'_, f64>,
        weights: Option<PyReadonlyArray2<'_, Complex64>>,
        unit: &str,
        fields: Option<Vec<String>>,
        outputs: Option<Vec<String>>,
    ) -> PyResult<Self> {
        let u = crate::arrays::unit(unit)?;
        // The shapes against the cycle-file limits before anything is copied.
        let view = phases.as_array();
        let (steps, width) = (view.nrows(), view.ncols());
        let outputs_given = weights.as_ref().map_or(0, |w| w.as_array().ncols());
        check_array_shape(steps, width, outputs_given).map_err(lib_err)?;
        // No names: the checker assigns the columns (one per cycled field, or one per field).
        let fields = fields.unwrap_or_default();
        let outs = match weights {
            None => Vec::new(),
            Some(w) => {
                let names = outputs.unwrap_or_else(|| {
                    experiment
                        .exp
                        .wanted
                        .iter()
                        .map(|s| s.name.clone())
                        .collect()
                });
                let cols = array_columns(&w);
                if cols.len() != names.len() {
                    return Err(lib_err(format!(
                        "the weight array has {} columns but there are {} outputs [{}]; give one column per output (steps x outputs), or name them with outputs=[...]",
                        cols.len(),
                        names.len(),
                        names.join(", ")
                    )));
                }
                names.into_iter().zip(cols).collect()
            }
        };
        let rows = array_rows(&phases);
        let c = cycle_from_arrays(fields, &rows, u, outs).map_err(lib_err)?;
        Ok(PyCycle::plain(c))
    }

    /// Field names, one per phase column.
    #[getter]
    fn fields(&self) -> Vec<String> {
        self.cycle.fields.clone()
    }

    /// Output names, one per weight column.
    #[getter]
    fn outputs(&self) -> Vec<String> {
        self.cycle.outputs.iter().map(|o| o.name.clone()).collect()
    }

    /// Number of steps N.
    #[getter]
    fn steps(&self) -> usize {
        self.cycle.len()
    }

    fn __len__(&self) -> usize {
        self.cycle.len()
    }

    /// Phases in turns, float64, shape (steps, fields).
    #[getter]
    fn phases<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray2<f64>>> {
        table_to_array(py, &self.cycle.phases_f64(), self.cycle.fields.len())
    }

    /// Exact phases as (numerator, denominator) turns per step and field; `None` when some
    /// phase is known only approximately.
    #[getter]
    fn exact_phases(&self) -> Option<Vec<Vec<(i64, i64)>>> {
        self.cycle.exact_phases().map(|rows| {
            rows.iter()
                .map(|r| r.iter().map(|t| (*t.numer(), *t.denom())).collect())
                .collect()
        })
    }

    /// True when every phase and weight is exact.
    #[getter]
    fn is_exact(&self) -> bool {
        self.cycle.is_exact()
    }

    /// Weights, complex128, shape (steps, outputs).
    #[getter]
    fn weights<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyArray2<Complex64>>> {
        let rows: Vec<Vec<Complex64>> = (0..self.cycle.len())
            .map(|m| {
                self.cycle
                    .outputs
                    .iter()
                    .map(|o| o.weights[m].to_complex())
                    .collect()
            })
            .collect();
        table_to_array(py, &rows, self.cycle.outputs.len())
    }

    /// Each weight's exact text (as cycle files write it), per step and output.
    #[getter]
    fn weight_texts(&self) -> Vec<Vec<String>> {
        (0..self.cycle.len())
            .map(|m| {
                self.cycle
                    .outputs
                    .iter()
                    .map(|o| format_weight(&o.weights[m]))
                    .collect()
            })
            .collect()
    }

    /// Which phases are approximate, per step and field.
    #[getter]
    fn approximate(&self) -> Vec<Vec<bool>> {
        self.cycle
            .steps
            .iter()
            .map(|r| r.iter().map(|p| matches!(p, Phase::Approx(_))).collect())
            .collect()
    }

    /// The phase grid (steps per turn per field) when the cycle declares one.
    #[getter]
    fn grid(&self) -> Option<Vec<u32>> {
        self.cycle.meta.grid.clone()
    }

    /// The design report as JSON text (cycles from `design` only).
    #[getter]
    fn report_json(&self) -> Option<String> {
        self.report.clone()
    }

    /// The design summary paragraph (cycles from `design` only).
    #[getter]
    fn summary(&self) -> Option<String> {
        self.summary.clone()
    }

    /// The cycle file text (TOML) that `pathsieve check` reads.
    fn to_toml(&self) -> String {
        write_cycle_toml(&self.cycle)
    }

    /// The cycle as a CSV table (docs/cycle-format.md).
    fn to_csv(&self) -> String {
        write_cycle_csv(&self.cycle)
    }

    fn __repr__(&self) -> String {
        format!(
            "<pathsieve.Cycle: {} steps, fields [{}], outputs [{}]{}>",
            self.cycle.len(),
            self.cycle.fields.join(", "),
            self.outputs().join(", "),
            if self.cycle.is_exact() { ", exact" } else { "" }
        )
    }
}
