//! `pathsieve export`: writes a cycle as phase lists (CSV with `#` metadata lines, plain
//! CSV/TSV with a sidecar, JSON, NPY, one NPZ with everything) or shaper masks (CSV, NPY),
//! with metadata, all files at once or none (`safe_write`); `--out -` streams a single-file
//! format to stdout. The bytes of each file come from [`super::export_files`]. Exit 0 on
//! success, 2 on any usage, input or write error.

use super::export_files::{build, Built, Job};
use super::stdio::{check_one_stdin, split_stdout, write_outputs};
use anyhow::{bail, Context};
use clap::{Args, ValueEnum};
use pathsieve::cycle::read_cycle;
use pathsieve::experiment_file::parse_experiment;
use pathsieve::export::meta::sidecar_path;
use pathsieve::export::phase_list::{parse_unit_spec, ExportUnit};
use pathsieve::export::plan::{plan_export, ExportPlan, RowOrder};
use pathsieve::safe_write::check_targets;
use pathsieve::selection::{Selection, SelectionRequest};
use std::path::{Path, PathBuf};

/// Output format of `pathsieve export`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Phase list as CSV (one row per step) with `# key: value` metadata lines.
    Csv,
    /// Phase list as a plain CSV: one header row, numbers only; metadata in NAME.csv.meta.json.
    PlainCsv,
    /// Phase list as a plain tab-separated table; metadata in NAME.tsv.meta.json.
    PlainTsv,
    /// Phases and weights as one JSON document.
    Json,
    /// Phases as a NumPy array, metadata in NAME.meta.json.
    Npy,
    /// One NumPy archive: phases, weights, metadata (JSON string `meta`) and, with --shaper,
    /// masks (steps x pixels) and pixel frequencies in THz.
    Npz,
    /// Shaper masks (amplitude and phase per pixel per step) as CSV.
    MaskCsv,
    /// Shaper masks as a complex128 NumPy array (steps x pixels), metadata in NAME.meta.json.
    MaskNpy,
}

/// Step order of the exported rows.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Order {
    /// As in the cycle file.
    Designed,
    /// Reordered against slow linear drift (first moment of the cancelled low-order backgrounds).
    Drift,
}

/// Arguments of `pathsieve export`.
#[derive(Args, Debug)]
pub struct ExportArgs {
    /// Experiment file (TOML); its SHA-256 goes into the metadata. `-` reads stdin.
    pub experiment: PathBuf,
    /// Cycle table (TOML cycle file, CSV table, or any format `check` reads). `-` reads stdin.
    pub cycle: PathBuf,
    /// Output format.
    #[arg(long, value_enum)]
    pub format: Format,
    /// Phase unit: turns, deg, rad, index (grid indices on the cycle's grid) or index:M
    /// (indices on an M-step grid).
    #[arg(long, value_name = "UNIT", default_value = "turns")]
    pub unit: String,
    /// Grid (steps per turn) for --unit index (default: the lcm of the cycle's grid); same as
    /// --unit index:M.
    #[arg(long, value_name = "M")]
    pub grid: Option<u64>,
    /// Output file; `-` writes stdout (csv, json and mask-csv: the formats of one file).
    #[arg(long, value_name = "PATH")]
    pub out: PathBuf,
    /// With plain-csv/plain-tsv: one single-column file per field, OUT's name with the field
    /// inserted (phases.csv -> phases.F1.csv, ...), instead of one table.
    #[arg(long)]
    pub per_field: bool,
    /// Also write the weights: NPY (complex128, steps x outputs) if PATH ends in .npy; else a
    /// CSV (plain with a sidecar for the plain formats). `-` writes stdout.
    #[arg(long, value_name = "PATH")]
    pub weights: Option<PathBuf>,
    /// Also write the receiver/LO phase table: per step and output the receiver phase (in
    /// --unit) and relative amplitude with w_m = amplitude exp(-2 pi i phase) / N; plain
    /// CSV (TSV for .tsv) with a sidecar.
    #[arg(long, value_name = "PATH")]
    pub receiver: Option<PathBuf>,
    /// Step order: as designed, or drift-robust.
    #[arg(long, value_enum, default_value = "designed")]
    pub order: Order,
    /// Shaper description (TOML) for mask-csv, mask-npy and npz (docs/export-formats.md).
    #[arg(long, value_name = "shaper.toml")]
    pub shaper: Option<PathBuf>,
    /// Scan a shaper pulse's delay, FIELD=DELAYS in fs (START:STEP:STOP or a list a,b,c): the
    /// delay after the pulse before it in the shaper file (t1, t2, ...; later pulses move with
    /// it); repeat for a second pulse. Masks become delays x steps x pixels (mask-csv: one
    /// file per delay, OUT.delayK.csv).
    #[arg(long, value_name = "FIELD=DELAYS")]
    pub scan: Vec<String>,
    /// Write masks whose spectral phase changes by more than half a turn between adjacent
    /// pixels, with a warning, instead of refusing them.
    #[arg(long)]
    pub allow_aliasing: bool,
    /// Overwrite existing files.
    #[arg(long)]
    pub force: bool,
}

