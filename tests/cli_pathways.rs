//! The `pathways` and `agnostic` commands as a user runs them: exit codes, JSON parsed back,
//! and clear errors for bad input.

mod common;

use common::run_cli as run;

use std::path::Path;

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

/// A JSON value read with every object's keys checked for repeats (serde_json's own `Value`
/// keeps the last of two equal keys silently).
struct NoDuplicateKeys;

impl<'de> serde::Deserialize<'de> for NoDuplicateKeys {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(NoDuplicateKeys)
    }
}

impl<'de> serde::de::Visitor<'de> for NoDuplicateKeys {
    type Value = NoDuplicateKeys;
    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        f.write_str("any JSON value")
    }
    fn visit_bool<E>(self, _: bool) -> Result<Self::Value, E> {
        Ok(self)
    }
    fn visit_i64<E>(self, _: i64) -> Result<Self::Value, E> {
        Ok(self)
    }
    fn visit_u64<E>(self, _: u64) -> Result<Self::Value, E> {
        Ok(self)
    }
    fn visit_f64<E>(self, _: f64) -> Result<Self::Value, E> {
        Ok(self)
    }
    fn visit_str<E>(self, _: &str) -> Result<Self::Value, E> {
        Ok(self)
    }
    fn visit_unit<E>(self) -> Result<Self::Value, E> {
        Ok(self)
    }
    fn visit_seq<A: serde::de::SeqAccess<'de>>(self, mut a: A) -> Result<Self::Value, A::Error> {
        while a.next_element::<NoDuplicateKeys>()?.is_some() {}
        Ok(self)
    }
    fn visit_map<A: serde::de::MapAccess<'de>>(self, mut a: A) -> Result<Self::Value, A::Error> {
        let mut seen = std::collections::BTreeSet::new();
        while let Some(key) = a.next_key::<String>()? {
            if !seen.insert(key.clone()) {
                return Err(serde::de::Error::custom(format!("duplicate key `{key}`")));
            }
            a.next_value::<NoDuplicateKeys>()?;
        }
        Ok(self)
    }
}

#[test]
fn the_duplicate_key_reader_catches_a_repeated_key() {
    // Guard for the test below: the reader must refuse what serde_json's Value accepts.
    let text = r#"{"a": 1, "b": [{"c": 2, "c": 3}]}"#;
    assert!(serde_json::from_str::<serde_json::Value>(text).is_ok());
    let err = serde_json::from_str::<NoDuplicateKeys>(text).err().unwrap();
    assert!(err.to_string().contains("duplicate key `c`"), "{err}");
}

#[test]
fn pathway_json_objects_have_unique_keys_with_labels_beside_indices() {
    let p = common::scheme("ladder-heterodyne.toml");
    let (code, out, err) = run(&["pathways", p.to_str().unwrap(), "--json", "--conjugates"]);
    assert_eq!(code, 0, "{err}");
    serde_json::from_str::<NoDuplicateKeys>(&out).unwrap_or_else(|e| panic!("{e}"));
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let first = &v["pathways"][0];
    // Elements as state indices under the pathway's names, as labels under their own.
    assert!(first["delays"][0]["ket"].is_u64(), "{first}");
    assert!(first["final_element"]["bra"].is_u64(), "{first}");
    assert!(first["delay_labels"][0].as_str().unwrap().starts_with('|'));
    assert!(first["final_label"].as_str().unwrap().starts_with('|'));
}

/// `pathways` on the ladder example with `args` and `--json`: the listed pathway objects.
fn ladder_rows(args: &[&str]) -> Vec<serde_json::Value> {
    let p = common::scheme("ladder-heterodyne.toml");
    let mut all = vec!["pathways", p.to_str().unwrap(), "--json"];
    all.extend_from_slice(args);
    let (code, out, err) = run(&all);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    v["pathways"].as_array().unwrap().clone()
}

