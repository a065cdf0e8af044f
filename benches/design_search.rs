//! Times the lattice-design search on the reference scenarios (run with
//! `cargo bench --bench design_search`); figures go to docs/performance.md.

use std::sync::atomic::AtomicBool;
use std::time::Instant;

use pathsieve::design::lattice::{
    search, LatticeProblem, OutputSpec, SearchControl, SearchOutcome,
};

/// Every `b` in Z^m with `sum |b| <= k`, and `sum b = 0` if `zero_sum`.
fn ball(m: usize, k: i64, zero_sum: bool) -> Vec<Vec<i64>> {
    fn rec(m: usize, k: i64, z: bool, cur: &mut Vec<i64>, out: &mut Vec<Vec<i64>>) {
        let used: i64 = cur.iter().map(|x| x.abs()).sum();
        if cur.len() == m {
            if !z || cur.iter().sum::<i64>() == 0 {
                out.push(cur.clone());
            }
            return;
        }
        for v in -(k - used)..=(k - used) {
            cur.push(v);
            rec(m, k, z, cur, out);
            cur.pop();
        }
    }
    let mut out = Vec::new();
    rec(m, k, zero_sum, &mut Vec::new(), &mut out);
    out
}

/// Agnostic problem: fields `m`, order bound `k`; `drop` removes field 0 (global phase).
fn agnostic(
    name: &str,
    wanted: &[Vec<i64>],
    k: i64,
    zero_sum: bool,
    drop: bool,
) -> (String, LatticeProblem) {
    let m = wanted[0].len();
    let cut = |b: &Vec<i64>| if drop { b[1..].to_vec() } else { b.clone() };
    let rejected: Vec<Vec<i64>> = ball(m, k, zero_sum)
        .into_iter()
        .filter(|b| !wanted.contains(b))
        .map(|b| cut(&b))
        .collect();
    let dims = if drop { m - 1 } else { m };
    let outputs = wanted
        .iter()
        .enumerate()
        .map(|(i, w)| OutputSpec {
            name: format!("out{i}"),
            kept: vec![cut(w)],
        })
        .collect();
    let p = LatticeProblem {
        dims,
        grid: vec![0; dims],
        outputs,
        rejected,
        max_steps: 100_000,
        max_phases_per_field: None,
    };
    (format!("{name} ({} rejected)", p.rejected.len()), p)
}

fn mqmas() -> (String, LatticeProblem) {
    let sig = |p1: i64, p2: i64| vec![-(p2 - p1), -(-1 - p2), -1];
    let rejected = (-3..=3)
        .flat_map(|a| (-3..=3).map(move |b| (a, b)))
        .filter(|&x| x != (3, 1))
        .map(|(a, b)| sig(a, b))
        .collect();
    let p = LatticeProblem {
        dims: 3,
        grid: vec![0; 3],
        outputs: vec![OutputSpec {
            name: "+3Q".into(),
            kept: vec![sig(3, 1)],
        }],
        rejected,
        max_steps: 10_000,
        max_phases_per_field: None,
    };
    ("spin-3/2 +3Q MQMAS, 3 cycled".into(), p)
}

fn main() {
    let r = vec![-1, 1, 1, -1];
    let nr = vec![1, -1, 1, -1];
    let q2 = vec![1, 1, -1, -1];
    let scenarios = vec![
        agnostic(
            "fluorescence R/NR/2Q, 4 fields (3 cycled), order 4",
            &[r.clone(), nr.clone(), q2.clone()],
            4,
            true,
            true,
        ),
        mqmas(),
        agnostic(
            "4 cycled fields, R only, |b|_1 <= 4, no zero-sum",
            std::slice::from_ref(&r),
            4,
            false,
            false,
        ),
        agnostic(
            "4 cycled fields, R/NR/2Q, |b|_1 <= 4, no zero-sum",
            &[r.clone(), nr.clone(), q2.clone()],
            4,
            false,
            false,
        ),
        agnostic(
            "4 fields (3 cycled) R/NR/2Q, order 6",
            &[r.clone(), nr, q2],
            6,
            true,
            true,
        ),
        agnostic(
            "4 cycled fields, R only, |b|_1 <= 6, no zero-sum",
            &[r],
            6,
            false,
            false,
        ),
        agnostic(
            "6 fields (5 cycled), fifth order + LO, |b|_1 <= 6",
            &[vec![-1, 1, 1, -1, 1, -1]],
            6,
            true,
            true,
        ),
        agnostic(
            "6 fields (5 cycled), fifth order + LO, R and NR",
            &[vec![-1, 1, 1, -1, 1, -1], vec![1, -1, 1, -1, 1, -1]],
            6,
            true,
            true,
        ),
        agnostic(
            "6 fields (5 cycled), fifth order + LO, R, NR and 2Q",
            &[
                vec![-1, 1, 1, -1, 1, -1],
                vec![1, -1, 1, -1, 1, -1],
                vec![1, 1, -1, -1, 1, -1],
            ],
            6,
            true,
            true,
        ),
    ];
    let only: Option<String> = std::env::args().nth(1).filter(|a| !a.starts_with('-'));
    println!("| scenario | N found | nested N | lattices tested | time (s) |");
    println!("|---|---|---|---|---|");
    for (name, p) in scenarios {
        if only.as_ref().is_some_and(|o| !name.contains(o.as_str())) {
            continue;
        }
        let cancel = AtomicBool::new(false);
        let t0 = Instant::now();
        let verbose = std::env::var_os("DESIGN_PROGRESS").is_some();
        let report = move |pr: pathsieve::design::lattice::Progress| {
            if verbose {
                eprintln!(
                    "  [{:.2}s] scanning from N = {}, {} tested",
                    t0.elapsed().as_secs_f64(),
                    pr.index,
                    pr.lattices_tested
                );
            }
        };
        let ctl = SearchControl {
            cancel: &cancel,
            progress: Some(&report),
        };
        let out = search(&p, &ctl);
        let dt = t0.elapsed().as_secs_f64();
        match out {
            Ok(SearchOutcome::Found(d)) => println!(
                "| {name} | {}{} | {} | {} | {dt:.3} |",
                d.steps,
                if d.proven_minimal { "" } else { " (unproven)" },
                d.nested_bound.map_or("-".into(), |n| n.to_string()),
                d.lattices_tested
            ),
            other => println!("| {name} | {other:?} | | | {dt:.3} |"),
        }
    }
}
