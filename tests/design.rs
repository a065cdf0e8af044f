//! The designer against published and common-practice cycles, and every design against the
//! exact checker.

mod common;

use common::{exp, pulses, LADDER, TWO_LEVEL};
use pathsieve::check::{check_cycle, CheckOptions, CheckRequest};
use pathsieve::design::lattice::{is_valid, sublattices, SearchControl};
use pathsieve::design::{design, prepare, DesignKind, DesignOptions, DesignReport, Impossibility};
use pathsieve::experiment_file::read_experiment;
use pathsieve::selection::{RejectionSource, Selection, SelectionRequest};
use proptest::prelude::*;
use std::sync::atomic::AtomicBool;

fn run(e: &pathsieve::model::Experiment, req: &SelectionRequest) -> DesignReport {
    run_with(e, req, &DesignOptions::default())
}

fn run_with(
    e: &pathsieve::model::Experiment,
    req: &SelectionRequest,
    opts: &DesignOptions,
) -> DesignReport {
    let cancel = AtomicBool::new(false);
    let sel = Selection::new(e, req).expect("selection");
    design(&sel, opts, &SearchControl::new(&cancel)).expect("design runs")
}

fn assert_passes_checker(
    e: &pathsieve::model::Experiment,
    r: &DesignReport,
    source: RejectionSource,
) {
    let cycle = r.cycle.as_ref().expect("a cycle");
    let req = CheckRequest {
        selection: SelectionRequest {
            order: Some(r.order),
            source,
            ..SelectionRequest::default()
        },
        options: CheckOptions::default(),
    };
    let report = check_cycle(e, cycle, &req).expect("check runs");
    assert!(report.exact, "verdict must be exact");
    assert!(
        report.clean,
        "designed cycle leaks: {:#?}",
        report
            .outputs
            .iter()
            .map(|o| (&o.name, &o.leaks, &o.lost))
            .collect::<Vec<_>>()
    );
    // A cycle written to the file format and read back passes unchanged.
    let text = pathsieve::cycle::write_cycle_toml(cycle);
    let back = pathsieve::cycle::read_cycle_toml(&text, "designed.cycle.toml".as_ref(), None)
        .expect("reads back");
    assert!(check_cycle(e, &back, &req).unwrap().clean);
}

#[test]
fn fluorescence_detected_r_nr_2q_needs_no_more_than_the_published_27_steps() {
    // Tan, J. Chem. Phys. 129, 124501 (2008) (memory): nested 1x3x3x3 = 27 steps yields R, NR
    // and 2Q from one data set in collinear fluorescence-detected 2D.
    let e = read_experiment(&common::scheme("dye-fluorescence-2d.toml")).unwrap();
    let r = run(&e, &SelectionRequest::default());
    let n = r.steps.expect("a design");
    assert!(n <= 27, "{n} steps");
    assert!(r.proven_minimal);
    assert_eq!(r.nested_steps, Some(27));
    assert_passes_checker(&e, &r, RejectionSource::Agnostic);
}

#[test]
fn pump_probe_absorptive_with_pump_scatter_takes_four_steps() {
    // Common practice in shaper-based 2D IR/visible: a 2x2 cycle of {0, 1/2} turn on both pumps.
    let e = read_experiment(&common::scheme("carbonyl-pump-probe.toml")).unwrap();
    let r = run(&e, &SelectionRequest::default());
    assert_eq!(r.steps, Some(4));
    assert!(r.proven_minimal);
    assert_eq!(
        r.kind,
        Some(DesignKind::Nested {
            steps_per_field: vec![2, 2]
        })
    );
    assert_passes_checker(&e, &r, RejectionSource::Agnostic);
}

#[test]
fn rephasing_alone_in_pump_probe_geometry_is_refused_with_the_reason() {
    // domain.md section 3 (common practice): R's conjugate carries NR's signature.
    let e = exp(&format!(
        "order = 3\n[detection]\nmode = \"pump-probe\"\n{}{LADDER}[[signal]]\nname = \"R\"\nclasses = [\"rephasing\"]\n",
        pulses(3, false).replace("name = \"3\"\n", "name = \"3\"\nphase = \"fixed\"\n")
    ));
    let r = run(&e, &SelectionRequest::default());
    assert_eq!(r.steps, None);
    assert!(r.cycle.is_none());
    let why = r.impossible.iter().find_map(|i| match i {
        Impossibility::Contaminated {
            via_conjugate: true,
            explanation,
            ..
        } => Some(explanation.clone()),
        _ => None,
    });
    let why = why.expect("contamination reported");
    assert!(why.contains("no phase cycle"), "{why}");
    assert!(why.contains("geometry") && why.contains("Fourier"), "{why}");
}

