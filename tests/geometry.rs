//! Beam directions written as rounded decimals: snapped to a simple exact value within their
//! written precision (with a note), kept as written when none fits (equal written values taken
//! as equal), and refused with the line and the fix when a phase-matching decision depends on
//! the rounding. A phase-matching decision never flips because of rounding.

mod common;

use pathsieve::experiment_file::parse_experiment;
use pathsieve::model::Experiment;
use pathsieve::selection::{Selection, SelectionRequest};
use pathsieve::signature::Signature;

/// A heterodyned three-pulse experiment on a two-level system with the given beams (fields 1,
/// 2, 3, LO).
fn boxcars(beams: [&str; 4]) -> String {
    format!(
        "order = 3\n[detection]\nmode = \"emission\"\n\
         [[field]]\nname = \"1\"\nbeam = {}\n[[field]]\nname = \"2\"\nbeam = {}\n\
         [[field]]\nname = \"3\"\nbeam = {}\n[[field]]\nname = \"LO\"\nkind = \"lo\"\nphase = \"fixed\"\nbeam = {}\n{}\
         [[signal]]\nname = \"R\"\nclasses = [\"rephasing\"]\n",
        beams[0],
        beams[1],
        beams[2],
        beams[3],
        common::TWO_LEVEL
    )
}

fn phase_matched_terms(e: &Experiment) -> Vec<Signature> {
    let sel = Selection::new(e, &SelectionRequest::default()).unwrap();
    assert!(sel.geometry);
    let mut v: Vec<Signature> = sel
        .search_terms()
        .iter()
        .map(|t| t.signature.clone())
        .collect();
    v.sort();
    v
}

// Folded BOXCARS, k1 = (1,1), k2 = (-1,1), k3 = (1,-1), LO along -k1+k2+k3 = (-1,-1) (Hamm &
// Zanni, Concepts and Methods of 2D Infrared Spectroscopy, 2011, ch. on geometries, from
// memory). Unit vectors written to 3 decimals (0.707 for 1/sqrt 2, an irrational) scale every
// beam alike, so every phase-matching decision is that of the integer corners: scaling all
// wavevectors by one factor maps sum b_j k_j = 0 to itself.
#[test]
fn rounded_unit_vectors_decide_like_the_exact_corners() {
    let exact = common::exp(&boxcars(["[1, 1]", "[-1, 1]", "[1, -1]", "[-1, -1]"]));
    let rounded = common::exp(&boxcars([
        "[0.707, 0.707]",
        "[-0.707, 0.707]",
        "[0.707, -0.707]",
        "[-0.707, -0.707]",
    ]));
    assert_eq!(phase_matched_terms(&exact), phase_matched_terms(&rounded));
    assert!(rounded.is_phase_matched(&Signature(vec![-1, 1, 1, -1])));
    assert!(!rounded.is_phase_matched(&Signature(vec![1, -1, 1, -1])));
    assert_eq!(rounded.beam_rounding.len(), 8);
}

// 0.333 and 0.667 (2 significant decimals' worth of a third) snap to 1/3 and 2/3 inside their
// written precision (+-0.0005; 3^2 * 0.001 <= 1/8), so the geometry decides like the beams
// written as integers scaled by 3. Read literally (the same digits scaled by 1000: 3 x 333 is
// not 1000) some decisions differ: that is the flip snapping prevents.
#[test]
fn a_third_written_to_three_decimals_snaps_with_a_note() {
    let snapped = common::exp(&boxcars([
        "[0.333, 0]",
        "[0, 0.333]",
        "[0.667, 0]",
        "[1, 0.333]",
    ]));
    let exact = common::exp(&boxcars(["[1, 0]", "[0, 1]", "[2, 0]", "[3, 1]"]));
    assert!(snapped.beam_rounding.is_empty());
    assert!(snapped
        .beam_notes
        .iter()
        .any(|n| n.contains("`0.333` taken as 1/3")));
    assert_eq!(phase_matched_terms(&exact), phase_matched_terms(&snapped));
    let literal = common::exp(&boxcars([
        "[333, 0]",
        "[0, 333]",
        "[667, 0]",
        "[1000, 333]",
    ]));
    assert_ne!(phase_matched_terms(&exact), phase_matched_terms(&literal));
}

