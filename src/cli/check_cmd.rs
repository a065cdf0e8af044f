//! `pathsieve check`: exact check of a phase-cycle table against an experiment. Parses the
//! flags into a [`CheckRequest`], calls the library and renders the report as tables or JSON.
//! Exit code 0 when clean through the order, 1 when anything leaks.

use super::output::{print_json, print_report, table, RejectionArgs};
use anyhow::{bail, Context};
use clap::Args;
use pathsieve::check::ImpactRequest;
use pathsieve::check::{
    check_cycle, CheckOptions, CheckReport, CheckRequest, SnapPolicy, ToleranceRequest,
};
use pathsieve::cycle::{read_cycle, text::parse_unit};
use pathsieve::exact::{parse_phase, PhaseUnit, PhaseValue};
use pathsieve::experiment_file::read_experiment;
use pathsieve::model::backgrounds::{check_size, parse_key, BackgroundRule, KEY_FORMS};
use pathsieve::model::{Backgrounds, Experiment};
use pathsieve::numfmt::short;
use pathsieve::selection::SelectionRequest;
use std::fmt::Write as _;
use std::path::PathBuf;

/// Arguments of `pathsieve check`.
#[derive(Args, Debug)]
pub struct CheckArgs {
    /// Experiment file (TOML); `-` reads stdin.
    experiment: PathBuf,
    /// Cycle table: a TOML cycle file, a CSV table, the JSON, NPY, NPZ or plain CSV/TSV
    /// export (with its sidecar), or a NumPy .npy/.npz array (docs/cycle-format.md); `-` reads
    /// stdin (the format is recognised from the content).
    cycle: PathBuf,
    #[command(flatten)]
    rejection: RejectionArgs,
    /// Search the first leak up to this order (default: order + 4).
    #[arg(long, value_name = "K")]
    leak_search: Option<u32>,
    /// Phase unit of the table when the file does not declare one: turns, deg, rad or index:M
    /// (indices on an M-step grid; also grid:M).
    #[arg(long, value_name = "UNIT")]
    unit: Option<String>,
    /// Never snap approximate phases to fractions; evaluate them numerically (not exact).
    #[arg(long)]
    no_snap: bool,
    /// Snapping tolerance in turns (default 1e-5).
    #[arg(long, value_name = "TURNS")]
    snap_tolerance: Option<f64>,
    /// Largest denominator of a snapped phase (default 3600).
    #[arg(long, value_name = "Q")]
    max_denominator: Option<u64>,
    /// Tolerance analysis for phase errors of this size (degrees unless suffixed, e.g.
    /// `0.5`, `0.002turn`, `pi/360 rad`).
    #[arg(long, value_name = "DELTA")]
    tolerance: Option<String>,
    /// With --tolerance: also quantise the phases to 2^B steps per turn.
    #[arg(long, value_name = "B")]
    bits: Option<u32>,
    /// Size of a background relative to the wanted signal, KEY=SIZE (repeatable; overrides the
    /// experiment's [backgrounds]): KEY is default, unmodulated, scatter, pair, order-K or a
    /// signature such as (+1,-1,0,0). Leaks are ranked by |F(b)| x size / |F(t)|.
    #[arg(long = "background", value_name = "KEY=SIZE")]
    backgrounds: Vec<String>,
    /// Flag a weighted leak above this fraction of the wanted signal (default 0.01).
    #[arg(long, value_name = "FRACTION")]
    threshold: Option<f64>,
    /// List at most this many leaks per output (all are counted).
    #[arg(long, value_name = "N", default_value_t = pathsieve::check::DEFAULT_MAX_LISTED)]
    max_listed: usize,
    /// Machine-readable JSON on stdout.
    #[arg(long)]
    json: bool,
}

