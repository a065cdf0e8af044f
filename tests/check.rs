//! The exact cycle checker against published and hand-computed schemes, drop-one-step leaks,
//! property tests (exact verdict = float evaluation; global-phase shift and step reordering
//! change nothing), tolerance figures and bad input.

use pathsieve::check::{
    check_cycle, CheckOptions, CheckRequest, InseparableKind, ToleranceRequest,
};
use pathsieve::cycle::{
    read_cycle, read_cycle_csv, read_cycle_toml, weights_from_signature, write_cycle_csv,
    write_cycle_toml, Cycle, CycleMeta, CycleOutput, Phase, WeightSource,
};
use pathsieve::exact::{Cyclo, ExactFilter, PhaseUnit, Turns};
use pathsieve::experiment_file::{parse_experiment, read_experiment};
use pathsieve::model::Experiment;
use pathsieve::selection::{RejectionSource, SelectionRequest};
use pathsieve::signature::Signature;
use proptest::prelude::*;
use std::path::Path;

fn scheme(name: &str) -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("schemes")
        .join(name)
}
fn exp(name: &str) -> Experiment {
    read_experiment(&scheme(name)).unwrap()
}
fn cycle(name: &str) -> Cycle {
    read_cycle(&scheme(name), None).unwrap()
}

// Nested 1x3x3x3 = 27 steps on a 4-pulse population (fluorescence) experiment keeps R, NR and
// 2Q from one data set, each clean through fourth order. Source: widely used in
// fluorescence-detected 2D, e.g. Tan, J. Chem. Phys. 129, 124501 (2008) (from memory). The first
// leak order 6 is a hand computation: b - t in {0} x 3Z^3 with sum b = 0 needs sum |b| >= 6,
// e.g. (2,-2,1,-1) = R + (3,-3,0,0).
#[test]
fn nested_27_step_cycle_keeps_r_nr_2q_clean_through_fourth_order() {
    let r = check_cycle(
        &exp("dye-fluorescence-2d.toml"),
        &cycle("dye-fluorescence-27step.cycle.toml"),
        &CheckRequest::default(),
    )
    .unwrap();
    assert!(r.clean && r.exact);
    assert_eq!(r.outputs.len(), 3);
    for o in &r.outputs {
        assert_eq!(o.leak_count, 0, "{}", o.name);
        assert_eq!(o.kept[0].value.exact.as_deref(), Some("1"));
        assert!(o.conjugates.iter().all(|c| c.cancelled));
        assert_eq!(o.first_leak.as_ref().unwrap().order, 6);
        assert!((o.noise_efficiency - 1.0).abs() < 1e-12);
    }
    assert_eq!(r.first_leak_order, Some(6));
    let f2 = &r.phases_used[1];
    assert_eq!(f2.values, vec!["0", "1/3", "2/3"]);
    assert!(r.phases_used[0].fixed);
}

// Drop one step of a clean cycle: the cancellation sums over a full group are broken, so the
// checker must report leaks (hand reasoning; weights re-derived over the 26 remaining steps).
#[test]
fn dropping_one_step_of_the_27_step_cycle_makes_it_leak() {
    let mut c = cycle("dye-fluorescence-27step.cycle.toml");
    c.steps.remove(13);
    for o in &mut c.outputs {
        if let WeightSource::FromSignature(t) = &o.source {
            o.weights = weights_from_signature(&c.steps, &t.0);
        }
    }
    let r = check_cycle(
        &exp("dye-fluorescence-2d.toml"),
        &c,
        &CheckRequest::default(),
    )
    .unwrap();
    assert!(!r.clean);
    for o in &r.outputs {
        assert!(o.leak_count > 0, "{}", o.name);
        // b = 0 (population background) now passes with F = -1/26 * exp(..) != 0.
        assert!(o.leaks.iter().any(|l| l.signature.is_zero()));
    }
}

// The leaky 1x2x2x2 table: R and NR differ by (2,-2,0,0), a multiple of the 2-step grid
// (hand computation), so the checker must call it grid aliasing.
#[test]
fn leaky_two_step_table_reports_aliasing_of_r_and_nr() {
    let r = check_cycle(
        &exp("dye-fluorescence-2d.toml"),
        &cycle("dye-fluorescence-leaky.cycle.toml"),
        &CheckRequest::default(),
    )
    .unwrap();
    assert!(!r.clean);
    let rr = &r.outputs[0];
    assert!(rr
        .leaks
        .iter()
        .any(|l| l.signature == Signature(vec![1, -1, 1, -1])));
    assert!(rr.inseparable.iter().any(
        |i| i.kind == InseparableKind::GridAliasing && i.other == Signature(vec![1, -1, 1, -1])
    ));
}

