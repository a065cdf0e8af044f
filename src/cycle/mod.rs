//! The phase-cycle model shared by the checker, the designer and the exporters: steps with a
//! phase per field, one weight vector per output, and metadata. File formats live in the
//! submodules ([`toml_format`], [`csv_format`], shared cell texts in [`text`], numeric arrays in
//! [`arrays`]); this module holds
//! the data, its exact/float views and [`read_cycle`], which picks the format by extension.

pub mod arrays;
pub mod bounds;
pub mod csv_format;
pub mod dialect;
pub mod plausible;
pub mod text;
pub mod toml_format;

pub use arrays::{check_array_shape, cycle_from_arrays, ArrayError};
pub use csv_format::{read_cycle_csv, write_cycle_csv};
pub use toml_format::{read_cycle_toml, write_cycle_toml};

use crate::error::InputError;
use crate::exact::{Cyclo, PhaseUnit, Turns};
use crate::signature::Signature;
use num_complex::Complex64;
use num_traits::{CheckedAdd, CheckedMul};
use serde::Serialize;
use std::path::Path;

/// One phase of one step.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind", content = "value")]
pub enum Phase {
    /// An exact fraction of a turn, reduced into [0, 1).
    Exact(Turns),
    /// A phase known only approximately, in turns.
    Approx(f64),
}

impl Phase {
    /// The phase in turns as a float.
    pub fn turns_f64(&self) -> f64 {
        match self {
            Phase::Exact(t) => *t.numer() as f64 / *t.denom() as f64,
            Phase::Approx(x) => *x,
        }
    }

    /// The exact value, if known.
    pub fn exact(&self) -> Option<Turns> {
        match self {
            Phase::Exact(t) => Some(*t),
            Phase::Approx(_) => None,
        }
    }
}

/// One weight of one step for one output.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "kind", content = "value")]
pub enum Weight {
    /// An exact element of a cyclotomic field.
    Exact(Cyclo),
    /// A weight known only approximately.
    Approx(Complex64),
}

impl Weight {
    /// The weight as a complex float.
    pub fn to_complex(&self) -> Complex64 {
        match self {
            Weight::Exact(c) => c.to_complex(),
            Weight::Approx(z) => *z,
        }
    }
}

/// How an output's weights were given.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum WeightSource {
    /// Listed per step in the file.
    Explicit,
    /// Derived from a wanted signature: `w_m = exp(-2 pi i t . phi_m) / N`.
    FromSignature(Signature),
}

/// One output of the cycle (one combination of the steps).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CycleOutput {
    /// Output name, matched against the experiment's wanted signals.
    pub name: String,
    /// One weight per step.
    pub weights: Vec<Weight>,
    /// Where the weights came from.
    pub source: WeightSource,
}

/// Descriptive metadata of a cycle file.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct CycleMeta {
    /// Free-text title.
    pub title: Option<String>,
    /// Phase grid, steps per turn per field, when the cycle lies on one.
    pub grid: Option<Vec<u32>>,
    /// How the cycle was made (e.g. `pathsieve design 0.1.0, lattice search`).
    pub made_by: Option<String>,
    /// The experiment file it was made for, if recorded.
    pub experiment: Option<String>,
    /// Free notes.
    pub notes: Vec<String>,
    /// How the table was written (dialect, each cell's written precision, unit warnings);
    /// `None` for cycles built in memory.
    pub written: Option<WrittenForm>,
}

/// How a cycle table was written: the file dialect and the precision each cell's digits carry
/// (docs/cycle-format.md, "Written precision").
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct WrittenForm {
    /// The dialect read, e.g. `CSV, semicolon-separated, decimal commas, UTF-8 byte-order mark`.
    pub dialect: Option<String>,
    /// Per step, per cycle field: half-width in turns of the interval the written digits stand
    /// for (0 for exact forms); `None` for a value marked approximate (`~`) without a usable
    /// precision, which the checker snaps within its snapping tolerance.
    pub phase_half_width: Vec<Vec<Option<f64>>>,
    /// Per output, per step: radius of the written precision of the weight (as above).
    pub weight_radius: Vec<Vec<Option<f64>>>,
    /// Warnings about the table, such as an implausible phase unit, with the suggested fix.
    pub warnings: Vec<String>,
}

