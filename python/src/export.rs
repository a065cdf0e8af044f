//! `export_phases` and `masks`: a cycle prepared for acquisition software as arrays, with the
//! same metadata `pathsieve export` writes (returned as JSON text).

use crate::arrays::table_to_array;
use crate::cycle::PyCycle;
use crate::experiment::PyExperiment;
use crate::{lib_err, to_json};
use num_complex::Complex64;
use numpy::{PyArray1, PyArray2};
use pathsieve::export::mask::masks_for_cycle;
use pathsieve::export::meta::ExportMeta;
use pathsieve::export::phase_formats::exported_weights;
use pathsieve::export::phase_list::{parse_unit_spec, Cell, ExportUnit, PhaseList};
use pathsieve::export::plan::{plan_export, ExportPlan, RowOrder};
use pathsieve::export::shaper::parse_shaper;
use pathsieve::input_text::read_text;
use pathsieve::limits::MAX_FILE_BYTES;
use pathsieve::selection::{Selection, SelectionRequest};
use pyo3::prelude::*;
use std::path::{Path, PathBuf};

/// What `export_phases` returns: phases (float64, or int64 grid indices), weights (complex128,
/// steps x outputs), the cycle step of each row, and the metadata as JSON text.
type PhasesOut<'py> = (
    Bound<'py, PyAny>,
    Bound<'py, PyArray2<Complex64>>,
    Vec<usize>,
    String,
);

/// What `masks` returns: masks (complex128, steps x pixels), pixel frequencies (THz), the
/// cycle step of each row, and the metadata as JSON text.
type MasksOut<'py> = (
    Bound<'py, PyArray2<Complex64>>,
    Bound<'py, PyArray1<f64>>,
    Vec<usize>,
    String,
);

fn row_order(order: &str) -> PyResult<RowOrder> {
    match order.trim().to_ascii_lowercase().as_str() {
        "designed" => Ok(RowOrder::Designed),
        "drift" => Ok(RowOrder::Drift),
        _ => Err(lib_err(format!(
            "order `{order}`: use \"designed\" or \"drift\""
        ))),
    }
}

/// The unit and index grid of an export: the library's one vocabulary (`turns`, `deg`, `rad`,
/// `index`, `index:M`).
fn export_unit(text: &str) -> PyResult<(ExportUnit, Option<u64>)> {
    parse_unit_spec(text).map_err(lib_err)
}

fn plan(
    py: Python<'_>,
    experiment: &PyExperiment,
    cycle: &PyCycle,
    order: RowOrder,
) -> PyResult<ExportPlan> {
    let (exp, cyc) = (&experiment.exp, &cycle.cycle);
    py.detach(|| {
        let sel = Selection::new(exp, &SelectionRequest::default()).map_err(|e| e.to_string())?;
        plan_export(&sel, cyc, order).map_err(|e| e.to_string())
    })
    .map_err(lib_err)
}

fn meta(experiment: &PyExperiment, p: &ExportPlan, content: &str, unit: String) -> ExportMeta {
    ExportMeta {
        tool: "pathsieve".into(),
        version: env!("CARGO_PKG_VERSION").into(),
        content: content.into(),
        experiment: Some(experiment.name.clone()),
        experiment_sha256: Some(pathsieve::export::meta::sha256_hex(
            experiment.source.as_bytes(),
        )),
        cycle: None,
        title: None,
        fields: p.list.fields.clone(),
        outputs: p.list.outputs.clone(),
        unit,
        grid: p.list.grid.clone(),
        steps: p.list.len(),
        step_order: String::new(),
        source_steps: p.list.source_steps.clone(),
        notes: p.notes.clone(),
        weights: exported_weights(&p.list),
        layout: None,
        pixel_freqs_thz: None,
        scan: None,
    }
}

