//! `pathsieve export`: writes a cycle as phase lists (CSV, JSON, NPY) or shaper masks (CSV,
//! NPY) with metadata, all files at once or none (`safe_write`). Exit 0 on success, 2 on any
//! usage, input or write error.

use anyhow::{bail, Context};
use clap::{Args, ValueEnum};
use pathsieve::cycle::read_cycle;
use pathsieve::experiment_file::read_experiment;
use pathsieve::export::mask::{mask_set_npy, masks_for_cycle, write_mask_set_csv};
use pathsieve::export::meta::{sha256_hex, sidecar_path, ExportMeta};
use pathsieve::export::phase_formats::{
    exported_weights, list_json, phases_csv, phases_npy, weights_csv, weights_npy,
};
use pathsieve::export::phase_list::{parse_unit_spec, ExportUnit, PhaseList};
use pathsieve::export::plan::{plan_export, ExportPlan, RowOrder};
use pathsieve::export::shaper::parse_shaper;
use pathsieve::safe_write::{check_targets, write_set_atomic, Content};
use pathsieve::selection::{Selection, SelectionRequest};
use std::path::{Path, PathBuf};

/// Output format of `pathsieve export`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Phase list as CSV (one row per step).
    Csv,
    /// Phases and weights as one JSON document.
    Json,
    /// Phases as a NumPy array, metadata in NAME.meta.json.
    Npy,
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
    /// Experiment file (TOML); its SHA-256 goes into the metadata.
    experiment: PathBuf,
    /// Cycle table (TOML cycle file or CSV table, docs/cycle-format.md).
    cycle: PathBuf,
    /// Output format.
    #[arg(long, value_enum)]
    format: Format,
    /// Phase unit of phase lists: turns, deg, rad, index (grid indices on the cycle's grid) or
    /// index:M (indices on an M-step grid).
    #[arg(long, value_name = "UNIT", default_value = "turns")]
    unit: String,
    /// Grid (steps per turn) for --unit index (default: the lcm of the cycle's grid); same as
    /// --unit index:M.
    #[arg(long, value_name = "M")]
    grid: Option<u64>,
    /// Output file.
    #[arg(long, value_name = "PATH")]
    out: PathBuf,
    /// Also write the weights: NPY (complex128, steps x outputs) if PATH ends in .npy, else CSV.
    #[arg(long, value_name = "PATH")]
    weights: Option<PathBuf>,
    /// Step order: as designed, or drift-robust.
    #[arg(long, value_enum, default_value = "designed")]
    order: Order,
    /// Shaper description (TOML) for mask-csv and mask-npy (docs/export-formats.md).
    #[arg(long, value_name = "shaper.toml")]
    shaper: Option<PathBuf>,
    /// Overwrite existing files.
    #[arg(long)]
    force: bool,
}

/// Every file this export will write, known from the arguments alone.
fn planned_outputs(a: &ExportArgs) -> Vec<PathBuf> {
    let mut v = vec![a.out.clone()];
    if matches!(a.format, Format::Npy | Format::MaskNpy) {
        v.push(sidecar_path(&a.out));
    }
    if let Some(w) = &a.weights {
        v.push(w.clone());
        if w.extension().is_some_and(|e| e.eq_ignore_ascii_case("npy")) {
            v.push(sidecar_path(w));
        }
    }
    v
}

