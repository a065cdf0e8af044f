//! `pathsieve pathways`: the enumerator's listing, grouped summary, text and SVG diagrams.

use super::output::{print, print_json, table};
use anyhow::{bail, Context};
use clap::Args;
use pathsieve::experiment_file::read_experiment;
use pathsieve::limits::MAX_LISTED_PATHWAYS;
use pathsieve::model::{Experiment, PathwayClass};
use pathsieve::pathways::{self, for_each_row, resolve_signals, summarize, Pathway, Scope};
use pathsieve::render::{self, diagram_svg, diagram_text};
use pathsieve::signature::Signature;
use serde::Serialize;
use std::path::PathBuf;

/// Arguments of `pathsieve pathways`.
#[derive(Args, Debug)]
pub struct PathwaysArgs {
    /// Experiment file (TOML, see docs/experiment-format.md); `-` reads stdin.
    file: PathBuf,
    /// Enumerate every pathway through the order (each pulse acting any number of times,
    /// lower orders included), not only the signal pathways.
    #[arg(long)]
    all: bool,
    /// With --all: enumerate through this order instead of the experiment's.
    #[arg(long, value_name = "K")]
    through: Option<u32>,
    /// Print only the summary by signature (streams: memory does not grow with pathway count).
    #[arg(long)]
    summary: bool,
    /// Add each pathway's complex-conjugate partner (emission and pump-probe detection).
    #[arg(long)]
    conjugates: bool,
    /// Keep only pathways of a class (R, NR, 2Q, other, GSB, SE, ESA) or with a signature
    /// such as `-1,1,1,-1` (with --conjugates, the listed partner's own signature counts).
    #[arg(long, value_name = "SPEC", allow_hyphen_values = true)]
    select: Option<String>,
    /// Print a text diagram of each listed pathway.
    #[arg(long)]
    diagrams: bool,
    /// Draw the double-sided diagrams of the listed pathways into this SVG file (`-`: the SVG
    /// alone on stdout).
    #[arg(long, value_name = "OUT.svg")]
    svg: Option<PathBuf>,
    /// Overwrite an existing --svg file.
    #[arg(long)]
    force: bool,
    /// Machine-readable JSON on stdout instead of tables.
    #[arg(long)]
    json: bool,
}

pub(super) enum Selector {
    Class(PathwayClass),
    Population(&'static str),
    Signature(Signature),
}

impl Selector {
    pub(super) fn parse(text: &str, exp: &Experiment) -> anyhow::Result<Self> {
        let t = text.trim();
        if let Some(c) = PathwayClass::parse(t) {
            return Ok(Selector::Class(c));
        }
        for p in ["GSB", "SE", "ESA"] {
            if t.eq_ignore_ascii_case(p) {
                return Ok(Selector::Population(p));
            }
        }
        let parts: Result<Vec<i64>, _> = t
            .trim_matches(|c| c == '(' || c == ')')
            .split(',')
            .map(|x| x.trim().trim_start_matches('+').parse::<i64>())
            .collect();
        match parts {
            Ok(v) if v.len() == exp.fields.len() => Ok(Selector::Signature(Signature(v))),
            Ok(v) => bail!(
                "--select: signature has {} components, the experiment has {} fields ({})",
                v.len(),
                exp.fields.len(),
                exp.field_names().join(", ")
            ),
            Err(_) => bail!("--select `{t}`: use a class (R, NR, 2Q, other, GSB, SE, ESA) or a signature like -1,1,1,-1"),
        }
    }

    pub(super) fn keeps(&self, p: &Pathway) -> bool {
        match self {
            Selector::Class(c) => p.class == *c,
            Selector::Population(name) => p.population_class.is_some_and(|pc| pc.short() == *name),
            Selector::Signature(s) => p.signature == *s,
        }
    }
}

#[derive(Serialize)]
struct Report<'a> {
    tool: &'static str,
    version: &'static str,
    experiment: &'a str,
    detection: &'static str,
    fields: Vec<String>,
    scope: String,
    order: u32,
    pathways: Option<Vec<PathwayRow>>,
    summary: pathways::Summary,
    wanted: Vec<pathways::ResolvedSignal>,
}

/// One listed pathway in JSON: the pathway's own fields (`delays` and `final_element` as
/// state indices) and, under names of their own, the same elements as labels.
#[derive(Serialize)]
struct PathwayRow {
    sequence: String,
    delay_labels: Vec<String>,
    final_label: String,
    direction: String,
    #[serde(flatten)]
    pathway: Pathway,
}

