//! `pathsieve simulate EXPERIMENT [CYCLE]`: the response of every pathway on a delay grid
//! (impulsive limit, rotating-wave approximation; the `[dynamics]` table of the experiment),
//! and, with a cycle, the per-step data an acquisition records (backgrounds, phase errors,
//! noise) combined as `pathsieve combine` would, beside the ideal outputs. Writes the per-step
//! data, each output's time-domain data and 2D spectrum, a metadata sidecar and one picture per
//! output (ideal | as measured | leak on one colour scale). Files go through `safe_write`.

use super::check_cmd::background_args;
use super::simulate_files::{self, Layout, OutputData};
use super::simulate_summary;
use anyhow::{bail, Context};
use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};
use pathsieve::cycle::read_cycle;
use pathsieve::experiment_file::read_experiment;
use pathsieve::model::{Backgrounds, Experiment};
use pathsieve::selection::{Selection, SelectionRequest};
use pathsieve::simulate::{
    delay_names, parse_delays, parse_dynamics, simulate_cycle, simulate_response, DelayAxis,
    DelayGrid, Dynamics, EnergyUnit, PhaseErrors, Response, RunRequest,
};
use std::path::PathBuf;
use std::time::Duration;

/// Arguments of `pathsieve simulate`.
#[derive(Args, Debug)]
#[command(after_help = "Examples:\n  \
pathsieve simulate scheme.toml --delay t1=0:4:800 --delay t3=0:4:800 --out ideal.npz\n  \
pathsieve simulate scheme.toml cycle.toml --delay t1=0:4:800 --delay t3=0:4:800 \\\n      \
--background default=1e3 --phase-rms 1 --noise 0.01 --seed 7 --out run.npz --png\n\n\
Units: delays in fs (or a `ps` suffix); energies, widths, --frame and the spectrum axes in \
the [dynamics] energy_unit (cm-1, eV or THz) unless --unit; phase errors in degrees (or a \
`turn` or `rad` suffix); background sizes and --noise relative to the wanted signal's peak \
amplitude. Excitation w1 (from t1) is the vertical axis of the pictures, detection w3 (from the \
last delay) the horizontal one.\n\
Files (OUT.npz or OUT.npy): OUT.steps.npz/.npy per-step data [steps, delays...] as `pathsieve \
combine` reads them; per output NAME the time-domain data NAME.time and NAME.ideal_time, the \
spectra NAME.spectrum and NAME.ideal_spectrum [excitation, detection], the axes t1.., \
excitation, detection; OUT.meta.json; OUT.NAME.svg (and .png). docs/simulate.md.\n\
Exit codes: 0 written, 1 written but the cycle leaks (exact check of the nominal phases), 2 \
usage or input error.")]
pub struct SimulateArgs {
    /// Experiment file (TOML) with a [dynamics] table and state energies.
    experiment: PathBuf,
    /// Cycle table (TOML or CSV); without it the ideal kept signals are simulated.
    cycle: Option<PathBuf>,
    /// Output base: OUT.npz (archives) or OUT.npy (one file per array).
    #[arg(long, value_name = "OUT")]
    out: PathBuf,
    /// A delay, NAME=START:STEP:STOP (inclusive), a comma list or one value, in fs unless it
    /// ends in `ps` (e.g. t1=0:4:800, t2=0.5ps). Repeatable; middle delays default to 0.
    #[arg(long = "delay", value_name = "NAME=RANGE")]
    delays: Vec<String>,
    /// Rotating frame per quantum, in the [dynamics] energy unit (0 = lab frame): every
    /// coherence evolves at w - d frame (d its quantum number). docs/simulate.md.
    #[arg(
        long,
        value_name = "ENERGY",
        default_value_t = 0.0,
        allow_hyphen_values = true
    )]
    frame: f64,
    /// Allow delay steps that alias a frequency (the spectrum then folds into its first zone).
    #[arg(long)]
    undersample: bool,
    /// Background size, KEY=SIZE relative to the wanted signal (repeatable; over the
    /// experiment's [backgrounds]): KEY is default, unmodulated (pump-probe), scatter, pair,
    /// order-K or a signature such as (+1,-1,0,0). Only sized terms are simulated.
    #[arg(long = "background", value_name = "KEY=SIZE")]
    backgrounds: Vec<String>,
    /// Ignore the experiment's [backgrounds] table.
    #[arg(long)]
    no_backgrounds: bool,
    /// A fixed phase offset of one field, FIELD=ANGLE (degrees unless suffixed; repeatable).
    #[arg(
        long = "phase-offset",
        value_name = "FIELD=ANGLE",
        allow_hyphen_values = true
    )]
    phase_offsets: Vec<String>,
    /// RMS of independent Gaussian phase errors per step and cycled field (degrees).
    #[arg(long, value_name = "ANGLE")]
    phase_rms: Option<String>,
    /// Quantise every applied phase of a cycled field to 2^B steps per turn.
    #[arg(long, value_name = "B")]
    phase_bits: Option<u32>,
    /// Linear phase drift of the cycled fields: 0 at the first step, ANGLE at the last.
    #[arg(long, value_name = "ANGLE", allow_hyphen_values = true)]
    phase_drift: Option<String>,
    /// Gaussian noise per value (per quadrature for complex data), relative to the wanted
    /// signal's peak.
    #[arg(long, value_name = "SIGMA", default_value_t = 0.0)]
    noise: f64,
    /// Seed of the random phase errors, background phases and noise.
    #[arg(long, default_value_t = 1)]
    seed: u64,
    /// Unit of the spectrum axes: cm-1, eV or THz (default: the [dynamics] energy_unit).
    #[arg(long, value_name = "UNIT")]
    unit: Option<String>,
    /// Frequency window LO:HI of the pictures, in the axis unit (default: the transitions and
    /// their line widths).
    #[arg(long, value_name = "LO:HI")]
    window: Option<String>,
    /// The value of a middle delay at which the spectra are taken, NAME=VALUE in fs (nearest
    /// grid value; default the first).
    #[arg(long = "at", value_name = "NAME=VALUE")]
    at: Vec<String>,
    /// Zero-pad each coherence axis to at least N points (rounded up to a power of two;
    /// default: enough for about 150 frequency bins across the window, at most 2048).
    #[arg(long, value_name = "N")]
    pad: Option<usize>,
    /// Also write each picture as PNG.
    #[arg(long)]
    png: bool,
    /// Pixels per SVG unit of the PNG.
    #[arg(long, value_name = "X", default_value_t = 2.0)]
    png_scale: f32,
    /// Print the summary (the metadata) as JSON on stdout.
    #[arg(long)]
    json: bool,
    /// Overwrite existing files.
    #[arg(long)]
    force: bool,
}

