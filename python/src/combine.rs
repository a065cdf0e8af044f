//! `combine`: the library's one convention for turning per-step data into the cycle's outputs
//! (docs/combine.md), on NumPy arrays of any rank, real or complex.

use crate::cycle::PyCycle;
use crate::experiment::PyExperiment;
use crate::{lib_err, to_json};
use num_complex::Complex64;
use numpy::{IntoPyArray, PyReadonlyArrayDyn};
use pathsieve::combine::{
    combine_cycle, order_from_export, CombineRequest, Combined, Normalise, Samples, StepData,
    MAX_DATA_VALUES,
};
use pathsieve::export::phase_import::read_phase_list_file;
use pathsieve::selection::{Selection, SelectionRequest};
use pyo3::prelude::*;
use std::path::PathBuf;

/// One combined output: name, values (float64 when real, else complex128, shaped as the data
/// without the step axis).
type Output<'py> = (String, Bound<'py, PyAny>);

fn run<'py>(
    py: Python<'py>,
    experiment: &PyExperiment,
    cycle: &PyCycle,
    data: StepData,
    req: CombineRequest,
) -> PyResult<(Vec<Output<'py>>, String)> {
    let (exp, cyc) = (&experiment.exp, &cycle.cycle);
    let combined: Combined = py
        .detach(|| {
            let sel =
                Selection::new(exp, &SelectionRequest::default()).map_err(|e| e.to_string())?;
            combine_cycle(&sel, cyc, &data, &req).map_err(|e| e.to_string())
        })
        .map_err(lib_err)?;
    let mut outs = Vec::with_capacity(combined.outputs.len());
    for o in &combined.outputs {
        let shape = numpy::ndarray::IxDyn(&o.shape);
        let arr: Bound<'py, PyAny> = if o.real {
            let re: Vec<f64> = o.values.iter().map(|z| z.re).collect();
            numpy::ndarray::ArrayD::from_shape_vec(shape, re)
                .map_err(lib_err)?
                .into_pyarray(py)
                .into_any()
        } else {
            numpy::ndarray::ArrayD::from_shape_vec(shape, o.values.clone())
                .map_err(lib_err)?
                .into_pyarray(py)
                .into_any()
        };
        outs.push((o.name.clone(), arr));
    }
    Ok((outs, to_json(&combined)?))
}

fn request(step_axis: usize, order: Option<Vec<usize>>, as_written: bool) -> CombineRequest {
    CombineRequest {
        step_axis,
        order,
        normalise: if as_written {
            Normalise::AsWritten
        } else {
            Normalise::KeptAmplitude
        },
    }
}

fn step_data<T: numpy::Element + Copy>(
    a: &PyReadonlyArrayDyn<'_, T>,
    wrap: impl Fn(Vec<T>) -> Samples,
) -> PyResult<StepData> {
    let view = a.as_array();
    if view.len() > MAX_DATA_VALUES {
        return Err(lib_err(format!(
            "the data hold {} values, above the limit of {MAX_DATA_VALUES}; combine in blocks along another axis",
            view.len()
        )));
    }
    // Iteration over an ndarray view is in logical C order whatever the memory layout.
    let values: Vec<T> = view.iter().copied().collect();
    StepData::new(view.shape().to_vec(), wrap(values)).map_err(lib_err)
}

/// Combine real per-step data (see `pathsieve.combine`).
#[pyfunction]
#[pyo3(signature = (experiment, cycle, data, *, step_axis = 0, order = None, as_written = false))]
pub fn combine_real<'py>(
    py: Python<'py>,
    experiment: PyRef<'py, PyExperiment>,
    cycle: PyRef<'py, PyCycle>,
    data: PyReadonlyArrayDyn<'py, f64>,
    step_axis: usize,
    order: Option<Vec<usize>>,
    as_written: bool,
) -> PyResult<(Vec<Output<'py>>, String)> {
    let d = step_data(&data, Samples::Real)?;
    run(
        py,
        &experiment,
        &cycle,
        d,
        request(step_axis, order, as_written),
    )
}

/// Combine complex per-step data (see `pathsieve.combine`).
#[pyfunction]
#[pyo3(signature = (experiment, cycle, data, *, step_axis = 0, order = None, as_written = false))]
pub fn combine_complex<'py>(
    py: Python<'py>,
    experiment: PyRef<'py, PyExperiment>,
    cycle: PyRef<'py, PyCycle>,
    data: PyReadonlyArrayDyn<'py, Complex64>,
    step_axis: usize,
    order: Option<Vec<usize>>,
    as_written: bool,
) -> PyResult<(Vec<Output<'py>>, String)> {
    let d = step_data(&data, Samples::Complex)?;
    run(
        py,
        &experiment,
        &cycle,
        d,
        request(step_axis, order, as_written),
    )
}

/// The data order of an exported phase list (`order[p]` = the cycle step on row p), every row
/// checked against the cycle; with the export's metadata as JSON text.
#[pyfunction]
pub fn export_order(cycle: PyRef<'_, PyCycle>, export: PathBuf) -> PyResult<(Vec<usize>, String)> {
    let (list, meta) = read_phase_list_file(&export).map_err(lib_err)?;
    let order = order_from_export(&cycle.cycle, &list, &meta)
        .map_err(|e| lib_err(format!("{}: step order: {e}", export.display())))?;
    Ok((order, to_json(&meta)?))
}
