//! Partial pulse overlap: groups of pulses whose interactions may come in any order among
//! themselves. The extra orderings are counted by hand against the enumerator, classes stay
//! those of the time-ordered pathways, and the file's errors name the fix.

mod common;

use common::{exp, pulses, TWO_LEVEL};
use pathsieve::experiment_file::parse_experiment;
use pathsieve::model::PathwayClass;
use pathsieve::pathways::{for_each_pathway, resolve_signals, Pathway, Scope};
use pathsieve::signature::Signature;

fn two_level(overlap: &str) -> String {
    format!(
        "order = 3\noverlap = {overlap}\n[detection]\nmode = \"emission\"\n{}{TWO_LEVEL}[[signal]]\nname = \"R\"\nclasses = [\"rephasing\"]\n",
        pulses(3, true)
    )
}

fn collect(text: &str) -> Vec<Pathway> {
    let mut v = Vec::new();
    for_each_pathway(&exp(text), Scope::Signal, |p| v.push(p.clone())).unwrap();
    v
}

fn count_with(ps: &[Pathway], sig: &[i64], time_ordered: bool) -> usize {
    ps.iter()
        .filter(|p| p.signature.0 == sig && p.time_ordered == time_ordered)
        .count()
}

#[test]
fn overlapping_first_two_pulses_add_four_reordered_pathways() {
    // Hand count, two-level system, RWA, one interaction per pulse, emission from |e><g|:
    // the first interaction is ket-up or bra-up (2 ways), the second goes to |g><g| or
    // |e><e| (2 ways), the third must leave |e><g| (1 way): 4 pathways per pulse order
    // (Mukamel, Principles of Nonlinear Optical Spectroscopy, 1995, ch. 6 (memory): 2 R +
    // 2 NR when time ordered). Pulses 1 and 2 overlapping add the order 2, 1, 3: 4 more.
    // Pulse 2 acting first with +1 and pulse 1 then with -1 lands in the rephasing direction
    // (-1,+1,+1) through |e><g| -> population -> |e><g|: the non-rephasing element pattern.
    let ps = collect(&two_level("[\"1\", \"2\"]"));
    assert_eq!(ps.len(), 8);
    let r = [-1, 1, 1, -1];
    let nr = [1, -1, 1, -1];
    assert_eq!(count_with(&ps, &r, true), 2);
    assert_eq!(count_with(&ps, &nr, true), 2);
    assert_eq!(count_with(&ps, &r, false), 2);
    assert_eq!(count_with(&ps, &nr, false), 2);
    for p in ps.iter().filter(|p| !p.time_ordered) {
        assert_eq!(p.interactions[0].field, 1, "pulse 2 acts first");
        let expected = if p.signature.0 == r {
            PathwayClass::NonRephasing
        } else {
            PathwayClass::Rephasing
        };
        assert_eq!(p.class, expected, "class by the element pattern");
    }
    // The wanted class keeps the time-ordered signature only; the reordered pathways in it
    // are a caveat, not a contamination that forbids every cycle.
    let e = exp(&two_level("[\"1\", \"2\"]"));
    let out = &resolve_signals(&e).unwrap()[0];
    assert_eq!(out.kept, vec![Signature(r.to_vec())]);
    assert!(out.contamination.is_empty());
    assert_eq!(out.reordered.len(), 1);
    assert_eq!(out.reordered[0].count, 2);
    assert!(!out.reordered[0].via_conjugate);
}

#[test]
fn overlapping_last_two_pulses_reach_the_double_quantum_direction_without_an_f_state() {
    // Hand count, t2 = 0 (pulses 2 and 3 overlap): the order 1, 3, 2 adds 4 pathways. With
    // pulse 1 ket-up (+1), pulse 3 must lower (-1) and pulse 2 raise back (+1): signature
    // (+1,+1,-1), the 2Q direction, reached by a two-level system only while pulses overlap
    // (2 pathways); with pulse 1 bra-up (-1), pulses 3 and 2 both act +1: the rephasing
    // direction (2 pathways).
    let ps = collect(&two_level("[\"2\", \"3\"]"));
    assert_eq!(ps.len(), 8);
    assert_eq!(count_with(&ps, &[1, 1, -1, -1], false), 2);
    assert_eq!(count_with(&ps, &[-1, 1, 1, -1], false), 2);
    assert_eq!(count_with(&ps, &[1, 1, -1, -1], true), 0);
    // Without overlap the 2Q direction is empty in a two-level system.
    let plain = collect(&two_level("false"));
    assert_eq!(plain.len(), 4);
    assert!(plain.iter().all(|p| p.time_ordered));
}

