//! `pathsieve draw`: SVG pictures — a sheet of double-sided diagrams (NMR: coherence-transfer
//! pathway diagrams) for one signature or class, the leakage chart of a cycle, and the phase
//! wheels of a cycle — each with an optional PNG beside it (`--png`, [`super::picture_out`]).
//! Files are written with `safe_write` (no overwrite without --force, never half-written).

use super::output::RejectionArgs;
use super::pathways_cmd::Selector;
use super::picture_out::{write_picture, PngArgs};
use anyhow::{bail, Context};
use clap::{Args, Subcommand};
use pathsieve::check::SnapPolicy;
use pathsieve::cycle::read_cycle;
use pathsieve::experiment_file::read_experiment;
use pathsieve::limits::MAX_LISTED_PATHWAYS;
use pathsieve::pathways::{for_each_row, Pathway, Scope};
use pathsieve::render::{diagram_svg, leakage, leakage_svg, wheels_svg};
use pathsieve::safe_write::check_targets;
use pathsieve::selection::Selection;
use std::path::PathBuf;

/// Arguments of `pathsieve draw`.
#[derive(Args, Debug)]
pub struct DrawArgs {
    #[command(subcommand)]
    picture: Picture,
}

#[derive(Subcommand, Debug)]
enum Picture {
    /// A sheet of double-sided diagrams of the signal pathways with one signature or class.
    #[command(after_help = super::help::DRAW_DIAGRAMS)]
    Diagrams {
        /// Experiment file (TOML).
        experiment: PathBuf,
        /// Signature over all fields, e.g. `-1,1,1,-1`.
        #[arg(
            long,
            value_name = "B",
            allow_hyphen_values = true,
            conflicts_with = "class"
        )]
        signature: Option<String>,
        /// Class instead: R, NR, 2Q, other, GSB, SE, ESA.
        #[arg(long, value_name = "CLASS")]
        class: Option<String>,
        /// Add each pathway's complex-conjugate partner (emission and pump-probe detection).
        #[arg(long)]
        conjugates: bool,
        /// Output SVG file (`-`: standard output).
        #[arg(long, value_name = "OUT.svg")]
        out: PathBuf,
        /// Overwrite an existing file.
        #[arg(long)]
        force: bool,
        #[command(flatten)]
        png: PngArgs,
    },
    /// |F| of every rejected term on a log axis, grouped by order, wanted terms marked.
    #[command(after_help = super::help::DRAW_LEAKAGE)]
    Leakage {
        /// Experiment file (TOML).
        experiment: PathBuf,
        /// Cycle table (TOML or CSV).
        cycle: PathBuf,
        #[command(flatten)]
        rejection: RejectionArgs,
        /// Output SVG file (`-`: standard output).
        #[arg(long, value_name = "OUT.svg")]
        out: PathBuf,
        /// Overwrite an existing file.
        #[arg(long)]
        force: bool,
        #[command(flatten)]
        png: PngArgs,
    },
    /// The 2D spectrum of one output of a `pathsieve simulate` run.
    Spectrum(super::draw_spectrum_cmd::SpectrumArgs),
    /// One phase wheel per field, with the phases it visits.
    #[command(after_help = super::help::DRAW_WHEELS)]
    Wheels {
        /// Cycle table (TOML or CSV).
        cycle: PathBuf,
        /// Output SVG file (`-`: standard output).
        #[arg(long, value_name = "OUT.svg")]
        out: PathBuf,
        /// Overwrite an existing file.
        #[arg(long)]
        force: bool,
        #[command(flatten)]
        png: PngArgs,
    },
}

/// Run the subcommand.
pub fn run(a: DrawArgs) -> anyhow::Result<u8> {
    match a.picture {
        Picture::Diagrams {
            experiment,
            signature,
            class,
            conjugates,
            out,
            force,
            png,
        } => {
            let targets = png.targets(&out)?;
            check_targets(&paths(&targets), &[&experiment], force)?;
            let exp = read_experiment(&experiment)?;
            let spec = match (&signature, &class) {
                (Some(s), None) => s.clone(),
                (None, Some(c)) => c.clone(),
                _ => bail!("give --signature B (e.g. -1,1,1,-1) or --class R|NR|2Q|GSB|SE|ESA"),
            };
            let sel = Selector::parse(&spec, &exp)?;
            let mut rows: Vec<Pathway> = Vec::new();
            let mut too_many = false;
            for_each_row(&exp, Scope::Signal, conjugates, |p| {
                if sel.keeps(p) {
                    if rows.len() as u64 >= MAX_LISTED_PATHWAYS {
                        too_many = true;
                        return;
                    }
                    rows.push(p.clone());
                }
            })?;
            if too_many {
                bail!(
                    "more than {MAX_LISTED_PATHWAYS} pathways match `{spec}`; narrow the selection"
                );
            }
            if rows.is_empty() {
                bail!(
                    "no signal pathway matches `{spec}`; list them with `pathsieve pathways {}`",
                    experiment.display()
                );
            }
            let title = format!(
                "{} — {} pathway{} with {spec}",
                exp.title,
                rows.len(),
                if rows.len() == 1 { "" } else { "s" }
            );
            let svg = diagram_svg::diagrams_svg(&exp, &rows, &title);
            let what = format!(
                "{} diagram{}",
                rows.len(),
                if rows.len() == 1 { "" } else { "s" }
            );
            write_picture(&targets, &svg, &png, force, &what)?;
        }
        Picture::Leakage {
            experiment,
            cycle,
            rejection,
            out,
            force,
            png,
        } => {
            let targets = png.targets(&out)?;
            check_targets(&paths(&targets), &[&experiment, &cycle], force)?;
            let exp = read_experiment(&experiment)?;
            let c = read_cycle(&cycle, None)?;
            let sel = Selection::new(&exp, &rejection.request())?;
            let chart =
                leakage::leakage_chart(&sel, &c, &SnapPolicy::default()).with_context(|| {
                    format!(
                        "checking {} against {}",
                        cycle.display(),
                        experiment.display()
                    )
                })?;
            let svg = leakage_svg::leakage_svg(&chart);
            write_picture(&targets, &svg, &png, force, "the leakage chart")?;
        }
        Picture::Spectrum(s) => return super::draw_spectrum_cmd::run(s),
        Picture::Wheels {
            cycle,
            out,
            force,
            png,
        } => {
            let targets = png.targets(&out)?;
            check_targets(&paths(&targets), &[&cycle], force)?;
            let c = read_cycle(&cycle, None)?;
            let title = format!(
                "{} — {} steps",
                c.meta
                    .title
                    .clone()
                    .unwrap_or_else(|| cycle.display().to_string()),
                c.len()
            );
            let svg = wheels_svg::wheels_svg(&c, &title);
            write_picture(&targets, &svg, &png, force, "the phase wheels")?;
        }
    }
    Ok(0)
}

/// The targets as borrowed paths for `check_targets`.
fn paths(targets: &[PathBuf]) -> Vec<&std::path::Path> {
    targets
        .iter()
        .map(PathBuf::as_path)
        .filter(|p| !super::stdio::is_dash(p))
        .collect()
}