impl WrittenForm {
    /// The written half-width of phase cell (`step`, `column`): the recorded one, else 0 for an
    /// exact phase and `None` for an approximate one.
    pub fn phase_half_width(
        form: Option<&WrittenForm>,
        step: usize,
        column: usize,
        p: &Phase,
    ) -> Option<f64> {
        match form.and_then(|w| w.phase_half_width.get(step)?.get(column).copied()) {
            Some(h) => h,
            None => matches!(p, Phase::Exact(_)).then_some(0.0),
        }
    }

    /// The written radius of weight (`output`, `step`), as [`Self::phase_half_width`].
    pub fn weight_radius(
        form: Option<&WrittenForm>,
        output: usize,
        step: usize,
        w: &Weight,
    ) -> Option<f64> {
        match form.and_then(|f| f.weight_radius.get(output)?.get(step).copied()) {
            Some(r) => r,
            None => matches!(w, Weight::Exact(_)).then_some(0.0),
        }
    }
}

/// A whole phase cycle.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Cycle {
    /// Field names, one per phase column, in the experiment's field order.
    pub fields: Vec<String>,
    /// Steps: one phase per field.
    pub steps: Vec<Vec<Phase>>,
    /// Outputs: one weight per step each.
    pub outputs: Vec<CycleOutput>,
    /// Metadata.
    pub meta: CycleMeta,
}

impl Cycle {
    /// Number of steps N.
    pub fn len(&self) -> usize {
        self.steps.len()
    }

    /// True when the cycle has no steps.
    pub fn is_empty(&self) -> bool {
        self.steps.is_empty()
    }

    /// True when every phase and every weight is exact.
    pub fn is_exact(&self) -> bool {
        self.steps
            .iter()
            .flatten()
            .all(|p| matches!(p, Phase::Exact(_)))
            && self
                .outputs
                .iter()
                .flat_map(|o| &o.weights)
                .all(|w| matches!(w, Weight::Exact(_)))
    }

    /// All phases as exact turns, if every one is exact.
    pub fn exact_phases(&self) -> Option<Vec<Vec<Turns>>> {
        self.steps
            .iter()
            .map(|s| s.iter().map(Phase::exact).collect())
            .collect()
    }

    /// Phases in turns as floats.
    pub fn phases_f64(&self) -> Vec<Vec<f64>> {
        self.steps
            .iter()
            .map(|s| s.iter().map(Phase::turns_f64).collect())
            .collect()
    }
}

/// Weights `w_m = exp(-2 pi i t . phi_m) / N` that keep the signature `t` (over the cycle's
/// fields) with `F(t) = 1`: exact when every phase is exact, approximate otherwise.
pub fn weights_from_signature(steps: &[Vec<Phase>], t: &[i64]) -> Vec<Weight> {
    let n = steps.len().max(1) as i64;
    let inv_n = crate::exact::Q::new(1.into(), n.into());
    steps
        .iter()
        .map(|row| {
            let exact: Option<Turns> = row
                .iter()
                .zip(t)
                .map(|(p, &tj)| {
                    p.exact()
                        .and_then(|x| x.checked_mul(&Turns::from_integer(tj)))
                })
                .try_fold(Turns::from_integer(0), |acc, x| {
                    x.and_then(|x| acc.checked_add(&x))
                });
            let exact = exact.map(crate::exact::reduce_turn).and_then(|e| {
                let d = u32::try_from(*e.denom()).ok()?;
                Cyclo::root_of_unity(d, -*e.numer()).ok()
            });
            match exact {
                Some(c) => Weight::Exact(c.scale(&inv_n)),
                None => {
                    let x: f64 = row
                        .iter()
                        .zip(t)
                        .map(|(p, &tj)| p.turns_f64() * tj as f64)
                        .sum();
                    Weight::Approx(
                        num_complex::Complex64::from_polar(1.0, -std::f64::consts::TAU * x)
                            / n as f64,
                    )
                }
            }
        })
        .collect()
}