#[test]
fn overlap_true_still_means_every_pulse() {
    // Three distinct pulses in any order: 3! = 6 orders x 4 pathways = 24, of which the 4
    // time-ordered ones are those without overlap.
    let all = collect(&two_level("true"));
    assert_eq!(all.len(), 24);
    assert_eq!(all.iter().filter(|p| p.time_ordered).count(), 4);
    let listed = collect(&two_level("[\"1\", \"2\", \"3\"]"));
    assert_eq!(all, listed);
    let two_groups = collect(&two_level("[[\"1\", \"2\"]]"));
    assert_eq!(two_groups, collect(&two_level("[\"1\", \"2\"]")));
}

#[test]
fn an_all_overlapping_fluorescence_experiment_designs_with_a_short_caveat() {
    // Before partial overlap, `overlap = true` with class signals refused with one line of
    // about 3000 characters repeating one sentence. Now the time-ordered classes are kept
    // (the 27-step nested cycle of common practice for R, NR and 2Q) with one caveat line,, grouped over the outputs, about the reordered pathways.
    let text = std::fs::read_to_string(common::scheme("dye-fluorescence-2d.toml"))
        .unwrap()
        .replace("order = 4\n", "order = 4\noverlap = true\n");
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("overlap.toml");
    std::fs::write(&f, text).unwrap();
    let (code, out, err) = common::run_cli(&["design", f.to_str().unwrap()]);
    assert_eq!(code, 0, "{out}\n{err}");
    assert!(out.contains("27 steps"), "{out}");
    // The report wraps its prose at 80 columns; judge the lines as written before wrapping.
    let out = common::unwrapped(&out);
    let notes: Vec<&str> = out
        .lines()
        .filter(|l| l.contains("out of pulse order"))
        .collect();
    assert_eq!(notes.len(), 1, "grouped over the outputs: {out}");
    assert!(
        notes[0].chars().count() < 400,
        "a readable line: {}",
        notes[0]
    );
    for name in [
        "`R` (-1,+1,+1,-1)",
        "`NR` (+1,-1,+1,-1)",
        "`2Q` (+1,+1,-1,-1)",
    ] {
        assert!(notes[0].contains(name), "{name} in {}", notes[0]);
    }
    assert!(!out.contains("No phase cycle can do this"), "{out}");
    // No sentence is said twice.
    let prose: Vec<&str> = out
        .lines()
        .filter(|l| l.starts_with(char::is_alphanumeric) || l.trim_start().starts_with('-'))
        .collect();
    let sentences: Vec<&str> = prose
        .iter()
        .flat_map(|l| l.split(['.', ';']))
        .map(str::trim)
        .filter(|s| s.len() > 20)
        .collect();
    let unique: std::collections::BTreeSet<&str> = sentences.iter().copied().collect();
    assert_eq!(unique.len(), sentences.len(), "{out}");
}

fn refused(overlap: &str, needles: &[&str]) {
    let text = two_level(overlap);
    let err = parse_experiment(&text, "x.toml".as_ref())
        .err()
        .unwrap_or_else(|| panic!("{overlap} accepted"))
        .to_string();
    assert!(err.contains("x.toml:2"), "names file and line: {err}");
    for n in needles {
        assert!(err.contains(n), "expected `{n}` in: {err}");
    }
}

#[test]
fn overlap_groups_that_cannot_be_are_refused_with_the_fix() {
    refused("[\"1\", \"3\"]", &["pulse `2` between them", "add it"]);
    refused("[\"1\", \"9\"]", &["unknown pulse `9`", "1, 2, 3"]);
    refused("[\"2\", \"LO\"]", &["`LO`", "only pulses overlap"]);
    refused(
        "[[\"1\", \"2\"], [\"2\", \"3\"]]",
        &["`2` is listed twice", "merge"],
    );
    refused("[\"2\"]", &["fewer than two pulses"]);
    refused("3", &["use `true`, `false`"]);
    refused("[[\"1\", \"2\"], \"3\"]", &["use `true`, `false`"]);
}
