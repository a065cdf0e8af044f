//! Command-line syntax (clap) and dispatch to one module per subcommand.

mod agnostic_cmd;
mod check_cmd;
mod combine_cmd;
mod completions_cmd;
mod design_cmd;
mod design_progress;
mod draw_cmd;
mod draw_spectrum_cmd;
mod export_cmd;
mod export_files;
mod help;
mod output;
mod pathways_cmd;
mod picture_out;
pub mod signals;
mod simulate_cmd;
mod simulate_files;
mod simulate_summary;
mod stdio;

use clap::{Parser, Subcommand};

/// Pathway enumeration and exact phase-cycle design and checking for multidimensional
/// spectroscopy.
#[derive(Parser, Debug)]
#[command(
    name = "pathsieve",
    version,
    about,
    long_about = None,
    after_help = help::TOP,
    max_term_width = 80
)]
pub struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// List every Liouville pathway of an experiment with its phase signature and class.
    #[command(after_help = help::PATHWAYS)]
    Pathways(pathways_cmd::PathwaysArgs),
    /// List the agnostic rejection set: every signature a cycle must cancel through an order.
    #[command(after_help = help::AGNOSTIC)]
    Agnostic(agnostic_cmd::AgnosticArgs),
    /// Design the smallest phase cycle that keeps the wanted signals.
    #[command(after_help = help::DESIGN)]
    Design(design_cmd::DesignArgs),
    /// Check a phase-cycle table exactly: what it keeps, what leaks, first leak order.
    #[command(after_help = help::CHECK)]
    Check(check_cmd::CheckArgs),
    /// Write a cycle as phase lists (CSV, plain CSV/TSV, JSON, NPY, NPZ) or pulse-shaper masks, with metadata.
    #[command(after_help = help::EXPORT)]
    Export(export_cmd::ExportArgs),
    /// Combine measured per-step data with a cycle's weights: one array per output.
    Combine(combine_cmd::CombineArgs),
    /// Draw pictures (SVG): double-sided diagrams, a leakage chart, phase wheels.
    #[command(after_help = help::DRAW)]
    Draw(draw_cmd::DrawArgs),
    /// Print a shell completion script (bash, zsh, fish, powershell, elvish) to stdout.
    #[command(after_help = help::COMPLETIONS)]
    Completions(completions_cmd::CompletionsArgs),
    /// Print the manual page (roff) of pathsieve or one of its commands to stdout.
    #[command(after_help = help::MAN)]
    Man(completions_cmd::ManArgs),
    /// Simulate per-step data of a cycle (backgrounds, phase errors, noise), combine it, and
    /// write time-domain data, 2D spectra and pictures of the ideal and as-measured outputs.
    Simulate(simulate_cmd::SimulateArgs),
}

/// Run the parsed command; returns the exit code.
pub fn run(cli: Cli) -> anyhow::Result<u8> {
    match cli.command {
        Command::Pathways(a) => pathways_cmd::run(a),
        Command::Agnostic(a) => agnostic_cmd::run(a),
        Command::Design(a) => design_cmd::run(a),
        Command::Check(a) => check_cmd::run(a),
        Command::Export(a) => export_cmd::run(a),
        Command::Combine(a) => combine_cmd::run(a),
        Command::Draw(a) => draw_cmd::run(a),
        Command::Completions(a) => completions_cmd::run_completions(a),
        Command::Man(a) => completions_cmd::run_man(a),
        Command::Simulate(a) => simulate_cmd::run(a),
    }
}

/// True when the error is a closed output pipe (e.g. `| head`), which is not a failure.
pub fn is_broken_pipe(e: &anyhow::Error) -> bool {
    e.chain().any(|c| {
        c.downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe)
    })
}