#[test]
fn spin_three_halves_mqmas_needs_no_more_than_cog23() {
    // Goldbourt & Madhu, Annu. Rep. NMR Spectrosc. 54, 81 (2005): Cog23(-3,0,1,11) selects
    // 0 -> +3 -> +1 -> -1 among all coherence orders |p| <= 3.
    let e = read_experiment(&common::scheme("nmr-spin32-mqmas.toml")).unwrap();
    let req = SelectionRequest {
        source: RejectionSource::FromPathways,
        ..SelectionRequest::default()
    };
    let r = run(&e, &req);
    let n = r.steps.expect("a design");
    assert!(n <= 23, "{n} steps");
    assert!(r.proven_minimal);
    assert!(
        matches!(r.kind, Some(DesignKind::Cogwheel { .. })),
        "{:?}",
        r.kind
    );
    // The optimum is cyclic, so it is the smallest cogwheel: the yardstick says so without
    // a scan of its own.
    let cog = r.cogwheel.as_ref().expect("a cogwheel yardstick");
    assert!(cog.optimum_is_cyclic);
    assert_eq!(cog.best.as_ref().map(|b| b.0), Some(n));
    assert_passes_checker(&e, &r, RejectionSource::FromPathways);
}

#[test]
fn the_cogwheel_yardstick_scans_only_between_the_optimum_and_the_nested_bound() {
    // Tan, Chem. Phys. 2008 (nested 1x3x3x3 fluorescence cycle, from memory): the 27-step
    // optimum is nested; no cogwheel of 27 steps or fewer exists, and the scan reports its
    // range up to the nested bound, none below the lattice optimum needing a scan.
    let e = read_experiment(&common::scheme("dye-fluorescence-2d.toml")).unwrap();
    let r = run(&e, &SelectionRequest::default());
    assert_eq!(r.steps, Some(27));
    let cog = r.cogwheel.as_ref().expect("a cogwheel yardstick");
    assert!(!cog.optimum_is_cyclic && cog.best.is_none());
    assert!(!cog.cancelled && !cog.budget_exhausted);
    assert_eq!(cog.excluded_below, r.nested_steps.unwrap() + 1);
    // Brute force over every cogwheel Cog27(nu) with nu in [0, 27)^3 (independent of the
    // scan): none is valid, as the lattice search's minimality at 27 and the report say.
    let sel = Selection::new(&e, &SelectionRequest::default()).unwrap();
    let prep = prepare(&sel, &DesignOptions::default()).unwrap();
    let p = &prep.problem;
    let mut any = false;
    for a in 0..27i64 {
        for b in 0..27i64 {
            for c in 0..27i64 {
                let nu = [a, b, c];
                let class = |s: &Vec<i64>| {
                    s.iter()
                        .zip(&nu)
                        .map(|(x, y)| x * y)
                        .sum::<i64>()
                        .rem_euclid(27)
                };
                let ok = p.outputs.iter().all(|o| {
                    let t = class(&o.kept[0]);
                    p.rejected.iter().all(|x| class(x) != t)
                        && p.outputs
                            .iter()
                            .filter(|q| q.name != o.name)
                            .all(|q| class(&q.kept[0]) != t)
                });
                any |= ok;
            }
        }
    }
    assert!(!any, "a 27-step cogwheel exists");
}

#[test]
fn an_aliasing_grid_is_refused_with_a_finer_grid_suggested() {
    // On a grid of 2 steps per turn, R (-1,+1,+1,-1) and NR (+1,-1,+1,-1) differ by a vector
    // in 2Z^n: no cycle on that grid separates them.
    let e = read_experiment(&common::scheme("dye-fluorescence-2d.toml")).unwrap();
    let r = run(
        &e,
        &SelectionRequest {
            grid: Some(vec![2]),
            ..SelectionRequest::default()
        },
    );
    assert_eq!(r.steps, None);
    assert!(r
        .impossible
        .iter()
        .any(|i| matches!(i, Impossibility::Aliased { finer_grid, .. } if !finer_grid.is_empty())));
}

