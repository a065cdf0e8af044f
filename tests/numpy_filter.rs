//! Cross-check of the exact leak verdict against an independent general-purpose library:
//! NumPy evaluates F(b) = sum_m w_m exp(2 pi i b . phi_m) in floating point for every agnostic
//! term of published cycles, and its |F| < 1e-9 must agree with pathsieve's exact zero test.
//! Skipped, with a printed note, when `python3` with `numpy` is not installed.

mod common;

use pathsieve::cycle::{read_cycle, Weight};
use pathsieve::exact::ExactFilter;
use std::io::Write;
use std::process::{Command, Stdio};

const SCRIPT: &str = r#"
import json, sys, numpy as np
d = json.load(sys.stdin)
phi = np.array(d["phases"], dtype=float)          # N x fields, turns
w = np.array([complex(a, b) for a, b in d["weights"]])
B = np.array(d["terms"], dtype=float)             # T x fields
F = np.exp(2j * np.pi * (B @ phi.T)) @ w
print(json.dumps([bool(x) for x in (np.abs(F) < 1e-9)]))
"#;

fn numpy_zero_pattern(
    phases: &[Vec<f64>],
    weights: &[(f64, f64)],
    terms: &[Vec<i64>],
) -> Vec<bool> {
    let input = serde_json::json!({ "phases": phases, "weights": weights, "terms": terms });
    let mut child = Command::new("python3")
        .args(["-c", SCRIPT])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .expect("python3 runs");
    child
        .stdin
        .take()
        .unwrap()
        .write_all(input.to_string().as_bytes())
        .unwrap();
    let out = child.wait_with_output().unwrap();
    assert!(out.status.success());
    serde_json::from_slice(&out.stdout).unwrap()
}

/// Every integer vector with `sum |b| <= r` (no sum constraint: a table may omit fixed fields).
fn ball(n: usize, r: i64) -> Vec<Vec<i64>> {
    let mut out = vec![vec![]];
    for _ in 0..n {
        out = out
            .into_iter()
            .flat_map(|v: Vec<i64>| {
                let used: i64 = v.iter().map(|x| x.abs()).sum();
                (-(r - used)..=(r - used)).map(move |x| {
                    let mut w = v.clone();
                    w.push(x);
                    w
                })
            })
            .collect();
    }
    out
}

#[test]
fn numpy_agrees_with_the_exact_zero_test_on_published_cycles() {
    if !common::numpy_available() {
        eprintln!("note: python3 with numpy not found; NumPy cross-check skipped");
        return;
    }
    // Nested 1x3x3x3 (Tan, J. Chem. Phys. 129, 124501 (2008), memory), the 2x2 pump-probe
    // cycle (common practice), Cog23(-3,0,1,11) (Goldbourt & Madhu 2005) and a leaky table.
    for (name, radius) in [
        ("dye-fluorescence-27step.cycle.toml", 7),
        ("dye-fluorescence-leaky.cycle.toml", 6),
        ("carbonyl-2x2.cycle.toml", 6),
        ("nmr-cog23.cycle.toml", 7),
    ] {
        let cycle = read_cycle(&common::scheme(name), None).unwrap();
        let phases = cycle.exact_phases().expect("exact phases");
        let phases_f = cycle.phases_f64();
        let terms = ball(cycle.fields.len(), radius);
        for out in &cycle.outputs {
            let exact: Vec<_> = out
                .weights
                .iter()
                .map(|w| match w {
                    Weight::Exact(c) => c.clone(),
                    Weight::Approx(_) => panic!("{name}: exact weights expected"),
                })
                .collect();
            let filter = ExactFilter::new(&phases, &exact).unwrap();
            let wf: Vec<(f64, f64)> = out
                .weights
                .iter()
                .map(|w| (w.to_complex().re, w.to_complex().im))
                .collect();
            let np_zero = numpy_zero_pattern(&phases_f, &wf, &terms);
            let mut zeros = 0;
            for (b, np) in terms.iter().zip(&np_zero) {
                let ex = filter.is_zero(b).unwrap();
                assert_eq!(ex, *np, "{name} output {}: term {b:?}", out.name);
                zeros += usize::from(ex);
            }
            assert!(
                zeros > 0 && zeros < terms.len(),
                "{name}: both verdicts occur"
            );
        }
    }
}
