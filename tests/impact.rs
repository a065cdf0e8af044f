//! Leaks that matter: each rejected term's leak weighted by its background size
//! (`[backgrounds]` in the experiment file or `--background`), ranked, with a threshold verdict
//! per figure that names its class.

mod common;

use pathsieve::check::impact::{Figure, FigureClass};
use pathsieve::check::{check_cycle, CheckOptions, CheckRequest, ImpactRequest, ToleranceRequest};
use pathsieve::cycle::read_cycle_csv;
use pathsieve::experiment_file::{parse_experiment, read_experiment};
use pathsieve::model::backgrounds::{parse_key, BackgroundKey, BackgroundRule};
use pathsieve::model::{Backgrounds, Experiment};
use pathsieve::signature::Signature;
use std::path::Path;

fn pump_probe() -> Experiment {
    read_experiment(&Path::new(env!("CARGO_MANIFEST_DIR")).join("schemes/carbonyl-pump-probe.toml"))
        .unwrap()
}

/// The 2x2 pump cycle (common practice in shaper-based 2D IR) with the last weight lost (0
/// instead of 1): by hand, F(t) = 1 + 1 + 1 + 0 = 3 for t = (-1,+1,0), F(0) = 1 - 1 - 1 + 0 = -1
/// and the scatter of pu1 onto the probe, b = (-1,0,+1), gets 1 - 1 + 1 + 0 = 1.
const BROKEN_2X2: &str =
    "# unit = degrees\npu1,pu2,pr,w:absorptive\n0,0,0,1\n0,180,0,-1\n180,0,0,-1\n180,180,0,0\n";

fn rules(list: &[(&str, f64)], exp: &Experiment) -> Backgrounds {
    let mut b = Backgrounds::default();
    for (k, s) in list {
        b.set(BackgroundRule {
            key: parse_key(k, exp).unwrap(),
            size: *s,
            given_in: "test".into(),
        });
    }
    b
}

#[test]
fn a_leak_is_weighted_by_its_background_and_ranked_first() {
    let exp = pump_probe();
    let c = read_cycle_csv(BROKEN_2X2, "b.csv".as_ref(), None).unwrap();
    let req = CheckRequest {
        options: CheckOptions {
            impact: ImpactRequest {
                backgrounds: rules(&[("unmodulated", 1e3), ("scatter", 10.0)], &exp),
                threshold: 0.01,
            },
            ..CheckOptions::default()
        },
        ..CheckRequest::default()
    };
    let r = check_cycle(&exp, &c, &req).unwrap();
    let im = &r.outputs[0].impact;
    let first = &im.terms[0];
    assert!(first.signature.is_zero(), "{:?}", first.signature);
    assert!((first.leak - 1.0 / 3.0).abs() < 1e-12);
    assert!((first.weighted - 1e3 / 3.0).abs() < 1e-9);
    assert_eq!(first.background.rule, "unmodulated");
    let scatter = im
        .terms
        .iter()
        .find(|t| t.signature == Signature(vec![-1, 0, 1]))
        .unwrap();
    assert!((scatter.weighted - 10.0 / 3.0).abs() < 1e-9);
    let v = &im.verdicts[0];
    assert_eq!((v.figure, v.class), (Figure::Leak, FigureClass::Exact));
    assert!(v.above && (v.largest - 1e3 / 3.0).abs() < 1e-9);
    // The same leak under a threshold above it is not flagged.
    let mut req = req;
    req.options.impact.threshold = 400.0;
    let r = check_cycle(&exp, &c, &req).unwrap();
    assert!(!r.outputs[0].impact.verdicts[0].above);
}

#[test]
fn the_most_specific_background_rule_wins() {
    let exp = pump_probe();
    let b = rules(
        &[
            ("default", 2.0),
            ("order-1", 3.0),
            ("scatter", 5.0),
            ("(-1,0,+1)", 7.0),
        ],
        &exp,
    );
    let size = |s: &[i64]| b.size_of(&exp, &Signature(s.to_vec())).size;
    assert_eq!(size(&[-1, 0, 1]), 7.0); // the signature
    assert_eq!(size(&[0, -1, 1]), 5.0); // scatter of pu2 onto the probe
    assert_eq!(size(&[-2, 2, 0]), 2.0); // order 3, no order rule: default
                                        // The pu1/pu2 pair with no pair rule: its order (sum |b| = 2, less the probe's unit) is 1.
    assert_eq!(size(&[-1, 1, 0]), 3.0);
    assert!(matches!(
        parse_key("[1, -1, 0]", &exp),
        Ok(BackgroundKey::Signature(_))
    ));
    assert!(parse_key("(1,-1)", &exp).unwrap_err().contains("3 fields"));
    assert!(parse_key("fluorescence", &exp)
        .unwrap_err()
        .contains("order-K"));
}