fn request(a: &CheckArgs) -> anyhow::Result<CheckRequest> {
    let mut snap = SnapPolicy {
        enabled: !a.no_snap,
        ..SnapPolicy::default()
    };
    if let Some(t) = a.snap_tolerance {
        if !(t.is_finite() && (0.0..0.5).contains(&t)) {
            bail!("--snap-tolerance {t}: give a tolerance in turns in [0, 0.5), e.g. 1e-6");
        }
        snap.tolerance_turns = t;
    }
    if let Some(q) = a.max_denominator {
        if q == 0 || q > u64::from(pathsieve::exact::MAX_ORDER) {
            bail!(
                "--max-denominator {q}: use 1..={}",
                pathsieve::exact::MAX_ORDER
            );
        }
        snap.max_denominator = q;
    }
    let tolerance = match &a.tolerance {
        None => {
            if a.bits.is_some() {
                bail!("--bits goes with --tolerance DELTA");
            }
            None
        }
        Some(t) => {
            let d = match parse_phase(t, PhaseUnit::Degrees)
                .with_context(|| format!("--tolerance `{t}`"))?
            {
                PhaseValue::Exact(r) => *r.numer() as f64 / *r.denom() as f64,
                PhaseValue::Approx { turns } => turns,
            };
            if let Some(b) = a.bits {
                if !(1..=32).contains(&b) {
                    bail!("--bits {b}: use 1..=32");
                }
            }
            Some(ToleranceRequest {
                delta_turns: d,
                bits: a.bits,
            })
        }
    };
    Ok(CheckRequest {
        selection: SelectionRequest {
            leak_search_to: a.leak_search,
            ..a.rejection.request()
        },
        options: CheckOptions {
            snap,
            tolerance,
            max_listed: a.max_listed,
            impact: ImpactRequest {
                threshold: match a.threshold {
                    Some(t) if t.is_finite() && t >= 0.0 => t,
                    Some(t) => bail!("--threshold {t}: give a fraction of the wanted signal, a number >= 0 such as 0.01"),
                    None => pathsieve::check::impact::DEFAULT_THRESHOLD,
                },
                backgrounds: Backgrounds::default(),
            },
        },
    })
}

/// Run the subcommand.
pub fn run(a: CheckArgs) -> anyhow::Result<u8> {
    let mut req = request(&a)?;
    let unit = match &a.unit {
        Some(u) => Some(parse_unit(u).map_err(|m| anyhow::anyhow!("--unit: {m}"))?),
        None => None,
    };
    super::stdio::check_one_stdin(&[Some(&a.experiment), Some(&a.cycle)])?;
    let exp = read_experiment(&a.experiment)?;
    req.options.impact.backgrounds = background_args(&a.backgrounds, &exp)?;
    let cycle = read_cycle(&a.cycle, unit)?;
    let report = check_cycle(&exp, &cycle, &req).with_context(|| {
        format!(
            "checking {} against {}",
            a.cycle.display(),
            a.experiment.display()
        )
    })?;
    if a.json {
        print_json(&report)?;
    } else {
        print_report(&render(&report))?;
    }
    Ok(if report.clean { 0 } else { 1 })
}

/// The `--background KEY=SIZE` options as size rules.
pub(super) fn background_args(args: &[String], exp: &Experiment) -> anyhow::Result<Backgrounds> {
    let mut out = Backgrounds::default();
    for a in args {
        let Some((k, v)) = a.rsplit_once('=') else {
            bail!("--background `{a}`: write KEY=SIZE, e.g. --background scatter=1e3; KEY is {KEY_FORMS}");
        };
        let key = parse_key(k, exp).map_err(|m| anyhow::anyhow!("--background: {m}"))?;
        let size: f64 = v.trim().parse().map_err(|_| {
            anyhow::anyhow!("--background `{a}`: `{v}` is not a number; write e.g. {k}=1e3")
        })?;
        let size = check_size(k, size).map_err(|m| anyhow::anyhow!("--background: {m}"))?;
        out.set(BackgroundRule {
            key,
            size,
            given_in: "--background".into(),
        });
    }
    Ok(out)
}