// Pump-probe geometry, 2x2 cycle {0, 1/2} on both pumps with weights +-1 keeps R + NR and
// removes the pump-probe background and pump-scatter-probe terms (common practice in
// shaper-based 2D IR/visible). Hand values: F(t) = 4 for t = (-1,1,0) and (1,-1,0).
#[test]
fn pump_probe_2x2_keeps_r_plus_nr_and_removes_background_and_scatter() {
    let e = exp("carbonyl-pump-probe.toml");
    for c in ["carbonyl-2x2.cycle.toml", "carbonyl-2x2.csv"] {
        let r = check_cycle(&e, &cycle(c), &CheckRequest::default()).unwrap();
        assert!(r.clean, "{c}");
        let o = &r.outputs[0];
        assert_eq!(o.kept.len(), 2);
        assert!(o.kept.iter().all(|k| k.value.exact.as_deref() == Some("4")));
        assert!(o.inseparable.is_empty());
        assert_eq!(o.first_leak.as_ref().unwrap().order, 5);
    }
    // The same table without the geometry filter: the background and scatter terms are
    // still cancelled; what leaks is the collinear 2Q-type term (1,1,-2).
    let req = CheckRequest {
        selection: SelectionRequest {
            geometry: Some(false),
            ..SelectionRequest::default()
        },
        ..CheckRequest::default()
    };
    let r = check_cycle(&e, &cycle("carbonyl-2x2.cycle.toml"), &req).unwrap();
    let leaks: Vec<&Signature> = r.outputs[0].leaks.iter().map(|l| &l.signature).collect();
    for bg in [[0i64, 0, 0], [1, 0, -1], [0, 1, -1], [-1, 0, 1], [0, -1, 1]] {
        assert!(!leaks.contains(&&Signature(bg.to_vec())), "{bg:?} leaks");
    }
    assert!(leaks.contains(&&Signature(vec![1, 1, -2])));
}

// R alone in pump-probe geometry: R's conjugate has NR's signature, so no phase cycle can
// separate R from NR (common practice; domain notes section 3). The checker must say so.
#[test]
fn rephasing_alone_in_pump_probe_is_reported_inseparable_from_nr() {
    let text = std::fs::read_to_string(scheme("carbonyl-pump-probe.toml"))
        .unwrap()
        .replace(
            "name = \"absorptive\"\nclasses = [\"rephasing\", \"non-rephasing\"]",
            "name = \"R\"\nclasses = [\"rephasing\"]",
        );
    let e = parse_experiment(&text, "r-alone.toml".as_ref()).unwrap();
    let mut c = cycle("carbonyl-2x2.cycle.toml");
    c.outputs[0].name = "R".into();
    let r = check_cycle(&e, &c, &CheckRequest::default()).unwrap();
    let o = &r.outputs[0];
    assert!(!r.clean);
    let phys: Vec<_> = o
        .inseparable
        .iter()
        .filter(|i| i.kind == InseparableKind::Physical)
        .collect();
    assert!(!phys.is_empty());
    assert!(phys[0].explanation.contains("NR") && phys[0].explanation.contains("no phase cycle"));
    // The conjugate (1,-1,0) passes this 2x2 cycle with F = F(t).
    assert!(o.conjugates.iter().any(|c| !c.cancelled));
}