/// Run the subcommand.
pub fn run(a: PathwaysArgs) -> anyhow::Result<u8> {
    if let Some(svg) = a.svg.as_deref().filter(|p| !super::stdio::is_dash(p)) {
        pathsieve::safe_write::check_targets(&[svg], &[&a.file], a.force)?;
    }
    if a.svg.as_deref().is_some_and(super::stdio::is_dash) && a.json {
        bail!("--svg - and --json both write stdout; give --svg a file name");
    }
    let exp = read_experiment(&a.file)?;
    if a.through.is_some() && !a.all {
        bail!("--through K goes with --all (every pathway through order K)");
    }
    let scope = if a.all {
        let k = a.through.unwrap_or(exp.order);
        if k == 0 || k > pathsieve::limits::MAX_ORDER {
            bail!("--through {k}: use 1..={}", pathsieve::limits::MAX_ORDER);
        }
        Scope::Through(k)
    } else {
        Scope::Signal
    };
    let selector = a
        .select
        .as_deref()
        .map(|s| Selector::parse(s, &exp))
        .transpose()?;
    let resolved = resolve_signals(&exp).context("resolving the wanted signals")?;
    let wanted: Vec<(String, Vec<Signature>)> = resolved
        .iter()
        .map(|r| (r.name.clone(), r.kept.clone()))
        .collect();
    let summary = summarize(&exp, scope, a.conjugates, &wanted)?;

    let listing = !a.summary || a.svg.is_some();
    let mut rows: Vec<Pathway> = Vec::new();
    if listing {
        let kept = |p: &Pathway| selector.as_ref().is_none_or(|s| s.keeps(p));
        let mut count = 0u64;
        for_each_row(&exp, scope, a.conjugates, |p| count += u64::from(kept(p)))?;
        if count > MAX_LISTED_PATHWAYS {
            bail!(
                "{count} pathways would be listed, above the listing limit of {MAX_LISTED_PATHWAYS}; use --summary (streams), or --select to narrow"
            );
        }
        for_each_row(&exp, scope, a.conjugates, |p| {
            if kept(p) {
                rows.push(p.clone());
            }
        })?;
    }
    let scope_text = match scope {
        Scope::Signal => "signal pathways (each pulse acts its set number of times)".to_string(),
        Scope::Through(k) => format!("every pathway through order {k}"),
    };
    if let Some(path) = &a.svg {
        if rows.is_empty() {
            bail!("no pathway to draw; check --select");
        }
        let title = format!("{} — {} pathways", exp.title, rows.len());
        let svg = diagram_svg::diagrams_svg(&exp, &rows, &title);
        if super::stdio::is_dash(path) {
            // stdout carries the picture alone.
            print(&svg)?;
            return Ok(0);
        }
        pathsieve::safe_write::write_atomic(path, svg.as_bytes(), a.force)?;
        if !a.json {
            eprintln!("wrote {} diagrams to {}", rows.len(), path.display());
        }
    }
    if a.json {
        let pathways = (!a.summary).then(|| {
            rows.iter()
                .map(|p| PathwayRow {
                    sequence: render::sequence_label(&exp, p),
                    delay_labels: p
                        .delays
                        .iter()
                        .map(|e| render::element_label(&exp, e))
                        .collect(),
                    final_label: render::element_label(&exp, &p.final_element),
                    direction: exp.signal_direction(&p.signature),
                    pathway: p.clone(),
                })
                .collect()
        });
        print_json(&Report {
            tool: "pathsieve",
            version: env!("CARGO_PKG_VERSION"),
            experiment: &exp.title,
            detection: exp.detection.label(),
            fields: exp.field_names(),
            scope: scope_text,
            order: exp.order,
            pathways,
            summary,
            wanted: resolved,
        })?;
        return Ok(0);
    }
    let mut out = String::new();
    out.push_str(&format!(
        "{}\n  detection: {}; fields: {}; order {}; {}\n\n",
        exp.title,
        exp.detection.label(),
        exp.field_names().join(", "),
        exp.order,
        scope_text
    ));
    if !a.summary {
        // Narrow columns first and the pathway itself last, on two or three lines (interactions,
        // elements in the delays, the final element when it is not the last delay's): the table
        // fits 80 columns without breaking words.
        let mut t = table(&[
            "#",
            "signature",
            "class",
            "sign",
            "weight",
            "interactions / elements",
        ]);
        for (i, p) in rows.iter().enumerate() {
            t.add_row(vec![
                (i + 1).to_string(),
                p.signature.to_string(),
                class_label(p),
                format!("{:+}", p.sign),
                format!("{:+.3}", p.weight),
                pathway_cell(&exp, p),
            ]);
        }
        out.push_str(&format!("{t}\n"));
        if rows.iter().any(|p| !p.time_ordered) {
            out.push_str(&format!(
                "* interactions out of pulse order, possible only while pulses overlap ({}); class by the elements between interactions\n",
                pathsieve::caveats::overlap_label(&exp)
            ));
        }
        if a.diagrams {
            for (i, p) in rows.iter().enumerate() {
                out.push_str(&format!(
                    "\n#{} {} {}\n",
                    i + 1,
                    p.class.short(),
                    p.signature
                ));
                out.push_str(&diagram_text::diagram_text(&exp, p));
            }
        }
        out.push('\n');
    }
    out.push_str(&summary_table(&summary));
    for r in &resolved {
        let kept: Vec<String> = r.kept.iter().map(|s| s.to_string()).collect();
        out.push_str(&format!("wanted `{}`: keeps {}\n", r.name, kept.join(" ")));
        for c in &r.contamination {
            out.push_str(&format!(
                "  note: {} also carries {} {} pathway(s){} — no phase cycle can separate them\n",
                c.kept,
                c.count,
                c.class.short(),
                if c.via_conjugate {
                    " as complex conjugates"
                } else {
                    ""
                }
            ));
        }
    }
    if let Some(note) = pathsieve::caveats::reordered_note(&exp, &resolved) {
        out.push_str(&format!("note: {note}\n"));
    }
    super::output::print_report(&out)?;
    Ok(0)
}