#[test]
fn select_takes_a_signature_with_a_leading_minus() {
    // Hamm & Zanni, Concepts and Methods of 2D IR Spectroscopy (2011), ch. 4 (memory): the
    // ladder's rephasing signature (-1,+1,+1) carries three pathways (GSB, SE, ESA).
    let rows = ladder_rows(&["--select", "-1,1,1,-1"]);
    assert_eq!(rows.len(), 3);
    for r in rows {
        assert_eq!(r["signature"], serde_json::json!([-1, 1, 1, -1]));
    }
}

#[test]
fn select_with_conjugates_filters_on_the_listed_partner_signature() {
    // The conjugate of rephasing (-1,+1,+1,-1) is (+1,-1,-1,+1): asking for it with
    // --conjugates lists the three R partners, and nothing whose own signature differs.
    let rows = ladder_rows(&["--select", "1,-1,-1,1", "--conjugates"]);
    assert_eq!(rows.len(), 3);
    for r in rows {
        assert_eq!(r["signature"], serde_json::json!([1, -1, -1, 1]));
        assert_eq!(r["conjugate"], true);
        assert_eq!(r["class"], "rephasing");
    }
    // Without --conjugates no pathway has that signature.
    assert!(ladder_rows(&["--select", "1,-1,-1,1"]).is_empty());
}

#[test]
fn conjugate_weight_sums_match_the_listed_pathways() {
    // Mukamel, Principles of Nonlinear Optical Spectroscopy (1995), ch. 6 (memory): the
    // mirror image of an n-th order diagram has sign (-1)^n times the original's, so at third
    // order each conjugate signature sums to minus its partner's weight.
    let p = common::scheme("ladder-heterodyne.toml");
    let (code, out, err) = run(&["pathways", p.to_str().unwrap(), "--conjugates", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let mut listed: std::collections::BTreeMap<String, f64> = Default::default();
    for r in v["pathways"].as_array().unwrap() {
        *listed.entry(r["signature"].to_string()).or_default() += r["weight"].as_f64().unwrap();
    }
    let sums: std::collections::BTreeMap<String, f64> = v["summary"]["signatures"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| {
            (
                s["signature"].to_string(),
                s["weight_sum"].as_f64().unwrap(),
            )
        })
        .collect();
    assert_eq!(sums.len(), 6);
    for (sig, w) in &sums {
        assert!(
            (listed[sig] - w).abs() < 1e-12,
            "{sig}: listed {} summary {w}",
            listed[sig]
        );
        let partner: Vec<i64> = serde_json::from_str::<Vec<i64>>(sig)
            .unwrap()
            .iter()
            .map(|b| -b)
            .collect();
        let partner = serde_json::to_string(&partner).unwrap();
        assert!((sums[&partner] + w).abs() < 1e-12, "{sig} vs {partner}");
    }
}

/// The pathway table of every bundled experiment fits 80 columns without breaking a header
/// word or a signature across lines (common practice for terminal tables).
#[test]
fn the_pathway_table_fits_80_columns_without_broken_words() {
    for entry in std::fs::read_dir(common::scheme("")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("toml")
            || path.to_string_lossy().ends_with(".cycle.toml")
            || path.to_string_lossy().ends_with("-shaper.toml")
        {
            continue;
        }
        let (code, out, err) = run(&["pathways", path.to_str().unwrap()]);
        assert_eq!(code, 0, "{}: {err}", path.display());
        // The pathway table is the first one (the signature summary follows).
        let table: Vec<&str> = out
            .lines()
            .skip_while(|l| !l.starts_with('┌'))
            .take_while(|l| !l.starts_with('└'))
            .collect();
        assert!(!table.is_empty(), "{}: no table\n{out}", path.display());
        for l in &table {
            assert!(l.chars().count() <= 80, "{}: {l}", path.display());
        }
        let header = table[1];
        for word in ["signature", "class", "sign", "weight"] {
            assert!(header.contains(word), "{}: {header}", path.display());
        }
        // Every signature cell closes on its own line.
        for l in table.iter().skip(3) {
            let cell = l.split('┆').nth(1).unwrap_or("").trim();
            assert!(
                cell.is_empty() || (cell.starts_with('(') && cell.ends_with(')')),
                "{}: {l}",
                path.display()
            );
        }
    }
}
