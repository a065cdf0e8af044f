//! The `pathways` and `agnostic` commands as a user runs them: exit codes, JSON parsed back,
//! and clear errors for bad input.

mod common;

use std::path::Path;

fn run(args: &[&str]) -> (i32, String, String) {
    common::run_cli(args)
}

fn write(dir: &Path, name: &str, text: &[u8]) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.to_string_lossy().into_owned()
}

const GOOD: &str = "order = 3\n[detection]\nmode = \"emission\"\n[[field]]\nname = \"1\"\n[[field]]\nname = \"2\"\n[[field]]\nname = \"3\"\n[[field]]\nname = \"LO\"\nkind = \"lo\"\n[levels]\nstates = [{ name = \"g\", manifold = 0 }, { name = \"e\", manifold = 1 }]\n";

#[test]
fn json_listing_parses_back_with_the_textbook_counts() {
    let p = common::scheme("two-level-emission.toml");
    let (code, out, _) = run(&["pathways", p.to_str().unwrap(), "--json", "--conjugates"]);
    assert_eq!(code, 0);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["pathways"].as_array().unwrap().len(), 8);
    assert_eq!(v["summary"]["total"], 8);
    assert_eq!(v["wanted"][0]["kept"][0], serde_json::json!([-1, 1, 1, -1]));
}

#[test]
fn summary_mode_streams_the_bundled_schemes() {
    for name in [
        "dye-fluorescence-2d.toml",
        "carbonyl-pump-probe.toml",
        "nmr-spin32-mqmas.toml",
        "photocurrent-fifth-order.toml",
        "single-pump-probe.toml",
        "ladder-heterodyne.toml",
    ] {
        let p = common::scheme(name);
        let (code, out, err) = run(&["pathways", p.to_str().unwrap(), "--summary"]);
        assert_eq!(code, 0, "{name}: {err}");
        assert!(out.contains("summary:"), "{name}");
    }
}

#[test]
fn svg_diagrams_are_written_whole() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("d.svg");
    let p = common::scheme("ladder-heterodyne.toml");
    let (code, _, err) = run(&[
        "pathways",
        p.to_str().unwrap(),
        "--select",
        "R",
        "--svg",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let svg = std::fs::read_to_string(&out).unwrap();
    assert!(svg.starts_with("<?xml") && svg.trim_end().ends_with("</svg>"));
    assert_eq!(svg.matches("sign ").count(), 3, "three rephasing diagrams");
}

#[test]
fn agnostic_set_is_listed_and_counted() {
    let dir = tempfile::tempdir().unwrap();
    let f = write(dir.path(), "e.toml", GOOD.as_bytes());
    let (code, out, _) = run(&["agnostic", &f, "--json"]);
    assert_eq!(code, 0);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let rejected = v["rejected"].as_array().unwrap();
    assert_eq!(rejected.len() as u64, v["count"].as_u64().unwrap());
    // The LO alone (b = 0) and LO-pulse scatter are in the set.
    assert!(rejected.contains(&serde_json::json!([0, 0, 0, 0])));
    assert!(rejected.contains(&serde_json::json!([1, 0, 0, -1])));
}

fn assert_input_error(text: &[u8], needles: &[&str]) {
    let dir = tempfile::tempdir().unwrap();
    let f = write(dir.path(), "bad.toml", text);
    let (code, out, err) = run(&["pathways", &f]);
    assert_eq!(code, 2, "stdout: {out}\nstderr: {err}");
    assert!(err.contains("bad.toml"), "error names the file: {err}");
    for n in needles {
        assert!(err.contains(n), "expected `{n}` in: {err}");
    }
    assert!(!err.contains("panicked"), "{err}");
}

#[test]
fn a_missing_order_is_named_with_a_fix() {
    assert_input_error(
        GOOD.replace("order = 3\n", "").as_bytes(),
        &["order", "add"],
    );
}

#[test]
fn an_unknown_key_is_named_with_its_line() {
    assert_input_error(
        GOOD.replace("mode = \"emission\"", "mode = \"emission\"\ncolour = 3")
            .as_bytes(),
        &[":4", "colour"],
    );
}

#[test]
fn orders_zero_and_ninety_nine_are_refused_before_work() {
    assert_input_error(
        GOOD.replace("order = 3", "order = 0").as_bytes(),
        &[":1", "order", "1..=11"],
    );
    assert_input_error(
        GOOD.replace("order = 3", "order = 99").as_bytes(),
        &["order", "1..=11"],
    );
}

#[test]
fn a_transition_to_an_unknown_state_is_named() {
    let text = format!("{GOOD}transitions = [{{ from = \"g\", to = \"x\" }}]\n");
    assert_input_error(text.as_bytes(), &["unknown state `x`", "g, e"]);
}

#[test]
fn a_non_utf8_file_is_refused_with_its_line() {
    let mut bytes = GOOD.as_bytes().to_vec();
    bytes.extend_from_slice(b"# caf\xe9\n");
    assert_input_error(&bytes, &["UTF-8", ":15"]);
}

#[test]
fn an_order_that_the_detection_cannot_see_is_explained() {
    assert_input_error(GOOD.replace("order = 3", "order = 4").as_bytes(), &["odd"]);
}

#[test]
fn a_missing_file_is_an_input_error() {
    let (code, _, err) = run(&["pathways", "/no/such/file.toml"]);
    assert_eq!(code, 2);
    assert!(err.contains("/no/such/file.toml"));
}

#[test]
fn an_enumeration_that_would_run_for_hours_is_refused_before_work() {
    // Eleven pulses, eleventh order, ten states in four manifolds: billions of candidates.
    let mut text = String::from("order = 11\n[detection]\nmode = \"emission\"\n");
    for j in 1..=11 {
        text.push_str(&format!("[[field]]\nname = \"p{j}\"\n"));
    }
    text.push_str("[[field]]\nname = \"LO\"\nkind = \"lo\"\n[levels]\nstates = [{ name = \"g\", manifold = 0 }");
    for (m, p) in [(1, "e"), (2, "f"), (3, "h")] {
        for k in 1..=3 {
            text.push_str(&format!(", {{ name = \"{p}{k}\", manifold = {m} }}"));
        }
    }
    text.push_str("]\n");
    let dir = tempfile::tempdir().unwrap();
    let f = write(dir.path(), "big.toml", text.as_bytes());
    let started = std::time::Instant::now();
    let (code, _, err) = run(&["pathways", &f, "--all", "--summary"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("above the limit"), "{err}");
    assert!(started.elapsed().as_secs() < 10, "refused up front");
}
