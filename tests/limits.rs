//! Limits before work: every place that builds the agnostic set or runs the pathway
//! enumeration checks its size bound first, so an oversize request is refused at once, with
//! the limit named, and never after memory has been used.

mod common;

use common::{exp, pulses, LADDER, TWO_LEVEL};
use pathsieve::agnostic::agnostic_set;
use pathsieve::design::cycled_fields;
use pathsieve::pathways::{count_pathways, for_each_pathway, resolve_signals, summarize, Scope};
use pathsieve::selection::{RejectionSource, Selection, SelectionRequest};

/// Nine pulses and an LO (ten fields, all cycled: nine after the global phase), keeping R.
fn ten_fields(order: u32) -> String {
    format!(
        "order = {order}\n[detection]\nmode = \"emission\"\n{}{TWO_LEVEL}[[signal]]\nname = \"S\"\nsignatures = [[-1, 1, 1, 0, 0, 0, 0, 0, 0, -1]]\n",
        pulses(9, true)
    )
}

#[test]
fn the_designer_refuses_too_many_cycled_fields_before_building_the_agnostic_set() {
    // Through order 11 the ten-field agnostic set holds 3 685 123 terms (about 440 MB): the
    // cycled-field limit must answer first, and the agnostic set's own limit must refuse it
    // on its own too.
    let e = exp(&ten_fields(9));
    let req = SelectionRequest {
        order: Some(11),
        ..SelectionRequest::default()
    };
    let started = std::time::Instant::now();
    let err = cycled_fields(&e).unwrap_err().to_string();
    assert!(err.contains("cycled fields"), "{err}");
    assert!(err.contains("phase = \"fixed\""), "names the fix: {err}");
    let err = Selection::new(&e, &req).unwrap_err().to_string();
    assert!(err.contains("agnostic set over 10 fields"), "{err}");
    let err = agnostic_set(&e, 11, &[], false).unwrap_err().to_string();
    assert!(err.contains("agnostic set over 10 fields"), "{err}");
    assert!(err.contains("3685123 terms"), "{err}");
    assert!(started.elapsed().as_secs() < 5, "refused before work");
}

#[test]
fn the_agnostic_set_within_its_limits_is_built_with_its_exact_count() {
    // Hand count (sum b = 0, sum |b| <= 2 over 10 fields): the zero vector and the 90
    // ordered pairs e_a - e_b, 91 terms (pathsieve's agnostic_count agrees).
    let e = exp(&ten_fields(9));
    assert_eq!(agnostic_set(&e, 1, &[], false).unwrap().len(), 91);
}

/// Eleven pulses, eleventh order, a ten-state ladder: billions of candidate pathways.
fn huge_enumeration() -> String {
    let mut states = String::from("{ name = \"g\", manifold = 0 }");
    for (m, p) in [(1, "e"), (2, "f"), (3, "h")] {
        for k in 1..=3 {
            states.push_str(&format!(", {{ name = \"{p}{k}\", manifold = {m} }}"));
        }
    }
    format!(
        "order = 11\n[detection]\nmode = \"emission\"\n{}[levels]\nstates = [{states}]\n[[signal]]\nname = \"S\"\nsignatures = [[-1, 1, 1, 0, 0, 0, 0, 0, 0, 0, 0, -1]]\n",
        pulses(11, true)
    )
}

#[test]
fn every_enumeration_entry_point_refuses_an_oversize_request_before_visiting() {
    let e = exp(&huge_enumeration());
    let started = std::time::Instant::now();
    let mut visited = 0u64;
    let err = for_each_pathway(&e, Scope::Signal, |_| visited += 1).unwrap_err();
    assert!(err.to_string().contains("above the limit"), "{err}");
    assert_eq!(visited, 0);
    assert!(count_pathways(&e, Scope::Through(11)).is_err());
    assert!(summarize(&e, Scope::Signal, true, &[]).is_err());
    assert!(resolve_signals(&e).is_err());
    let req = SelectionRequest {
        source: RejectionSource::FromPathways,
        ..SelectionRequest::default()
    };
    assert!(Selection::new(&e, &req).is_err());
    assert!(started.elapsed().as_secs() < 5, "refused before work");
    // A small request passes the same gate: the ladder's 8 third-order pathways (Hamm &
    // Zanni, Concepts and Methods of 2D Infrared Spectroscopy, 2011, ch. 4 (memory)).
    let small = exp(&format!(
        "order = 3\n[detection]\nmode = \"emission\"\n{}{LADDER}",
        pulses(3, true)
    ));
    assert_eq!(count_pathways(&small, Scope::Signal).unwrap(), 8);
}

#[test]
fn the_listing_and_drawing_commands_refuse_an_oversize_enumeration_at_once() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("big.toml");
    std::fs::write(&f, huge_enumeration()).unwrap();
    let f = f.to_str().unwrap();
    let svg = dir.path().join("d.svg");
    for args in [
        vec!["pathways", f],
        vec!["pathways", f, "--select", "R"],
        vec![
            "draw",
            "diagrams",
            f,
            "--class",
            "R",
            "--out",
            svg.to_str().unwrap(),
        ],
    ] {
        let started = std::time::Instant::now();
        let (code, _, err) = common::run_cli(&args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(err.contains("above the limit"), "{args:?}: {err}");
        assert!(started.elapsed().as_secs() < 5, "{args:?} refused up front");
    }
    assert!(!svg.exists(), "no file written");
}

#[test]
fn the_design_command_answers_with_the_cycled_field_limit_first() {
    // Ten cycled fields (nine after the global phase) through order 11: the agnostic set would
    // hold 3 685 123 terms; the command must name the cycled-field limit and its fix instead.
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("ten.toml");
    std::fs::write(&f, ten_fields(9)).unwrap();
    let started = std::time::Instant::now();
    let (code, out, err) = common::run_cli(&["design", f.to_str().unwrap(), "--order", "11"]);
    assert_eq!(code, 2, "{out}\n{err}");
    assert!(
        err.contains("cycled fields") && err.contains("phase = \"fixed\""),
        "{err}"
    );
    assert!(started.elapsed().as_secs() < 5, "refused before work");
}