// Tolerance figures are per term and weighted too: for the intact 2x2 cycle and 1 degree of
// phase error, the scatter term's worst-case bound is sum|w| 2 sin(pi/360) / |F(t)| (hand
// computation, |b|_1 = 1 over the cycled fields), times its background.
#[test]
fn tolerance_figures_are_weighted_per_term_with_their_classes() {
    let exp = pump_probe();
    let good = BROKEN_2X2.replace("180,180,0,0", "180,180,0,1");
    let c = read_cycle_csv(&good, "g.csv".as_ref(), None).unwrap();
    let req = CheckRequest {
        options: CheckOptions {
            tolerance: Some(ToleranceRequest {
                delta_turns: 1.0 / 360.0,
                bits: Some(8),
            }),
            impact: ImpactRequest {
                backgrounds: rules(&[("scatter", 1e3)], &exp),
                threshold: 0.5,
            },
            ..CheckOptions::default()
        },
        ..CheckRequest::default()
    };
    let r = check_cycle(&exp, &c, &req).unwrap();
    let im = &r.outputs[0].impact;
    let wc = 2.0 * (std::f64::consts::PI / 360.0).sin();
    let t = &im.terms[0];
    assert_eq!(t.background.size, 1e3);
    let tol = t.tolerance.as_ref().unwrap();
    assert!((tol.worst_case - wc).abs() < 1e-12, "{}", tol.worst_case);
    let classes: Vec<(Figure, FigureClass, bool)> = im
        .verdicts
        .iter()
        .map(|v| (v.figure, v.class, v.above))
        .collect();
    assert_eq!(
        classes,
        vec![
            (Figure::Leak, FigureClass::Exact, false),
            (Figure::WorstCase, FigureClass::WorstCaseBound, true),
            (Figure::Rms, FigureClass::RmsExpectation, true),
            (Figure::Quantised, FigureClass::Numeric, false),
        ]
    );
}

#[test]
fn the_experiment_file_backgrounds_table_is_read_and_bad_entries_are_located() {
    let base = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("schemes/carbonyl-pump-probe.toml"),
    )
    .unwrap();
    let good = format!("{base}\n[backgrounds]\nunmodulated = 1e3\n\"(-1,0,+1)\" = 50\n");
    let e = parse_experiment(&good, "e.toml".as_ref()).unwrap();
    assert_eq!(
        e.backgrounds.size_of(&e, &Signature(vec![0, 0, 0])).size,
        1e3
    );
    assert_eq!(
        e.backgrounds.size_of(&e, &Signature(vec![-1, 0, 1])).size,
        50.0
    );
    let lines = base.lines().count();
    for (bad, want) in [
        ("fluorescence = 10", "order-K"),
        ("scatter = -1", "above 0"),
        ("scatter = \"big\"", "not a number"),
        ("\"(1,-1)\" = 3", "3 fields"),
    ] {
        let text = format!("{base}\n[backgrounds]\n{bad}\n");
        let err = parse_experiment(&text, "e.toml".as_ref())
            .unwrap_err()
            .to_string();
        assert!(err.contains(want), "{bad}: {err}");
        assert!(err.contains(&format!(":{}", lines + 3)), "{bad}: {err}");
    }
}

#[test]
fn the_cli_takes_background_sizes_and_a_threshold() {
    let dir = std::env::temp_dir().join(format!("pathsieve-impact-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let table = dir.join("broken.csv");
    std::fs::write(&table, BROKEN_2X2).unwrap();
    let (code, out, err) = common::run_cli(&[
        "check",
        "schemes/carbonyl-pump-probe.toml",
        table.to_str().unwrap(),
        "--background",
        "unmodulated=1e3",
        "--threshold",
        "0.05",
        "--json",
    ]);
    assert_eq!(code, 1, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let im = &v["outputs"][0]["impact"];
    assert_eq!(im["threshold"], 0.05);
    assert_eq!(im["verdicts"][0]["class"], "exact");
    assert_eq!(im["verdicts"][0]["above"], true);
    assert_eq!(im["terms"][0]["background"]["rule"], "unmodulated");
    let (code, out, _) = common::run_cli(&[
        "check",
        "schemes/carbonyl-pump-probe.toml",
        table.to_str().unwrap(),
        "--background",
        "unmodulated=1e3",
    ]);
    assert_eq!(code, 1);
    assert!(out.contains("leaks that matter: ABOVE"), "{out}");
    let (code, _, err) = common::run_cli(&[
        "check",
        "schemes/carbonyl-pump-probe.toml",
        table.to_str().unwrap(),
        "--background",
        "scatter",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("KEY=SIZE"), "{err}");
    let _ = std::fs::remove_dir_all(&dir);
}
