//! Checks of the pathway enumerator against textbook counts and the detection rules.

mod common;

use common::{exp, pulses, LADDER, TWO_LEVEL};
use pathsieve::model::{PathwayClass, PopulationClass};
use pathsieve::pathways::{
    count_pathways, for_each_pathway, resolve_signals, summarize, Pathway, Scope,
};
use pathsieve::signature::Signature;
use proptest::prelude::*;
use std::collections::BTreeMap;

fn collect(e: &pathsieve::model::Experiment, scope: Scope) -> Vec<Pathway> {
    let mut v = Vec::new();
    for_each_pathway(e, scope, |p| v.push(p.clone())).unwrap();
    v
}

fn class_counts(ps: &[Pathway]) -> BTreeMap<PathwayClass, usize> {
    let mut m = BTreeMap::new();
    for p in ps {
        *m.entry(p.class).or_insert(0) += 1;
    }
    m
}

#[test]
fn two_level_three_pulse_emission_has_two_rephasing_and_two_non_rephasing_pathways() {
    // Mukamel, Principles of Nonlinear Optical Spectroscopy (1995), ch. 6 (from memory):
    // 4 pathways, 2 R with (-1,+1,+1) and 2 NR with (+1,-1,+1); 8 terms with the conjugates.
    let e = exp(&format!(
        "order = 3\n[detection]\nmode = \"emission\"\n{}{TWO_LEVEL}",
        pulses(3, true)
    ));
    let ps = collect(&e, Scope::Signal);
    assert_eq!(ps.len(), 4);
    let c = class_counts(&ps);
    assert_eq!(c[&PathwayClass::Rephasing], 2);
    assert_eq!(c[&PathwayClass::NonRephasing], 2);
    for p in &ps {
        let expected = match p.class {
            PathwayClass::Rephasing => vec![-1, 1, 1, -1],
            PathwayClass::NonRephasing => vec![1, -1, 1, -1],
            other => panic!("unexpected class {other:?}"),
        };
        assert_eq!(p.signature.0, expected);
    }
    let with_cc = summarize(&e, Scope::Signal, true, &[]).unwrap();
    assert_eq!(with_cc.total, 8);
}

#[test]
fn nth_order_two_level_response_has_two_to_the_n_liouville_terms() {
    // Mukamel (1995): the n-th order time-ordered response of one starting state has 2^n
    // terms (each interaction on ket or bra); with RWA in a two-level system each side choice
    // gives one pathway, counted here with conjugates.
    for n in [1usize, 3, 5, 7] {
        let e = exp(&format!(
            "order = {n}\n[detection]\nmode = \"emission\"\n{}{TWO_LEVEL}",
            pulses(n, true)
        ));
        let s = summarize(&e, Scope::Signal, true, &[]).unwrap();
        assert_eq!(s.total, 1u64 << n, "order {n}");
    }
}

#[test]
fn ladder_gives_three_rephasing_three_non_rephasing_two_double_quantum() {
    // Hamm & Zanni, Concepts and Methods of 2D Infrared Spectroscopy (2011), ch. 4 (memory):
    // R: GSB, SE, ESA; NR likewise; 2Q: two pathways. Directions as in domain.md.
    let e = exp(&format!(
        "order = 3\n[detection]\nmode = \"emission\"\n{}{LADDER}",
        pulses(3, true)
    ));
    let ps = collect(&e, Scope::Signal);
    let c = class_counts(&ps);
    assert_eq!(c[&PathwayClass::Rephasing], 3);
    assert_eq!(c[&PathwayClass::NonRephasing], 3);
    assert_eq!(c[&PathwayClass::DoubleQuantum], 2);
    assert_eq!(ps.len(), 8);
    let mut pops: BTreeMap<(PathwayClass, PopulationClass), usize> = BTreeMap::new();
    for p in &ps {
        if let Some(pc) = p.population_class {
            *pops.entry((p.class, pc)).or_insert(0) += 1;
        }
        let dir = p.signature.0[..3].to_vec();
        match p.class {
            PathwayClass::Rephasing => assert_eq!(dir, vec![-1, 1, 1]),
            PathwayClass::NonRephasing => assert_eq!(dir, vec![1, -1, 1]),
            PathwayClass::DoubleQuantum => assert_eq!(dir, vec![1, 1, -1]),
            PathwayClass::Other => panic!("no other class at third order with distinct pulses"),
        }
    }
    for class in [PathwayClass::Rephasing, PathwayClass::NonRephasing] {
        for pc in [
            PopulationClass::Gsb,
            PopulationClass::Se,
            PopulationClass::Esa,
        ] {
            assert_eq!(pops[&(class, pc)], 1, "{class:?} {pc:?}");
        }
    }
    // ESA carries the opposite sign to GSB and SE (one more bra interaction).
    let esa = ps
        .iter()
        .find(|p| p.population_class == Some(PopulationClass::Esa))
        .unwrap();
    let gsb = ps
        .iter()
        .find(|p| p.population_class == Some(PopulationClass::Gsb) && p.class == esa.class)
        .unwrap();
    assert_eq!(esa.sign, -gsb.sign);
}

