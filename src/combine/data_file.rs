//! Measured-data files for [`super::combine_cycle`]: reading per-step data (NPY, NPZ, CSV/TSV)
//! into a [`StepData`], and the bytes of the combined outputs (one NPY per output, one NPZ, or
//! one plain CSV/TSV for 1-D outputs) with their metadata sidecar. Writing the bytes to disk
//! is [`crate::safe_write`]'s job.
//!
//! CSV/TSV data: numbers only, an optional single header row, `#` comment lines skipped; a
//! file of one column is 1-D (one value per step), otherwise rows x columns. Values are real
//! (detected intensities); complex data go in NPY/NPZ (`complex128`).

use super::{Combined, Samples, StepData};
use crate::error::InputError;
use crate::export::npy::{npy_c128, npy_f64, NpyArray, NpyData};
use crate::export::npz::{read_npz, write_npz};
use serde::Serialize;
use std::path::{Path, PathBuf};

/// Largest data file read (bytes): 2^28 complex values.
pub const MAX_DATA_FILE_BYTES: u64 = 4 * 1024 * 1024 * 1024;

/// Version of the combine metadata layout.
pub const SCHEMA_VERSION: u32 = 1;

fn to_step_data(a: NpyArray, path: &Path) -> Result<StepData, InputError> {
    let samples = match a.data {
        NpyData::F64(v) => Samples::Real(v),
        NpyData::I64(v) => Samples::Real(v.into_iter().map(|x| x as f64).collect()),
        NpyData::C128(v) => Samples::Complex(v),
    };
    StepData::new(a.shape, samples).map_err(|e| InputError::new(path, None, None, e.to_string()))
}

/// Read per-step data by extension: `.npy`; `.npz` (the member `array`, or the only member);
/// `.csv`, `.tsv`, `.txt` (comma, tab, comma). `array` names the NPZ member.
///
/// # Errors
/// [`InputError`] naming the file (and line and column for text) and the fix.
pub fn read_step_data(path: &Path, array: Option<&str>) -> Result<StepData, InputError> {
    let ext = if crate::input_text::is_stdin(path) {
        // Standard input: NPY or NPZ by its magic bytes, else CSV (tabs make it TSV).
        let b = crate::input_text::read_bytes_limited(path, MAX_DATA_FILE_BYTES)?;
        match crate::cycle::sniff_kind(&b) {
            "npy" => "npy",
            "npz" => "npz",
            _ if b.contains(&b'\t') => "tsv",
            _ => "csv",
        }
        .to_string()
    } else {
        path.extension()
            .and_then(|e| e.to_str())
            .unwrap_or("")
            .to_ascii_lowercase()
    };
    let bad = |m: String| InputError::new(path, None, None, m);
    match ext.as_str() {
        "npy" => {
            let bytes = crate::input_text::read_bytes_limited(path, MAX_DATA_FILE_BYTES)?;
            let a = crate::export::npy::read_npy(&bytes).map_err(|e| bad(e.to_string()))?;
            to_step_data(a, path)
        }
        "npz" => {
            let bytes = crate::input_text::read_bytes_limited(path, MAX_DATA_FILE_BYTES)?;
            let members = read_npz(&bytes).map_err(bad)?;
            let names: Vec<String> = members.iter().map(|m| m.0.clone()).collect();
            let pick = match array {
                Some(n) => members.into_iter().find(|m| m.0 == n),
                None if members.len() == 1 => members.into_iter().next(),
                None => {
                    return Err(bad(format!(
                        "the archive holds several arrays ({}); name one with --array",
                        names.join(", ")
                    )))
                }
            };
            let (_, a) = pick.ok_or_else(|| {
                bad(format!(
                    "no array `{}` in the archive; it holds: {}",
                    array.unwrap_or(""),
                    names.join(", ")
                ))
            })?;
            to_step_data(a, path)
        }
        "csv" | "tsv" | "txt" => {
            let text = crate::input_text::read_text(path)?;
            let delim = if ext == "tsv" { b'\t' } else { b',' };
            read_table(&text, delim, path)
        }
        other => Err(bad(format!(
            "unknown data extension `.{other}`; give .npy, .npz, .csv or .tsv"
        ))),
    }
}