// NMR: Cog23(-3,0,1,11) selects the spin-3/2 +3Q split-t1 pathway 0 -> +3 -> +1 -> -1 among all
// coherence orders -3..3 (Goldbourt & Madhu, Annu. Rep. NMR Spectrosc. 54, 81 (2005), from
// memory; selection rule of Levitt, Madhu & Hughes, J. Magn. Reson. 155, 300 (2002)).
#[test]
fn cogwheel_23_selects_the_triple_quantum_pathway_among_all_orders() {
    let e = exp("nmr-spin32-mqmas.toml");
    let req = CheckRequest {
        selection: SelectionRequest {
            source: RejectionSource::FromPathways,
            ..SelectionRequest::default()
        },
        ..CheckRequest::default()
    };
    let r = check_cycle(&e, &cycle("nmr-cog23.cycle.toml"), &req).unwrap();
    assert!(r.clean && r.exact);
    assert_eq!(r.outputs[0].rejected_checked, 48); // 7 x 7 paths less the wanted one
                                                   // Hand check: the first leaking path leaves the spin-3/2 space (|p| = 4).
    assert_eq!(r.outputs[0].first_leak.as_ref().unwrap().order, 4);
    // The same windings on fewer steps must leak: 23 is the smallest cogwheel cycle for this
    // pathway (Goldbourt & Madhu 2005, from memory).
    for n in [11i64, 22] {
        let mut c = cycle("nmr-cog23.cycle.toml");
        c.steps = (0..n)
            .map(|m| {
                [-3i64, 0, 1, 11]
                    .iter()
                    .map(|nu| Phase::Exact(pathsieve::exact::reduce_turn(Turns::new(nu * m, n))))
                    .collect()
            })
            .collect();
        c.outputs[0].weights = weights_from_signature(&c.steps, &[-3, 2, 2, -1]);
        let r = check_cycle(&e, &c, &req).unwrap();
        assert!(!r.clean, "Cog{n}(-3,0,1,11) should leak");
    }
}

#[test]
fn written_cycles_read_back_identical() {
    for name in [
        "dye-fluorescence-27step.cycle.toml",
        "carbonyl-2x2.csv",
        "nmr-cog23.cycle.toml",
    ] {
        let c = cycle(name);
        let t = read_cycle_toml(&write_cycle_toml(&c), "x.toml".as_ref(), None).unwrap();
        assert_eq!(t.steps, c.steps, "{name}");
        assert_eq!(t.outputs, c.outputs, "{name}");
        let v = read_cycle_csv(&write_cycle_csv(&c), "x.csv".as_ref(), None).unwrap();
        assert_eq!(v.steps, c.steps, "{name}");
        for (a, b) in v.outputs.iter().zip(&c.outputs) {
            assert_eq!(a.weights, b.weights, "{name}");
        }
    }
}

// Tolerance figures against hand computations (common practice for drift-compensated step
// orders): for the 2x2 order (0,0),(0,1/2),(1/2,0),(1/2,1/2) with weights 1,-1,-1,1 the drift
// moment of b = 0 is -1/2 + 1/6 - 1/6 + 1/2 = 0; a {0,1/2} grid is exact at 1 bit.
#[test]
fn tolerance_analysis_matches_hand_values() {
    let req = CheckRequest {
        options: CheckOptions {
            tolerance: Some(ToleranceRequest {
                delta_turns: 1.0 / 360.0,
                bits: Some(1),
            }),
            ..CheckOptions::default()
        },
        ..CheckRequest::default()
    };
    let r = check_cycle(
        &exp("carbonyl-pump-probe.toml"),
        &cycle("carbonyl-2x2.cycle.toml"),
        &req,
    )
    .unwrap();
    let t = r.outputs[0].tolerance.as_ref().unwrap();
    assert_eq!(t.quantised_max, Some(0.0));
    let zero = t.drift.iter().find(|f| f.signature.is_zero()).unwrap();
    assert!(zero.relative < 1e-12);
    assert!(t.rms_max > 0.0 && t.worst_case_max >= t.rms_max);
    // Worst-case bound for b = (1,0,-1), |b|_1 over cycled fields = 1, delta = 1 deg:
    // sum |w| * 2 sin(pi/360) / |F(t)| = 4 * 0.0174531 / 4.
    let w = t
        .worst_case
        .iter()
        .find(|f| f.signature == Signature(vec![1, 0, -1]));
    if let Some(w) = w {
        assert!((w.relative - 2.0 * (std::f64::consts::PI / 360.0).sin()).abs() < 1e-12);
    }
    // A 1/3-turn grid is not representable at 8 bits: quantisation leaks a little.
    let req = CheckRequest {
        options: CheckOptions {
            tolerance: Some(ToleranceRequest {
                delta_turns: 0.0,
                bits: Some(8),
            }),
            ..CheckOptions::default()
        },
        ..CheckRequest::default()
    };
    let r = check_cycle(
        &exp("dye-fluorescence-2d.toml"),
        &cycle("dye-fluorescence-27step.cycle.toml"),
        &req,
    )
    .unwrap();
    let q = r.outputs[0]
        .tolerance
        .as_ref()
        .unwrap()
        .quantised_max
        .unwrap();
    assert!(q > 1e-4 && q < 0.05, "{q}");
}

