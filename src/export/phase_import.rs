//! Reading exported phase lists back into a [`Cycle`]: this module owns the inverse of
//! [`super::phase_formats`], used to check that an export says what the cycle said (export,
//! re-import, check: same verdict). Float phases are snapped to the grid recorded in the
//! metadata (within 1e-9 of a grid point, exact k/M turn); phases off the grid stay
//! approximate and the checker treats them as such. Weights are read from their exact text
//! when present, else as approximate complex numbers.

use super::meta::ExportMeta;
use super::npy::{read_npy, NpyData};
use crate::cycle::text::{parse_phase_cell, parse_unit, parse_weight_cell};
use crate::cycle::{Cycle, CycleMeta, CycleOutput, Phase, Weight, WeightSource};
use crate::error::InputError;
use crate::exact::{reduce_turn, PhaseUnit, Turns};
use num_complex::Complex64;
use std::path::Path;

/// Distance (in grid steps) within which a float phase is taken as the grid point.
const SNAP: f64 = 1e-9;

/// Largest turn denominator of a float phase taken as the exact value it is: 3600, the
/// 0.1-degree grid (the checker's default largest snapping denominator).
pub(crate) const EXACT_FLOAT_DENOMINATOR: i64 = 3600;

/// A float phase in turns or degrees whose value is exactly a fraction of a turn with a
/// denominator of at most [`EXACT_FLOAT_DENOMINATOR`] (`120.0` deg, `90` deg, `22.5` deg,
/// `0.25` turn): that fraction, reduced into `[0, 1)`. A double is exactly `a / 2^k`; `k` up to
/// 12 is tried (scaling by a power of two is exact), so `33.3` deg, which no double holds
/// exactly, is not exact here (the checker snaps it and says so).
fn exact_float(value: f64, unit: PhaseUnit) -> Option<Turns> {
    let per_turn: i64 = match unit {
        PhaseUnit::Turns => 1,
        PhaseUnit::Degrees => 360,
        PhaseUnit::Radians | PhaseUnit::GridIndex(_) => return None,
    };
    if !value.is_finite() || value.abs() >= 1e12 {
        return None;
    }
    let k = (0..=12).find(|&k| (value * f64::from(1u32 << k)).fract() == 0.0)?;
    let whole = (value * f64::from(1u32 << k)) as i64;
    let t = reduce_turn(Turns::new(whole, per_turn << k));
    (*t.denom() <= EXACT_FLOAT_DENOMINATOR).then_some(t)
}

/// A float phase in `unit` as turns: exact on a grid index, within 1e-9 of a point of
/// `grid`, or exactly a simple fraction of a turn ([`exact_float`]: integer degrees such as
/// `120.0`); approximate otherwise.
pub(crate) fn to_phase(value: f64, unit: PhaseUnit, grid: Option<u64>) -> Phase {
    if let Some(t) = exact_float(value, unit) {
        return Phase::Exact(t);
    }
    let turns = match unit {
        PhaseUnit::Turns => value,
        PhaseUnit::Degrees => value / 360.0,
        PhaseUnit::Radians => value / std::f64::consts::TAU,
        PhaseUnit::GridIndex(m) => value / f64::from(m),
    };
    if let PhaseUnit::GridIndex(m) = unit {
        if value.fract() == 0.0 && value.abs() < 9e15 {
            return Phase::Exact(reduce_turn(Turns::new(value as i64, i64::from(m))));
        }
    }
    if let Some(m) = grid.filter(|&m| m > 0 && m < (1 << 40)) {
        let x = turns * m as f64;
        let k = x.round();
        if (x - k).abs() <= SNAP * x.abs().max(1.0) {
            return Phase::Exact(reduce_turn(Turns::new(k as i64, m as i64)));
        }
    }
    Phase::Approx(turns)
}