/// One `--scan FIELD=DELAYS`, parsed.
pub fn parse_scan(text: &str) -> anyhow::Result<(String, Vec<f64>)> {
    let Some((f, d)) = text.split_once('=') else {
        bail!("--scan `{text}`: write FIELD=DELAYS, e.g. --scan 2=0:10:500 (fs)");
    };
    let delays = pathsieve::simulate::grid::parse_delays(d, 1.0)
        .map_err(|m| anyhow::anyhow!("--scan {}: {m}", f.trim()))?;
    Ok((f.trim().to_string(), delays))
}

impl ExportArgs {
    /// The number of scan points (1 without --scan; saturating, refused above the limit).
    pub fn scan_points(&self) -> usize {
        self.scan
            .iter()
            .filter_map(|t| parse_scan(t).ok())
            .map(|(_, d)| d.len())
            .fold(1usize, usize::saturating_mul)
    }

    /// The mask CSV of scan point `p` of `points` (`OUT.delayK.csv`, K zero-padded).
    pub fn delay_path(&self, p: usize, points: usize) -> PathBuf {
        let width = (points.max(1) - 1).to_string().len();
        let (stem, ext) = stem_and_ext(&self.out);
        self.out
            .with_file_name(format!("{stem}.delay{p:0width$}.{ext}"))
    }
}

impl ExportArgs {
    fn is_plain(&self) -> bool {
        matches!(self.format, Format::PlainCsv | Format::PlainTsv)
    }

    /// The per-field file of `field`: OUT's stem, the field, OUT's extension.
    pub fn field_path(&self, field: &str) -> PathBuf {
        let (stem, ext) = stem_and_ext(&self.out);
        let safe: String = field
            .chars()
            .map(|c| {
                if c.is_alphanumeric() || c == '-' || c == '_' {
                    c
                } else {
                    '_'
                }
            })
            .collect();
        self.out.with_file_name(format!("{stem}.{safe}.{ext}"))
    }
}

/// Every file this export will write, known from the arguments (and, for --per-field, the
/// experiment's field names; none before the experiment is read).
fn planned_outputs(a: &ExportArgs, fields: &[String]) -> Vec<PathBuf> {
    let mut v = Vec::new();
    if a.per_field {
        v.extend(fields.iter().map(|f| a.field_path(f)));
        v.push(sidecar_path(&a.out));
    } else if a.format == Format::MaskCsv && !a.scan.is_empty() {
        let points = a.scan_points();
        v.extend((0..points).map(|p| a.delay_path(p, points)));
    } else {
        v.push(a.out.clone());
        if matches!(a.format, Format::Npy | Format::MaskNpy) || a.is_plain() {
            v.push(sidecar_path(&a.out));
        }
    }
    if let Some(w) = &a.weights {
        v.push(w.clone());
        if a.is_plain() || w.extension().is_some_and(|e| e.eq_ignore_ascii_case("npy")) {
            v.push(sidecar_path(w));
        }
    }
    if let Some(r) = &a.receiver {
        v.push(r.clone());
        v.push(sidecar_path(r));
    }
    v
}

