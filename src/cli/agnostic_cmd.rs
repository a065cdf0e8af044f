//! `pathsieve agnostic`: the level-scheme-independent rejection set through an order.

use super::output::{print_json, print_report, table};
use anyhow::Context;
use clap::Args;
use pathsieve::agnostic::agnostic_set;
use pathsieve::experiment_file::read_experiment;
use pathsieve::pathways::resolve_signals;
use pathsieve::signature::Signature;
use serde::Serialize;
use std::collections::BTreeMap;
use std::path::PathBuf;

/// Arguments of `pathsieve agnostic`.
#[derive(Args, Debug)]
pub struct AgnosticArgs {
    /// Experiment file.
    file: PathBuf,
    /// Order K (default: the experiment's order).
    #[arg(long, value_name = "K")]
    order: Option<u32>,
    /// Drop coherent terms the beam geometry does not phase-match (scatter is always kept).
    #[arg(long)]
    geometry: bool,
    /// JSON on stdout.
    #[arg(long)]
    json: bool,
}

#[derive(Serialize)]
struct Report {
    order: u32,
    fields: Vec<String>,
    wanted: Vec<Signature>,
    count: usize,
    rejected: Vec<Signature>,
}

/// Run the subcommand.
pub fn run(a: AgnosticArgs) -> anyhow::Result<u8> {
    let exp = read_experiment(&a.file)?;
    let k = a.order.unwrap_or(exp.order);
    if k > pathsieve::limits::MAX_ORDER {
        anyhow::bail!("--order {k}: use 0..={}", pathsieve::limits::MAX_ORDER);
    }
    let wanted: Vec<Signature> = resolve_signals(&exp)
        .context("resolving the wanted signals")?
        .into_iter()
        .flat_map(|r| r.kept)
        .collect();
    let set = agnostic_set(&exp, k, &wanted, a.geometry)?;
    if a.json {
        print_json(&Report {
            order: k,
            fields: exp.field_names(),
            wanted,
            count: set.len(),
            rejected: set,
        })?;
        return Ok(0);
    }
    let mut by_weight: BTreeMap<i64, Vec<&Signature>> = BTreeMap::new();
    for b in &set {
        by_weight.entry(b.weight()).or_default().push(b);
    }
    let mut t = table(&["sum |b|", "terms", "what they are", "examples"]);
    for (w, v) in &by_weight {
        let what = match w {
            0 => "reference alone / population background (b = 0)",
            2 => "linear terms and scatter pairs e_a - e_b",
            _ => "higher-order and mixed terms",
        };
        let ex: Vec<String> = v.iter().take(4).map(|s| s.to_string()).collect();
        t.add_row(vec![
            w.to_string(),
            v.len().to_string(),
            what.to_string(),
            ex.join(" "),
        ]);
    }
    print_report(&format!(
        "agnostic rejection set through order {k} over fields {} (sum b = 0, sum |b| <= {}), wanted removed: {} signatures\n{t}\n",
        exp.field_names().join(", "),
        k + u32::from(exp.has_reference()),
        set.len()
    ))?;
    Ok(0)
}