/// An angle in turns: a number with an optional `deg`, `turn(s)` or `rad` suffix (degrees
/// by default).
pub(super) fn parse_angle(text: &str) -> anyhow::Result<f64> {
    let t = text.trim();
    let (num, per_turn) = if let Some(x) = t.strip_suffix("turns").or(t.strip_suffix("turn")) {
        (x, 1.0)
    } else if let Some(x) = t.strip_suffix("rad") {
        (x, std::f64::consts::TAU)
    } else if let Some(x) = t.strip_suffix("deg").or(t.strip_suffix('°')) {
        (x, 360.0)
    } else {
        (t, 360.0)
    };
    match num.trim().parse::<f64>() {
        Ok(v) if v.is_finite() && v.abs() <= 1e6 => Ok(v / per_turn),
        _ => bail!("`{text}` is not an angle; write degrees (e.g. 1.5) or add `turn` or `rad`"),
    }
}

/// The delay grid from the `--delay` options, one axis per delay of the experiment.
fn grid(names: &[String], args: &[String]) -> anyhow::Result<DelayGrid> {
    let mut given: Vec<Option<Vec<f64>>> = vec![None; names.len()];
    for a in args {
        let Some((name, spec)) = a.split_once('=') else {
            bail!(
                "--delay `{a}`: write NAME=RANGE, e.g. t1=0:4:800 (delays: {})",
                names.join(", ")
            );
        };
        let Some(k) = names.iter().position(|n| n == name.trim()) else {
            bail!(
                "--delay `{a}`: the experiment has no delay `{}`; its delays are {}",
                name.trim(),
                names.join(", ")
            );
        };
        let spec = spec.trim();
        let (spec, unit_fs) = match (spec.strip_suffix("ps"), spec.strip_suffix("fs")) {
            (Some(s), _) => (s, 1000.0),
            (None, Some(s)) => (s, 1.0),
            _ => (spec, 1.0),
        };
        let times =
            parse_delays(spec, unit_fs).map_err(|m| anyhow::anyhow!("--delay {name}: {m}"))?;
        given[k] = Some(times);
    }
    let last = names.len().saturating_sub(1);
    let mut axes = Vec::with_capacity(names.len());
    for (k, (name, times)) in names.iter().zip(given).enumerate() {
        let times_fs = match times {
            Some(t) => t,
            None if k != 0 && k != last => vec![0.0],
            None => bail!(
                "give the delay {name}, e.g. --delay {name}=0:4:800 (fs; START:STEP:STOP); the experiment's delays are {}",
                names.join(", ")
            ),
        };
        axes.push(DelayAxis {
            name: name.clone(),
            times_fs,
        });
    }
    Ok(DelayGrid { axes })
}