/// Parse a numeric table with an optional single header row.
fn read_table(text: &str, delim: u8, path: &Path) -> Result<StepData, InputError> {
    let mut rdr = csv::ReaderBuilder::new()
        .delimiter(delim)
        .comment(Some(b'#'))
        .has_headers(false)
        .flexible(true)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let mut rows: Vec<Vec<f64>> = Vec::new();
    let mut width = None;
    for (i, rec) in rdr.records().enumerate() {
        let rec =
            rec.map_err(|e| InputError::new(path, None, None, format!("not a table: {e}")))?;
        let line = rec.position().map_or(i + 1, |p| p.line() as usize);
        if rec.iter().all(str::is_empty) {
            continue;
        }
        let parsed: Vec<Option<f64>> = rec.iter().map(|c| c.parse::<f64>().ok()).collect();
        if rows.is_empty() && width.is_none() && parsed.iter().any(Option::is_none) {
            width = Some(rec.len()); // the header row
            continue;
        }
        let w = *width.get_or_insert(rec.len());
        if rec.len() != w {
            return Err(InputError::new(
                path,
                Some(line),
                None,
                format!(
                    "{} columns where the table has {w}; every row needs one value per column",
                    rec.len()
                ),
            ));
        }
        let mut row = Vec::with_capacity(w);
        for (c, (cell, v)) in rec.iter().zip(parsed).enumerate() {
            let v = v.ok_or_else(|| {
                InputError::new(
                    path,
                    Some(line),
                    Some(&format!("column {}", c + 1)),
                    format!("`{cell}` is not a number; data tables hold numbers only (one header row allowed)"),
                )
            })?;
            row.push(v);
        }
        rows.push(row);
    }
    let w = width.unwrap_or(0);
    if rows.is_empty() {
        return Err(InputError::new(
            path,
            None,
            None,
            "the table has no data rows",
        ));
    }
    let shape = if w == 1 {
        vec![rows.len()]
    } else {
        vec![rows.len(), w]
    };
    StepData::real(shape, rows.concat())
        .map_err(|e| InputError::new(path, None, None, e.to_string()))
}

/// A file name part made of letters, digits, `-`, `_`, `+` and `.` only.
pub fn safe_name(name: &str) -> String {
    let s: String = name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || "-_+.".contains(c) {
                c
            } else {
                '_'
            }
        })
        .collect();
    if s.is_empty() || s.starts_with('.') {
        format!("out{s}")
    } else {
        s
    }
}

/// Files to write: (path, bytes).
pub type FileSet = Vec<(PathBuf, Vec<u8>)>;

/// How the combined outputs are written.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum OutputFormat {
    /// One `.npy` per output.
    Npy,
    /// One `.npz` holding every output.
    Npz,
    /// One plain table (single header row), comma-separated; 1-D outputs only.
    Csv,
    /// The same, tab-separated.
    Tsv,
}

impl OutputFormat {
    /// The format named by a path's extension.
    pub fn from_path(path: &Path) -> Result<OutputFormat, String> {
        let ext = path
            .extension()
            .and_then(|e| e.to_str())
            .unwrap_or("")
            .to_ascii_lowercase();
        match ext.as_str() {
            "npy" => Ok(OutputFormat::Npy),
            "npz" => Ok(OutputFormat::Npz),
            "csv" => Ok(OutputFormat::Csv),
            "tsv" => Ok(OutputFormat::Tsv),
            other => Err(format!(
                "unknown output extension `.{other}`; end the path in .npy (one file per output), .npz, .csv or .tsv"
            )),
        }
    }
}

/// The path of output `name` when writing one NPY per output: `dir/x.npy` -> `dir/x.NAME.npy`.
pub fn npy_path_for(out: &Path, name: &str) -> PathBuf {
    let file = out
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let stem = file
        .strip_suffix(".npy")
        .or_else(|| file.strip_suffix(".NPY"))
        .unwrap_or(&file);
    out.with_file_name(format!("{stem}.{}.npy", safe_name(name)))
}

fn npy_of(o: &super::CombinedOutput) -> Result<Vec<u8>, String> {
    let r = if o.real {
        let re: Vec<f64> = o.values.iter().map(|z| z.re).collect();
        npy_f64(&o.shape, &re)
    } else {
        npy_c128(&o.shape, &o.values)
    };
    r.map_err(|e| e.to_string())
}

/// The files [`output_files`] writes for outputs named `names` (without the metadata sidecar),
/// known before any data are combined, so that every target can be checked before work.
pub fn output_paths(out: &Path, format: OutputFormat, names: &[String]) -> Vec<PathBuf> {
    match format {
        OutputFormat::Npy => names.iter().map(|n| npy_path_for(out, n)).collect(),
        OutputFormat::Npz | OutputFormat::Csv | OutputFormat::Tsv => vec![out.to_path_buf()],
    }
}