// 0.7071 and 1.4142 (sqrt 2 / 2 and sqrt 2, irrational, 4 decimals): no simple fraction fits,
// and the term (2,-1,-1,0) has 2 * 0.7071 - 1.4142 = 0 as written but any value in
// [-1.5e-4, 1.5e-4] within the precision: the decision depends on the rounding and is refused
// with the line and the fix, by the library and by `check` (exit 2).
#[test]
fn a_decision_that_depends_on_the_rounding_is_refused_with_the_line_and_the_fix() {
    let text = boxcars(["[0.7071, 0]", "[1.4142, 0]", "[0, 1]", "[2.1213, 1]"]);
    let e = parse_experiment(&text, "two.toml".as_ref()).unwrap();
    let err = match Selection::new(&e, &SelectionRequest::default()) {
        Err(e) => e.to_string(),
        Ok(_) => panic!("a rounding-dependent geometry must be refused"),
    };
    assert!(err.contains("`0.7071` (two.toml line 6)"), "{err}");
    assert!(
        err.contains("depends on the rounding") && err.contains("--no-geometry"),
        "{err}"
    );
    // Without the geometry filter nothing depends on the beams.
    let req = SelectionRequest {
        geometry: Some(false),
        ..SelectionRequest::default()
    };
    assert!(Selection::new(&e, &req).is_ok());
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("two.toml");
    std::fs::write(&p, &text).unwrap();
    let (code, _, err) =
        common::run_cli(&["check", p.to_str().unwrap(), "schemes/carbonyl-2x2.csv"]);
    assert_eq!(code, 2);
    assert!(err.contains("line 6") && err.contains("Fix:"), "{err}");
}

#[test]
fn beam_components_with_too_many_digits_are_refused_with_the_fix() {
    let text = boxcars(["[0.70710678118654752, 0]", "[0, 1]", "[1, 0]", "[1, 1]"]);
    let err = parse_experiment(&text, "long.toml".as_ref())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("long.toml") && err.contains("15 significant digits"),
        "{err}"
    );
}

fn cli_json(args: &[&str]) -> serde_json::Value {
    let (code, out, err) = common::run_cli(args);
    assert!(code == 0 || code == 1, "{args:?}: {err}");
    serde_json::from_str(&out).unwrap()
}

fn signatures(v: &serde_json::Value) -> std::collections::BTreeSet<Vec<i64>> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|s| {
            s.as_array()
                .unwrap()
                .iter()
                .map(|x| x.as_i64().unwrap())
                .collect()
        })
        .collect()
}

// One geometry rule everywhere (issue 8): on the bundled pump-probe scheme with beam directions
// (two pumps along one beam, the probe along another), `pathways` marks a term phase matched
// exactly when `check` and `design` keep it in their rejection set (or it is wanted), and
// `agnostic --geometry` lists the same set. The physics (common practice): with k_pu1 = k_pu2,
// scatter pairs such as (+1,0,-1) reach the detector whatever the directions and are always
// rejected; (-2,+2,0) radiates along k_pr and is rejected; (+2,0,-2), (+2,-1,-1) and the 2Q
// term (+1,+1,-2) do not radiate along the probe and are dropped.
#[test]
fn pathways_check_design_and_agnostic_agree_on_what_is_phase_matched() {
    let exp = "schemes/carbonyl-pump-probe.toml";
    let listing = cli_json(&["pathways", exp, "--all", "--summary", "--json"]);
    let check = cli_json(&["check", exp, "schemes/carbonyl-2x2.cycle.toml", "--json"]);
    let design = cli_json(&["design", exp, "--json"]);
    let agnostic = cli_json(&["agnostic", exp, "--geometry", "--json"]);
    let checked: std::collections::BTreeSet<Vec<i64>> = check["outputs"][0]["impact"]["terms"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| {
            t["signature"]
                .as_array()
                .unwrap()
                .iter()
                .map(|x| x.as_i64().unwrap())
                .collect()
        })
        .collect();
    assert_eq!(checked, signatures(&agnostic["rejected"]));
    assert_eq!(
        design["rejected_terms"].as_u64(),
        Some(checked.len() as u64)
    );
    assert_eq!(
        design["verified"]["rejected_checked"],
        serde_json::json!([checked.len()])
    );
    let wanted = signatures(&agnostic["wanted"]);
    let mut matched = 0;
    for e in listing["summary"]["signatures"].as_array().unwrap() {
        let s: Vec<i64> = e["signature"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_i64().unwrap())
            .collect();
        let in_selection = checked.contains(&s) || wanted.contains(&s);
        assert_eq!(e["phase_matched"].as_bool(), Some(in_selection), "{s:?}");
        matched += usize::from(in_selection);
    }
    assert_eq!(matched, 7, "{listing}");
    for (s, kept) in [
        (vec![1, 0, -1], true),
        (vec![-2, 2, 0], true),
        (vec![2, 0, -2], false),
        (vec![2, -1, -1], false),
        (vec![1, 1, -2], false),
    ] {
        assert_eq!(checked.contains(&s), kept, "{s:?}");
    }
}
