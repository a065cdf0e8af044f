//! One selection problem for every command: what the design report claims about the written
//! cycle (clean, first leak, terms checked and leaking, kept values) equals what the checker
//! finds on the cycle read back from its file and what the leakage chart counts, over random
//! experiments in all four detection modes; and every refusal checked by an independent brute
//! force on small cases.

mod common;

use common::{exp, pulses, LADDER, TWO_LEVEL};
use pathsieve::check::{check, CheckOptions, SnapPolicy};
use pathsieve::design::lattice::SearchControl;
use pathsieve::design::lattice_stage::ClassLayout;
use pathsieve::design::{design, DesignOptions, DesignReport, Impossibility, LimitRemedy, Refusal};
use pathsieve::experiment_file::read_experiment;
use pathsieve::model::Experiment;
use pathsieve::render::leakage::{leakage_chart, TermKind};
use pathsieve::selection::{RejectionSource, Selection, SelectionRequest};
use proptest::prelude::*;
use std::sync::atomic::AtomicBool;

fn run(e: &Experiment, req: &SelectionRequest, opts: &DesignOptions) -> (Selection, DesignReport) {
    let sel = Selection::new(e, req).expect("selection");
    let cancel = AtomicBool::new(false);
    let r = design(&sel, opts, &SearchControl::new(&cancel)).expect("design runs");
    (sel, r)
}

/// The report's claims against `check` on the cycle written to TOML and read back, and
/// against the leakage chart of the same cycle.
fn assert_consistent(sel: &Selection, r: &DesignReport) {
    let Some(cycle) = &r.cycle else {
        assert!(r.refusal.is_some(), "no cycle and no refusal");
        return;
    };
    let text = pathsieve::cycle::write_cycle_toml(cycle);
    let back = pathsieve::cycle::read_cycle_toml(&text, "d.cycle.toml".as_ref(), None).unwrap();
    let c = check(sel, &back, &CheckOptions::default()).expect("check runs");
    let v = r.verified.as_ref().expect("verified");
    assert_eq!(v.clean, c.clean, "clean");
    assert!(c.clean, "a returned design is clean: {:?}", c.outputs);
    assert_eq!(r.first_leak_order, c.first_leak_order, "first leak");
    let checked: Vec<usize> = c.outputs.iter().map(|o| o.rejected_checked).collect();
    let leaking: Vec<usize> = c.outputs.iter().map(|o| o.leak_count).collect();
    assert_eq!(v.rejected_checked, checked, "terms checked");
    assert_eq!(v.leak_count, leaking, "terms leaking");
    for o in &c.outputs {
        for k in &o.kept {
            assert!(
                (k.value.abs - 1.0).abs() < 1e-9,
                "kept {} = {:?}",
                k.signature,
                k.value
            );
        }
    }
    let chart = leakage_chart(sel, &back, &SnapPolicy::default()).unwrap();
    for (s, o) in chart.series.iter().zip(&c.outputs) {
        let rejected = s
            .terms
            .iter()
            .filter(|t| t.kind != TermKind::Wanted)
            .count();
        let leaks = s
            .terms
            .iter()
            .filter(|t| t.kind == TermKind::Rejected && !t.zero)
            .count();
        assert_eq!(rejected, o.rejected_checked, "chart terms");
        assert_eq!(leaks, o.leak_count, "chart leaks");
    }
}

