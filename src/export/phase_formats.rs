//! The byte forms of a [`PhaseList`]: phase CSV, weights CSV, JSON (phases and weights with a
//! `meta` object) and NPY arrays (phases N x fields `<f8`, or `<i8` for grid indices; weights
//! N x outputs `<c16`). Each function returns bytes; writing them is [`crate::safe_write`]'s job.
//! Floats are written in the shortest form that reads back to the identical f64. The formats
//! are documented in docs/export-formats.md.

use super::meta::ExportMeta;
use super::npy::{npy_c128, npy_f64, npy_i64, NpyError};
use super::phase_list::{Cell, PhaseList};
use crate::cycle::text::format_phase;
use serde::Serialize;
use std::fmt::Write as _;

fn cell_text(c: &Cell) -> String {
    match c {
        Cell::Float(x) => crate::numfmt::decimal(*x),
        Cell::Index(k) => k.to_string(),
    }
}

/// Quote a CSV header cell when it needs it.
fn csv_name(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) || s.starts_with('#') {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// Phase CSV: the metadata comment lines, a header `step,FIELD...`, one row per step
/// (`step` counts rows from 1 in export order, as the cycle tables and every message do).
pub fn phases_csv(list: &PhaseList, cells: &[Vec<Cell>], meta: &ExportMeta) -> Vec<u8> {
    let mut s = meta.csv_comments();
    s.push_str("step");
    for f in &list.fields {
        s.push(',');
        s.push_str(&csv_name(f));
    }
    s.push('\n');
    for (m, row) in cells.iter().enumerate() {
        s.push_str(&(m + 1).to_string());
        for c in row {
            s.push(',');
            s.push_str(&cell_text(c));
        }
        s.push('\n');
    }
    s.into_bytes()
}

/// Weights CSV: the metadata comment lines, a header `step,NAME.re,NAME.im,NAME.exact...`
/// (three columns per output; `exact` is the exact weight text of docs/cycle-format.md,
/// which loaders that want numbers simply ignore), one row per step in export order.
pub fn weights_csv(list: &PhaseList, meta: &ExportMeta) -> Vec<u8> {
    let mut s = meta.csv_comments();
    s.push_str("step");
    for o in &list.outputs {
        for part in ["re", "im", "exact"] {
            s.push(',');
            s.push_str(&csv_name(&format!("{o}.{part}")));
        }
    }
    s.push('\n');
    for (m, (w, t)) in list.weights.iter().zip(&list.weight_texts).enumerate() {
        let _ = write!(s, "{}", m + 1);
        for (z, text) in w.iter().zip(t) {
            let (re, im) = (crate::numfmt::decimal(z.re), crate::numfmt::decimal(z.im));
            let _ = write!(s, ",{re},{im},{}", csv_name(text));
        }
        s.push('\n');
    }
    s.into_bytes()
}

/// The weights of one output in the flat JSON form.
#[derive(Serialize)]
pub struct JsonWeights<'a> {
    name: &'a str,
    re: Vec<f64>,
    im: Vec<f64>,
    exact: Vec<&'a str>,
}

/// One phase in the flat JSON form: a float, or an integer grid index.
#[derive(Serialize)]
#[serde(untagged)]
pub enum JsonCell {
    /// Turns, degrees or radians.
    F(f64),
    /// A grid index.
    I(i64),
}

/// A cycle as flat JSON: `{"fields": [...], "unit": "...", "phases": [[...]], "phases_turns":
/// [["p/q", ...]], "outputs": [{"name", "re": [...], "im": [...], "exact": [...]}]}`, rows in
/// the list's order. The body of the JSON export and the `cycle` of `design --json`.
#[derive(Serialize)]
pub struct FlatCycle<'a> {
    fields: &'a [String],
    unit: &'a str,
    /// N x fields in `unit`.
    phases: Vec<Vec<JsonCell>>,
    /// N x fields, exact turns `p/q` (or `~x` when approximate).
    phases_turns: Vec<Vec<String>>,
    outputs: Vec<JsonWeights<'a>>,
}

#[derive(Serialize)]
struct JsonList<'a> {
    meta: &'a ExportMeta,
    #[serde(flatten)]
    cycle: FlatCycle<'a>,
}

/// JSON: `{"schema_version": 1, "meta": {...}, ` then the [`FlatCycle`] keys, with a trailing
/// newline. Rows are in export order.
pub fn list_json(list: &PhaseList, cells: &[Vec<Cell>], meta: &ExportMeta) -> Vec<u8> {
    let doc = JsonList {
        meta,
        cycle: flat_cycle(list, cells, &meta.unit),
    };
    let mut s =
        serde_json::to_string_pretty(&super::meta::versioned(&doc)).unwrap_or_else(|_| "{}".into());
    s.push('\n');
    s.into_bytes()
}

/// The flat JSON form of `list` with its phases as `cells` in the unit named `unit`.
pub fn flat_cycle<'a>(list: &'a PhaseList, cells: &[Vec<Cell>], unit: &'a str) -> FlatCycle<'a> {
    FlatCycle {
        fields: &list.fields,
        unit,
        phases: cells
            .iter()
            .map(|r| {
                r.iter()
                    .map(|c| match c {
                        Cell::Float(x) => JsonCell::F(*x),
                        Cell::Index(k) => JsonCell::I(*k),
                    })
                    .collect()
            })
            .collect(),
        phases_turns: list
            .phases
            .iter()
            .map(|r| r.iter().map(format_phase).collect())
            .collect(),
        outputs: list
            .outputs
            .iter()
            .enumerate()
            .map(|(o, name)| JsonWeights {
                name,
                re: list.weights.iter().map(|w| w[o].re).collect(),
                im: list.weights.iter().map(|w| w[o].im).collect(),
                exact: list.weight_texts.iter().map(|t| t[o].as_str()).collect(),
            })
            .collect(),
    }
}

/// Phases as NPY: shape (N, fields), `<i8` when the cells are grid indices, else `<f8`.
///
/// # Errors
/// [`NpyError`] only for ragged input.
pub fn phases_npy(cells: &[Vec<Cell>]) -> Result<Vec<u8>, NpyError> {
    let n = cells.len();
    let f = cells.first().map_or(0, Vec::len);
    if cells.iter().flatten().all(|c| matches!(c, Cell::Index(_))) && n * f > 0 {
        let v: Vec<i64> = cells
            .iter()
            .flatten()
            .map(|c| match c {
                Cell::Index(k) => *k,
                Cell::Float(x) => *x as i64,
            })
            .collect();
        npy_i64(&[n, f], &v)
    } else {
        let v: Vec<f64> = cells
            .iter()
            .flatten()
            .map(|c| match c {
                Cell::Index(k) => *k as f64,
                Cell::Float(x) => *x,
            })
            .collect();
        npy_f64(&[n, f], &v)
    }
}

/// The exact weight texts of every output, for the NPY sidecar (arrays hold only floats).
pub fn exported_weights(list: &PhaseList) -> Vec<super::meta::ExportedWeights> {
    list.outputs
        .iter()
        .enumerate()
        .map(|(o, name)| super::meta::ExportedWeights {
            name: name.clone(),
            exact: list.weight_texts.iter().map(|t| t[o].clone()).collect(),
        })
        .collect()
}

/// Weights as NPY: complex128, shape (N, outputs).
///
/// # Errors
/// [`NpyError`] only for ragged input.
pub fn weights_npy(list: &PhaseList) -> Result<Vec<u8>, NpyError> {
    let v: Vec<_> = list.weights.iter().flatten().copied().collect();
    npy_c128(&[list.len(), list.outputs.len()], &v)
}
