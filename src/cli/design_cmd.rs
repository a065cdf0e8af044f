//! `pathsieve design`: the smallest phase cycle for an experiment, with its proof of
//! minimality, a step table, a summary paragraph, JSON, and the cycle file the checker reads.

use super::design_progress::{with_progress, ProgressMode};
use super::output::{print, print_json, table, RejectionArgs};
use super::signals;
use anyhow::bail;
use clap::Args;
use pathsieve::cycle::{Cycle, Phase};
use pathsieve::design::lattice::SearchControl;
use pathsieve::design::lattice_stage::ClassLayout;
use pathsieve::design::{cycled_fields, design, DesignOptions, DesignReport};
use pathsieve::experiment_file::read_experiment;
use pathsieve::export::phase_formats::{flat_cycle, FlatCycle};
use pathsieve::export::phase_list::{parse_unit_spec, ExportUnit, PhaseList};
use pathsieve::render::{design_summary, weight_text};
use pathsieve::selection::{Selection, SelectionRequest};
use serde::Serialize;
use std::path::{Path, PathBuf};

/// Arguments of `pathsieve design`.
#[derive(Args, Debug)]
pub struct DesignArgs {
    /// Experiment file with the wanted signals as `[[signal]]` tables; `-` reads stdin.
    file: PathBuf,
    #[command(flatten)]
    rejection: RejectionArgs,
    /// Phase grid in steps per turn: one value for all fields or one per field (`8` or
    /// `1,8,8,8`); 0 = any rational phase (default).
    #[arg(long, value_name = "M[,M...]", value_delimiter = ',')]
    grid: Option<Vec<u32>>,
    /// Largest number of steps to consider.
    #[arg(long, default_value_t = 4096)]
    max_steps: u64,
    /// Largest number of distinct phases any one field may take.
    #[arg(long, value_name = "N")]
    max_phases: Option<u32>,
    /// Work limit of the search over weighted step sets on the grid (step sets through the
    /// origin, over all levels; 0 skips it). Deterministic: no clock is involved.
    #[arg(long, value_name = "STEP_SETS", default_value_t = pathsieve::design::DEFAULT_BEYOND_STEP_SETS)]
    weighted_work: u64,
    /// Largest step count the weighted search tries (at most 16).
    #[arg(long, value_name = "K", default_value_t = pathsieve::design::weighted::MAX_BEYOND_STEPS)]
    weighted_max_steps: usize,
    /// Stop the search after this many seconds and return the best design so far with its
    /// proven lower bound (as Ctrl-C does).
    #[arg(long, value_name = "SECONDS")]
    time_limit: Option<f64>,
    /// Progress display: a terminal line (auto), JSON lines on stderr once a second (json),
    /// or none.
    #[arg(long, value_enum, default_value_t = ProgressMode::Auto)]
    progress: ProgressMode,
    /// Write the cycle file here: a TOML cycle file for `.toml`, the plain table for `.csv`
    /// (both read by `pathsieve check`); `-` writes the TOML cycle file to stdout and the
    /// report to stderr.
    #[arg(long, value_name = "CYCLE.toml|CYCLE.csv")]
    out: Option<PathBuf>,
    /// Overwrite an existing output file.
    #[arg(long)]
    force: bool,
    /// Machine-readable JSON on stdout, with the cycle as a flat object (phases in --unit and
    /// as exact turns, weights as re/im and exact texts).
    #[arg(long)]
    json: bool,
    /// Unit of the phases in the JSON cycle: turns, deg, rad, index (grid indices) or index:M
    /// (indices on an M-step grid).
    #[arg(long, value_name = "UNIT", default_value = "turns")]
    unit: String,
}

#[derive(Serialize)]
struct JsonOut<'a> {
    #[serde(flatten)]
    report: &'a DesignReport,
    summary: String,
    cycle: Option<FlatCycle<'a>>,
}

