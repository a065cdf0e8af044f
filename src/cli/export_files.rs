//! The files of one `pathsieve export`: for the chosen format, the bytes of the phase list, its
//! sidecar, the weights, the receiver/LO table and the masks, with the metadata each carries.
//! Writing them is `export_cmd`'s job (through `stdio::write_outputs`).

use super::export_cmd::{ExportArgs, Format};
use anyhow::bail;
use pathsieve::cycle::Cycle;
use pathsieve::export::mask::{mask_set_npy, masks_for_cycle, write_mask_set_csv, MaskSet};
use pathsieve::export::meta::{sha256_hex, sidecar_path, ExportMeta};
use pathsieve::export::npy::{npy_f64, npy_text};
use pathsieve::export::npz::write_npz;
use pathsieve::export::phase_formats::{
    exported_weights, list_json, phases_csv, phases_npy, weights_csv, weights_npy,
};
use pathsieve::export::phase_list::{Cell, ExportUnit, PhaseList};
use pathsieve::export::plain::{
    plain_field, plain_phases, plain_weights, receiver_table, Delimiter,
};
use pathsieve::export::plan::RowOrder;
use pathsieve::export::shaper::parse_shaper;
use pathsieve::safe_write::Filler;
use std::path::{Path, PathBuf};

/// Everything one export needs.
pub struct Job<'a> {
    /// The command's arguments.
    pub args: &'a ExportArgs,
    /// The experiment file's bytes (for its SHA-256).
    pub exp_bytes: &'a [u8],
    /// The cycle as read.
    pub cycle: &'a Cycle,
    /// The cycle laid out for export (rows in export order).
    pub list: &'a PhaseList,
    /// Notes of the plan (drift moment, verdict).
    pub notes: Vec<String>,
    /// The phase unit.
    pub unit: ExportUnit,
    /// The index grid (for `ExportUnit::Index`).
    pub grid: u64,
    /// The row order.
    pub row_order: RowOrder,
}

/// The files of an export: bytes in memory, and the mask CSV streamed (it can be ~1.6 GB).
pub struct Built<'a> {
    /// (path, bytes) of every file but the streamed one.
    pub files: Vec<(PathBuf, Vec<u8>)>,
    /// The mask CSV, written piece by piece into OUT.
    pub mask_csv: Option<Filler<'a>>,
}