fn render(r: &CheckReport) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{} — {} steps, {}; fields {}",
        r.experiment,
        r.steps,
        r.detection,
        r.fields.join(", ")
    );
    let _ = writeln!(s, "rejection set: {}", r.rejection);
    let _ = writeln!(
        s,
        "arithmetic: {}",
        if r.exact && r.snaps.is_empty() {
            "exact (cyclotomic)"
        } else if r.outputs.iter().any(|o| o.exact_fallback.is_some()) {
            "floating point for some outputs: an exact limit was passed (see the notes), with a rigorous float-error bound"
        } else if r.exact {
            "exact (cyclotomic) for the table snapped within its written precision"
        } else {
            "within the table's written precision for some outputs (rigorous rounding bound)"
        }
    );
    for n in &r.notes {
        let _ = writeln!(s, "note: {n}");
    }
    render_snaps(&mut s, &r.snaps);
    let mut t = table(&["field", "phases used (turns)", "grid"]);
    for f in &r.phases_used {
        let name = if f.fixed {
            format!("{} (fixed)", f.field)
        } else {
            f.field.clone()
        };
        t.add_row(vec![
            name,
            f.values.join(" "),
            f.grid.map_or("-".into(), |g| g.to_string()),
        ]);
    }
    let _ = writeln!(s, "{t}");
    for o in &r.outputs {
        let _ = writeln!(
            s,
            "\noutput {} — {} ({}), weights {}, noise efficiency {:.4}",
            o.name,
            if o.clean { "CLEAN" } else { "LEAKS" },
            class_label(o),
            o.weights,
            o.noise_efficiency
        );
        let mut t = table(&["term", "signature", "F", "|F|", "note"]);
        for k in &o.kept {
            t.add_row(vec![
                "kept".into(),
                k.signature.to_string(),
                fmt_value(&k.value),
                fmt_abs(k.value.abs),
                format!("noise eff. {:.4}", k.noise_efficiency),
            ]);
        }
        for c in &o.conjugates {
            t.add_row(vec![
                "conjugate".into(),
                c.signature.to_string(),
                fmt_value(&c.value),
                fmt_abs(c.value.abs),
                if c.cancelled {
                    "cancelled".into()
                } else {
                    "PASSES".into()
                },
            ]);
        }
        for l in &o.leaks {
            let origin = pathsieve::render::origin::origin_text(&l.origin);
            t.add_row(vec![
                "LEAK".into(),
                l.signature.to_string(),
                fmt_value(&l.value),
                fmt_abs(l.value.abs),
                format!("{origin}, {}", l.direction),
            ]);
        }
        let _ = writeln!(s, "{t}");
        let _ = writeln!(
            s,
            "rejected terms checked: {}, leaking: {}{}",
            o.rejected_checked,
            o.leak_count,
            if o.leak_count > o.leaks.len() {
                format!(" (first {} listed)", o.leaks.len())
            } else {
                String::new()
            }
        );
        match &o.first_leak {
            Some(f) => {
                let _ = writeln!(
                    s,
                    "first leak at {} {}: {} (|F| = {})",
                    f.measure.label(),
                    f.order,
                    f.signature,
                    fmt_abs(f.abs)
                );
            }
            None => {
                let _ = writeln!(
                    s,
                    "no leak through {} {} (the same kind of set, searched above the order)",
                    r.leak_measure.label(),
                    r.leak_search_to
                );
            }
        }
        for x in &o.suspects {
            let _ = writeln!(
                s,
                "suspect ({}): {}; with it the output is clean",
                x.kind, x.correction
            );
        }
        if o.leak_count > 0 && o.suspects.is_empty() {
            let _ = writeln!(
                s,
                "suspect: no single cell, weight or step change found that makes this output clean"
            );
        }
        for l in &o.lost {
            let _ = writeln!(s, "LOST: the wanted term {l} is cancelled (F = 0)");
        }
        for i in &o.inseparable {
            let _ = writeln!(
                s,
                "inseparable ({:?}): {}\n  remedy: {}",
                i.kind, i.explanation, i.remedy
            );
        }
        if let Some(tol) = &o.tolerance {
            let _ = writeln!(s, "tolerance (phase error {:.4} deg): worst-case leak bound {:.3e} (a bound), RMS leak {:.3e} (an expectation; relative to |F(t)|){}", tol.delta_degrees, tol.worst_case_max, tol.rms_max, match (tol.bits, tol.quantised_max) { (Some(b), Some(q)) => format!("; {b}-bit quantisation leak {q:.3e}"), _ => String::new() });
            let d: Vec<String> = tol
                .drift
                .iter()
                .take(5)
                .map(|f| format!("{} {:.3e}", f.signature, f.relative))
                .collect();
            let _ = writeln!(
                s,
                "drift first moment (lowest-order backgrounds, largest first): {}",
                d.join(", ")
            );
        }
        render_impact(&mut s, o);
    }
    let _ = writeln!(
        s,
        "\nverdict: {}{}",
        if r.clean {
            format!("clean through order {}", r.order)
        } else if r.outputs.iter().any(|o| !o.lost.is_empty())
            && r.outputs.iter().all(|o| o.leak_count == 0)
        {
            format!("wanted term lost (F(t) = 0): nothing leaks through order {}, but the cycle also cancels what it should keep", r.order)
        } else {
            format!("leaks (through order {})", r.order)
        },
        r.first_leak_order
            .map_or(String::new(), |k| format!("; first leak order {k}"))
    );
    render_threshold_verdict(&mut s, r);
    let mut suspects: Vec<usize> = r
        .outputs
        .iter()
        .flat_map(|o| o.suspect_steps.iter().copied())
        .collect();
    suspects.sort_unstable();
    suspects.dedup();
    if !suspects.is_empty() {
        let list: Vec<String> = suspects.iter().map(usize::to_string).collect();
        let _ = writeln!(
            s,
            "suspect step(s): {} (see the suspect lines)",
            list.join(", ")
        );
    }
    s
}