/// Random small experiments: 3 pulses + LO (emission) or 4 pulses (population), one or two wanted signatures
/// drawn from the signal pathways, a grid of 0 (free) or 2..6 steps per turn.
fn random_case() -> impl Strategy<Value = (String, u32)> {
    (prop::sample::select(vec!["emission", "population"]), 0usize..4, prop::sample::select(vec![0u32, 3, 4, 6, 8]))
        .prop_map(|(mode, pick, grid)| {
            let (order, fields, levels) = match mode {
                "emission" => (3, pulses(3, true), TWO_LEVEL),
                _ => (4, pulses(4, false), LADDER),
            };
            let class = ["rephasing", "non-rephasing", "rephasing", "non-rephasing"][pick];
            let extra = if pick >= 2 { "\n[[signal]]\nname = \"b\"\nclasses = [\"double-quantum\"]\n" } else { "" };
            let extra = if mode == "emission" { "" } else { extra };
            (format!("order = {order}\n[detection]\nmode = \"{mode}\"\n{fields}{levels}[[signal]]\nname = \"a\"\nclasses = [\"{class}\"]\n{extra}"), grid)
        })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(12))]

    #[test]
    fn every_design_passes_the_exact_checker_and_no_smaller_lattice_exists((text, grid) in random_case()) {
        let e = exp(&text);
        let req = SelectionRequest { grid: (grid > 0).then(|| vec![grid]), ..SelectionRequest::default() };
        let opts = DesignOptions { max_steps: 200, beyond_step_sets: 200_000, ..DesignOptions::default() };
        let r = run_with(&e, &req, &opts);
        if let Some(n) = r.steps {
            assert_passes_checker(&e, &r, RejectionSource::Agnostic);
            // Brute force over every sublattice of smaller index (small problems only).
            let prep = prepare(&Selection::new(&e, &req).unwrap(), &opts).unwrap();
            if prep.problem.dims <= 3 && n <= 30 {
                for m in 1..n {
                    for l in sublattices(prep.problem.dims, m) {
                        prop_assert!(!is_valid(&prep.problem, &l), "a smaller lattice of index {m} is valid");
                    }
                }
            }
        } else {
            prop_assert!(!r.impossible.is_empty() || r.excluded_below > 0);
        }
    }
}

#[test]
fn a_weighted_step_set_beats_every_lattice_when_only_the_two_quantum_pump_term_must_go() {
    // domain.md section 6: to cancel b = 2 (and its conjugate -2) but keep b = 0 on one field,
    // steps {0, 1/4 turn} with weights (1/2, 1/2) work, while every lattice design on the
    // 4-step grid needs 4 steps (c must divide 4 but not 2).
    use pathsieve::design::weighted_stage::{search_below, weighted_cycle};
    let e = read_experiment(&common::scheme("single-pump-probe.toml")).unwrap();
    let req = SelectionRequest {
        grid: Some(vec![4]),
        ..SelectionRequest::default()
    };
    let sel = Selection::new(&e, &req).unwrap();
    let mut prep = prepare(&sel, &DesignOptions::default()).unwrap();
    prep.problem.rejected = vec![vec![2], vec![-2]];
    let cancel = AtomicBool::new(false);
    let lattice = pathsieve::design::lattice::Lattice::from_generators(1, &[vec![4]]).unwrap();
    let (summary, found) = search_below(&prep, &lattice, 4, 1_000, 3, &cancel).unwrap();
    let d = found.expect("a weighted design");
    assert_eq!(d.n, 2);
    assert_eq!(summary.exhaustive_up_to, 1);
    // Minimal over every step set on the grid, with equal weights (noise efficiency 1).
    assert!(summary.minimal_on_grid);
    assert!((d.noise_efficiency - 1.0).abs() < 1e-12);
    let cycle = weighted_cycle(&e, &prep, &d, Default::default());
    let f = |b: i64| one_field_filter(&cycle, b);
    assert!((f(0) - 1.0).norm() < 1e-12);
    assert!(f(2).norm() < 1e-12 && f(-2).norm() < 1e-12);
    assert!(
        (summary.noise_efficiency.unwrap() - 1.0).abs() < 1e-12,
        "equal weights 1/2: efficiency 1"
    );
}