/// Read a cycle table, choosing the format by extension (`.toml`, `.csv`/`.tsv`/`.txt` for
/// the plain table, `.json` for the tool's export, `.npy`/`.npz` for NumPy arrays). `unit_override` supplies the phase unit when the file does not declare
/// one; a file that declares a different unit is refused rather than silently reinterpreted.
pub fn read_cycle(path: &Path, unit_override: Option<PhaseUnit>) -> Result<Cycle, InputError> {
    let ext = if crate::input_text::is_stdin(path) {
        sniff_kind(&crate::input_text::read_bytes(path)?).to_string()
    } else {
        path.extension()
            .and_then(|e| e.to_str())
            .unwrap_or("")
            .to_ascii_lowercase()
    };
    if matches!(ext.as_str(), "npy" | "npz") {
        // NumPy arrays: the tool's own NPY export (with its sidecar) or an array numpy saved.
        return crate::export::array_import::read_array_cycle(path, unit_override);
    }
    let text = crate::input_text::read_text(path)?;
    match ext.as_str() {
        "toml" => read_cycle_toml(&text, path, unit_override),
        "csv" | "tsv" | "txt" => match plain_sidecar(path, &text) {
            Some(meta) => {
                if unit_override.is_some_and(|u| Some(u) != text::parse_unit(&meta.unit).ok()) {
                    return Err(InputError::new(
                        path,
                        None,
                        Some("unit"),
                        format!(
                            "--unit differs from the unit `{}` in the sidecar {}; drop --unit",
                            meta.unit,
                            crate::export::meta::sidecar_path(path).display()
                        ),
                    ));
                }
                crate::export::plain::read_plain_table(&text, &meta, path)
            }
            None => read_cycle_csv(&text, path, unit_override),
        },
        // The tool's own JSON export, the file acquisition software loads.
        "json" => crate::export::phase_import::read_phase_list_json(&text, path),
        other => Err(InputError::new(
            path,
            None,
            None,
            format!("unknown cycle file extension `.{other}`; use .toml (cycle file), .csv (plain table), .json (a pathsieve export) or .npy/.npz (NumPy arrays)"),
        )),
    }
}

/// The metadata of a plain table (`pathsieve export --format plain-csv|plain-tsv`): its
/// sidecar, when the table starts with its header row (no `#` lines) and the sidecar names a
/// plain layout. Any other file beside the table is not this table's metadata.
fn plain_sidecar(path: &Path, text: &str) -> Option<crate::export::meta::ExportMeta> {
    let first = text.lines().map(str::trim).find(|l| !l.is_empty())?;
    if first.starts_with('#') {
        return None;
    }
    let (_, meta) = crate::export::meta::read_sidecar(path).ok().flatten()?;
    let plain = [
        crate::export::plain::LAYOUT_CSV,
        crate::export::plain::LAYOUT_TSV,
    ];
    plain
        .contains(&meta.layout.as_deref().unwrap_or(""))
        .then_some(meta)
}

/// The kind of a cycle table given on standard input (`-`), from its first bytes, as the
/// extension it would have: `npy` (the NumPy magic), `npz` (a ZIP archive), `json` (an object),
/// `toml` (text that parses as a non-empty TOML document; a CSV table never does), else
/// `csv`.
pub fn sniff_kind(bytes: &[u8]) -> &'static str {
    if bytes.starts_with(b"\x93NUMPY") {
        return "npy";
    }
    if bytes.starts_with(b"PK") {
        return "npz";
    }
    let text = String::from_utf8_lossy(bytes);
    let body = text.trim_start_matches('\u{feff}').trim_start();
    if body.starts_with('{') {
        return "json";
    }
    match body.parse::<toml::Table>() {
        Ok(t) if !t.is_empty() => "toml",
        _ => "csv",
    }
}

/// Resolve the phase unit from the file's declaration and the caller's override.
pub(crate) fn resolve_unit(
    path: &Path,
    line: Option<usize>,
    declared: Option<PhaseUnit>,
    unit_override: Option<PhaseUnit>,
) -> Result<PhaseUnit, InputError> {
    match (declared, unit_override) {
        (Some(d), Some(o)) if d != o => Err(InputError::new(
            path,
            line,
            Some("unit"),
            format!(
                "the file declares unit {} but {} was requested; drop the flag or fix the file",
                text::unit_name(d),
                text::unit_name(o)
            ),
        )),
        (Some(d), _) => Ok(d),
        (None, Some(o)) => Ok(o),
        (None, None) => Err(InputError::new(
            path,
            line,
            Some("unit"),
            "no phase unit declared; declare unit = turns, degrees, radians or grid:M in the file \
             (CSV: a line `# unit = degrees`) or pass --unit",
        )),
    }
}