#[test]
fn population_detected_ladder_counts_rephasing_pathways_ending_in_e_and_f() {
    // Fluorescence-detected 2D practice (common practice; domain.md section 8): rephasing
    // (-1,+1,+1,-1): 3 pathways end in an e population, 1 in f; non-rephasing likewise.
    let e = exp(&format!(
        "order = 4\n[detection]\nmode = \"population\"\n{}[levels]\nstates = [{{ name = \"g\", manifold = 0 }}, {{ name = \"e\", manifold = 1 }}, {{ name = \"f\", manifold = 2, yield = 0.5 }}]\n",
        pulses(4, false)
    ));
    let ps = collect(&e, Scope::Signal);
    for sig in [vec![-1, 1, 1, -1], vec![1, -1, 1, -1]] {
        let mut ends: BTreeMap<String, usize> = BTreeMap::new();
        for p in ps.iter().filter(|p| p.signature.0 == sig) {
            let name = e
                .levels
                .as_ref()
                .unwrap()
                .name(p.final_element.ket)
                .to_string();
            *ends.entry(name).or_insert(0) += 1;
            if name_is(&e, p, "f") {
                // The f-ending pathway carries the relative f yield.
                assert!((p.weight.abs() - 0.5).abs() < 1e-12);
            }
        }
        assert_eq!(ends.get("e"), Some(&3), "{sig:?}");
        assert_eq!(ends.get("f"), Some(&1), "{sig:?}");
        assert_eq!(ends.get("g"), None, "ground populations give no signal");
    }
}

fn name_is(e: &pathsieve::model::Experiment, p: &Pathway, n: &str) -> bool {
    e.levels.as_ref().unwrap().name(p.final_element.ket) == n
}

#[test]
fn single_pump_acting_twice_leaves_no_pump_phase_on_phase_matched_terms() {
    // Pump-probe with one pump (common practice): the pump acts twice, b_pump = 0 on every
    // detected, phase-matched term.
    let e = exp(&format!(
        "order = 3\n[detection]\nmode = \"pump-probe\"\n[[field]]\nname = \"pump\"\ninteractions = 2\nbeam = \"a\"\n[[field]]\nname = \"probe\"\nbeam = \"b\"\n{LADDER}"
    ));
    let ps = collect(&e, Scope::Signal);
    assert!(!ps.is_empty());
    let matched: Vec<&Pathway> = ps
        .iter()
        .filter(|p| e.is_phase_matched(&p.signature))
        .collect();
    assert_eq!(matched.len(), 6, "GSB, SE, ESA with both pump orderings");
    for p in matched {
        assert_eq!(p.signature.0, vec![0, 0]);
    }
}

#[test]
fn pump_probe_rephasing_alone_is_contaminated_by_non_rephasing_conjugates() {
    // Common practice (domain.md section 3): in pump-probe geometry R's conjugate has NR's
    // signature, so R alone cannot be isolated by phase cycling.
    let e = exp(&format!(
        "order = 3\n[detection]\nmode = \"pump-probe\"\n{}{LADDER}[[signal]]\nname = \"R\"\nclasses = [\"rephasing\"]\n",
        pulses(3, false)
    ));
    let r = &resolve_signals(&e).unwrap()[0];
    assert_eq!(r.kept, vec![Signature(vec![-1, 1, 0])]);
    assert!(r
        .contamination
        .iter()
        .any(|c| c.class == PathwayClass::NonRephasing && c.via_conjugate));
}