fn cycle_of(
    meta: &ExportMeta,
    rows: Vec<Vec<f64>>,
    outputs: Vec<CycleOutput>,
    path: &Path,
) -> Result<Cycle, InputError> {
    let unit = parse_unit(&meta.unit).map_err(|m| InputError::new(path, None, Some("unit"), m))?;
    let steps = rows
        .iter()
        .map(|r| {
            r.iter()
                .enumerate()
                .map(|(j, &v)| {
                    to_phase(v, unit, meta.grid.as_ref().and_then(|g| g.get(j).copied()))
                })
                .collect()
        })
        .collect();
    Ok(Cycle {
        fields: meta.fields.clone(),
        steps,
        outputs,
        meta: CycleMeta {
            title: meta.title.clone(),
            grid: meta
                .grid
                .as_ref()
                .and_then(|g| g.iter().map(|&x| u32::try_from(x).ok()).collect()),
            made_by: Some(format!(
                "re-imported from a {} {} export",
                meta.tool, meta.version
            )),
            experiment: meta.experiment.clone(),
            notes: Vec::new(),
            written: None,
        },
    })
}

/// The `# key: value` lines at the top of an exported CSV, as metadata.
fn csv_meta(text: &str) -> (ExportMeta, usize) {
    let mut m = ExportMeta::default();
    let mut lines = 0;
    for l in text.lines() {
        let Some(body) = l.trim().strip_prefix('#') else {
            break;
        };
        lines += 1;
        let Some((k, v)) = body.split_once(':') else {
            continue;
        };
        let v = v.trim().to_string();
        match k.trim() {
            "tool" => {
                let mut it = v.splitn(2, ' ');
                m.tool = it.next().unwrap_or_default().to_string();
                m.version = it.next().unwrap_or_default().to_string();
            }
            "unit" => m.unit = v,
            "title" => m.title = Some(v),
            "experiment" => m.experiment = Some(v),
            "grid" => {
                m.grid = v
                    .split('x')
                    .map(|s| s.trim().parse::<u64>().ok())
                    .collect::<Option<Vec<_>>>()
            }
            "steps" => m.steps = v.parse().unwrap_or_default(),
            "step_order" => m.step_order = v,
            "source_steps" => {
                m.source_steps = v
                    .split_whitespace()
                    .map(|s| s.parse::<usize>().ok())
                    .collect::<Option<Vec<_>>>()
                    .unwrap_or_default()
            }
            "outputs" => m.outputs = v.split(", ").map(str::to_string).collect(),
            "experiment_sha256" => m.experiment_sha256 = Some(v),
            "cycle" => m.cycle = Some(v),
            _ => {}
        }
    }
    (m, lines)
}

fn csv_rows(text: &str, path: &Path) -> Result<(Vec<String>, Vec<Vec<String>>), InputError> {
    let mut rdr = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .has_headers(true)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let header: Vec<String> = rdr
        .headers()
        .map_err(|e| InputError::new(path, None, None, format!("cannot read the header: {e}")))?
        .iter()
        .map(str::to_string)
        .collect();
    let mut rows = Vec::new();
    for r in rdr.records() {
        let r = r.map_err(|e| InputError::new(path, None, None, format!("bad row: {e}")))?;
        rows.push(r.iter().map(str::to_string).collect());
    }
    Ok((header, rows))
}

fn num(text: &str, path: &Path, line: usize, col: &str) -> Result<f64, InputError> {
    text.parse::<f64>().map_err(|_| {
        InputError::new(
            path,
            Some(line),
            Some(col),
            format!("`{text}` is not a number"),
        )
    })
}

