//! `pathsieve check` as a user runs it: exit codes 0/1/2, JSON parsed back, errors naming row
//! and column.

mod common;

use common::run_cli as run;

// Nested 1x3x3x3 on the fluorescence 2D experiment: clean, first leak order 6 (Tan, J. Chem.
// Phys. 129, 124501 (2008), from memory; order 6 by hand computation).
#[test]
fn the_nested_cycle_is_clean_and_exits_zero_with_json() {
    let (code, out, err) = run(&[
        "check",
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-27step.cycle.toml",
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["schema_version"], 1);
    assert_eq!(v["clean"], true);
    assert_eq!(v["first_leak_order"], 6);
    assert_eq!(v["outputs"].as_array().unwrap().len(), 3);
}

#[test]
fn the_leaky_table_exits_one_and_lists_its_leaks() {
    let (code, out, _) = run(&[
        "check",
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-leaky.cycle.toml",
    ]);
    assert_eq!(code, 1);
    assert!(out.contains("LEAK") && out.contains("aliasing"), "{out}");
}

// Pump-probe 2x2 keeps R + NR (common practice); the CSV spreadsheet form gives the same.
#[test]
fn the_pump_probe_csv_table_is_clean() {
    let (code, out, err) = run(&[
        "check",
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.csv",
        "--json",
        "--tolerance",
        "1",
        "--bits",
        "8",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["outputs"][0]["kept"][0]["value"]["exact"], "4");
    assert!(v["outputs"][0]["tolerance"]["rms_max"].as_f64().unwrap() > 0.0);
}

// Cog23(-3,0,1,11) (Goldbourt & Madhu, Annu. Rep. NMR Spectrosc. 54, 81 (2005), from memory).
#[test]
fn the_cogwheel_cycle_is_clean_over_all_coherence_paths() {
    let (code, _, err) = run(&[
        "check",
        "schemes/nmr-spin32-mqmas.toml",
        "schemes/nmr-cog23.cycle.toml",
        "--from-pathways",
    ]);
    assert_eq!(code, 0, "{err}");
}

#[test]
fn a_bad_phase_exits_two_naming_row_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("bad.csv");
    std::fs::write(
        &p,
        "# unit = degrees\npu1,pu2,w:absorptive\n0,0,1\n0,abc,-1\n",
    )
    .unwrap();
    let (code, _, err) = run(&[
        "check",
        "schemes/carbonyl-pump-probe.toml",
        p.to_str().unwrap(),
    ]);
    assert_eq!(code, 2);
    assert!(
        err.contains("bad.csv:4") && err.contains("column pu2") && err.contains("abc"),
        "{err}"
    );
}

// The issue's typo (issue 8) on the bundled nested 27-step table with derived weights (Tan,
// J. Chem. Phys. 129, 124501 (2008) (memory)): step 16 = (1/3, 2/3, 0) turn gets 210 deg on
// field 2. Each output names the culprit once, in the text and in --json.
#[test]
fn a_culprit_is_named_once_per_output() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string("schemes/dye-fluorescence-27step.cycle.toml").unwrap();
    let row = r#"  ["1/3", "2/3", "0"],"#;
    assert_eq!(text.matches(row).count(), 1);
    let p = dir.path().join("typo.cycle.toml");
    std::fs::write(&p, text.replace(row, r#"  ["7/12", "2/3", "0"],"#)).unwrap();
    let args = [
        "check",
        "schemes/dye-fluorescence-2d.toml",
        p.to_str().unwrap(),
    ];
    let (code, out, err) = run(&args);
    assert_eq!(code, 1, "{err}");
    let line = "suspect (wrong phase): step 16, field 2: 7/12 turn (210 deg) -> 1/3 turn (120 deg)";
    // One line per output (three outputs), not two.
    assert_eq!(common::unwrapped(&out).matches(line).count(), 3, "{out}");
    let (code, out, err) = run(&[args[0], args[1], args[2], "--json"]);
    assert_eq!(code, 1, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    for o in v["outputs"].as_array().unwrap() {
        let texts: Vec<&str> = o["suspects"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s["correction"].as_str().unwrap())
            .collect();
        let mut unique = texts.clone();
        unique.sort_unstable();
        unique.dedup();
        assert_eq!(unique.len(), texts.len(), "{}: {texts:?}", o["name"]);
        assert!(texts.iter().any(|t| line.ends_with(t)), "{texts:?}");
        assert_eq!(o["suspect_steps"], serde_json::json!([16]));
    }
}