/// The phase errors from the options, offsets per experiment field.
fn phase_errors(a: &SimulateArgs, exp: &Experiment) -> anyhow::Result<PhaseErrors> {
    let mut offsets = vec![0.0; exp.fields.len()];
    for o in &a.phase_offsets {
        let Some((field, angle)) = o.split_once('=') else {
            bail!(
                "--phase-offset `{o}`: write FIELD=ANGLE, e.g. {}=2 (degrees)",
                exp.fields[0].name
            );
        };
        let Some(j) = exp.fields.iter().position(|f| f.name == field.trim()) else {
            bail!(
                "--phase-offset `{o}`: no field `{}`; fields: {}",
                field.trim(),
                exp.field_names().join(", ")
            );
        };
        offsets[j] = parse_angle(angle).with_context(|| format!("--phase-offset {o}"))?;
    }
    let rms = match &a.phase_rms {
        Some(t) => parse_angle(t).context("--phase-rms")?.abs(),
        None => 0.0,
    };
    if let Some(b) = a.phase_bits {
        if !(1..=32).contains(&b) {
            bail!("--phase-bits {b}: use 1..=32");
        }
    }
    let drift = match &a.phase_drift {
        Some(t) => parse_angle(t).context("--phase-drift")?,
        None => 0.0,
    };
    Ok(PhaseErrors {
        offsets: if offsets.iter().all(|&x| x == 0.0) {
            Vec::new()
        } else {
            offsets
        },
        rms,
        bits: a.phase_bits,
        drift,
    })
}

fn dynamics_of(a: &SimulateArgs, exp: &Experiment) -> anyhow::Result<Dynamics> {
    let text = pathsieve::input_text::read_text(&a.experiment)?;
    let Some(levels) = exp.levels.as_ref() else {
        bail!(
            "{}: the simulator needs a [levels] scheme with energies",
            a.experiment.display()
        );
    };
    parse_dynamics(&text, &a.experiment, levels)?.ok_or_else(|| {
        anyhow::anyhow!(
            "{}: no [dynamics] table; add one with energy_unit and dephasing, and an energy per state in [levels] (docs/experiment-format.md)",
            a.experiment.display()
        )
    })
}

