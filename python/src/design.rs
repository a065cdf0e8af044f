//! `design`: the library's designer run on a worker thread while the calling (main) thread
//! watches for Ctrl-C with `Python::check_signals` every 50 ms, detached from the interpreter
//! in between. On Ctrl-C the search's cancel flag is set, the worker stops at its next search
//! node, and `KeyboardInterrupt` is raised. Progress (the step count being scanned and the
//! lattices tested) goes to an optional Python callable, called from the main thread.

use crate::cycle::PyCycle;
use crate::experiment::PyExperiment;
use crate::{lib_err, to_json};
use pathsieve::design::lattice::{Progress, SearchControl};
use pathsieve::design::{cycled_fields, design as run_design, DesignOptions, DesignReport};
use pathsieve::render::design_summary;
use pathsieve::selection::{Selection, SelectionRequest};
use pyo3::prelude::*;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Mutex;
use std::time::Duration;

/// How often the main thread looks for Ctrl-C and reports progress.
const POLL: Duration = Duration::from_millis(50);

/// Design the smallest phase cycle for `experiment` (see `pathsieve.design`): returns the
/// cycle (`None` when no design is possible), the report as JSON text and the summary.
#[pyfunction]
#[pyo3(signature = (experiment, *, grid = None, max_steps = 4096, max_phases = None, order = None, from_pathways = false, geometry = None, progress = None))]
#[allow(clippy::too_many_arguments)]
pub fn design(
    py: Python<'_>,
    experiment: PyRef<'_, PyExperiment>,
    grid: Option<Vec<u32>>,
    max_steps: u64,
    max_phases: Option<u32>,
    order: Option<u32>,
    from_pathways: bool,
    geometry: Option<bool>,
    progress: Option<Bound<'_, PyAny>>,
) -> PyResult<(Option<PyCycle>, String, String)> {
    if max_steps == 0 {
        return Err(lib_err("max_steps must be at least 1"));
    }
    let exp = &experiment.exp;
    cycled_fields(exp).map_err(lib_err)?;
    let sel = Selection::new(
        exp,
        &SelectionRequest {
            grid,
            ..PyExperiment::request(order, from_pathways, geometry)
        },
    )
    .map_err(lib_err)?;
    let opts = DesignOptions {
        max_steps,
        max_phases_per_field: max_phases,
        ..DesignOptions::default()
    };
    let report = run_watched(py, &sel, &opts, progress.as_ref())?;
    let json = to_json(&report)?;
    let summary = design_summary::summary(&report);
    let cycle = report.cycle.map(|cycle| PyCycle {
        cycle,
        report: Some(json.clone()),
        summary: Some(summary.clone()),
    });
    Ok((cycle, json, summary))
}

/// Run the designer on a scoped worker thread; poll for Ctrl-C and progress on this one.
fn run_watched(
    py: Python<'_>,
    sel: &Selection,
    opts: &DesignOptions,
    progress: Option<&Bound<'_, PyAny>>,
) -> PyResult<DesignReport> {
    let cancel = AtomicBool::new(false);
    let latest: Mutex<Option<Progress>> = Mutex::new(None);
    let record = |p: Progress| {
        if let Ok(mut l) = latest.lock() {
            *l = Some(p);
        }
    };
    let ctl = SearchControl {
        cancel: &cancel,
        progress: Some(&record),
    };
    std::thread::scope(|scope| {
        let worker = scope.spawn(|| run_design(sel, opts, &ctl));
        let mut interrupted: Option<PyErr> = None;
        while !worker.is_finished() {
            py.detach(|| std::thread::sleep(POLL));
            if interrupted.is_some() {
                continue;
            }
            if let Err(e) = py.check_signals() {
                cancel.store(true, Ordering::SeqCst);
                interrupted = Some(e);
                continue;
            }
            let p = latest.lock().ok().and_then(|mut l| l.take());
            if let (Some(cb), Some(p)) = (progress, p) {
                if let Err(e) = cb.call1((p.index, p.lattices_tested)) {
                    cancel.store(true, Ordering::SeqCst);
                    interrupted = Some(e);
                }
            }
        }
        let result = py.detach(|| worker.join());
        if let Some(e) = interrupted {
            return Err(e);
        }
        match result {
            Ok(r) => r.map_err(lib_err),
            Err(_) => Err(lib_err(
                "the designer stopped unexpectedly (internal error)",
            )),
        }
    })
}