#[test]
fn with_no_lattice_design_within_the_limits_the_designer_tries_weighted_step_sets() {
    // domain.md section 6 again: cancel b = +-2, keep b = 0 on one field, grid 4. Every
    // lattice design needs 4 steps, so under --max-steps 3 the lattice class is refused; the
    // weighted class then gives the 2-step set {0, 1/4 turn} with weights (1/2, 1/2).
    use pathsieve::design::lattice_stage::{lattice_search, LatticeStage};
    use pathsieve::design::weighted_stage::weighted_without_lattice;
    use pathsieve::design::Refusal;
    let e = read_experiment(&common::scheme("single-pump-probe.toml")).unwrap();
    let req = SelectionRequest {
        grid: Some(vec![4]),
        ..SelectionRequest::default()
    };
    let sel = Selection::new(&e, &req).unwrap();
    let opts = DesignOptions {
        max_steps: 3,
        ..DesignOptions::default()
    };
    let mut prep = prepare(&sel, &opts).unwrap();
    prep.problem.rejected = vec![vec![2], vec![-2]];
    prep.problem.max_steps = 3;
    let cancel = AtomicBool::new(false);
    let ctl = SearchControl::new(&cancel);
    match lattice_search(&prep, &opts, &ctl).unwrap() {
        LatticeStage::Refused { refusal, .. } => {
            assert!(matches!(refusal, Refusal::NoLatticeDesign { .. }))
        }
        LatticeStage::Found(f) => panic!("a {}-step lattice design", f.design.steps),
    }
    let mut report = DesignReport::new(&sel, &prep);
    report.refusal = Some(Refusal::NoLatticeDesign {
        remedy: pathsieve::design::LimitRemedy::MaxSteps {
            current: 3,
            known_valid: None,
        },
    });
    let cycle = weighted_without_lattice(&sel, &prep, &opts, &ctl, &mut report).expect("a design");
    assert_eq!(cycle.steps.len(), 2);
    assert_eq!(report.steps, Some(2));
    assert!(report.refusal.is_none() && report.lattice_refusal.is_some());
    assert!(report.beyond.as_ref().unwrap().minimal_on_grid);
    let f = |b: i64| one_field_filter(&cycle, b);
    assert!((f(0) - 1.0).norm() < 1e-12);
    assert!(f(2).norm() < 1e-12 && f(-2).norm() < 1e-12);
    let text = pathsieve::render::design_summary::summary(&report);
    assert!(
        text.contains("no lattice design exists within the limits"),
        "{text}"
    );
}

#[test]
fn a_lattice_refusal_says_how_far_the_weighted_class_was_searched() {
    // One cycled field (the pump) on a 3-step grid must cancel b = +1 and -1 and keep 0. Two
    // steps cannot: w0 + w1 z = 0 and w0 + w1 / z = 0 with z = exp(2 pi i k / 3), k != 0,
    // force w1 (z - 1/z) = 0, so w1 = w0 = 0 (direct computation, common practice). Under
    // --max-steps 2 both the lattice and the weighted class are refused, the latter
    // exhaustively through 2 steps.
    let e = read_experiment(&common::scheme("single-pump-probe.toml")).unwrap();
    let req = SelectionRequest {
        grid: Some(vec![3]),
        ..SelectionRequest::default()
    };
    let opts = DesignOptions {
        max_steps: 2,
        ..DesignOptions::default()
    };
    let sel = Selection::new(&e, &req).unwrap();
    let rejected = prepare(&sel, &opts).unwrap().problem.rejected;
    assert!(rejected.contains(&vec![1]) && rejected.contains(&vec![-1]));
    let r = run_with(&e, &req, &opts);
    assert!(r.cycle.is_none());
    assert!(matches!(
        r.refusal,
        Some(pathsieve::design::Refusal::NoLatticeDesign { .. })
    ));
    let b = r.beyond.as_ref().expect("the weighted class was searched");
    assert_eq!(b.exhaustive_up_to, 2);
    assert_eq!(b.found_steps, None);
    let text = pathsieve::render::design_summary::summary(&r);
    assert!(
        text.contains("Weighted step sets (the wider class): no step set on the grid [3] with at most 2 steps works"),
        "{text}"
    );
    // With a third step allowed, the 3-step cycle appears (all grid points).
    let r3 = run_with(&e, &req, &DesignOptions::default());
    assert_eq!(r3.steps, Some(3));
}

/// F(b) of a one-field cycle's first output, in floating point (an independent evaluation of
/// sum_m w_m exp(2 pi i b phi_m), domain.md section 3).
fn one_field_filter(cycle: &pathsieve::cycle::Cycle, b: i64) -> num_complex::Complex64 {
    cycle
        .steps
        .iter()
        .zip(&cycle.outputs[0].weights)
        .map(|(s, w)| {
            w.to_complex()
                * num_complex::Complex64::from_polar(
                    1.0,
                    2.0 * std::f64::consts::PI * b as f64 * s[0].turns_f64(),
                )
        })
        .sum()
}
