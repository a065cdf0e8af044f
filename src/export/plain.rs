//! Plain tables for programs that read numbers only (numpy.loadtxt, Python's csv module,
//! Excel, LabVIEW's spreadsheet reader, MATLAB readmatrix): one header row of column names,
//! then one row of numbers per step, comma- or tab-separated, no comment lines, no quoted
//! text cells. The metadata (unit, grid, exact weights, provenance) goes into the sidecar
//! `NAME.csv.meta.json` ([`super::meta`]), whose `layout` key names the table's form so that
//! `check` reads the pair back exactly ([`read_plain_table`]). Forms: the phase table
//! (`step` then one column per field), one single-column file per field, the weights
//! (`NAME.re`, `NAME.im` per output) and the receiver/LO phase table (`NAME.phase`,
//! `NAME.amplitude` per output: `w_m = amplitude_m exp(-2 pi i phase_m) / N`).

use super::meta::ExportMeta;
use super::phase_import::cycle_of_rows;
use super::phase_list::{Cell, ExportError, ExportUnit, PhaseList};
use crate::cycle::text::parse_weight_cell;
use crate::cycle::{Cycle, Phase, Weight};
use crate::error::InputError;
use crate::exact::polar::exact_polar;
use crate::numfmt::decimal;
use std::path::Path;

/// The `layout` of a plain comma-separated phase table.
pub const LAYOUT_CSV: &str = "plain-csv";
/// The `layout` of a plain tab-separated phase table.
pub const LAYOUT_TSV: &str = "plain-tsv";

/// The delimiter of a plain table: `,` or tab.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Delimiter {
    /// Comma (`.csv`).
    Comma,
    /// Tab (`.tsv`).
    Tab,
}

impl Delimiter {
    fn ch(self) -> char {
        match self {
            Delimiter::Comma => ',',
            Delimiter::Tab => '\t',
        }
    }

    /// The sidecar `layout` value of a phase table with this delimiter.
    pub fn layout(self) -> &'static str {
        match self {
            Delimiter::Comma => LAYOUT_CSV,
            Delimiter::Tab => LAYOUT_TSV,
        }
    }
}

/// A header cell as plain text: the delimiter, quotes and line breaks (which would need CSV
/// quoting, which not every reader undoes) become `_`.
fn header_cell(name: &str, d: Delimiter) -> String {
    name.chars()
        .map(|c| {
            if c == d.ch() || matches!(c, '"' | '\n' | '\r' | ',' | '\t') {
                '_'
            } else {
                c
            }
        })
        .collect()
}

fn cell_text(c: &Cell) -> String {
    match c {
        Cell::Float(x) => decimal(*x),
        Cell::Index(k) => k.to_string(),
    }
}

fn table(header: &[String], rows: impl Iterator<Item = Vec<String>>, d: Delimiter) -> Vec<u8> {
    let sep = d.ch().to_string();
    let mut s = header.join(&sep);
    s.push('\n');
    for r in rows {
        s.push_str(&r.join(&sep));
        s.push('\n');
    }
    s.into_bytes()
}

/// The phase table: header `step` and the field names, one row per step (`step` counts from 1).
pub fn plain_phases(list: &PhaseList, cells: &[Vec<Cell>], d: Delimiter) -> Vec<u8> {
    let mut header = vec!["step".to_string()];
    header.extend(list.fields.iter().map(|f| header_cell(f, d)));
    let rows = cells.iter().enumerate().map(|(m, r)| {
        let mut v = vec![(m + 1).to_string()];
        v.extend(r.iter().map(cell_text));
        v
    });
    table(&header, rows, d)
}

/// One field's phases as a single-column file: the field name, then one phase per step.
pub fn plain_field(list: &PhaseList, cells: &[Vec<Cell>], field: usize) -> Vec<u8> {
    let header = vec![header_cell(&list.fields[field], Delimiter::Comma)];
    table(
        &header,
        cells.iter().map(|r| vec![cell_text(&r[field])]),
        Delimiter::Comma,
    )
}

/// The weights: header `step`, then `NAME.re`, `NAME.im` per output (exact texts in the
/// sidecar).
pub fn plain_weights(list: &PhaseList, d: Delimiter) -> Vec<u8> {
    let mut header = vec!["step".to_string()];
    for o in &list.outputs {
        let o = header_cell(o, d);
        header.push(format!("{o}.re"));
        header.push(format!("{o}.im"));
    }
    let rows = list.weights.iter().enumerate().map(|(m, w)| {
        let mut v = vec![(m + 1).to_string()];
        for z in w {
            v.push(decimal(z.re));
            v.push(decimal(z.im));
        }
        v
    });
    table(&header, rows, d)
}