/// Phases and weights of `cycle` for acquisition software (see `pathsieve.export_phases`).
#[pyfunction]
#[pyo3(signature = (experiment, cycle, *, unit = "turns", order = "designed"))]
pub fn export_phases<'py>(
    py: Python<'py>,
    experiment: PyRef<'py, PyExperiment>,
    cycle: PyRef<'py, PyCycle>,
    unit: &str,
    order: &str,
) -> PyResult<PhasesOut<'py>> {
    let (u, grid) = export_unit(unit)?;
    let ord = row_order(order)?;
    let p = plan(py, &experiment, &cycle, ord)?;
    let list = &p.list;
    let m = match u {
        ExportUnit::Index => list.index_grid(grid).map_err(lib_err)?,
        _ => 0,
    };
    let cells = list.cells(u, m).map_err(lib_err)?;
    let cols = list.fields.len();
    let phases: Bound<'py, PyAny> = if u == ExportUnit::Index {
        let rows: Vec<Vec<i64>> = cells
            .iter()
            .map(|r| {
                r.iter()
                    .map(|c| match c {
                        Cell::Index(k) => *k,
                        Cell::Float(x) => *x as i64,
                    })
                    .collect()
            })
            .collect();
        table_to_array(py, &rows, cols)?.into_any()
    } else {
        let rows: Vec<Vec<f64>> = cells
            .iter()
            .map(|r| {
                r.iter()
                    .map(|c| match c {
                        Cell::Float(x) => *x,
                        Cell::Index(k) => *k as f64,
                    })
                    .collect()
            })
            .collect();
        table_to_array(py, &rows, cols)?.into_any()
    };
    let weights = table_to_array(py, &list.weights, list.outputs.len())?;
    let mut md = meta(
        &experiment,
        &p,
        "phases+weights",
        PhaseList::unit_name(u, m),
    );
    md.title = cycle.cycle.meta.title.clone();
    md.step_order = ord.name().into();
    Ok((phases, weights, list.source_steps.clone(), to_json(&md)?))
}

/// Shaper masks of every step (see `pathsieve.masks`).
#[pyfunction]
#[pyo3(signature = (experiment, cycle, *, shaper = None, shaper_toml = None, order = "designed"))]
pub fn masks<'py>(
    py: Python<'py>,
    experiment: PyRef<'py, PyExperiment>,
    cycle: PyRef<'py, PyCycle>,
    shaper: Option<PathBuf>,
    shaper_toml: Option<String>,
    order: &str,
) -> PyResult<MasksOut<'py>> {
    let (text, path) = match (shaper, shaper_toml) {
        (Some(p), None) => (read_text(&p).map_err(lib_err)?, p),
        (None, Some(t)) if t.len() as u64 <= MAX_FILE_BYTES => (t, PathBuf::from("shaper.toml")),
        (None, Some(t)) => {
            return Err(lib_err(format!(
                "shaper_toml is {} bytes, above the limit of {MAX_FILE_BYTES}",
                t.len()
            )))
        }
        _ => return Err(lib_err("give the shaper as a file (shaper=PATH) or as TOML text (shaper_toml=TEXT), one of the two")),
    };
    let sh = parse_shaper(&text, Path::new(&path)).map_err(lib_err)?;
    let ord = row_order(order)?;
    let p = plan(py, &experiment, &cycle, ord)?;
    let phases = sh.step_phases(&p.list).map_err(lib_err)?;
    let set = py
        .detach(|| masks_for_cycle(&sh.spec, &phases))
        .map_err(lib_err)?;
    let mut md = meta(
        &experiment,
        &p,
        "shaper masks (complex128, steps x pixels)",
        "turns".into(),
    );
    md.step_order = ord.name().into();
    md.notes.push(format!(
        "shaper {}: sub-pulses for fields {}; pixels {}; scale {:?}; rotating frame {}",
        path.display(),
        sh.fields.join(", "),
        set.freqs_thz.len(),
        set.scale,
        set.rotating_frame_thz
            .map_or("none (lab frame)".into(), |f| format!("{f:?} THz"))
    ));
    let masks = table_to_array(py, &set.masks, set.freqs_thz.len())?;
    let freqs = PyArray1::from_vec(py, set.freqs_thz.clone());
    Ok((masks, freqs, p.list.source_steps.clone(), to_json(&md)?))
}