/// Random small experiments in the four detection modes, with and without beams.
fn random_experiment() -> impl Strategy<Value = String> {
    (0usize..4, 0usize..2, any::<bool>()).prop_map(|(mode, pick, beams)| match mode {
        0 => {
            // Emission, boxcar-like directions: k_LO = -k1 + k2 + k3 (rephasing matched).
            let b = |v: &str| if beams { format!("beam = {v}\n") } else { String::new() };
            let fields = format!(
                "[[field]]\nname = \"1\"\n{}[[field]]\nname = \"2\"\n{}[[field]]\nname = \"3\"\n{}[[field]]\nname = \"LO\"\nkind = \"lo\"\n{}",
                b("[1, 0]"), b("[0, 1]"), b("[1, 1]"), b("[0, 2]")
            );
            let class = ["rephasing", "non-rephasing"][pick];
            let class = if beams { "rephasing" } else { class };
            format!("order = 3\n[detection]\nmode = \"emission\"\n{fields}{TWO_LEVEL}[[signal]]\nname = \"S\"\nclasses = [\"{class}\"]\n")
        }
        1 => {
            let b = |v: &str| if beams { format!("beam = \"{v}\"\n") } else { String::new() };
            let fields = format!(
                "[[field]]\nname = \"p1\"\n{}[[field]]\nname = \"p2\"\n{}[[field]]\nname = \"pr\"\nphase = \"fixed\"\n{}",
                b("pump"), b("pump"), b("probe")
            );
            format!("order = 3\n[detection]\nmode = \"pump-probe\"\n{fields}{LADDER}[[signal]]\nname = \"abs\"\nclasses = [\"rephasing\", \"non-rephasing\"]\n")
        }
        2 => {
            let class = ["rephasing", "non-rephasing"][pick];
            let p = pulses(4, false).replacen("name = \"1\"\n", "name = \"1\"\nphase = \"fixed\"\n", 1);
            format!("order = 4\n[detection]\nmode = \"population\"\n{p}{LADDER}[[signal]]\nname = \"S\"\nclasses = [\"{class}\"]\n")
        }
        _ => {
            let path = ["[0, 2, 1, -1]", "[0, -1, 1, -1]"][pick];
            format!("title = \"spins\"\n[detection]\nmode = \"nmr\"\nmax_coherence = 2\ndetected_coherence = -1\n[[field]]\nname = \"A\"\n[[field]]\nname = \"B\"\n[[field]]\nname = \"C\"\n[[field]]\nname = \"rec\"\nkind = \"receiver\"\n[[signal]]\nname = \"S\"\ncoherence_path = {path}\n")
        }
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(16))]

    #[test]
    fn the_design_report_the_checker_and_the_chart_agree(
        text in random_experiment(),
        from_pathways in any::<bool>(),
    ) {
        let e = exp(&text);
        let req = SelectionRequest {
            source: if from_pathways { RejectionSource::FromPathways } else { RejectionSource::Agnostic },
            ..SelectionRequest::default()
        };
        let opts = DesignOptions { max_steps: 400, beyond_step_sets: 20_000, ..DesignOptions::default() };
        let (sel, r) = run(&e, &req, &opts);
        prop_assert!(r.steps.is_some(), "every random case has a design: {:?}", r.refusal);
        assert_consistent(&sel, &r);
    }
}

#[test]
fn every_bundled_example_designs_consistently() {
    for name in [
        "carbonyl-pump-probe.toml",
        "dye-fluorescence-2d.toml",
        "ladder-heterodyne.toml",
        "nmr-spin32-mqmas.toml",
        "single-pump-probe.toml",
        "two-level-emission.toml",
    ] {
        let e = read_experiment(&common::scheme(name)).unwrap();
        for source in [RejectionSource::Agnostic, RejectionSource::FromPathways] {
            let req = SelectionRequest {
                source,
                ..SelectionRequest::default()
            };
            let (sel, r) = run(&e, &req, &DesignOptions::default());
            assert!(r.steps.is_some() || r.refusal.is_some(), "{name}");
            assert_consistent(&sel, &r);
        }
    }
}

#[test]
fn pump_probe_absorptive_through_fifth_order_has_a_clean_design() {
    // domain.md section 9: keeping (-1,+1) and (+1,-1) in one class forces (2,-2) into L, so
    // (-3,+3) cannot be cancelled; in separate classes (cosine weights) it can. A cycle the
    // issue's reporter checked by hand has 12 steps, so the minimal one has at most 12.
    let e = read_experiment(&common::scheme("carbonyl-pump-probe.toml")).unwrap();
    let req = SelectionRequest {
        order: Some(5),
        ..SelectionRequest::default()
    };
    let (sel, r) = run(&e, &req, &DesignOptions::default());
    let n = r.steps.expect("a design");
    assert!(n <= 12, "{n} steps");
    assert_eq!(r.layout, Some(ClassLayout::Separate));
    assert!(r.proven_minimal);
    // Two unit characters summed: efficiency 1/sqrt(2) (Cauchy-Schwarz, domain.md section 9).
    assert!((r.noise_efficiency - std::f64::consts::FRAC_1_SQRT_2).abs() < 1e-9);
    assert_consistent(&sel, &r);
    // Independent check of the class argument: (-3,+3) - (-1,+1) = 2 (-1,+1) + ... lies in
    // every lattice holding (2,-2), so the one-class arrangement must leak it.
    let c = r.cycle.as_ref().unwrap();
    let f = |b: [i64; 2]| -> num_complex::Complex64 {
        c.steps
            .iter()
            .zip(&c.outputs[0].weights)
            .map(|(s, w)| {
                let x = b[0] as f64 * s[0].turns_f64() + b[1] as f64 * s[1].turns_f64();
                w.to_complex() * num_complex::Complex64::from_polar(1.0, std::f64::consts::TAU * x)
            })
            .sum()
    };
    assert!(f([-3, 3]).norm() < 1e-9 && f([3, -3]).norm() < 1e-9);
    assert!((f([-1, 1]) - 1.0).norm() < 1e-9 && (f([1, -1]) - 1.0).norm() < 1e-9);
}

