//! The files of one `pathsieve export`: for the chosen format, the bytes of the phase list, its
//! sidecar, the weights, the receiver/LO table and the masks, with the metadata each carries.
//! Writing them is `export_cmd`'s job (through `stdio::write_outputs`).

use super::export_cmd::{parse_scan, ExportArgs, Format};
use anyhow::bail;
use pathsieve::cycle::Cycle;
use pathsieve::export::mask::{mask_set_npy, write_mask_set_csv, MaskSet};
use pathsieve::export::mask_scan::{
    first_aliasing, mask_scan, mask_scan_npy, Aliasing, MaskScan, ScanAxis,
};
use pathsieve::export::meta::{sha256_hex, sidecar_path, ExportMeta, ScanMeta};
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
    /// The mask CSVs (OUT, or one per scan point), written piece by piece.
    pub mask_csv: Vec<(PathBuf, Filler<'a>)>,
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
            scan: None,
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
    let mut mask_csv = Vec::new();
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
            let (scan, n) = masks(job)?;
            if a.format == Format::MaskCsv {
                mask_csv = mask_csv_files(job, scan, n);
            } else {
                let mut n = n;
                n.push(format!(
                    "{} holds the masks, complex128, shape {}; the pixel frequencies (THz) are the array `pixel_freqs_thz` here",
                    name_of(&a.out),
                    if a.scan.is_empty() { "(steps, pixels)" } else { "(delays, steps, pixels), delays as in `scan`" }
                ));
                let mut m = job.meta("shaper masks", "turns".into(), n);
                m.pixel_freqs_thz = Some(scan.0.freqs_thz.clone());
                m.scan = scan.1.clone();
                let bytes = if a.scan.is_empty() {
                    mask_set_npy(&point_set(&scan.0, 0))?
                } else {
                    mask_scan_npy(&scan.0)?
                };
                files.push((a.out.clone(), bytes));
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
    let mut scan_meta = None;
    if job.args.shaper.is_some() {
        let ((scan, sm), mn) = masks(job)?;
        n = mn;
        let f = &scan.freqs_thz;
        if let Some(sm) = &sm {
            n.push("masks: complex128, delays x steps x pixels; delays_fs: float64, delays x scanned pulses; pixel_freqs_thz: float64, pixels".into());
            members.push(("masks".into(), mask_scan_npy(&scan)?));
            let flat: Vec<f64> = sm.delays_fs.iter().flatten().copied().collect();
            members.push((
                "delays_fs".into(),
                npy_f64(&[sm.delays_fs.len(), sm.fields.len()], &flat)?,
            ));
        } else {
            n.push("masks: complex128, steps x pixels; pixel_freqs_thz: float64, pixels".into());
            members.push(("masks".into(), mask_set_npy(&point_set(&scan, 0))?));
        }
        members.push(("pixel_freqs_thz".into(), npy_f64(&[f.len()], f)?));
        scan_meta = sm;
    }
    let mut m = job.meta("phases+weights", job.unit_name(), n);
    m.scan = scan_meta;
    m.weights = exported_weights(job.list);
    let json = String::from_utf8(m.json_bytes()).unwrap_or_default();
    members.push(("meta".into(), npy_text(json.trim_end())?));
    write_npz(&members).map_err(|e| anyhow::anyhow!("{}: {e}", job.args.out.display()))
}

/// A computed scan and its metadata (`None` without --scan).
type Scan = (MaskScan, Option<ScanMeta>);

/// The masks of every scan point and step (one point without --scan) with the scan's
/// metadata, and the notes describing them; refuses aliased masks unless --allow-aliasing.
fn masks(job: &Job<'_>) -> anyhow::Result<(Scan, Vec<String>)> {
    let sp = job.args.shaper.as_deref().unwrap_or(Path::new(""));
    let text = pathsieve::input_text::read_text(sp)?;
    let shaper = parse_shaper(&text, sp)?;
    let phases = shaper
        .step_phases(job.list)
        .map_err(|m| anyhow::anyhow!("{m}"))?;
    let mut axes = Vec::new();
    let mut fields = Vec::new();
    for t in &job.args.scan {
        let (field, delays_fs) = parse_scan(t)?;
        let Some(subpulse) = shaper.fields.iter().position(|f| *f == field) else {
            bail!(
                "--scan {field}: the shaper file {} has no pulse for field `{field}` (pulses: {})",
                sp.display(),
                shaper.fields.join(", ")
            );
        };
        axes.push(ScanAxis {
            subpulse,
            delays_fs,
        });
        fields.push(field);
    }
    let scan = mask_scan(&shaper.spec, &axes, &phases)?;
    let mut n = job.notes.clone();
    let nonzero: Vec<bool> = shaper
        .spec
        .subpulses
        .iter()
        .map(|s| s.amplitude > 0.0)
        .collect();
    if let Some(al) = first_aliasing(&scan.freqs_thz, &scan.subpulse_delays_fs, &nonzero) {
        let msg = aliasing_text(&al, &scan, &fields, &shaper.fields);
        if !job.args.allow_aliasing {
            bail!("{msg}; use a shorter delay or finer pixels, or --allow-aliasing to write the masks anyway");
        }
        eprintln!("warning: {msg}");
        n.push(format!("ALIASED: {msg}"));
    }
    n.push(format!(
        "shaper {} (sha256 {}): sub-pulses for fields {}; pixels {}; scale {:?}; rotating frame {}",
        name_of(sp),
        sha256_hex(text.as_bytes()),
        shaper.fields.join(", "),
        scan.freqs_thz.len(),
        scan.scale,
        shaper
            .spec
            .rotating_frame_thz
            .map_or("none (lab frame)".into(), |f| format!("{f:?} THz"))
    ));
    n.push("M(omega) = scale * sum_j a_j exp(i 2pi phi_j) exp(i (omega - omega_0) tau_j); conventions in docs/shaper-masks.md".into());
    let meta = (!axes.is_empty()).then(|| ScanMeta {
        fields,
        delays_fs: scan.points_fs.clone(),
        subpulse_delays_fs: scan.subpulse_delays_fs.clone(),
    });
    Ok(((scan, meta), n))
}

/// The aliasing refusal or warning, naming the delay point, the pulse and the pixels.
fn aliasing_text(al: &Aliasing, scan: &MaskScan, scanned: &[String], pulses: &[String]) -> String {
    let point = if scanned.is_empty() {
        String::new()
    } else {
        let d: Vec<String> = scanned
            .iter()
            .zip(&scan.points_fs[al.point])
            .map(|(f, t)| format!("{f} = {t} fs"))
            .collect();
        format!("at scan point {} ({}), ", al.point, d.join(", "))
    };
    format!(
        "{point}the spectral phase of the pulse of field `{}` (delay {} fs from time zero) changes by {:.6} turn between pixels {} and {} ({} and {} THz), more than half a turn: the shaper cannot make that delay (aliasing)",
        pulses.get(al.subpulse).map_or("?", String::as_str),
        al.delay_fs,
        al.turns_per_pixel,
        al.pixel,
        al.pixel + 1,
        scan.freqs_thz[al.pixel],
        scan.freqs_thz[al.pixel + 1]
    )
}

/// The masks of one scan point as a [`MaskSet`] (for the CSV and 2-D NPY writers).
fn point_set(scan: &MaskScan, p: usize) -> MaskSet {
    MaskSet {
        freqs_thz: scan.freqs_thz.clone(),
        masks: scan.masks[p].clone(),
        scale: scan.scale,
        rotating_frame_thz: scan.rotating_frame_thz,
    }
}

/// The mask CSV (one per scan point with --scan), streamed point by point.
fn mask_csv_files<'a>(job: &Job<'_>, scan: Scan, notes: Vec<String>) -> Vec<(PathBuf, Filler<'a>)> {
    let a = job.args;
    let scan = std::rc::Rc::new(scan.0);
    let points = if a.scan.is_empty() {
        1
    } else {
        scan.masks.len()
    };
    (0..points)
        .map(|p| {
            let mut n = notes.clone();
            let path = if a.scan.is_empty() {
                a.out.clone()
            } else {
                n.push(format!(
                    "scan point {p} of {points}: sub-pulse delays from time zero {:?} fs",
                    scan.subpulse_delays_fs[p]
                ));
                a.delay_path(p, points)
            };
            let comments = job.meta("shaper masks", "turns".into(), n).csv_comments();
            let s = std::rc::Rc::clone(&scan);
            let fill = move |w: &mut dyn std::io::Write| {
                w.write_all(comments.as_bytes())?;
                write_mask_set_csv(&point_set(&s, p), w)
            };
            (path, Box::new(fill) as Filler<'a>)
        })
        .collect()
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
    let mut m = job.meta(
        "receiver phases (plain table: step, then NAME.phase, NAME.amplitude per output)",
        job.unit_name(),
        n,
    );
    m.weights = exported_weights(job.list);
    Ok(vec![(r.clone(), bytes), (sidecar_path(r), m.json_bytes())])
}