/// Run the subcommand.
pub fn run(a: DesignArgs) -> anyhow::Result<u8> {
    let (unit, grid) = parse_unit_spec(&a.unit).map_err(|m| anyhow::anyhow!("--unit: {m}"))?;
    if a.max_steps == 0 {
        bail!("--max-steps must be at least 1");
    }
    if a.time_limit.is_some_and(|t| !(t > 0.0 && t.is_finite())) {
        bail!("--time-limit must be a positive number of seconds");
    }
    if a.weighted_max_steps > pathsieve::design::weighted::MAX_BEYOND_STEPS {
        bail!(
            "--weighted-max-steps {} is above the limit {}; use a smaller value",
            a.weighted_max_steps,
            pathsieve::design::weighted::MAX_BEYOND_STEPS
        );
    }
    // The output is checked before any work: kind, extension, not the input, --force.
    let to_stdout = a.out.as_deref().is_some_and(super::stdio::is_dash);
    if to_stdout && a.json {
        bail!("--out - and --json both write stdout; give --out a file name");
    }
    let out_format = match &a.out {
        Some(_) if to_stdout => Some(OutFormat::Toml),
        Some(o) => {
            let f = OutFormat::of(o)?;
            pathsieve::safe_write::check_targets(&[o], &[&a.file], a.force)?;
            Some(f)
        }
        None => None,
    };
    let exp = read_experiment(&a.file)?;
    // Limits before work: the cycled-field count is known before any set is built.
    cycled_fields(&exp)?;
    let sel = Selection::new(
        &exp,
        &SelectionRequest {
            grid: a.grid.clone(),
            ..a.rejection.request()
        },
    )?;
    let req = DesignOptions {
        max_steps: a.max_steps,
        max_phases_per_field: a.max_phases,
        beyond_step_sets: a.weighted_work,
        beyond_max_steps: a.weighted_max_steps,
    };
    let progress = if a.json && a.progress == ProgressMode::Auto {
        ProgressMode::None
    } else {
        a.progress
    };
    let report = with_progress(progress, a.time_limit, |cb| {
        signals::cooperative(true);
        let r = design(
            &sel,
            &req,
            &SearchControl {
                cancel: &signals::CANCEL,
                progress: Some(cb),
            },
        );
        signals::cooperative(false);
        r
    })?;
    let code = if report.cancelled {
        signals::EXIT_NOT_PROVEN
    } else if report.steps.is_some() {
        0
    } else {
        1
    };
    let mut cycle = report.cycle.clone();
    if let (true, Some(c)) = (report.cancelled, cycle.as_mut()) {
        c.meta
            .notes
            .insert(0, not_proven_note(report.excluded_below));
    }
    if let (Some(path), Some(cycle), Some(f)) = (&a.out, &cycle, out_format) {
        let text = match f {
            OutFormat::Toml => pathsieve::cycle::toml_format::write_cycle_toml(cycle),
            OutFormat::Csv => pathsieve::cycle::csv_format::write_cycle_csv(cycle),
        };
        if to_stdout {
            print(&text)?;
        } else {
            pathsieve::safe_write::write_atomic(path, text.as_bytes(), a.force)?;
            if !a.json {
                eprintln!("wrote the cycle to {}", path.display());
            }
        }
    }
    if a.json {
        let flat = match &cycle {
            Some(c) => {
                let list = PhaseList::from_cycle(c)?;
                let m = match unit {
                    ExportUnit::Index => list.index_grid(grid)?,
                    _ => 0,
                };
                Some((list.cells(unit, m)?, PhaseList::unit_name(unit, m), list))
            }
            None => None,
        };
        print_json(&JsonOut {
            report: &report,
            summary: design_summary::summary(&report),
            cycle: flat
                .as_ref()
                .map(|(cells, name, list)| flat_cycle(list, cells, name)),
        })?;
        return Ok(code);
    }
    let mut out = format!("{}\n\n", report.experiment);
    if let Some(cycle) = &report.cycle {
        out.push_str(&steps_table(cycle));
        out.push('\n');
        let weights = match report.layout {
            Some(ClassLayout::Separate) => "sum over the kept t of exp(-2 pi i t . phi_m)",
            _ => "exp(-2 pi i t . phi_m)",
        };
        out.push_str(&format!(
            "weights: w_m = {weights} / {} per output (exact); phases in turns;\n  {}\n",
            cycle.len(),
            weight_text::LEGEND
        ));
        if let Some(c) = &report.choice {
            out.push_str(&format!(
                "choice: {}\nstep order: {}\n\n",
                design_summary::choice_text(c),
                design_summary::step_order_text(report.step_order.as_ref())
            ));
        }
    }
    out.push_str(&design_summary::summary(&report));
    out.push('\n');
    if !report.caveats.is_empty() {
        out.push_str("\nno phase cycle can remove these:\n");
        for c in &report.caveats {
            out.push_str(&format!("  - {c}\n"));
        }
    }
    if to_stdout {
        eprint!("{out}");
    } else {
        super::output::print_report(&out)?;
    }
    Ok(code)
}