/// Pathways per signature, with the conjugate partners and out-of-order pathways among them.
fn count_cell(e: &pathways::SignatureSummary) -> String {
    let mut parts = Vec::new();
    if e.conjugates > 0 {
        parts.push(format!("{} c.c.", e.conjugates));
    }
    if e.reordered > 0 {
        parts.push(format!("{} *", e.reordered));
    }
    if parts.is_empty() {
        e.count.to_string()
    } else {
        format!("{} ({})", e.count, parts.join(", "))
    }
}

fn summary_table(s: &pathways::Summary) -> String {
    let mut t = table(&[
        "signature",
        "k_s",
        "pathways",
        "classes",
        "phase matched",
        "wanted by",
    ]);
    for e in &s.signatures {
        let classes: Vec<String> = e
            .classes
            .iter()
            .map(|(c, n)| format!("{} {n}", c.short()))
            .collect();
        t.add_row(vec![
            e.signature.to_string(),
            e.direction.clone(),
            count_cell(e),
            classes.join(", "),
            if e.phase_matched {
                "yes".into()
            } else {
                "no".into()
            },
            e.wanted_by.join(", "),
        ]);
    }
    let pairs = s
        .signatures
        .iter()
        .any(|e| e.phase_matched && e.signature.weight() <= 2 && e.signature.weight() > 0)
        && s.signatures.iter().any(|e| !e.phase_matched);
    format!(
        "summary: {} pathways in {} signatures\n{t}\n{}",
        s.total,
        s.signatures.len(),
        if pairs {
            "phase matched: as design and check decide; pair terms (sum |b| <= 2) always pass, since scatter reaches the detector whatever the beam directions\n"
        } else {
            ""
        }
    )
}

/// The class column: class and population class, `c.c.` for a conjugate term, `*` for
/// interactions out of pulse order.
fn class_label(p: &Pathway) -> String {
    let mut class = match p.population_class {
        Some(pc) => format!("{} {}", p.class.short(), pc.short()),
        None => p.class.short().to_string(),
    };
    if p.conjugate {
        class.push_str(" c.c.");
    }
    if !p.time_ordered {
        class.push_str(" *");
    }
    class
}

/// The pathway column: interactions, then the elements in the delays, then the final element
/// when it differs from the last delay's (population detection).
fn pathway_cell(exp: &Experiment, p: &Pathway) -> String {
    let mut cell = render::sequence_label(exp, p);
    let delays = render::delays_label(exp, p);
    if !delays.is_empty() {
        cell.push('\n');
        cell.push_str(&delays);
    }
    if p.coherence_orders.is_empty() {
        let fin = render::element_label(exp, &p.final_element);
        if p.delays.last().map(|e| render::element_label(exp, e)) != Some(fin.clone()) {
            cell.push_str(&format!("\nfinal {fin}"));
        }
    }
    cell
}