/// Re-import a phase CSV (and optionally its weights CSV) written by
/// [`super::phase_formats::phases_csv`] / [`super::phase_formats::weights_csv`].
///
/// # Errors
/// [`InputError`] naming the line and column.
pub fn read_phase_list_csv(
    phases: &str,
    weights: Option<&str>,
    path: &Path,
) -> Result<Cycle, InputError> {
    let (mut meta, skip) = csv_meta(phases);
    let (header, rows) = csv_rows(phases, path)?;
    meta.fields = header.iter().skip(1).cloned().collect();
    let mut values = Vec::with_capacity(rows.len());
    for (i, r) in rows.iter().enumerate() {
        let line = skip + 2 + i;
        let v: Result<Vec<f64>, _> = r
            .iter()
            .zip(&header)
            .skip(1)
            .map(|(c, h)| num(c, path, line, h))
            .collect();
        values.push(v?);
    }
    let outputs = match weights {
        None => Vec::new(),
        Some(w) => read_weights_csv(w, path)?,
    };
    cycle_of(&meta, values, outputs, path)
}

fn read_weights_csv(text: &str, path: &Path) -> Result<Vec<CycleOutput>, InputError> {
    let (header, rows) = csv_rows(text, path)?;
    let mut outputs: Vec<CycleOutput> = Vec::new();
    for (c, h) in header.iter().enumerate().skip(1) {
        let Some(name) = h.strip_suffix(".re") else {
            continue;
        };
        let im = header.iter().position(|x| *x == format!("{name}.im"));
        let ex = header.iter().position(|x| *x == format!("{name}.exact"));
        let mut weights = Vec::with_capacity(rows.len());
        for (i, r) in rows.iter().enumerate() {
            let cell = |k: Option<usize>| k.and_then(|k| r.get(k)).map(String::as_str);
            let w = match cell(ex).map(parse_weight_cell) {
                Some(Ok(w)) => w,
                _ => {
                    let re = num(cell(Some(c)).unwrap_or(""), path, i + 2, h)?;
                    let imv = num(cell(im).unwrap_or("0"), path, i + 2, h)?;
                    Weight::Approx(Complex64::new(re, imv))
                }
            };
            weights.push(w);
        }
        outputs.push(CycleOutput {
            name: name.to_string(),
            weights,
            source: WeightSource::Explicit,
        });
    }
    Ok(outputs)
}

/// Re-import a JSON list written by [`super::phase_formats::list_json`], using its exact
/// `phases_turns` and weight texts.
///
/// # Errors
/// [`InputError`] for malformed JSON or values.
pub fn read_phase_list_json(text: &str, path: &Path) -> Result<Cycle, InputError> {
    let bad = |m: String| InputError::new(path, None, None, m);
    let v: serde_json::Value =
        serde_json::from_str(text).map_err(|e| bad(format!("not JSON: {e}")))?;
    let meta: ExportMeta = serde_json::from_value(v["meta"].clone())
        .map_err(|e| bad(format!("bad `meta` object: {e}")))?;
    let rows = v["phases_turns"]
        .as_array()
        .ok_or_else(|| bad("no `phases_turns` array".into()))?;
    let mut steps = Vec::with_capacity(rows.len());
    for r in rows {
        let cells = r
            .as_array()
            .ok_or_else(|| bad("a row of `phases_turns` is not an array".into()))?;
        let row: Result<Vec<Phase>, _> = cells
            .iter()
            .map(|c| parse_phase_cell(c.as_str().unwrap_or("?"), PhaseUnit::Turns).map_err(bad))
            .collect();
        steps.push(row?);
    }
    let mut outputs = Vec::new();
    for o in v["outputs"].as_array().into_iter().flatten() {
        let name = o["name"].as_str().unwrap_or_default().to_string();
        let exact = o["exact"].as_array().cloned().unwrap_or_default();
        let weights: Result<Vec<Weight>, _> = exact
            .iter()
            .map(|e| parse_weight_cell(e.as_str().unwrap_or("?")).map_err(bad))
            .collect();
        outputs.push(CycleOutput {
            name,
            weights: weights?,
            source: WeightSource::Explicit,
        });
    }
    let mut c = cycle_of(&meta, Vec::new(), outputs, path)?;
    c.steps = steps;
    Ok(c)
}

