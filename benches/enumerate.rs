//! Benchmark of the streaming enumerator (run with `cargo bench --bench enumerate`): a
//! 4-manifold, 10-state level scheme at seventh order, summary mode. Prints pathways per
//! second and the peak resident memory, which must stay flat as the count grows.

use pathsieve::experiment_file::parse_experiment;
use pathsieve::pathways::{count_pathways, summarize, Scope};
use std::time::Instant;

fn experiment(order: usize) -> pathsieve::model::Experiment {
    let mut text = format!("order = {order}\n[detection]\nmode = \"emission\"\n");
    for j in 1..=order {
        text.push_str(&format!("[[field]]\nname = \"{j}\"\n"));
    }
    text.push_str("[[field]]\nname = \"LO\"\nkind = \"lo\"\n[levels]\nstates = [{ name = \"g\", manifold = 0 }");
    for (m, prefix) in [(1, "e"), (2, "f"), (3, "h")] {
        for k in 1..=3 {
            text.push_str(&format!(", {{ name = \"{prefix}{k}\", manifold = {m} }}"));
        }
    }
    text.push_str("]\n");
    parse_experiment(&text, "bench.toml".as_ref()).expect("valid benchmark experiment")
}

fn peak_rss_kib() -> Option<u64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    s.lines()
        .find(|l| l.starts_with("VmHWM:"))?
        .split_whitespace()
        .nth(1)?
        .parse()
        .ok()
}

fn main() {
    println!("enumerator benchmark: 10 states in 4 manifolds (1+3+3+3), emission with LO");
    println!(
        "{:<34} {:>12} {:>10} {:>14} {:>12}",
        "case", "pathways", "seconds", "pathways/s", "peak RSS"
    );
    for (label, order, scope) in [
        ("5th order, signal scope", 5usize, Scope::Signal),
        ("7th order, signal scope", 7, Scope::Signal),
        ("7 pulses, every pathway through 5", 7, Scope::Through(5)),
    ] {
        let e = experiment(order);
        let t = Instant::now();
        let s = summarize(&e, scope, false, &[]).expect("within the size limit");
        let dt = t.elapsed().as_secs_f64();
        let t2 = Instant::now();
        let n = count_pathways(&e, scope).expect("within the size limit");
        let dt2 = t2.elapsed().as_secs_f64();
        assert_eq!(n, s.total);
        println!(
            "{:<34} {:>12} {:>10.3} {:>14.0} {:>9} KiB   (count only: {:.0}/s; {} signatures)",
            label,
            s.total,
            dt,
            s.total as f64 / dt,
            peak_rss_kib().unwrap_or(0),
            n as f64 / dt2,
            s.signatures.len()
        );
    }
}
