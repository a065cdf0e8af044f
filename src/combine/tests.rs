//! Simulated-data tests of the combination: per-step data built from known signature
//! amplitudes, with every rejected term of the checker's rejection set at 1000 times the kept
//! amplitudes, must combine to exactly the kept amplitudes (to float precision).

use super::*;
use crate::check::{check, CheckOptions};
use crate::cycle::{read_cycle, read_cycle_toml};
use crate::experiment_file::read_experiment;
use crate::model::Experiment;
use crate::selection::{Selection, SelectionRequest};
use std::collections::BTreeMap;
use std::path::Path;

/// A deterministic pseudo-random complex amplitude of modulus in [0.5, 1.5).
fn amplitude(seed: &mut u64) -> Complex64 {
    let mut next = || {
        *seed = seed
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (*seed >> 11) as f64 / (1u64 << 53) as f64
    };
    Complex64::from_polar(0.5 + next(), std::f64::consts::TAU * next())
}

/// Every term the cycle's outputs keep or reject, with an amplitude: kept terms order 1,
/// rejected 1000x; real detection pairs each b with -b at the conjugate amplitude.
fn simulated_terms(sel: &Selection, cycle: &Cycle, seed: u64) -> BTreeMap<Vec<i64>, Complex64> {
    let exp = &sel.experiment;
    let bound = bind_cycle(sel, cycle, &SnapPolicy::default()).unwrap();
    let mut kept: Vec<Signature> = bound.outputs.iter().flat_map(|o| o.kept.clone()).collect();
    kept.sort();
    let mut rejected = Vec::new();
    for oi in 0..sel.outputs.len() {
        rejected.extend(sel.rejection_of_output(oi).into_iter().map(|t| t.signature));
    }
    let mut seed = seed;
    let mut terms: BTreeMap<Vec<i64>, Complex64> = BTreeMap::new();
    let real = exp.detection.is_real();
    for (b, big) in kept
        .iter()
        .map(|b| (b, false))
        .chain(rejected.iter().map(|b| (b, true)))
    {
        if terms.contains_key(&b.0) {
            continue;
        }
        let scale = if big && !kept.contains(b) {
            1000.0
        } else {
            1.0
        };
        let a = amplitude(&mut seed) * scale;
        if real && !b.is_zero() {
            let c = b.conjugate();
            if terms.contains_key(&c.0) {
                continue;
            }
            terms.insert(c.0.clone(), a.conj());
        } else if real {
            terms.insert(b.0.clone(), Complex64::new(a.re, 0.0));
            continue;
        }
        terms.insert(b.0.clone(), a);
    }
    terms
}

/// `S_m(column) = sum_b A_b * (1 + column) * exp(+i 2 pi b.phi_m)`, steps x columns.
fn simulate(
    sel: &Selection,
    cycle: &Cycle,
    terms: &BTreeMap<Vec<i64>, Complex64>,
    cols: usize,
) -> StepData {
    let exp = &sel.experiment;
    let bound = bind_cycle(sel, cycle, &SnapPolicy::default()).unwrap();
    let mut values = Vec::new();
    for row in bound.phases_f64() {
        for c in 0..cols {
            let s: Complex64 = terms
                .iter()
                .map(|(b, a)| {
                    let x: f64 = row.iter().zip(b).map(|(p, &k)| p * k as f64).sum();
                    a * (1.0 + c as f64) * Complex64::from_polar(1.0, std::f64::consts::TAU * x)
                })
                .sum();
            values.push(s);
        }
    }
    let shape = vec![bound.phases.len(), cols];
    if exp.detection.is_real() {
        assert!(values.iter().all(|v| v.im.abs() < 1e-6 * (1.0 + v.norm())));
        StepData::real(shape, values.iter().map(|v| v.re).collect()).unwrap()
    } else {
        StepData::complex(shape, values).unwrap()
    }
}