/// The mark an interrupted design's cycle file carries (first note).
fn not_proven_note(excluded_below: u64) -> String {
    format!(
        "NOT PROVEN MINIMAL: the design search was interrupted; {}, but a shorter one may exist below this cycle's length (exit code {})",
        pathsieve::render::design_summary::excluded_text(excluded_below),
        signals::EXIT_NOT_PROVEN
    )
}

/// The format `--out` asks for, from its extension.
#[derive(Clone, Copy)]
enum OutFormat {
    Toml,
    Csv,
}

impl OutFormat {
    fn of(path: &Path) -> anyhow::Result<OutFormat> {
        let ext = path.extension().and_then(|e| e.to_str()).unwrap_or("");
        match ext.to_ascii_lowercase().as_str() {
            "toml" => Ok(OutFormat::Toml),
            "csv" => Ok(OutFormat::Csv),
            _ => bail!(
                "--out {}: the cycle file must end in .toml (cycle file) or .csv (plain table); rename it, e.g. {}",
                path.display(),
                path.with_extension("toml").display()
            ),
        }
    }
}

/// The step table: one row per step, phases as exact fractions of a turn (said in the line
/// under it), weights per output in the compact notation of `weight_text`.
fn steps_table(c: &Cycle) -> String {
    let mut header: Vec<String> = vec!["step".into()];
    header.extend(c.fields.iter().cloned());
    header.extend(c.outputs.iter().map(|o| format!("w {}", o.name)));
    let h: Vec<&str> = header.iter().map(String::as_str).collect();
    let mut t = table(&h);
    let n = c.steps.len();
    let shown = |m: usize| n <= MAX_SHOWN_STEPS || m < HEAD_STEPS || m >= n - TAIL_STEPS;
    for (m, row) in c.steps.iter().enumerate() {
        if !shown(m) {
            if m == HEAD_STEPS {
                let mut gap = vec!["...".to_string()];
                gap.resize(h.len(), String::new());
                t.add_row(gap);
            }
            continue;
        }
        let mut cells = vec![(m + 1).to_string()];
        cells.extend(row.iter().map(|p| match p {
            Phase::Exact(r) => r.to_string(),
            Phase::Approx(x) => format!("{x:.6}"),
        }));
        cells.extend(
            c.outputs
                .iter()
                .map(|o| weight_text::compact_weight(&o.weights[m], c.len())),
        );
        t.add_row(cells);
    }
    if n > MAX_SHOWN_STEPS {
        let hidden = n - HEAD_STEPS - TAIL_STEPS;
        return format!(
            "{t}\n({hidden} of {n} steps not shown here; every step is in the cycle file and in --json)\n"
        );
    }
    format!("{t}\n")
}

/// Longest step table shown whole on the terminal; longer ones show their first
/// `HEAD_STEPS` and last `TAIL_STEPS` rows (the file and `--json` hold every step).
const MAX_SHOWN_STEPS: usize = 64;
const HEAD_STEPS: usize = 24;
const TAIL_STEPS: usize = 8;