/// Read an exported phase list from disk, whatever its format (by extension: `.csv`/`.tsv`/
/// `.txt` with its `#` metadata lines, `.json`, or `.npy` with its `NAME.meta.json` sidecar),
/// with its metadata (step order, source steps).
///
/// # Errors
/// [`InputError`] naming the file for unreadable or malformed input.
pub fn read_phase_list_file(path: &Path) -> Result<(Cycle, ExportMeta), InputError> {
    let mut ext = path
        .extension()
        .and_then(|e| e.to_str())
        .unwrap_or("")
        .to_ascii_lowercase();
    let bad = |m: String| InputError::new(path, None, None, m);
    if path.as_os_str() == "-" {
        // Standard input: a JSON export starts with `{`, anything else is read as CSV/TSV (an
        // NPY export needs its sidecar beside it, so it cannot come through a pipe).
        let text = crate::input_text::read_text(path)?;
        ext = if text.trim_start().starts_with('{') {
            "json"
        } else {
            "csv"
        }
        .into();
    }
    match ext.as_str() {
        "csv" | "tsv" | "txt" => {
            let text = crate::input_text::read_text(path)?;
            let cycle = read_phase_list_csv(&text, None, path)?;
            Ok((cycle, csv_meta(&text).0))
        }
        "json" => {
            let text = crate::input_text::read_text(path)?;
            let cycle = read_phase_list_json(&text, path)?;
            let v: serde_json::Value =
                serde_json::from_str(&text).map_err(|e| bad(format!("not JSON: {e}")))?;
            let meta: ExportMeta = serde_json::from_value(v["meta"].clone())
                .map_err(|e| bad(format!("bad `meta` object: {e}")))?;
            Ok((cycle, meta))
        }
        "npy" => {
            let Some((_, meta)) = super::meta::read_sidecar(path)? else {
                return Err(bad(format!(
                    "no metadata sidecar {} beside it; export the cycle again (NPY exports write one)",
                    super::meta::sidecar_path(path).display()
                )));
            };
            let bytes = crate::input_text::read_bytes(path)?;
            let a = read_npy(&bytes).map_err(|e| bad(e.to_string()))?;
            Ok((cycle_of_arrays(&meta, a, None, path)?, meta))
        }
        other => Err(bad(format!(
            "unknown phase-list extension `.{other}`; give the .csv, .json or .npy file `pathsieve export` wrote"
        ))),
    }
}

/// Re-import NPY phases with their sidecar metadata, and optionally NPY weights (complex128,
/// N x outputs, output names from the phases' metadata).
///
/// # Errors
/// [`InputError`] for malformed NPY, metadata or shapes.
pub fn read_phase_list_npy(
    phases: &[u8],
    meta_json: &str,
    weights: Option<&[u8]>,
    path: &Path,
) -> Result<Cycle, InputError> {
    let bad = |m: String| InputError::new(path, None, None, m);
    let meta = super::meta::parse_sidecar(meta_json, path)?;
    let a = read_npy(phases).map_err(|e| bad(e.to_string()))?;
    let w = weights
        .map(|w| read_npy(w).map_err(|e| bad(e.to_string())))
        .transpose()?;
    cycle_of_arrays(&meta, a, w, path)
}

/// A cycle from a phase array (steps x fields, or one field as a vector) and its metadata; the
/// weights from the metadata's exact texts when present, else from a complex weight array
/// (steps x outputs, approximate).
///
/// # Errors
/// [`InputError`] for shapes or dtypes that do not fit the metadata.
pub fn cycle_of_arrays(
    meta: &ExportMeta,
    a: super::npy::NpyArray,
    weights: Option<super::npy::NpyArray>,
    path: &Path,
) -> Result<Cycle, InputError> {
    let f = meta.fields.len();
    let (n, rows) = phase_rows(a, f, path)?;
    let mut outputs = exact_outputs(meta, n, path)?;
    if outputs.is_empty() {
        if let Some(b) = weights {
            outputs = array_outputs(meta, b, n, path)?;
        }
    }
    cycle_of(meta, rows, outputs, path)
}