/// Leaks weighted by their backgrounds: the top terms (when sizes were given, a tolerance
/// analysed or something leaks) and one threshold line per figure, each with its class.
fn render_impact(s: &mut String, o: &pathsieve::check::OutputReport) {
    const SHOWN: usize = 8;
    let im = &o.impact;
    let has_tol = o.tolerance.is_some();
    if im.backgrounds_given || has_tol || o.leak_count > 0 {
        let mut head = vec![
            "term",
            "background",
            "from",
            "leak |F|/|F(t)|",
            "x background",
        ];
        if has_tol {
            head.extend(["worst case x bg", "RMS x bg"]);
        }
        let mut t = table(&head);
        for x in im.terms.iter().take(SHOWN) {
            let mut row = vec![
                x.signature.to_string(),
                format!("{:.3e}", x.background.size),
                x.background.rule.clone(),
                fmt_abs(x.leak),
                fmt_abs(x.weighted),
            ];
            if let Some(tt) = &x.tolerance {
                row.push(fmt_abs(tt.worst_case * x.background.size));
                row.push(fmt_abs(tt.rms * x.background.size));
            }
            t.add_row(row);
        }
        let _ = writeln!(s, "leaks weighted by background size, largest first:\n{t}");
    }
    for v in &im.verdicts {
        let _ = writeln!(
            s,
            "threshold ({}): largest {} x background = {}{} ({}) is {} {} of the wanted signal",
            v.figure.label(),
            if v.figure == pathsieve::check::impact::Figure::Leak {
                "|F(b)|/|F(t)|"
            } else {
                "figure"
            },
            fmt_abs(v.largest),
            v.signature
                .as_ref()
                .map_or(String::new(), |b| format!(" at {b}")),
            v.class.label(),
            if v.above { "ABOVE" } else { "below" },
            im.threshold
        );
    }
}