#[test]
fn pump_probe_absorptive_at_third_order_is_still_the_2x2_cycle() {
    // Common practice in shaper-based 2D IR/visible: {0, 1/2} turn on both pumps, weights +-1.
    let e = read_experiment(&common::scheme("carbonyl-pump-probe.toml")).unwrap();
    let (sel, r) = run(&e, &SelectionRequest::default(), &DesignOptions::default());
    assert_eq!(r.steps, Some(4));
    assert_eq!(r.layout, Some(ClassLayout::Shared));
    assert_consistent(&sel, &r);
}

#[test]
fn rephasing_alone_in_pump_probe_is_no_phase_cycle_at_all_and_the_terms_are_identical() {
    // domain.md section 3 (common practice): R's signature equals the conjugate of NR's when
    // the probe is the LO. Hand values over (p1, p2, probe): R = (-1,+1,0), NR = (+1,-1,0).
    let e = exp(&format!(
        "order = 3\n[detection]\nmode = \"pump-probe\"\n{}{LADDER}[[signal]]\nname = \"R\"\nclasses = [\"rephasing\"]\n",
        pulses(3, false).replace("name = \"3\"\n", "name = \"3\"\nphase = \"fixed\"\n")
    ));
    let (_, r) = run(&e, &SelectionRequest::default(), &DesignOptions::default());
    assert_eq!(r.refusal, Some(Refusal::NoPhaseCycleAtAll));
    let text = pathsieve::render::design_summary::summary(&r);
    assert!(text.contains("No phase cycle at all"), "{text}");
    assert!(text.lines().count() <= 6, "a few lines: {text}");
    let kept = r
        .impossible
        .iter()
        .find_map(|i| match i {
            Impossibility::Contaminated {
                kept,
                via_conjugate: true,
                ..
            } => Some(kept.clone()),
            _ => None,
        })
        .expect("named terms");
    let nr_conjugate = [-1i64, 1, 0];
    assert_eq!(kept.0, nr_conjugate.to_vec());
    // Brute force: identical characters, so F(R) = F(NR*) for every phase and weight tried.
    for p1 in 0..6 {
        for p2 in 0..6 {
            let phi = [p1 as f64 / 6.0, p2 as f64 / 6.0, 0.0];
            let dot = |b: &[i64]| b.iter().zip(&phi).map(|(x, y)| *x as f64 * y).sum::<f64>();
            assert!((dot(&kept.0) - dot(&nr_conjugate)).abs() < 1e-15);
        }
    }
}

#[test]
fn two_outputs_keeping_one_signature_are_named_as_equal_on_every_field_not_as_a_fixed_field() {
    // Hand check: both outputs keep (-1,+1,0); the difference is zero on every field, so no
    // field list applies and no remedy of cycling a fixed field can help (distinct characters
    // only separate distinct signatures: common practice).
    let e = exp(&format!(
        "order = 3\n[detection]\nmode = \"pump-probe\"\n{}{LADDER}[[signal]]\nname = \"A\"\nsignatures = [[-1, 1, 0]]\n[[signal]]\nname = \"B\"\nsignatures = [[-1, 1, 0]]\n",
        pulses(3, false).replace("name = \"3\"\n", "name = \"3\"\nphase = \"fixed\"\n")
    ));
    let (_, r) = run(&e, &SelectionRequest::default(), &DesignOptions::default());
    let same: Vec<&Impossibility> = r
        .impossible
        .iter()
        .filter(|i| matches!(i, Impossibility::FixedFields { rejected, kept, .. } if rejected.iter().any(|b| b == kept)))
        .collect();
    assert!(!same.is_empty(), "{:?}", r.impossible);
    for i in same {
        if let Impossibility::FixedFields { fields, .. } = i {
            assert!(
                fields.is_empty(),
                "identical terms name no fixed field: {i:?}"
            );
        }
    }
    let text = pathsieve::render::design_summary::summary(&r);
    assert!(!text.contains("only on the fixed field"), "{text}");
}