/// Combine simulated data and compare each output with the sum of its kept amplitudes.
fn assert_recovers(exp: &Experiment, cycle: &Cycle) {
    let sel = &selection(exp);
    let report = check(sel, cycle, &CheckOptions::default()).unwrap();
    assert!(report.clean, "the cycle must be clean for this test");
    let terms = simulated_terms(sel, cycle, 7);
    let total: f64 = terms.values().map(|a| a.norm()).sum();
    let data = simulate(sel, cycle, &terms, 3);
    let c = combine_cycle(sel, cycle, &data, &CombineRequest::default()).unwrap();
    assert!(
        terms.values().any(|a| a.norm() > 400.0),
        "no rejected term simulated"
    );
    for o in &c.outputs {
        let want: Complex64 = o.kept.iter().map(|t| terms[&t.0]).sum();
        for (col, got) in o.values.iter().enumerate() {
            let want = want * (1.0 + col as f64);
            assert!(
                (got - want).norm() <= 1e-12 * total * 3.0,
                "output {}: got {got}, want {want} (total {total})",
                o.name
            );
        }
    }
}

fn selection(exp: &Experiment) -> Selection {
    Selection::new(exp, &SelectionRequest::default()).unwrap()
}

fn scheme(name: &str) -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("schemes")
        .join(name)
}

// Published: the nested 1x3x3x3 = 27-step cycle of fluorescence-detected 2D keeps R, NR and
// 2Q from one data set (Tan, "Theory and phase-cycling scheme selection principles of
// collinear phase coherent multi-dimensional optical spectroscopy", J. Chem. Phys. 129,
// 124501, 2008 (memory)).
#[test]
fn the_nested_27_step_cycle_recovers_r_nr_and_2q_with_rejected_terms_at_1000x() {
    let exp = read_experiment(&scheme("dye-fluorescence-2d.toml")).unwrap();
    let cycle = read_cycle(&scheme("dye-fluorescence-27step.cycle.toml"), None).unwrap();
    assert_recovers(&exp, &cycle);
}

// Published practice: the 2x2 pump cycle {0, 1/2}^2 with weights +-1 keeps R + NR in
// pump-probe geometry (common practice in shaper-based 2D IR). Its hand-written weights have
// F(t) = 4 = N, so the default scaling divides by 4.
#[test]
fn the_2x2_pump_probe_cycle_recovers_the_absorptive_sum_and_scales_out_n() {
    let exp = read_experiment(&scheme("carbonyl-pump-probe.toml")).unwrap();
    let cycle = read_cycle(&scheme("carbonyl-2x2.cycle.toml"), None).unwrap();
    assert_recovers(&exp, &cycle);
    let sel = selection(&exp);
    let data = simulate(&sel, &cycle, &simulated_terms(&sel, &cycle, 3), 1);
    let c = combine_cycle(&sel, &cycle, &data, &CombineRequest::default()).unwrap();
    assert_eq!(c.outputs[0].gain[0], [4.0, 0.0]);
    assert_eq!(c.outputs[0].scale, [0.25, 0.0]);
    assert!(c.outputs[0].real && c.outputs[0].unpaired.is_empty());
}

// Designed: the designer's own 27-step cycle for the same experiment.
#[test]
fn a_designed_cycle_recovers_every_output() {
    let exp = read_experiment(&scheme("dye-fluorescence-2d.toml")).unwrap();
    let cancel = std::sync::atomic::AtomicBool::new(false);
    let ctl = crate::design::lattice::SearchControl::new(&cancel);
    let sel = selection(&exp);
    let r = crate::design::design(&sel, &crate::design::DesignOptions::default(), &ctl).unwrap();
    let cycle = r.cycle.expect("a design");
    assert_recovers(&exp, &cycle);
    // Real fluorescence data, outputs keeping R without -R: complex, and said so.
    let data = simulate(&sel, &cycle, &simulated_terms(&sel, &cycle, 5), 1);
    let c = combine_cycle(&sel, &cycle, &data, &CombineRequest::default()).unwrap();
    assert!(c.outputs.iter().all(|o| !o.real && !o.unpaired.is_empty()));
}

