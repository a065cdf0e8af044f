//! `pathsieve combine EXPERIMENT CYCLE DATA`: applies a cycle's weights to measured per-step
//! data and writes one array per output with a metadata sidecar. Exit 0 for a clean cycle,
//! 1 when the cycle leaks (outputs are still written, with a warning), 2 on usage or input
//! errors.

use anyhow::Context;
use clap::Args;
use pathsieve::check::{check, CheckOptions};
use pathsieve::combine::data_file::{
    output_files, output_paths, read_step_data, CombineMeta, OutputFormat, SCHEMA_VERSION,
};
use pathsieve::combine::{combine_cycle, order_from_export, CombineRequest, Normalise};
use pathsieve::cycle::read_cycle;
use pathsieve::experiment_file::read_experiment;
use pathsieve::export::meta::{sha256_hex, sidecar_path};
use pathsieve::export::phase_import::read_phase_list_file;
use pathsieve::render::combine_text::combine_notes;
use pathsieve::safe_write::write_many_atomic;
use pathsieve::selection::{Selection, SelectionRequest};
use std::path::{Path, PathBuf};

/// Arguments of `pathsieve combine`.
#[derive(Args, Debug)]
#[command(
    after_help = "Example:\n  pathsieve combine scheme.toml cycle.toml scan.npy --export phases.csv --out combined.npz\n\n\
Output: .npy (one file per output, NAME.OUTPUT.npy), .npz (one archive) or .csv/.tsv (1-D \
outputs), plus NAME.meta.json. C = s * sum_m w_m S_m with F(b) = sum_m w_m exp(+i 2 pi b.phi_m); \
s = 1/F(t) unless --as-written (docs/combine.md).\n\
A file argument `-` reads standard input (one input per command).\n\
Exit codes: 0 combined with a clean cycle, 1 combined but the cycle leaks, 2 usage or input error, \
130 interrupted (nothing written)."
)]
pub struct CombineArgs {
    /// Experiment file (TOML).
    experiment: PathBuf,
    /// Cycle table (TOML cycle file or CSV table).
    cycle: PathBuf,
    /// Measured data per step: .npy, .npz, .csv or .tsv.
    data: PathBuf,
    /// Output path: .npy (one file per output), .npz or .csv/.tsv (1-D outputs).
    #[arg(long, value_name = "PATH")]
    out: PathBuf,
    /// The phase list the acquisition ran (as `pathsieve export` wrote it): its step order
    /// (designed or drift) is read from its metadata and every row is checked against the cycle.
    #[arg(long, value_name = "PHASES")]
    export: Option<PathBuf>,
    /// The data axis that runs over the steps (0 = first).
    #[arg(long, value_name = "K", default_value_t = 0)]
    step_axis: usize,
    /// The array of an NPZ data file to use (needed when it holds several).
    #[arg(long, value_name = "NAME")]
    array: Option<String>,
    /// Apply the weights as written, without dividing by F(t) of the kept terms.
    #[arg(long)]
    as_written: bool,
    /// Print the metadata as JSON on stdout.
    #[arg(long)]
    json: bool,
    /// Overwrite existing files.
    #[arg(long)]
    force: bool,
}