/// Usage errors found from the arguments alone.
fn validate(a: &ExportArgs) -> anyhow::Result<()> {
    if a.per_field && super::stdio::is_dash(&a.out) {
        bail!("--per-field writes one file per field; give --out a file name such as phases.csv, not `-`");
    }
    let is_mask = matches!(a.format, Format::MaskCsv | Format::MaskNpy);
    if is_mask && a.shaper.is_none() {
        bail!("--format mask-csv/mask-npy needs --shaper shaper.toml (docs/export-formats.md)");
    }
    if !is_mask && a.format != Format::Npz && a.shaper.is_some() {
        bail!("--shaper goes with --format mask-csv, mask-npy or npz");
    }
    if a.per_field && !a.is_plain() {
        bail!("--per-field goes with --format plain-csv or plain-tsv");
    }
    if !a.scan.is_empty() && a.shaper.is_none() {
        bail!("--scan goes with a mask export: --format mask-csv, mask-npy or npz with --shaper");
    }
    if !a.scan.is_empty() && a.format == Format::MaskCsv && super::stdio::is_dash(&a.out) {
        bail!("--scan with mask-csv writes one file per delay; give --out a file name, not `-`");
    }
    for t in &a.scan {
        parse_scan(t)?;
    }
    // Before any path is planned: every point needs at least one mask of one pixel.
    let limit = pathsieve::export::mask::MAX_MASK_VALUES;
    if a.scan_points() > limit {
        bail!(
            "--scan: {} delay points exceed the limit of {limit} mask values; scan fewer delays",
            a.scan_points()
        );
    }
    check_one_stdin(&[Some(&a.experiment), Some(&a.cycle), a.shaper.as_deref()])
}

/// Run the subcommand.
pub fn run(a: ExportArgs) -> anyhow::Result<u8> {
    let (unit, unit_grid) = parse_unit_spec(&a.unit).map_err(|m| anyhow::anyhow!("--unit: {m}"))?;
    let index_grid = match (unit_grid, a.grid) {
        (Some(m), Some(g)) if m != g => {
            bail!("--unit index:{m} and --grid {g} disagree; give the grid once")
        }
        (m, g) => m.or(g),
    };
    validate(&a)?;
    // Every output path is checked before any input is read or anything computed; the
    // per-field files, named after the experiment's fields, right after it is read.
    let mut inputs = vec![a.experiment.as_path(), a.cycle.as_path()];
    inputs.extend(a.shaper.as_deref());
    let check_all = |fields: &[String]| -> anyhow::Result<()> {
        let files_only = split_stdout(&planned_outputs(&a, fields))?;
        let targets: Vec<&Path> = files_only.iter().map(PathBuf::as_path).collect();
        Ok(check_targets(&targets, &inputs, a.force)?)
    };
    check_all(&[])?;
    let exp_bytes = pathsieve::input_text::read_bytes(&a.experiment)?;
    let exp_text = String::from_utf8_lossy(&exp_bytes).into_owned();
    let exp = parse_experiment(&exp_text, &a.experiment)?;
    if a.per_field {
        check_all(&exp.field_names())?;
    }
    let cycle = read_cycle(&a.cycle, None)?;
    let sel = Selection::new(&exp, &SelectionRequest::default())?;
    let row_order = match a.order {
        Order::Designed => RowOrder::Designed,
        Order::Drift => RowOrder::Drift,
    };
    let ExportPlan {
        list,
        report,
        notes,
    } = plan_export(&sel, &cycle, row_order).with_context(|| {
        format!(
            "checking {} against {}",
            a.cycle.display(),
            a.experiment.display()
        )
    })?;
    let grid = match unit {
        ExportUnit::Index => list.index_grid(index_grid)?,
        _ => {
            if a.grid.is_some() {
                bail!("--grid goes with --unit index");
            }
            0
        }
    };
    let job = Job {
        args: &a,
        exp_bytes: &exp_bytes,
        cycle: &cycle,
        list: &list,
        notes,
        unit,
        grid,
        row_order,
    };
    let Built { files, mask_csv } = build(&job)?;
    let steps = list.len();
    let names = write_outputs(files, mask_csv, a.force)?;
    eprintln!("wrote {} ({steps} steps)", names.join(", "));
    if !report.clean {
        eprintln!("warning: the cycle leaks (exact check); run `pathsieve check` for details");
    }
    Ok(0)
}

/// The stem of an output path and its extension (`csv` when it has none), for the names of the
/// files derived from it.
fn stem_and_ext(out: &Path) -> (String, String) {
    let stem = out
        .file_stem()
        .map_or_else(String::new, |s| s.to_string_lossy().into_owned());
    let ext = out
        .extension()
        .map_or_else(|| "csv".to_string(), |e| e.to_string_lossy().into_owned());
    (stem, ext)
}
