//! `pathsieve design` as a user runs it: the written cycle passes `pathsieve check`
//! unchanged, JSON parses back, impossible requests exit 1 with the reason.

mod common;

use common::run_cli as run;

#[test]
fn a_designed_cycle_file_passes_the_checker_unchanged() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("d.cycle.toml");
    let e = common::scheme("dye-fluorescence-2d.toml");
    let (code, text, err) = run(&[
        "design",
        e.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(text.contains("27 steps"), "{text}");
    assert!(text.contains("proven"), "{text}");
    let (code, text, err) = run(&["check", e.to_str().unwrap(), out.to_str().unwrap()]);
    assert_eq!(code, 0, "check: {text}\n{err}");
    // Refuses to overwrite without --force, and leaves the file as it was.
    let before = std::fs::read(&out).unwrap();
    let (code, _, err) = run(&[
        "design",
        e.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("--force"), "{err}");
    assert_eq!(std::fs::read(&out).unwrap(), before);
}

#[test]
fn design_json_reports_steps_and_what_is_proven() {
    let e = common::scheme("carbonyl-pump-probe.toml");
    let (code, text, _) = run(&["design", e.to_str().unwrap(), "--json"]);
    assert_eq!(code, 0);
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(v["steps"], 4);
    assert_eq!(v["proven_minimal"], true);
    assert_eq!(v["schema_version"], 1);
    let c = &v["cycle"];
    assert_eq!(c["unit"], "turns");
    assert_eq!(c["phases"].as_array().unwrap().len(), 4);
    assert_eq!(c["phases_turns"].as_array().unwrap().len(), 4);
    let w = &c["outputs"][0];
    assert_eq!(w["re"].as_array().unwrap().len(), 4);
    assert_eq!(w["im"].as_array().unwrap().len(), 4);
    assert_eq!(w["exact"].as_array().unwrap().len(), 4);
}

#[test]
fn design_json_gives_the_cycle_in_the_chosen_unit_as_numbers_and_exact_turns() {
    let e = common::scheme("dye-fluorescence-2d.toml");
    let (code, text, err) = run(&["design", e.to_str().unwrap(), "--json", "--unit", "index:3"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let c = &v["cycle"];
    assert_eq!(c["unit"], "grid:3");
    let phases = c["phases"].as_array().unwrap();
    let turns = c["phases_turns"].as_array().unwrap();
    assert_eq!(phases.len(), 27);
    // Every index k on the 3-step grid is the exact phase k/3 turn written beside it.
    for (row, exact) in phases.iter().zip(turns) {
        for (k, t) in row
            .as_array()
            .unwrap()
            .iter()
            .zip(exact.as_array().unwrap())
        {
            let k = k.as_i64().unwrap();
            let t = t.as_str().unwrap();
            let want = if k == 0 {
                "0".to_string()
            } else {
                format!("{k}/3")
            };
            assert_eq!(t, want);
        }
    }
    let (code, _, err) = run(&["design", e.to_str().unwrap(), "--json", "--unit", "grad"]);
    assert_eq!(code, 2);
    assert!(err.contains("index:M"), "{err}");
}

#[test]
fn an_impossible_request_exits_one_with_the_reason() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("r.toml");
    let text = std::fs::read_to_string(common::scheme("carbonyl-pump-probe.toml"))
        .unwrap()
        .replace(
            "classes = [\"rephasing\", \"non-rephasing\"]",
            "classes = [\"rephasing\"]",
        );
    std::fs::write(&f, text).unwrap();
    let (code, out, _) = run(&["design", f.to_str().unwrap()]);
    assert_eq!(code, 1);
    assert!(out.contains("No phase cycle at all"), "{out}");
    assert!(out.contains("absorptive spectrum"), "{out}");
}