fn name_of(p: &Path) -> String {
    if p.as_os_str() == "-" {
        return "stdout".into();
    }
    p.file_name().map_or_else(
        || p.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

impl Job<'_> {
    fn meta(&self, content: &str, unit_name: String, notes: Vec<String>) -> ExportMeta {
        ExportMeta {
            tool: "pathsieve".into(),
            version: env!("CARGO_PKG_VERSION").into(),
            content: content.into(),
            experiment: Some(name_of(&self.args.experiment)),
            experiment_sha256: Some(sha256_hex(self.exp_bytes)),
            cycle: Some(name_of(&self.args.cycle)),
            title: self.cycle.meta.title.clone(),
            fields: self.list.fields.clone(),
            outputs: self.list.outputs.clone(),
            unit: unit_name,
            grid: self.list.grid.clone(),
            steps: self.list.len(),
            step_order: self.row_order.name().into(),
            source_steps: self.list.source_steps.clone(),
            notes,
            weights: Vec::new(),
            layout: None,
            pixel_freqs_thz: None,
        }
    }

    fn unit_name(&self) -> String {
        PhaseList::unit_name(self.unit, self.grid)
    }

    fn delimiter(&self) -> Delimiter {
        if self.args.format == Format::PlainTsv {
            Delimiter::Tab
        } else {
            Delimiter::Comma
        }
    }
}

/// The bytes of every file of the export.
pub fn build<'a>(job: &'a Job<'a>) -> anyhow::Result<Built<'a>> {
    let a = job.args;
    let is_mask = matches!(a.format, Format::MaskCsv | Format::MaskNpy);
    let cells = if is_mask {
        Vec::new()
    } else {
        job.list.cells(job.unit, job.grid)?
    };
    let mut files = Vec::new();
    let mut mask_csv = None;
    match a.format {
        Format::Csv => {
            let m = job.meta("phases", job.unit_name(), job.notes.clone());
            files.push((a.out.clone(), phases_csv(job.list, &cells, &m)));
        }
        Format::PlainCsv | Format::PlainTsv => files.extend(plain_files(job, &cells)),
        Format::Json => {
            let m = job.meta("phases+weights", job.unit_name(), job.notes.clone());
            files.push((a.out.clone(), list_json(job.list, &cells, &m)));
        }
        Format::Npy => {
            let mut n = job.notes.clone();
            n.push(format!(
                "{} holds the phases, shape (steps, fields), {}; NPY has no metadata slot, so this sidecar carries it",
                name_of(&a.out),
                array_kind(job.unit)
            ));
            let mut m = job.meta("phases", job.unit_name(), n);
            m.weights = exported_weights(job.list);
            files.push((a.out.clone(), phases_npy(&cells)?));
            files.push((sidecar_path(&a.out), m.json_bytes()));
        }
        Format::Npz => files.push((a.out.clone(), npz_bytes(job, &cells)?)),
        Format::MaskCsv | Format::MaskNpy => {
            let (set, n) = masks(job)?;
            if a.format == Format::MaskCsv {
                let m = job.meta("shaper masks", "turns".into(), n);
                let comments = m.csv_comments();
                let fill = move |w: &mut dyn std::io::Write| {
                    w.write_all(comments.as_bytes())?;
                    write_mask_set_csv(&set, w)
                };
                mask_csv = Some(Box::new(fill) as Filler<'a>);
            } else {
                let mut n = n;
                n.push(format!(
                    "{} holds the masks, complex128, shape (steps, pixels); the pixel frequencies (THz) are the array `pixel_freqs_thz` here",
                    name_of(&a.out)
                ));
                let mut m = job.meta("shaper masks", "turns".into(), n);
                m.pixel_freqs_thz = Some(set.freqs_thz.clone());
                files.push((a.out.clone(), mask_set_npy(&set)?));
                files.push((sidecar_path(&a.out), m.json_bytes()));
            }
        }
    }
    files.extend(weight_files(job)?);
    files.extend(receiver_files(job)?);
    Ok(Built { files, mask_csv })
}

fn array_kind(unit: ExportUnit) -> &'static str {
    if unit == ExportUnit::Index {
        "int64 grid indices"
    } else {
        "float64"
    }
}

/// The plain table (or one file per field) and its sidecar.
fn plain_files(job: &Job<'_>, cells: &[Vec<Cell>]) -> Vec<(PathBuf, Vec<u8>)> {
    let a = job.args;
    let d = job.delimiter();
    let mut files = Vec::new();
    let mut n = job.notes.clone();
    if a.per_field {
        let names: Vec<String> = (0..job.list.fields.len())
            .map(|j| {
                let p = a.field_path(&job.list.fields[j]);
                let name = name_of(&p);
                files.push((p, plain_field(job.list, cells, j)));
                name
            })
            .collect();
        n.push(format!(
            "one file per field, a header row with the field's name then one phase per step: {}",
            names.join(", ")
        ));
    } else {
        files.push((a.out.clone(), plain_phases(job.list, cells, d)));
        n.push(format!(
            "{} is a plain table: one header row (step, then the fields), one row per step, {}-separated",
            name_of(&a.out),
            if d == Delimiter::Tab { "tab" } else { "comma" }
        ));
    }
    let mut m = job.meta("phases", job.unit_name(), n);
    m.weights = exported_weights(job.list);
    m.layout = (!a.per_field).then(|| d.layout().to_string());
    files.push((sidecar_path(&a.out), m.json_bytes()));
    files
}

/// One NPZ: `phases`, `weights` (if any output), `masks` and `pixel_freqs_thz` (with
/// --shaper) and `meta` (the metadata JSON as a string).
fn npz_bytes(job: &Job<'_>, cells: &[Vec<Cell>]) -> anyhow::Result<Vec<u8>> {
    let mut n = job.notes.clone();
    n.push(format!(
        "members: phases ({}, steps x fields), weights (complex128, steps x outputs), meta (this JSON as a string: json.loads(str(z['meta'])))",
        array_kind(job.unit)
    ));
    let mut members = vec![("phases".to_string(), phases_npy(cells)?)];
    if !job.list.outputs.is_empty() {
        members.push(("weights".into(), weights_npy(job.list)?));
    }
    if job.args.shaper.is_some() {
        let (set, mn) = masks(job)?;
        n.extend(mn);
        n.push("masks: complex128, steps x pixels; pixel_freqs_thz: float64, pixels".into());
        members.push(("masks".into(), mask_set_npy(&set)?));
        members.push(("pixel_freqs_thz".into(), npy_f64(&[set.freqs_thz.len()], &set.freqs_thz)?));
    }
    let mut m = job.meta("phases+weights", job.unit_name(), n);
    m.weights = exported_weights(job.list);
    let json = String::from_utf8(m.json_bytes()).unwrap_or_default();
    members.push(("meta".into(), npy_text(json.trim_end())?));
    write_npz(&members).map_err(|e| anyhow::anyhow!("{}: {e}", job.args.out.display()))
}

/// The masks of every step, and the notes describing them.
fn masks(job: &Job<'_>) -> anyhow::Result<(MaskSet, Vec<String>)> {
    let sp = job.args.shaper.as_deref().unwrap_or(Path::new(""));
    let text = pathsieve::input_text::read_text(sp)?;
    let shaper = parse_shaper(&text, sp)?;
    let phases = shaper
        .step_phases(job.list)
        .map_err(|m| anyhow::anyhow!("{m}"))?;
    let set = masks_for_cycle(&shaper.spec, &phases)?;
    let mut n = job.notes.clone();
    n.push(format!(
        "shaper {} (sha256 {}): sub-pulses for fields {}; pixels {}; scale {:?}; rotating frame {}",
        name_of(sp),
        sha256_hex(text.as_bytes()),
        shaper.fields.join(", "),
        set.freqs_thz.len(),
        set.scale,
        set.rotating_frame_thz
            .map_or("none (lab frame)".into(), |f| format!("{f:?} THz"))
    ));
    n.push("M(omega) = scale * sum_j a_j exp(i 2pi phi_j) exp(i (omega - omega_0) tau_j); conventions in docs/shaper-masks.md".into());
    Ok((set, n))
}

/// The weights file and its sidecar, if asked for.
fn weight_files(job: &Job<'_>) -> anyhow::Result<Vec<(PathBuf, Vec<u8>)>> {
    let Some(w) = &job.args.weights else {
        return Ok(Vec::new());
    };
    if job.list.outputs.is_empty() {
        bail!("--weights: the cycle has no outputs to write weights for");
    }
    let is_npy = w.extension().is_some_and(|e| e.eq_ignore_ascii_case("npy"));
    let plain = matches!(job.args.format, Format::PlainCsv | Format::PlainTsv);
    let mut files = Vec::new();
    if is_npy || plain {
        let content = if is_npy {
            "weights (complex128, steps x outputs)"
        } else {
            "weights (plain table: step, then NAME.re, NAME.im per output)"
        };
        let mut m = job.meta(content, job.unit_name(), job.notes.clone());
        m.weights = exported_weights(job.list);
        let bytes = if is_npy {
            weights_npy(job.list)?
        } else {
            plain_weights(job.list, job.delimiter())
        };
        files.push((w.clone(), bytes));
        files.push((sidecar_path(w), m.json_bytes()));
    } else {
        let m = job.meta("weights", job.unit_name(), job.notes.clone());
        files.push((w.clone(), weights_csv(job.list, &m)));
    }
    Ok(files)
}

/// The receiver/LO phase table and its sidecar, if asked for.
fn receiver_files(job: &Job<'_>) -> anyhow::Result<Vec<(PathBuf, Vec<u8>)>> {
    let Some(r) = &job.args.receiver else {
        return Ok(Vec::new());
    };
    if job.list.outputs.is_empty() {
        bail!("--receiver: the cycle has no outputs to write receiver phases for");
    }
    let d = if r.extension().is_some_and(|e| e.eq_ignore_ascii_case("tsv")) {
        Delimiter::Tab
    } else {
        Delimiter::Comma
    };
    let bytes = receiver_table(job.list, job.unit, job.grid, d)?;
    let mut n = job.notes.clone();
    n.push("receiver/LO phase per step and output: w_m = amplitude_m exp(-2 pi i phase_m) / N, so co-adding step m with receiver phase phase_m and gain amplitude_m gives the output (amplitude 1 for unit-modulus weights)".into());
    let mut m = job.meta("receiver phases (plain table: step, then NAME.phase, NAME.amplitude per output)", job.unit_name(), n);
    m.weights = exported_weights(job.list);
    Ok(vec![(r.clone(), bytes), (sidecar_path(r), m.json_bytes())])
}