/// The files (path, bytes) holding the outputs, without the metadata sidecar; also the
/// location of each output (file, NPZ member or columns) for the metadata.
///
/// # Errors
/// A message when a CSV is asked for outputs that are not 1-D.
pub fn output_files(
    c: &Combined,
    out: &Path,
    format: OutputFormat,
) -> Result<(FileSet, Vec<String>), String> {
    let mut files = Vec::new();
    let mut places = Vec::new();
    match format {
        OutputFormat::Npy => {
            for o in &c.outputs {
                let p = npy_path_for(out, &o.name);
                places.push(
                    p.file_name()
                        .map(|n| n.to_string_lossy().into_owned())
                        .unwrap_or_default(),
                );
                files.push((p, npy_of(o)?));
            }
        }
        OutputFormat::Npz => {
            let mut members = Vec::new();
            for o in &c.outputs {
                let name = safe_name(&o.name);
                places.push(format!("{name} (NPZ member)"));
                members.push((name, npy_of(o)?));
            }
            files.push((out.to_path_buf(), write_npz(&members)?));
        }
        OutputFormat::Csv | OutputFormat::Tsv => {
            let sep = if format == OutputFormat::Csv {
                ","
            } else {
                "\t"
            };
            let (text, cols) = table_text(c, sep)?;
            places = cols;
            files.push((out.to_path_buf(), text.into_bytes()));
        }
    }
    Ok((files, places))
}

/// One plain table: header `index` then `NAME` (real) or `NAME.re`, `NAME.im` (complex).
fn table_text(c: &Combined, sep: &str) -> Result<(String, Vec<String>), String> {
    let len = c.outputs.first().map_or(0, |o| o.values.len());
    if let Some(o) = c.outputs.iter().find(|o| o.shape.len() > 1) {
        return Err(format!(
            "output `{}` has shape {:?}; CSV holds 1-D outputs only: write .npy or .npz",
            o.name, o.shape
        ));
    }
    let mut head = vec!["index".to_string()];
    let mut places = Vec::new();
    for o in &c.outputs {
        let n = safe_name(&o.name);
        if o.real {
            places.push(format!("column {n}"));
            head.push(n);
        } else {
            places.push(format!("columns {n}.re, {n}.im"));
            head.push(format!("{n}.re"));
            head.push(format!("{n}.im"));
        }
    }
    let mut s = head.join(sep);
    s.push('\n');
    for i in 0..len {
        let mut row = vec![i.to_string()];
        for o in &c.outputs {
            row.push(crate::numfmt::decimal(o.values[i].re));
            if !o.real {
                row.push(crate::numfmt::decimal(o.values[i].im));
            }
        }
        s.push_str(&row.join(sep));
        s.push('\n');
    }
    Ok((s, places))
}

/// The metadata sidecar of a combine run (`NAME.meta.json`).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CombineMeta {
    /// Layout version of this object ([`SCHEMA_VERSION`]).
    pub schema_version: u32,
    /// Always `pathsieve`.
    pub tool: String,
    /// The tool's version.
    pub version: String,
    /// `combined outputs`.
    pub content: String,
    /// The combination rule, in one line.
    pub convention: String,
    /// Experiment file name.
    pub experiment: Option<String>,
    /// SHA-256 of the experiment file.
    pub experiment_sha256: Option<String>,
    /// Cycle file name.
    pub cycle: Option<String>,
    /// Data file name.
    pub data: Option<String>,
    /// The export whose step order the data follow, if given.
    pub export: Option<String>,
    /// `designed`, `drift` (from the export) or `designed (assumed)`.
    pub step_order: String,
    /// Experiment field names (the order of every signature below).
    pub fields: Vec<String>,
    /// The run: steps, axis, order, per-output gains and scales.
    pub combined: Combined,
    /// Where each output is stored, in output order.
    pub stored_as: Vec<String>,
    /// Sentences for people (complex outputs of real data, scaling).
    pub notes: Vec<String>,
}

impl CombineMeta {
    /// Pretty JSON bytes with a trailing newline.
    pub fn json_bytes(&self) -> Vec<u8> {
        let mut s = serde_json::to_string_pretty(self).unwrap_or_else(|_| "{}".into());
        s.push('\n');
        s.into_bytes()
    }
}