/// The receiver (or LO) phase of each step for each output, so that co-adding the steps with
/// that receiver phase and relative amplitude gives the output: `w_m = amplitude_m *
/// exp(-2 pi i phase_m) / N`, `phase_m` in `unit` (in [0, 1) turn), `amplitude_m = N |w_m|`
/// (1 for the unit-modulus weights of a lattice design). Exact where the weight is a rational
/// multiple of a root of unity (always for lattice designs).
///
/// # Errors
/// [`ExportError::OffGrid`] / [`ExportError::ApproxIndex`] when a receiver phase is asked for
/// as a grid index and is not on the grid.
pub fn receiver_table(
    list: &PhaseList,
    unit: ExportUnit,
    grid: u64,
    d: Delimiter,
) -> Result<Vec<u8>, ExportError> {
    let n = list.len();
    let mut header = vec!["step".to_string()];
    for o in &list.outputs {
        let o = header_cell(o, d);
        header.push(format!("{o}.phase"));
        header.push(format!("{o}.amplitude"));
    }
    // The receiver phases as a phase list of their own, converted by the same unit code.
    let mut phases = Vec::with_capacity(n);
    let mut amps = Vec::with_capacity(n);
    for (texts, floats) in list.weight_texts.iter().zip(&list.weights) {
        let mut p = Vec::new();
        let mut a = Vec::new();
        for (t, z) in texts.iter().zip(floats) {
            // The exact text when it parses (it always does for a written weight), else the float.
            let w = parse_weight_cell(t).unwrap_or(Weight::Approx(*z));
            let (phase, amp) = receiver_of(&w, n);
            p.push(phase);
            a.push(amp);
        }
        phases.push(p);
        amps.push(a);
    }
    let rx = PhaseList {
        fields: list.outputs.clone(),
        phases,
        grid: None,
        outputs: Vec::new(),
        weights: Vec::new(),
        weight_texts: Vec::new(),
        source_steps: list.source_steps.clone(),
    };
    let cells = rx.cells(unit, grid)?;
    let rows = cells.iter().zip(&amps).enumerate().map(|(m, (c, a))| {
        let mut v = vec![(m + 1).to_string()];
        for (p, amp) in c.iter().zip(a) {
            v.push(cell_text(p));
            v.push(decimal(*amp));
        }
        v
    });
    Ok(table(&header, rows, d))
}

/// The receiver phase (turns, in [0, 1)) and relative amplitude `N |w|` of one weight.
fn receiver_of(w: &Weight, n: usize) -> (Phase, f64) {
    let z = w.to_complex() * n as f64;
    if let Weight::Exact(c) = w {
        if let Some((_, t)) = exact_polar(c) {
            let neg = crate::exact::reduce_turn(-t);
            return (Phase::Exact(neg), z.norm());
        }
    }
    let x = (-z.arg() / std::f64::consts::TAU).rem_euclid(1.0);
    (Phase::Approx(if x >= 1.0 { 0.0 } else { x }), z.norm())
}

/// Read a plain phase table back with its sidecar metadata: the header must be `step` and
/// the metadata's fields; phases snap to the recorded grid (exact), weights come from the
/// metadata's exact texts.
///
/// # Errors
/// [`InputError`] naming the line and column of a cell that is not a number, or a header that
/// does not match the sidecar.
pub fn read_plain_table(text: &str, meta: &ExportMeta, path: &Path) -> Result<Cycle, InputError> {
    let d = if meta.layout.as_deref() == Some(LAYOUT_TSV) {
        '\t'
    } else {
        ','
    };
    let mut lines = text
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.trim().is_empty());
    let Some((_, head)) = lines.next() else {
        return Err(InputError::new(path, None, None, "the table is empty"));
    };
    let head: Vec<&str> = head
        .trim_start_matches('\u{feff}')
        .split(d)
        .map(str::trim)
        .collect();
    let want: Vec<String> = std::iter::once("step".to_string())
        .chain(meta.fields.iter().map(|f| header_cell(f, Delimiter::Comma)))
        .collect();
    let tab: Vec<String> = std::iter::once("step".to_string())
        .chain(meta.fields.iter().map(|f| header_cell(f, Delimiter::Tab)))
        .collect();
    if head != want && head != tab {
        return Err(InputError::new(
            path,
            Some(1),
            None,
            format!(
                "the header `{}` does not match the sidecar's fields `{}`; export the cycle again",
                head.join(","),
                want.join(",")
            ),
        ));
    }
    let mut rows = Vec::new();
    for (i, l) in lines {
        let cells: Vec<&str> = l.split(d).map(str::trim).collect();
        if cells.len() != head.len() {
            return Err(InputError::new(
                path,
                Some(i + 1),
                None,
                format!("{} cells, the header has {}", cells.len(), head.len()),
            ));
        }
        let mut r = Vec::with_capacity(cells.len() - 1);
        for (c, h) in cells.iter().zip(&head).skip(1) {
            let v = c
                .parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .ok_or_else(|| {
                    InputError::new(path, Some(i + 1), Some(h), format!("`{c}` is not a number"))
                })?;
            r.push(v);
        }
        rows.push(r);
    }
    if rows.len() != meta.steps {
        return Err(InputError::new(
            path,
            None,
            None,
            format!(
                "{} rows but the sidecar says {} steps; export the cycle again",
                rows.len(),
                meta.steps
            ),
        ));
    }
    cycle_of_rows(meta, rows, path)
}