/// One line: does any output's weighted leak pass the threshold, with the figure and its class.
fn render_threshold_verdict(s: &mut String, r: &CheckReport) {
    let above: Vec<String> = r
        .outputs
        .iter()
        .flat_map(|o| {
            o.impact.verdicts.iter().filter(|v| v.above).map(move |v| {
                format!(
                    "{}: {} {} ({})",
                    o.name,
                    v.figure.label(),
                    fmt_abs(v.largest),
                    v.class.label()
                )
            })
        })
        .collect();
    let threshold = r.outputs.first().map_or(0.0, |o| o.impact.threshold);
    if above.is_empty() {
        let classes: Vec<&str> = r
            .outputs
            .iter()
            .flat_map(|o| o.impact.verdicts.iter().map(|v| v.class.label()))
            .fold(Vec::new(), |mut v, c| {
                if !v.contains(&c) {
                    v.push(c);
                }
                v
            });
        let _ = writeln!(
            s,
            "leaks that matter: none; every leak x background is at most {threshold} of the wanted signal ({})",
            classes.join(", ")
        );
    } else {
        let _ = writeln!(
            s,
            "leaks that matter: ABOVE the threshold {threshold} of the wanted signal in {}",
            above.join("; ")
        );
    }
}

/// The verdict class of an output in words.
fn class_label(o: &pathsieve::check::OutputReport) -> String {
    use pathsieve::check::VerdictClass;
    match o.class {
        VerdictClass::Exact => "exact".into(),
        VerdictClass::ExactAfterSnapping => "exact after snapping".into(),
        VerdictClass::WithinPrecision => format!(
            "within the table's precision: |F| <= {} from rounding alone",
            o.rounding_bound.map_or("-".into(), |b| format!("{b:.1e}"))
        ),
        VerdictClass::FloatBeyondExactLimit => format!(
            "floating point, exact {} limit passed: |F| <= {} from float error",
            o.exact_fallback.as_ref().map_or("", |f| f.limit.as_str()),
            o.rounding_bound.map_or("-".into(), |b| format!("{b:.1e}"))
        ),
    }
}

/// The snapped cells, a few listed.
fn render_snaps(s: &mut String, snaps: &[pathsieve::check::Snap]) {
    const SHOWN: usize = 6;
    for x in snaps.iter().take(SHOWN) {
        let _ = writeln!(
            s,
            "snap: step {}, {}: {} -> {}",
            x.step, x.column, x.written, x.exact
        );
    }
    if snaps.len() > SHOWN {
        let _ = writeln!(
            s,
            "snap: ... {} more (--json lists all)",
            snaps.len() - SHOWN
        );
    }
}

/// A float value `~re+imi`: six decimals, or both parts with an exponent when the larger is
/// 1e6 or more (never a hundred digits of fixed-point text).
fn fmt_c(re: f64, im: f64) -> String {
    let sign = if im < 0.0 { "-" } else { "+" };
    if re.abs().max(im.abs()) >= 1e6 {
        format!("~{}{sign}{}i", short(re), short(im.abs()))
    } else {
        format!("~{re:.6}{sign}{:.6}i", im.abs())
    }
}

/// |F| for tables: fixed-point in the usual range, scientific notation for tiny and huge values
/// so a real but small leak never prints as 0.000000 ([`pathsieve::numfmt::short`]).
fn fmt_abs(x: f64) -> String {
    short(x)
}

/// A filter value for tables: its exact form when known, else the float with a `~` (the
/// rounding bound is in the output's heading and in --json).
fn fmt_value(v: &pathsieve::check::Value) -> String {
    v.exact.clone().unwrap_or_else(|| fmt_c(v.re, v.im))
}