#[test]
fn full_scope_includes_lower_orders_and_repeated_pulses() {
    // Through third order, a two-level emission experiment also has first-order (linear)
    // terms e_j - e_LO, one per pulse, and third-order terms where one pulse acts twice.
    let e = exp(&format!(
        "order = 3\n[detection]\nmode = \"emission\"\n{}{TWO_LEVEL}",
        pulses(3, true)
    ));
    let ps = collect(&e, Scope::Through(3));
    let linear: Vec<_> = ps.iter().filter(|p| p.interactions.len() == 1).collect();
    assert_eq!(linear.len(), 3);
    assert!(ps
        .iter()
        .any(|p| p.signature.0 == vec![0, 0, 1, -1] && p.interactions.len() == 3));
    assert!(
        count_pathways(&e, Scope::Through(3)).unwrap() > count_pathways(&e, Scope::Signal).unwrap()
    );
}

#[test]
fn third_order_double_quantum_pathways_have_no_waiting_population() {
    // Hamm & Zanni, Concepts and Methods of 2D Infrared Spectroscopy (2011), ch. 4 (memory):
    // the two 2Q pathways of the g-e-f ladder hold |e><g| then |f><g|, then radiate from
    // |e><g| or |f><e|; no delay holds a population, so neither is GSB, SE or ESA.
    let e = exp(&format!(
        "order = 3\n[detection]\nmode = \"emission\"\n{}{LADDER}",
        pulses(3, true)
    ));
    let dq: Vec<Pathway> = collect(&e, Scope::Signal)
        .into_iter()
        .filter(|p| p.class == PathwayClass::DoubleQuantum)
        .collect();
    assert_eq!(dq.len(), 2);
    assert!(dq.iter().all(|p| p.population_class.is_none()));
}

#[test]
fn double_quantum_pathways_take_their_label_from_a_later_population() {
    // Four pulses acting 1, 1, 2, 2 times on the g-e-f ladder, population detection (yields
    // 0, 1, 1). Counted by hand for the half that starts ket-up (the other half mirrors it):
    // pulses 1 and 2 reach |f><g| (2Q); pulse 3's two interactions leave |g><g| (1 way),
    // |e><e| (2 ways), |f><f| (1 way) or |f><g| again (2 ways). Pulse 4's two interactions
    // then reach a population with nonzero yield: from |g><g| 2 ways, both ending |e><e|;
    // from |e><e| 6 ways, 4 through f (ESA) and 2 through g (SE); from |f><f| 4 ways, never
    // above f (SE); from |f><g| 3 ways, no population in the third delay (no label).
    // Per half: GSB 2, ESA 2 x 4 = 8, SE 2 x 2 + 4 = 8, unlabelled 2 x 3 = 6; both halves
    // double it. Labels follow the first delay holding a population (docs/conventions.md).
    let e = exp(&format!(
        "order = 6\n[detection]\nmode = \"population\"\n[[field]]\nname = \"1\"\n[[field]]\nname = \"2\"\n[[field]]\nname = \"3\"\ninteractions = 2\n[[field]]\nname = \"4\"\ninteractions = 2\n{LADDER}"
    ));
    let mut labels: BTreeMap<Option<PopulationClass>, usize> = BTreeMap::new();
    for p in collect(&e, Scope::Signal) {
        if p.class == PathwayClass::DoubleQuantum {
            *labels.entry(p.population_class).or_insert(0) += 1;
        }
    }
    assert_eq!(labels.get(&Some(PopulationClass::Gsb)), Some(&4));
    assert_eq!(labels.get(&Some(PopulationClass::Esa)), Some(&16));
    assert_eq!(labels.get(&Some(PopulationClass::Se)), Some(&16));
    assert_eq!(labels.get(&None), Some(&12));
}

