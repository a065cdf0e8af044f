//! `check`: the library's exact checker on a cycle (from a file, a design or arrays).

use crate::cycle::PyCycle;
use crate::experiment::PyExperiment;
use crate::{lib_err, to_json};
use pathsieve::check::{check_cycle, CheckOptions, CheckRequest};
use pyo3::prelude::*;

/// Check `cycle` against `experiment`; returns the report as JSON text.
#[pyfunction]
#[pyo3(signature = (experiment, cycle, *, order = None, from_pathways = false, geometry = None, max_listed = 1000))]
pub fn check(
    py: Python<'_>,
    experiment: PyRef<'_, PyExperiment>,
    cycle: PyRef<'_, PyCycle>,
    order: Option<u32>,
    from_pathways: bool,
    geometry: Option<bool>,
    max_listed: usize,
) -> PyResult<String> {
    let req = CheckRequest {
        selection: PyExperiment::request(order, from_pathways, geometry),
        options: CheckOptions {
            max_listed,
            ..CheckOptions::default()
        },
    };
    let (exp, cyc) = (&experiment.exp, &cycle.cycle);
    let report = py.detach(|| check_cycle(exp, cyc, &req)).map_err(lib_err)?;
    to_json(&report)
}