// Radians written with 4 decimals snap to the grid and the report says so.
#[test]
fn decimal_radians_snap_with_a_note() {
    let csv = "# unit = radians\npu1,pu2,w:absorptive\n0,0,1\n0,3.1416,-1\n3.1416,0,-1\n3.1416,3.1416,1\n";
    let c = read_cycle_csv(csv, "r.csv".as_ref(), None).unwrap();
    let r = check_cycle(
        &exp("carbonyl-pump-probe.toml"),
        &c,
        &CheckRequest::default(),
    )
    .unwrap();
    assert!(r.clean && r.exact);
    assert!(r.notes.iter().any(|n| n.contains("snapped")));
    let req = CheckRequest {
        options: CheckOptions {
            snap: pathsieve::check::SnapPolicy {
                enabled: false,
                ..Default::default()
            },
            ..CheckOptions::default()
        },
        ..CheckRequest::default()
    };
    let r = check_cycle(&exp("carbonyl-pump-probe.toml"), &c, &req).unwrap();
    assert!(!r.exact);
}

fn err_text<T: std::fmt::Debug>(r: Result<T, impl std::fmt::Display>) -> String {
    r.err().map(|e| e.to_string()).expect("an error")
}

#[test]
fn bad_tables_are_refused_naming_row_and_column() {
    let p: &Path = "t.csv".as_ref();
    let e = err_text(read_cycle_csv("# unit = turns\npu1,pu2\n0,0\n0\n", p, None));
    assert!(
        e.contains("t.csv:4") && e.contains("row 2 has 1 cells"),
        "{e}"
    );
    let e = err_text(read_cycle_csv(
        "# unit = turns\npu1,pu2\n0,0\n0,abc\n",
        p,
        None,
    ));
    assert!(
        e.contains("t.csv:4") && e.contains("column pu2") && e.contains("abc"),
        "{e}"
    );
    let e = err_text(read_cycle_csv("# unit = turns\npu1,pu2\n", p, None));
    assert!(e.contains("0 steps"), "{e}");
    let e = err_text(read_cycle_csv("pu1,pu2\n0,0\n", p, None));
    assert!(e.contains("no phase unit"), "{e}");
    let mut big = String::from("# unit = turns\npu1\n");
    big.push_str(&"0\n".repeat(10_000_000));
    let e = err_text(read_cycle_csv(&big, p, None));
    assert!(e.contains("more than 1000000 steps"), "{e}");
    let e = err_text(read_cycle_toml(
        "[cycle]\nunit = \"turns\"\nfields = [\"a\"]\nsteps = [[\"0\"], [\"0\", \"1/2\"]]\n",
        "c.toml".as_ref(),
        None,
    ));
    assert!(e.contains("c.toml:4") && e.contains("step 2"), "{e}");
    let e = err_text(read_cycle_toml(
        "[cycle]\nunit = \"turns\"\nfields = [\"a\"]\nsteps = []\n",
        "c.toml".as_ref(),
        None,
    ));
    assert!(e.contains("0 steps"), "{e}");
}

#[test]
fn mismatched_fields_and_missing_weight_columns_are_refused() {
    let dye = exp("dye-fluorescence-2d.toml");
    let c = read_cycle_csv("# unit = turns\n2,3,5\n0,0,0\n", "f.csv".as_ref(), None).unwrap();
    let e = err_text(check_cycle(&dye, &c, &CheckRequest::default()));
    assert!(
        e.contains("`5`") && e.contains("experiment fields: [1, 2, 3, 4]"),
        "{e}"
    );
    let c = read_cycle_csv(
        "# unit = turns\n2,3,4,w:R,w:NR\n0,0,0,1,1\n",
        "f.csv".as_ref(),
        None,
    )
    .unwrap();
    let e = err_text(check_cycle(&dye, &c, &CheckRequest::default()));
    assert!(e.contains("[2Q]") && e.contains("w:NAME"), "{e}");
}