/// A cycle from phase rows (in the metadata's unit) and the metadata's exact weights: the
/// plain-table re-import.
///
/// # Errors
/// [`InputError`] for weights that do not fit the rows or do not parse.
pub fn cycle_of_rows(
    meta: &ExportMeta,
    rows: Vec<Vec<f64>>,
    path: &Path,
) -> Result<Cycle, InputError> {
    let outputs = exact_outputs(meta, rows.len(), path)?;
    cycle_of(meta, rows, outputs, path)
}

/// The outputs from the metadata's exact weight texts (none when it has none).
fn exact_outputs(meta: &ExportMeta, n: usize, path: &Path) -> Result<Vec<CycleOutput>, InputError> {
    let bad = |m: String| InputError::new(path, None, None, m);
    let mut outputs = Vec::new();
    {
        for ew in &meta.weights {
            if ew.exact.len() != n {
                return Err(bad(format!(
                    "the metadata holds {} weights of output `{}` for {n} steps; export the cycle again",
                    ew.exact.len(),
                    ew.name
                )));
            }
            let weights: Result<Vec<Weight>, _> = ew
                .exact
                .iter()
                .map(|t| {
                    parse_weight_cell(t).map_err(|m| bad(format!("output `{}`: {m}", ew.name)))
                })
                .collect();
            outputs.push(CycleOutput {
                name: ew.name.clone(),
                weights: weights?,
                source: WeightSource::Explicit,
            });
        }
    }
    Ok(outputs)
}

/// The outputs from a complex weight array (steps x outputs, approximate).
fn array_outputs(
    meta: &ExportMeta,
    b: super::npy::NpyArray,
    n: usize,
    path: &Path,
) -> Result<Vec<CycleOutput>, InputError> {
    let bad = |m: String| InputError::new(path, None, None, m);
    let mut outputs = Vec::new();
    {
        let NpyData::C128(v) = b.data else {
            return Err(bad("weights must be complex (complex128)".into()));
        };
        let k = meta.outputs.len();
        if b.shape != [n, k] {
            return Err(bad(format!(
                "weights have shape {:?}; expected ({n}, {k})",
                b.shape
            )));
        }
        for (o, name) in meta.outputs.iter().enumerate() {
            outputs.push(CycleOutput {
                name: name.clone(),
                weights: (0..n).map(|m| Weight::Approx(v[m * k + o])).collect(),
                source: WeightSource::Explicit,
            });
        }
    }
    Ok(outputs)
}

/// The rows of a real phase array with `f` columns (a vector is one column).
fn phase_rows(
    a: super::npy::NpyArray,
    f: usize,
    path: &Path,
) -> Result<(usize, Vec<Vec<f64>>), InputError> {
    let bad = |m: String| InputError::new(path, None, None, m);
    let (n, cols) = match a.shape[..] {
        [n, c] => (n, c),
        [n] => (n, 1),
        _ => {
            return Err(bad(format!(
                "phases have shape {:?}; expected (steps, fields)",
                a.shape
            )))
        }
    };
    if cols != f {
        return Err(bad(format!(
            "{cols} phase columns but {f} fields in the metadata"
        )));
    }
    let flat: Vec<f64> = match a.data {
        NpyData::F64(v) => v,
        NpyData::I64(v) => v.into_iter().map(|k| k as f64).collect(),
        NpyData::C128(_) => {
            return Err(bad(
                "phases must be real (float or integer), not complex".into()
            ))
        }
    };
    Ok((
        n,
        flat.chunks(f.max(1)).map(<[f64]>::to_vec).take(n).collect(),
    ))
}