fn random_experiment() -> impl Strategy<Value = (String, usize)> {
    // (toml text, number of fields)
    (1usize..=4, prop::sample::select(vec!["emission", "population", "pump-probe"]), 2usize..=4, any::<bool>())
        .prop_map(|(n_states_e, mode, n_pulses, overlap)| {
            let order = match mode {
                "population" => 4.min(n_pulses * 2) & !1,
                _ => 3,
            };
            let order = order.max(if mode == "population" { 2 } else { 1 });
            let mut pulses_txt = String::new();
            // Distribute `order` interactions over the pulses.
            let mut counts = vec![0u32; n_pulses];
            for k in 0..order {
                counts[k % n_pulses] += 1;
            }
            counts.retain(|&c| c > 0);
            for (j, c) in counts.iter().enumerate() {
                pulses_txt.push_str(&format!("[[field]]\nname = \"p{j}\"\ninteractions = {c}\n"));
            }
            let n_fields = counts.len() + usize::from(mode == "emission");
            if mode == "emission" {
                pulses_txt.push_str("[[field]]\nname = \"LO\"\nkind = \"lo\"\n");
            }
            let mut states = String::from("{ name = \"g\", manifold = 0 }");
            for k in 0..n_states_e {
                states.push_str(&format!(", {{ name = \"e{k}\", manifold = 1 }}"));
            }
            states.push_str(", { name = \"f\", manifold = 2 }");
            (
                format!("order = {order}\noverlap = {overlap}\n[detection]\nmode = \"{mode}\"\n{pulses_txt}[levels]\nstates = [{states}]\n"),
                n_fields,
            )
        })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(40))]

    #[test]
    fn every_pathway_obeys_the_detection_rule((text, n_fields) in random_experiment()) {
        let e = exp(&text);
        let levels = e.levels.clone().unwrap();
        for_each_pathway(&e, Scope::Signal, |p| {
            assert_eq!(p.signature.len(), n_fields);
            // Every detected term sums to zero over all fields, reference included.
            assert_eq!(p.signature.sum(), 0, "{}", p.signature);
            let (k, b) = (p.final_element.ket, p.final_element.bra);
            match e.detection {
                pathsieve::model::Detection::Population => assert_eq!(k, b),
                _ => assert_eq!(levels.manifold(k), levels.manifold(b) + 1),
            }
            // The signature is the sum of the interaction phase signs per field.
            let mut sig = vec![0i64; n_fields];
            for i in &p.interactions { sig[i.field] += i.phase_sign(); }
            if let Some(r) = e.detector_field() { if !matches!(e.detection, pathsieve::model::Detection::Population) { sig[r] -= 1; } }
            assert_eq!(sig, p.signature.0.clone());
            // Conjugate partner: signature negated, conjugating twice is the identity.
            let c = p.conjugated();
            assert_eq!(c.signature, p.signature.conjugate());
            assert_eq!(&c.conjugated(), p);
        }).unwrap();
    }

    #[test]
    fn counts_per_signature_do_not_depend_on_state_names(
        (text, _) in random_experiment(),
        prefix in "[a-z]{1,3}",
    ) {
        let e1 = exp(&text);
        let renamed = text
            .replace("name = \"g\"", &format!("name = \"{prefix}G\""))
            .replace("name = \"f\"", &format!("name = \"{prefix}F\""))
            .replace("name = \"e", &format!("name = \"{prefix}E"));
        let e2 = exp(&renamed);
        let s1: Vec<(Signature, u64)> = summarize(&e1, Scope::Signal, false, &[]).unwrap().signatures.into_iter().map(|s| (s.signature, s.count)).collect();
        let s2: Vec<(Signature, u64)> = summarize(&e2, Scope::Signal, false, &[]).unwrap().signatures.into_iter().map(|s| (s.signature, s.count)).collect();
        prop_assert_eq!(s1, s2);
    }

    #[test]
    fn population_enumeration_is_closed_under_conjugation((text, _) in random_experiment()) {
        let e = exp(&text);
        if matches!(e.detection, pathsieve::model::Detection::Population) {
            let s = summarize(&e, Scope::Signal, false, &[]).unwrap();
            let m: BTreeMap<Signature, u64> = s.signatures.iter().map(|x| (x.signature.clone(), x.count)).collect();
            for (sig, n) in &m {
                prop_assert_eq!(m.get(&sig.conjugate()), Some(n));
            }
        }
    }
}