const POP3: &str = "order = 4\n[detection]\nmode = \"population\"\n[[field]]\nname = \"a\"\n[[field]]\nname = \"b\"\n[[field]]\nname = \"c\"\n[[field]]\nname = \"d\"\n[levels]\nstates = [{ name = \"g\", manifold = 0 }, { name = \"e\", manifold = 1 }]\n[[signal]]\nname = \"s\"\nsignatures = [[1, -1, 0, 0]]\n";

fn random_cycle(rows: &[Vec<(i64, i64)>], t: &[i64]) -> Cycle {
    let steps: Vec<Vec<Phase>> = rows
        .iter()
        .map(|r| {
            r.iter()
                .map(|&(p, q)| Phase::Exact(pathsieve::exact::reduce_turn(Turns::new(p, q))))
                .collect()
        })
        .collect();
    let weights = weights_from_signature(&steps, t);
    Cycle {
        fields: ["a", "b", "c", "d"][..t.len()]
            .iter()
            .map(|s| s.to_string())
            .collect(),
        outputs: vec![CycleOutput {
            name: "s".into(),
            weights,
            source: WeightSource::FromSignature(Signature(t.to_vec())),
        }],
        steps,
        meta: CycleMeta::default(),
    }
}

fn leak_set(e: &Experiment, c: &Cycle) -> Vec<Signature> {
    let r = check_cycle(
        e,
        c,
        &CheckRequest {
            selection: SelectionRequest {
                leak_search_to: Some(2),
                ..SelectionRequest::default()
            },
            ..CheckRequest::default()
        },
    )
    .unwrap();
    let mut v: Vec<Signature> = r.outputs[0]
        .leaks
        .iter()
        .map(|l| l.signature.clone())
        .collect();
    v.sort();
    v
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    // Exact verdict = float evaluation (style guide: several routes, same answer).
    #[test]
    fn exact_zero_iff_float_is_tiny(rows in prop::collection::vec(prop::collection::vec((0i64..12, prop::sample::select(vec![2i64, 3, 4, 6, 12])), 3), 1..10),
                                    b in prop::collection::vec(-3i64..=3, 3)) {
        let c = random_cycle(&rows, &[1, -1, 0]);
        let phases: Vec<Vec<Turns>> = c.steps.iter().map(|r| r.iter().map(|p| p.exact().unwrap()).collect()).collect();
        let w: Vec<Cyclo> = c.outputs[0].weights.iter().map(|w| match w { pathsieve::cycle::Weight::Exact(c) => c.clone(), _ => unreachable!() }).collect();
        let f = ExactFilter::new(&phases, &w).unwrap();
        let fl = pathsieve::check::evaluate::float_filter(&c.phases_f64(), &w.iter().map(Cyclo::to_complex).collect::<Vec<_>>(), &b);
        prop_assert_eq!(f.is_zero(&b).unwrap(), fl.norm() < 1e-9);
    }

    // Shifting every phase by one constant changes no term with sum b = 0; reordering the
    // steps changes no F (domain notes section 5: global phase; F is a sum over steps).
    #[test]
    fn global_shift_and_reordering_change_nothing(rows in prop::collection::vec(prop::collection::vec((0i64..6, prop::sample::select(vec![2i64, 3, 6])), 4), 1..8),
                                                  shift in 0i64..12, seed in any::<u64>()) {
        let e = parse_experiment(POP3, "p.toml".as_ref()).unwrap();
        let c = random_cycle(&rows, &[1, -1, 0, 0]);
        let base = leak_set(&e, &c);
        let shifted: Vec<Vec<(i64, i64)>> = rows.iter().map(|r| r.iter().map(|&(p, q)| (p * 12 + shift * q, 12 * q)).collect()).collect();
        prop_assert_eq!(&leak_set(&e, &random_cycle(&shifted, &[1, -1, 0, 0])), &base);
        let mut perm = rows.clone();
        let n = perm.len();
        for i in 0..n { perm.swap(i, (seed as usize).wrapping_add(i * 7) % n); }
        prop_assert_eq!(&leak_set(&e, &random_cycle(&perm, &[1, -1, 0, 0])), &base);
    }
}

#[test]
fn unit_declared_twice_differently_is_refused() {
    let e = err_text(read_cycle_csv(
        "# unit = degrees\na\n0\n",
        "u.csv".as_ref(),
        Some(PhaseUnit::Turns),
    ));
    assert!(e.contains("declares unit degrees"), "{e}");
}