fn spinner(show: bool) -> ProgressBar {
    if !show {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::new_spinner();
    bar.set_style(ProgressStyle::with_template("{spinner} {elapsed} {msg}").expect("template"));
    bar.enable_steady_tick(Duration::from_millis(200));
    bar
}

/// The middle-delay indices of the spectra, their label, and the window; `None` when the grid
/// gives no spectrum.
/// Middle-delay indices, their label and the window of the spectra.
type SpectrumParts = (Vec<usize>, String, [f64; 2]);

fn spectrum_parts(
    a: &SimulateArgs,
    exp: &Experiment,
    dyn_: &Dynamics,
    grid: &DelayGrid,
    unit: EnergyUnit,
) -> anyhow::Result<Option<SpectrumParts>> {
    if !simulate_files::spectra_possible(grid) {
        if !a.at.is_empty() || a.window.is_some() {
            bail!("--at and --window need a spectrum: give t1 and the last delay as ranges START:STEP:STOP");
        }
        return Ok(None);
    }
    let n = grid.axes.len();
    let mut fixed = vec![0usize; n - 2];
    for spec in &a.at {
        let Some((name, value)) = spec.split_once('=') else {
            bail!("--at `{spec}`: write NAME=VALUE, e.g. t2=300 (fs)");
        };
        let Some(k) = (1..n - 1).find(|&k| grid.axes[k].name == name.trim()) else {
            let middle: Vec<&str> = grid.axes[1..n - 1]
                .iter()
                .map(|x| x.name.as_str())
                .collect();
            bail!(
                "--at `{spec}`: `{}` is not a middle delay; middle delays: {}",
                name.trim(),
                middle.join(", ")
            );
        };
        let v: f64 = value
            .trim()
            .parse()
            .ok()
            .filter(|x: &f64| x.is_finite())
            .ok_or_else(|| anyhow::anyhow!("--at `{spec}`: `{value}` is not a delay in fs"))?;
        let t = &grid.axes[k].times_fs;
        fixed[k - 1] = (0..t.len())
            .min_by(|&i, &j| (t[i] - v).abs().total_cmp(&(t[j] - v).abs()))
            .unwrap_or(0);
    }
    let at_label = if n == 3 {
        format!(
            "{} = {} fs",
            grid.axes[1].name, grid.axes[1].times_fs[fixed[0]]
        )
    } else {
        (1..n - 1)
            .map(|k| {
                format!(
                    "{} = {} fs",
                    grid.axes[k].name,
                    grid.axes[k].times_fs[fixed[k - 1]]
                )
            })
            .collect::<Vec<_>>()
            .join(", ")
    };
    let window = match &a.window {
        Some(w) => {
            let parsed = w.split_once(':').and_then(|(lo, hi)| {
                Some((
                    lo.trim().parse::<f64>().ok()?,
                    hi.trim().parse::<f64>().ok()?,
                ))
            });
            match parsed {
                Some((lo, hi)) if lo.is_finite() && hi.is_finite() && hi > lo => [lo, hi],
                _ => bail!(
                    "--window `{w}`: write LO:HI with LO < HI in {}, e.g. 1900:2100",
                    unit.label()
                ),
            }
        }
        None => simulate_files::default_window(exp, dyn_, unit).ok_or_else(|| {
            anyhow::anyhow!(
                "the level scheme has no transitions to place the window; give --window LO:HI"
            )
        })?,
    };
    Ok(Some((fixed, at_label, window)))
}

/// Most points per coherence axis the automatic zero padding uses (a spectrum's size limit).
const MAX_AUTO_PAD: f64 = 2048.0;

/// Points per coherence axis for about 150 frequency bins across the window (a power of two,
/// at most [`MAX_AUTO_PAD`]), and the bins across the window actually reached when that cap
/// binds.
fn auto_pad(grid: &DelayGrid, window: [f64; 2], unit: EnergyUnit) -> (usize, Option<f64>) {
    let bin = unit.to_angular((window[1] - window[0]) / 150.0);
    let n = grid.axes.len();
    let need = [&grid.axes[0], &grid.axes[n - 1]]
        .iter()
        .filter_map(|a| a.step())
        .map(|dt| (std::f64::consts::TAU / (dt * bin)).ceil())
        .fold(1.0, f64::max);
    let capped = (need > MAX_AUTO_PAD).then(|| 150.0 * MAX_AUTO_PAD / need);
    (
        (need.min(MAX_AUTO_PAD) as usize).next_power_of_two(),
        capped,
    )
}

fn check_numbers(a: &SimulateArgs) -> anyhow::Result<()> {
    if !(a.noise.is_finite() && a.noise >= 0.0) {
        bail!(
            "--noise {}: give a standard deviation >= 0 relative to the wanted signal",
            a.noise
        );
    }
    if !a.frame.is_finite() {
        bail!("--frame {}: give a finite energy", a.frame);
    }
    if !(a.png_scale.is_finite() && a.png_scale > 0.0 && a.png_scale <= 16.0) {
        bail!("--png-scale {}: use a number in (0, 16]", a.png_scale);
    }
    Ok(())
}

/// Everything read and parsed before the targets are checked.
struct Prepared {
    exp: Experiment,
    dyn_: Dynamics,
    names: Vec<String>,
    grid: DelayGrid,
    unit: EnergyUnit,
    sel: Selection,
    cycle: Option<pathsieve::cycle::Cycle>,
    rules: Backgrounds,
    errors: PhaseErrors,
}

fn prepare(a: &SimulateArgs) -> anyhow::Result<Prepared> {
    check_numbers(a)?;
    let exp = read_experiment(&a.experiment)?;
    let dyn_ = dynamics_of(a, &exp)?;
    let names = delay_names(&exp)?;
    let grid = grid(&names, &a.delays)?;
    let unit = match &a.unit {
        Some(u) => EnergyUnit::parse(u)
            .ok_or_else(|| anyhow::anyhow!("--unit `{u}`: use cm-1, eV or THz"))?,
        None => dyn_.energy_unit,
    };
    let sel = Selection::new(&exp, &SelectionRequest::default())?;
    let cycle = match &a.cycle {
        Some(p) => Some(read_cycle(p, None)?),
        None => None,
    };
    let rules = if a.no_backgrounds {
        Backgrounds::default()
    } else {
        exp.backgrounds.clone()
    }
    .overlaid(&background_args(&a.backgrounds, &exp)?);
    let errors = phase_errors(a, &exp)?;
    if cycle.is_none()
        && (!a.backgrounds.is_empty() || a.noise > 0.0 || errors != PhaseErrors::default())
    {
        bail!("backgrounds, phase errors and noise belong to an acquisition: give a CYCLE as well");
    }
    Ok(Prepared {
        exp,
        dyn_,
        names,
        grid,
        unit,
        sel,
        cycle,
        rules,
        errors,
    })
}

/// Every target, checked before any work.
fn check_files(a: &SimulateArgs, p: &Prepared, layout: &Layout) -> anyhow::Result<()> {
    let output_names: Vec<String> = match &p.cycle {
        Some(c) => c.outputs.iter().map(|o| o.name.clone()).collect(),
        None => p.sel.outputs.iter().map(|o| o.name.clone()).collect(),
    };
    let plan = simulate_files::plan(
        layout,
        &output_names,
        &p.names,
        &p.grid,
        p.cycle.is_some(),
        a.png,
    );
    let mut inputs = vec![a.experiment.as_path()];
    inputs.extend(a.cycle.as_deref());
    let targets: Vec<&std::path::Path> = plan.iter().map(|p| p.as_path()).collect();
    Ok(pathsieve::safe_write::check_targets(
        &targets, &inputs, a.force,
    )?)
}

/// The outputs (ideal only, or an acquisition of the cycle) and whether the cycle leaks.
fn acquire(
    a: &SimulateArgs,
    p: Prepared,
    resp: &Response,
    summary: &mut simulate_summary::Summary,
    bar: &ProgressBar,
) -> anyhow::Result<(Vec<OutputData>, bool)> {
    let Some(c) = &p.cycle else {
        return Ok((simulate_files::ideal_data(&p.sel, resp), false));
    };
    bar.set_message(format!("measuring {} steps", c.len()));
    let req = RunRequest {
        backgrounds: p.rules,
        errors: p.errors,
        noise: a.noise,
        seed: a.seed,
    };
    let run = simulate_cycle(&p.sel, c, resp, &req)
        .with_context(|| format!("simulating the cycle on {}", a.experiment.display()))?;
    let report = pathsieve::check::check(&p.sel, c, &pathsieve::check::CheckOptions::default())?;
    summary.set_run(&run, report.clean);
    let outputs = simulate_files::measured_data(&run, resp);
    summary.steps = Some(run.steps);
    Ok((outputs, !report.clean))
}

fn finish(
    a: &SimulateArgs,
    files: &[(PathBuf, Vec<u8>)],
    summary: &simulate_summary::Summary,
    leaks: bool,
) -> anyhow::Result<u8> {
    if a.json {
        super::output::print(&String::from_utf8_lossy(&summary.json_bytes()))?;
    } else {
        let listed: Vec<String> = files.iter().map(|(p, _)| p.display().to_string()).collect();
        eprintln!("wrote {}", listed.join(", "));
        for o in &summary.outputs {
            eprintln!("{}", leak_line(o));
        }
        for n in &summary.notes {
            eprintln!("note: {n}");
        }
    }
    if leaks {
        eprintln!("warning: the cycle leaks (exact check, `pathsieve check`); the as-measured outputs hold leaked terms");
        return Ok(1);
    }
    Ok(0)
}

/// Run the subcommand.
pub fn run(a: SimulateArgs) -> anyhow::Result<u8> {
    let layout = Layout::from_out(&a.out)?;
    let p = prepare(&a)?;
    check_files(&a, &p, &layout)?;
    let parts = spectrum_parts(&a, &p.exp, &p.dyn_, &p.grid, p.unit)?;
    let steps = p.cycle.as_ref().map_or(1, |c| c.len());
    let bar = spinner(p.grid.len().saturating_mul(steps) > 200_000 && !a.json);
    bar.set_message(format!(
        "simulating the response on {} delay points",
        p.grid.len()
    ));
    let resp = simulate_response(&p.exp, &p.dyn_, a.frame, &p.grid, a.undersample)?;
    let mut summary = simulate_summary::Summary::new(&simulate_summary::Setup {
        experiment: &a.experiment,
        cycle: a.cycle.as_deref(),
        exp: &p.exp,
        dyn_: &p.dyn_,
        grid: &p.grid,
        unit: p.unit,
        frame: a.frame,
        undersample: a.undersample,
        seed: a.seed,
        noise: a.noise,
        errors: &p.errors,
        resp: &resp,
    })?;
    let (exp, dyn_, grid, unit) = (p.exp.clone(), p.dyn_.clone(), p.grid.clone(), p.unit);
    let (outputs, leaks) = acquire(&a, p, &resp, &mut summary, &bar)?;
    let paired = |o: &OutputData| o.kept.iter().any(|t| o.kept.contains(&t.conjugate()));
    if a.frame != 0.0 && outputs.iter().any(paired) {
        summary.notes.push("an output keeps both t and -t (real signal) in a rotating frame: the conjugate half lies mirrored about the frame, at 2 x frame - w; keep the frame below the band by more than its width, or use --frame 0 (docs/simulate.md)".into());
    }
    bar.set_message("computing the spectra");
    let pad = match (a.pad, &parts) {
        (Some(p), _) => p,
        (None, Some((_, _, window))) => {
            let (p, capped) = auto_pad(&grid, *window, unit);
            if let Some(bins) = capped {
                summary.notes.push(format!("zero padding stops at {MAX_AUTO_PAD} points per axis: about {bins:.0} frequency bins across the window instead of 150 (the bins span the whole band the time step resolves); a rotating frame near the band (--frame) or a coarser time step gives finer bins"));
            }
            p
        }
        (None, None) => 0,
    };
    let setup = parts
        .as_ref()
        .map(|(fixed, at_label, window)| simulate_files::SpectrumSetup {
            grid: &grid,
            fixed: fixed.clone(),
            unit,
            frame_in_unit: unit.from_angular(dyn_.energy_unit.to_angular(a.frame)),
            pad,
            window: *window,
            title: &exp.title,
            at_label: at_label.clone(),
            png_scale: a.png.then_some(a.png_scale),
        });
    match &parts {
        Some((fixed, _, window)) => summary.set_spectrum_at(&grid, fixed, *window),
        None => summary.notes.push("no spectra: they need three delays or more, the first and the last evenly spaced with two points or more".into()),
    }
    let files = simulate_files::build(&layout, &grid, setup.as_ref(), &mut summary, &outputs)?;
    bar.set_message("writing the files");
    pathsieve::safe_write::write_many_atomic(&files, a.force)?;
    bar.finish_and_clear();
    finish(&a, &files, &summary, leaks)
}

/// One line per output: how far the as-measured output is from the ideal one.
fn leak_line(o: &simulate_summary::OutputSummary) -> String {
    let pct = |x: f64| format!("{:.3} %", 100.0 * x);
    let Some(t) = o.leak_relative else {
        return format!("output {}: ideal signal only (no cycle given)", o.name);
    };
    let window = o.spectrum_leak_relative.map_or(String::new(), |f| {
        format!(", {} in the spectrum window", pct(f))
    });
    format!(
        "output {}: as measured minus ideal peaks at {} of the ideal's peak in the time domain (every frequency){window}",
        o.name,
        pct(t)
    )
}
