//! Benchmark of the exact checker: a 125-step 4-field table (1x5x5x5) against the agnostic set
//! through order 8, and a 625-step 5-field table (1x5x5x5x5) through order 7, exact vs a
//! straightforward float evaluation of the same terms. Run: `cargo bench --bench check`.

use pathsieve::check::evaluate::float_filter;
use pathsieve::check::{check_cycle, CheckRequest};
use pathsieve::cycle::{
    weights_from_signature, Cycle, CycleMeta, CycleOutput, Phase, WeightSource,
};
use pathsieve::exact::Turns;
use pathsieve::experiment_file::parse_experiment;
use pathsieve::signature::Signature;
use std::time::Instant;

fn experiment(n: usize, order: u32) -> pathsieve::model::Experiment {
    let mut t = format!("order = {order}\n[detection]\nmode = \"population\"\n");
    for j in 0..n {
        t.push_str(&format!(
            "[[field]]\nname = \"f{}\"\n{}",
            j + 1,
            if j == 0 {
                if n % 2 == 1 {
                    "phase = \"fixed\"\ninteractions = 2\n"
                } else {
                    "phase = \"fixed\"\n"
                }
            } else {
                ""
            }
        ));
    }
    let mut sig = vec![0i64; n];
    sig[0] = -1;
    sig[1] = 1;
    sig[2] = 1;
    sig[3] = -1;
    t.push_str("[levels]\nstates = [{ name = \"g\", manifold = 0 }, { name = \"e\", manifold = 1 }, { name = \"f\", manifold = 2 }]\n");
    t.push_str(&format!(
        "[[signal]]\nname = \"R\"\nsignatures = [{sig:?}]\n"
    ));
    parse_experiment(&t, "bench.toml".as_ref()).unwrap()
}

fn nested(n_cycled: usize, m: i64, t: &[i64]) -> Cycle {
    let total = (m as usize).pow(n_cycled as u32);
    let steps: Vec<Vec<Phase>> = (0..total)
        .map(|mut k| {
            (0..n_cycled)
                .map(|_| {
                    let d = (k % m as usize) as i64;
                    k /= m as usize;
                    Phase::Exact(Turns::new(d, m))
                })
                .collect()
        })
        .collect();
    let weights = weights_from_signature(&steps, t);
    Cycle {
        fields: (2..=n_cycled + 1).map(|j| format!("f{j}")).collect(),
        outputs: vec![CycleOutput {
            name: "R".into(),
            weights,
            source: WeightSource::FromSignature(Signature(t.to_vec())),
        }],
        steps,
        meta: CycleMeta::default(),
    }
}

fn bench(label: &str, n: usize, order: u32, population_order: u32) {
    let exp = experiment(n, population_order);
    let t: Vec<i64> = [1i64, 1, -1]
        .iter()
        .copied()
        .chain(std::iter::repeat(0))
        .take(n - 1)
        .collect();
    let c = nested(n - 1, 5, &t);
    let req = CheckRequest {
        selection: pathsieve::selection::SelectionRequest {
            order: Some(order),
            leak_search_to: Some(order),
            ..Default::default()
        },
        ..CheckRequest::default()
    };
    let reps = 5;
    let start = Instant::now();
    let mut report = None;
    for _ in 0..reps {
        report = Some(check_cycle(&exp, &c, &req).unwrap());
    }
    let exact = start.elapsed().as_secs_f64() / reps as f64;
    let r = report.unwrap();
    let o = &r.outputs[0];
    // The same terms, straightforward float evaluation.
    let set = pathsieve::agnostic::agnostic_set(
        &exp,
        order,
        &[Signature({
            let mut s = vec![-1i64];
            s.extend(&t);
            s
        })],
        false,
    )
    .unwrap();
    let phases = c.phases_f64();
    let mut full_phases = Vec::new();
    for row in &phases {
        let mut v = vec![0.0];
        v.extend(row);
        full_phases.push(v);
    }
    let w: Vec<_> = c.outputs[0]
        .weights
        .iter()
        .map(|w| w.to_complex())
        .collect();
    let start = Instant::now();
    let mut leaks = 0usize;
    for _ in 0..reps {
        leaks = set
            .iter()
            .filter(|b| float_filter(&full_phases, &w, &b.0).norm() > 1e-9)
            .count();
    }
    let float = start.elapsed().as_secs_f64() / reps as f64;
    println!(
        "{label}: {} steps, {} fields, order {order}: {} rejected terms (+ first-leak search), exact check {:.1} ms (leaks {}), float evaluation of the same {} terms {:.1} ms (leaks {}), ratio exact/float {:.2}",
        c.len(),
        n,
        o.rejected_checked,
        exact * 1e3,
        o.leak_count,
        set.len(),
        float * 1e3,
        leaks,
        exact / float
    );
}

fn main() {
    bench("1x5x5x5", 4, 8, 4);
    bench("1x5x5x5x5", 5, 7, 6);
}