fn name_of(p: &Path) -> String {
    p.file_name().map_or_else(
        || p.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

/// Run the subcommand.
pub fn run(a: CombineArgs) -> anyhow::Result<u8> {
    if super::stdio::is_dash(&a.out) {
        anyhow::bail!("--out -: combine writes its outputs with a metadata sidecar (NAME.meta.json), more than standard output can hold; give a file name such as combined.npz");
    }
    super::stdio::check_one_stdin(&[
        Some(&a.experiment),
        Some(&a.cycle),
        Some(&a.data),
        a.export.as_deref(),
    ])?;
    let format = OutputFormat::from_path(&a.out).map_err(|m| anyhow::anyhow!("--out: {m}"))?;
    // The output and its sidecar are checked before anything is read; every file the command
    // writes (one per output for .npy) once the output names are known from the cycle and the
    // experiment, before the check, the data and the combination.
    let side = sidecar_path(&a.out.with_extension("npy"));
    let mut inputs = vec![a.experiment.as_path(), a.cycle.as_path(), a.data.as_path()];
    inputs.extend(a.export.as_deref());
    pathsieve::safe_write::check_targets(&[&a.out, &side], &inputs, a.force)?;
    let exp_bytes = pathsieve::input_text::read_bytes(&a.experiment)?;
    let exp = read_experiment(&a.experiment)?;
    let cycle = read_cycle(&a.cycle, None)?;
    let names: Vec<String> = if cycle.outputs.is_empty() {
        exp.wanted.iter().map(|w| w.name.clone()).collect()
    } else {
        cycle.outputs.iter().map(|o| o.name.clone()).collect()
    };
    let mut targets = output_paths(&a.out, format, &names);
    targets.push(side.clone());
    let targets: Vec<&Path> = targets.iter().map(PathBuf::as_path).collect();
    pathsieve::safe_write::check_targets(&targets, &inputs, a.force)?;
    let sel = Selection::new(&exp, &SelectionRequest::default())?;
    let report = check(&sel, &cycle, &CheckOptions::default()).with_context(|| {
        format!(
            "checking {} against {}",
            a.cycle.display(),
            a.experiment.display()
        )
    })?;
    let data = read_step_data(&a.data, a.array.as_deref())?;
    let sha = sha256_hex(&exp_bytes);
    let mut notes = Vec::new();
    let (order, step_order) = match &a.export {
        None => (None, "designed (assumed: no --export given)".to_string()),
        Some(p) => {
            let (export, meta) = read_phase_list_file(p)?;
            let order = order_from_export(&cycle, &export, &meta)
                .with_context(|| format!("{}: step order", p.display()))?;
            if meta.experiment_sha256.as_ref().is_some_and(|h| *h != sha) {
                notes.push(format!(
                    "{} was exported for a different version of the experiment file (SHA-256 differs); its phases match the cycle",
                    name_of(p)
                ));
            }
            let label = if meta.step_order.is_empty() {
                "designed".into()
            } else {
                meta.step_order.clone()
            };
            (Some(order), label)
        }
    };
    let req = CombineRequest {
        step_axis: a.step_axis,
        order,
        normalise: if a.as_written {
            Normalise::AsWritten
        } else {
            Normalise::KeptAmplitude
        },
    };
    let combined = combine_cycle(&sel, &cycle, &data, &req)
        .with_context(|| format!("combining {}", a.data.display()))?;
    let (mut files, stored_as) =
        output_files(&combined, &a.out, format).map_err(|m| anyhow::anyhow!("--out: {m}"))?;
    notes.extend(combine_notes(&combined, &exp.field_names()));
    notes.push(format!(
        "exact check of the cycle: {} through order {}",
        if report.clean {
            "clean"
        } else {
            "LEAKS (run `pathsieve check`)"
        },
        report.order
    ));
    let meta = CombineMeta {
        schema_version: SCHEMA_VERSION,
        tool: "pathsieve".into(),
        version: env!("CARGO_PKG_VERSION").into(),
        content: "combined outputs".into(),
        convention: "C_o = s_o * sum_m w_om S_m; F_o(b) = sum_m w_om exp(+i 2 pi b.phi_m)".into(),
        experiment: Some(name_of(&a.experiment)),
        experiment_sha256: Some(sha),
        cycle: Some(name_of(&a.cycle)),
        data: Some(name_of(&a.data)),
        export: a.export.as_deref().map(name_of),
        step_order,
        fields: exp.field_names(),
        combined,
        stored_as,
        notes,
    };
    files.push((side, meta.json_bytes()));
    write_many_atomic(&files, a.force)?;
    if a.json {
        crate::cli::output::print(&String::from_utf8_lossy(&meta.json_bytes()))?;
    } else {
        let names: Vec<String> = files.iter().map(|(p, _)| p.display().to_string()).collect();
        eprintln!("wrote {}", names.join(", "));
        for n in &meta.notes {
            eprintln!("note: {n}");
        }
    }
    if !report.clean {
        eprintln!("warning: the cycle leaks (exact check); the outputs hold leaked terms");
        return Ok(1);
    }
    Ok(0)
}