// Weighted (non-uniform) cycle: pump at 0, 1/4, 1/2, 3/4 turn with weights 3/8, 1/8, 3/8,
// 1/8 keeps b = 0 and cancels the pump terms +-1 (hand computation: F(+-1) = 3/8 - 3/8 +
// (1/8)(i - i) = 0, F(0) = 1).
#[test]
fn a_weighted_cycle_recovers_the_kept_amplitude() {
    let exp = read_experiment(&scheme("single-pump-probe.toml")).unwrap();
    let cycle = read_cycle_toml(
        "[cycle]\nunit = \"turns\"\nfields = [\"pump\"]\nsteps = [[\"0\"], [\"1/4\"], [\"1/2\"], [\"3/4\"]]\n\
         [[output]]\nname = \"transient-absorption\"\nweights = [\"3/8\", \"1/8\", \"3/8\", \"1/8\"]\n",
        Path::new("weighted.toml"),
        None,
    )
    .unwrap();
    assert_recovers(&exp, &cycle);
}

// The sign convention: the conjugate convention exp(-i b.phi) would return conj(A_R); ours
// returns A_R itself, and NumPy-free hand data show it on a one-field cycle.
#[test]
fn the_plus_i_convention_returns_the_term_not_its_conjugate() {
    let a = Complex64::new(0.2, 0.7);
    let phis = [0.0, 1.0 / 3.0, 2.0 / 3.0];
    let s: Vec<Complex64> = phis
        .iter()
        .map(|p| a * Complex64::from_polar(1.0, std::f64::consts::TAU * p) + 9.0)
        .collect();
    let w: Vec<Complex64> = phis
        .iter()
        .map(|p| Complex64::from_polar(1.0 / 3.0, -std::f64::consts::TAU * p))
        .collect();
    let data = StepData::complex(vec![3], s).unwrap();
    let c = apply_weights(&w, &data, 0, &[0, 1, 2]).unwrap();
    assert!((c[0] - a).norm() < 1e-14 && (c[0] - a.conj()).norm() > 0.1);
}

#[test]
fn step_axis_and_order_are_honoured_and_checked() {
    // Data laid out columns = steps, measured in the order 2, 0, 1.
    let w = [
        Complex64::new(1.0, 0.0),
        Complex64::new(10.0, 0.0),
        Complex64::new(100.0, 0.0),
    ];
    // Two rows; row r at position p holds (r + 1) * (cycle step number + 1).
    let order = [2usize, 0, 1];
    let vals: Vec<f64> = (0..2)
        .flat_map(|r| order.iter().map(move |&m| ((r + 1) * (m + 1)) as f64))
        .collect();
    let data = StepData::real(vec![2, 3], vals).unwrap();
    let c = apply_weights(&w, &data, 1, &order).unwrap();
    assert_eq!(
        c,
        vec![Complex64::new(321.0, 0.0), Complex64::new(642.0, 0.0)]
    );
    assert!(matches!(
        apply_weights(&w, &data, 0, &order),
        Err(CombineError::StepCount { found: 2, .. })
    ));
    assert!(matches!(
        apply_weights(&w, &data, 2, &order),
        Err(CombineError::NoSuchAxis { .. })
    ));
    let e = apply_weights(&w, &data, 1, &[0, 0, 1])
        .unwrap_err()
        .to_string();
    assert!(e.contains("a second time"), "{e}");
}

#[test]
fn a_drift_export_gives_its_source_order_and_a_foreign_export_is_refused() {
    let cycle = read_cycle(&scheme("carbonyl-2x2.cycle.toml"), None).unwrap();
    let mut export = cycle.clone();
    let order = vec![3usize, 1, 0, 2];
    export.steps = order.iter().map(|&m| cycle.steps[m].clone()).collect();
    let meta = crate::export::meta::ExportMeta {
        step_order: "drift".into(),
        source_steps: order.clone(),
        steps: 4,
        ..Default::default()
    };
    assert_eq!(order_from_export(&cycle, &export, &meta).unwrap(), order);
    // The same rows claimed to be in designed order: row 0 disagrees with step 0.
    let wrong = crate::export::meta::ExportMeta {
        source_steps: vec![0, 1, 2, 3],
        ..meta.clone()
    };
    let e = order_from_export(&cycle, &export, &wrong)
        .unwrap_err()
        .to_string();
    assert!(e.contains("export row 0") && e.contains("pu1"), "{e}");
    let short = Cycle {
        steps: export.steps[..3].to_vec(),
        ..export.clone()
    };
    assert!(order_from_export(&cycle, &short, &meta)
        .unwrap_err()
        .to_string()
        .contains("3 rows"));
}