fn name_of(p: &Path) -> String {
    p.file_name().map_or_else(
        || p.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
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
    let is_mask = matches!(a.format, Format::MaskCsv | Format::MaskNpy);
    if is_mask && a.shaper.is_none() {
        bail!("--format mask-csv/mask-npy needs --shaper shaper.toml (docs/export-formats.md)");
    }
    if !is_mask && a.shaper.is_some() {
        bail!("--shaper goes with --format mask-csv or mask-npy");
    }
    // Every output path is checked before any input is read or anything computed.
    let outputs = planned_outputs(&a);
    let targets: Vec<&Path> = outputs.iter().map(PathBuf::as_path).collect();
    let mut inputs = vec![a.experiment.as_path(), a.cycle.as_path()];
    inputs.extend(a.shaper.as_deref());
    check_targets(&targets, &inputs, a.force)?;
    let exp_bytes = pathsieve::input_text::read_bytes(&a.experiment)?;
    let exp = read_experiment(&a.experiment)?;
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
    let cells = if is_mask {
        Vec::new()
    } else {
        list.cells(unit, grid)?
    };
    let meta_for = |content: &str, unit_name: String, notes: Vec<String>| ExportMeta {
        tool: "pathsieve".into(),
        version: env!("CARGO_PKG_VERSION").into(),
        content: content.into(),
        experiment: Some(name_of(&a.experiment)),
        experiment_sha256: Some(sha256_hex(&exp_bytes)),
        cycle: Some(name_of(&a.cycle)),
        title: cycle.meta.title.clone(),
        fields: list.fields.clone(),
        outputs: list.outputs.clone(),
        unit: unit_name,
        grid: list.grid.clone(),
        steps: list.len(),
        step_order: row_order.name().into(),
        source_steps: list.source_steps.clone(),
        notes,
        weights: Vec::new(),
    };
    let unit_name = PhaseList::unit_name(unit, grid);
    let mut files: Vec<(PathBuf, Vec<u8>)> = Vec::new();
    let mut mask_csv = None;
    match a.format {
        Format::Csv => {
            let m = meta_for("phases", unit_name.clone(), notes.clone());
            files.push((a.out.clone(), phases_csv(&list, &cells, &m)));
        }
        Format::Json => {
            let m = meta_for("phases+weights", unit_name.clone(), notes.clone());
            files.push((a.out.clone(), list_json(&list, &cells, &m)));
        }
        Format::Npy => {
            let mut n = notes.clone();
            n.push(format!(
                "{} holds the phases, shape (steps, fields), {}; NPY has no metadata slot, so this sidecar carries it",
                name_of(&a.out),
                if unit == ExportUnit::Index { "int64 grid indices" } else { "float64" }
            ));
            let mut m = meta_for("phases", unit_name.clone(), n);
            m.weights = exported_weights(&list);
            files.push((a.out.clone(), phases_npy(&cells)?));
            files.push((sidecar_path(&a.out), m.json_bytes()));
        }
        Format::MaskCsv | Format::MaskNpy => {
            let sp = a.shaper.as_deref().unwrap_or(Path::new(""));
            let text = pathsieve::input_text::read_text(sp)?;
            let shaper = parse_shaper(&text, sp)?;
            let phases = shaper
                .step_phases(&list)
                .map_err(|m| anyhow::anyhow!("{m}"))?;
            let set = masks_for_cycle(&shaper.spec, &phases)?;
            let mut n = notes.clone();
            n.push(format!(
                "shaper {} (sha256 {}): sub-pulses for fields {}; pixels {}; scale {:?}; rotating frame {}",
                name_of(sp),
                sha256_hex(text.as_bytes()),
                shaper.fields.join(", "),
                set.freqs_thz.len(),
                set.scale,
                set.rotating_frame_thz.map_or("none (lab frame)".into(), |f| format!("{f:?} THz"))
            ));
            n.push("M(omega) = scale * sum_j a_j exp(i 2pi phi_j) exp(i (omega - omega_0) tau_j); conventions in docs/shaper-masks.md".into());
            if a.format == Format::MaskCsv {
                let m = meta_for("shaper masks", "turns".into(), n);
                // Streamed into the temporary file: at the size limit the text is ~1.6 GB.
                mask_csv = Some((m.csv_comments(), set));
            } else {
                n.push(format!(
                    "{} holds the masks, complex128, shape (steps, pixels); pixel frequencies in THz: {}",
                    name_of(&a.out),
                    set.freqs_thz.iter().map(|f| format!("{f:?}")).collect::<Vec<_>>().join(" ")
                ));
                let m = meta_for("shaper masks", "turns".into(), n);
                files.push((a.out.clone(), mask_set_npy(&set)?));
                files.push((sidecar_path(&a.out), m.json_bytes()));
            }
        }
    }
    if let Some(w) = &a.weights {
        if list.outputs.is_empty() {
            bail!("--weights: the cycle has no outputs to write weights for");
        }
        let is_npy = w.extension().is_some_and(|e| e.eq_ignore_ascii_case("npy"));
        if is_npy {
            let mut m = meta_for("weights (complex128, steps x outputs)", unit_name, notes);
            m.weights = exported_weights(&list);
            files.push((w.clone(), weights_npy(&list)?));
            files.push((sidecar_path(w), m.json_bytes()));
        } else {
            let m = meta_for("weights", unit_name, notes);
            files.push((w.clone(), weights_csv(&list, &m)));
        }
    }
    let mut set: Vec<(PathBuf, Content)> = files
        .iter()
        .map(|(p, b)| (p.clone(), Content::Bytes(b.as_slice())))
        .collect();
    if let Some((comments, masks)) = &mask_csv {
        let fill = move |w: &mut dyn std::io::Write| {
            w.write_all(comments.as_bytes())?;
            write_mask_set_csv(masks, w)
        };
        set.insert(0, (a.out.clone(), Content::Stream(Box::new(fill))));
    }
    let names: Vec<String> = set.iter().map(|(p, _)| p.display().to_string()).collect();
    write_set_atomic(set, a.force)?;
    eprintln!("wrote {} ({} steps)", names.join(", "), list.len());
    if !report.clean {
        eprintln!("warning: the cycle leaks (exact check); run `pathsieve check` for details");
    }
    Ok(0)
}