#[test]
fn a_grid_refusal_is_true_and_the_named_finer_grid_lifts_it() {
    // R (-1,+1,+1,-1) and NR (+1,-1,+1,-1) differ by (2,-2,0,0): on 2 steps per turn every
    // step gives them the same phase factor; brute force over the whole grid.
    let e = read_experiment(&common::scheme("dye-fluorescence-2d.toml")).unwrap();
    let req = SelectionRequest {
        grid: Some(vec![2]),
        ..SelectionRequest::default()
    };
    let (sel, r) = run(&e, &req, &DesignOptions::default());
    assert_eq!(r.refusal, Some(Refusal::NoCycleOnThisGrid));
    let (rejected, finer) = r
        .impossible
        .iter()
        .find_map(|i| match i {
            Impossibility::Aliased {
                rejected,
                finer_grid,
                ..
            } => Some((rejected.clone(), finer_grid.clone())),
            _ => None,
        })
        .expect("aliased term named");
    let cycled: Vec<usize> = (0..e.fields.len())
        .filter(|&j| r.cycled_fields.contains(&e.fields[j].name))
        .collect();
    let t: Vec<i64> = cycled.iter().map(|&j| r.kept[0].1[0].0[j]).collect();
    let d: Vec<i64> = rejected.iter().zip(&t).map(|(a, b)| a - b).collect();
    let grid_points = |m: &[u32]| -> Vec<Vec<f64>> {
        let mut pts = vec![vec![]];
        for &g in m {
            pts = pts
                .into_iter()
                .flat_map(|p| (0..g).map(move |k| [p.clone(), vec![k as f64 / g as f64]].concat()))
                .collect();
        }
        pts
    };
    let aliased_on = |m: &[u32], d: &[i64]| {
        grid_points(m).iter().all(|p| {
            let x: f64 = p.iter().zip(d).map(|(a, b)| a * *b as f64).sum();
            (x - x.round()).abs() < 1e-12
        })
    };
    assert!(
        aliased_on(&vec![2; cycled.len()], &d),
        "really aliased on the grid"
    );
    // On the suggested grid no rejected term aliases any kept one.
    let fg: Vec<u32> = cycled.iter().map(|&j| finer[j]).collect();
    let kept_sets: Vec<Vec<i64>> = r
        .kept
        .iter()
        .flat_map(|(_, ks)| ks.iter().map(|k| cycled.iter().map(|&j| k.0[j]).collect()))
        .collect();
    for b in sel.rejected_by_all() {
        let b: Vec<i64> = cycled.iter().map(|&j| b.0[j]).collect();
        for t in &kept_sets {
            if &b != t {
                let d: Vec<i64> = b.iter().zip(t).map(|(x, y)| x - y).collect();
                assert!(!aliased_on(&fg, &d), "{b:?} still aliases {t:?} on {fg:?}");
            }
        }
    }
}

#[test]
fn a_phase_cap_refusal_advises_the_cap_and_brute_force_shows_why() {
    // With at most 2 phases per field a lattice design's phases lie on {0, 1/2} on every field,
    // where R and NR of fluorescence-detected 2D alias (their difference is (2,-2,0,0)).
    let e = read_experiment(&common::scheme("dye-fluorescence-2d.toml")).unwrap();
    let opts = DesignOptions {
        max_phases_per_field: Some(2),
        ..DesignOptions::default()
    };
    let (_, r) = run(&e, &SelectionRequest::default(), &opts);
    match &r.refusal {
        Some(Refusal::NoLatticeDesign {
            remedy: LimitRemedy::MaxPhases { current: 2, bound },
        }) => {
            assert_eq!(*bound, 8, "2^3 cycled fields");
        }
        other => panic!("{other:?}"),
    }
    let text = pathsieve::render::design_summary::summary(&r);
    assert!(
        text.contains("--max-phases") && !text.contains("raise --max-steps"),
        "{text}"
    );
    for code in 0..8u32 {
        let phi: Vec<f64> = (0..3).map(|k| f64::from((code >> k) & 1) / 2.0).collect();
        let x = 2.0 * phi[0] - 2.0 * phi[1];
        assert!((x - x.round()).abs() < 1e-12, "R and NR alias at {phi:?}");
    }
}

#[test]
fn an_order_below_the_signal_order_is_refused_with_the_reason() {
    let e = read_experiment(&common::scheme("two-level-emission.toml")).unwrap();
    for k in [0, 1, 2] {
        let err = Selection::new(
            &e,
            &SelectionRequest {
                order: Some(k),
                ..SelectionRequest::default()
            },
        )
        .unwrap_err()
        .to_string();
        assert!(
            err.contains("below the order of the wanted signals (3)"),
            "{err}"
        );
    }
}

#[test]
fn geometry_never_removes_scatter_pairs_from_the_enumerated_set() {
    // docs/conventions.md: pair terms (scatter) ignore phase matching. The single-pump
    // transient absorption keeps b = 0 on the pump; the pair pump/probe must still go.
    let e = read_experiment(&common::scheme("single-pump-probe.toml")).unwrap();
    let req = SelectionRequest {
        source: RejectionSource::FromPathways,
        ..SelectionRequest::default()
    };
    let (sel, r) = run(&e, &req, &DesignOptions::default());
    assert!(sel.geometry || e.fields.iter().all(|f| f.beam.is_none()));
    let pairs: Vec<_> = sel
        .common_terms()
        .iter()
        .filter(|t| t.signature.weight() == 2)
        .collect();
    assert!(!pairs.is_empty());
    assert!(
        r.steps.unwrap_or(0) >= 2,
        "one step cannot cancel a pair term"
    );
    assert_consistent(&sel, &r);
}
