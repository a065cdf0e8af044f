//! Pictures fit for a paper: every text box of every diagram sheet and leakage chart, measured
//! with the bundled font's metrics, overlaps no other text, no line it must keep clear of, and
//! stays on the canvas — for every bundled example and for long field and state names. The
//! leakage chart counts leaks as `check` does; the terminal and SVG diagrams draw every arrow
//! the same way; every picture renders to PNG; `draw --png` writes the PNG beside the SVG.

mod common;

use common::{exp, run_cli, scheme};
use pathsieve::check::{check, CheckOptions, SnapPolicy};
use pathsieve::cycle::read_cycle;
use pathsieve::experiment_file::read_experiment;
use pathsieve::model::Experiment;
use pathsieve::pathways::{for_each_row, Pathway, Scope};
use pathsieve::render::diagram_svg::diagrams_scene;
use pathsieve::render::leakage::leakage_chart;
use pathsieve::render::leakage_svg::{leakage_scene, significant};
use pathsieve::render::scene::Scene;
use pathsieve::render::wheels_svg::wheels_scene;
use pathsieve::render::{arrow_heading, diagram_text::diagram_text};
use pathsieve::selection::{Selection, SelectionRequest};

/// Every bundled experiment.
fn experiments() -> Vec<(String, Experiment)> {
    let mut out = Vec::new();
    for entry in std::fs::read_dir(scheme("")).unwrap() {
        let path = entry.unwrap().path();
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        let is_experiment = name.ends_with(".toml")
            && !name.ends_with(".cycle.toml")
            && std::fs::read_to_string(&path)
                .unwrap()
                .contains("[detection]");
        if is_experiment {
            out.push((name, read_experiment(&path).unwrap()));
        }
    }
    out.sort_by(|a, b| a.0.cmp(&b.0));
    assert!(out.len() >= 7, "bundled experiments: {}", out.len());
    out
}

fn rows(e: &Experiment) -> Vec<Pathway> {
    let mut all = Vec::new();
    for_each_row(e, Scope::Signal, true, |p| all.push(p.clone())).unwrap();
    all
}

fn assert_clean(scene: &Scene, what: &str) {
    let p = scene.problems();
    assert!(
        p.is_empty(),
        "{what}: {} problems, first: {:#?}",
        p.len(),
        &p[..p.len().min(6)]
    );
    #[cfg(feature = "png")]
    {
        let png = pathsieve::render::png::svg_to_png(&scene.to_svg(), 1.0).unwrap();
        assert!(png.starts_with(b"\x89PNG"), "{what}");
    }
}

#[test]
fn diagram_sheets_of_every_bundled_experiment_have_no_overlap_or_clipping() {
    for (name, e) in experiments() {
        let all = rows(&e);
        assert!(!all.is_empty(), "{name}");
        // The whole sheet (capped as `draw` caps it), and one sheet per pathway.
        let sheet = &all[..all.len().min(40)];
        let title = format!(
            "{} — {} pathways with a long selection",
            e.title,
            sheet.len()
        );
        assert_clean(&diagrams_scene(&e, sheet, &title), &name);
        for (k, p) in all.iter().take(12).enumerate() {
            assert_clean(
                &diagrams_scene(&e, std::slice::from_ref(p), "one"),
                &format!("{name} #{k}"),
            );
        }
    }
}

#[test]
fn long_field_and_state_names_keep_every_label_clear() {
    let text = "order = 3\n[detection]\nmode = \"pump-probe\"\n\
        [[field]]\nname = \"first-pump-from-the-shaper\"\n\
        [[field]]\nname = \"second-pump-from-the-shaper\"\n\
        [[field]]\nname = \"white-light-continuum-probe\"\nphase = \"fixed\"\n\
        [levels]\nstates = [{ name = \"ground-state\", manifold = 0 }, \
        { name = \"first-excited-vibrational-state\", manifold = 1 }, \
        { name = \"overtone\", manifold = 2 }]\n";
    let e = exp(text);
    let all = rows(&e);
    let title = "A very long title that no single line of any reasonable sheet can hold: \
        the pathways of a made-up sample with long names, to test wrapping"
        .repeat(2);
    assert_clean(&diagrams_scene(&e, &all, &title), "long names, sheet");
    for p in &all {
        assert_clean(
            &diagrams_scene(&e, std::slice::from_ref(p), &title),
            "long names, one",
        );
    }
    let nmr = exp(
        "[detection]\nmode = \"nmr\"\nmax_coherence = 2\ndetected_coherence = -1\n\
        [[field]]\nname = \"excitation-pulse\"\n[[field]]\nname = \"mixing-pulse-long-name\"\n\
        [[field]]\nname = \"rec\"\nkind = \"receiver\"\n",
    );
    assert_clean(
        &diagrams_scene(&nmr, &rows(&nmr), &title),
        "long names, NMR",
    );
}

#[test]
fn delays_and_subscripted_wavevectors_are_drawn() {
    // Four-pulse fluorescence 2D: delays t1, t2, t3 between the four interactions, none after
    // the last (the population is read out); emission-type detection adds t3 after the third
    // interaction (common practice in double-sided diagrams).
    let (_, e) = experiments()
        .into_iter()
        .find(|(n, _)| n == "dye-fluorescence-2d.toml")
        .unwrap();
    let p = rows(&e).remove(0);
    let svg = diagrams_scene(&e, std::slice::from_ref(&p), "t").to_svg();
    for k in 1..=3 {
        assert!(
            svg.contains(&format!(
                ">t<tspan dy=\"3.08\" font-size=\"7.92\">{k}</tspan>"
            )),
            "t{k}: {svg}"
        );
    }
    assert!(
        !svg.contains(">t<tspan dy=\"3.08\" font-size=\"7.92\">4</tspan>"),
        "no t4 for population detection"
    );
    assert!(
        svg.contains("k<tspan dy=\"3.08\" font-size=\"7.92\">2</tspan>"),
        "k with subscript"
    );
}

#[test]
fn nmr_sheets_draw_coherence_transfer_pathways() {
    let (_, e) = experiments()
        .into_iter()
        .find(|(n, _)| n == "nmr-spin32-mqmas.toml")
        .unwrap();
    let all = rows(&e);
    let scene = diagrams_scene(&e, &all, "NMR");
    // One thick pathway line per interval and per jump: 0 -> +3 -> +1 -> -1 over three pulses
    // is four held levels and three jumps (the coherence-transfer pathway diagram of NMR texts,
    // common practice).
    let path: Vec<_> = scene.segments.iter().filter(|s| s.width > 2.0).collect();
    assert_eq!(path.len(), all.len() * 7, "{} pathways", all.len());
    let levels = scene
        .labels
        .iter()
        .filter(|l| l.plain() == "+3" || l.plain() == "\u{2212}3")
        .count();
    assert_eq!(levels, 2 * all.len(), "levels ±3 in every panel");
}

#[test]
fn text_and_svg_diagrams_draw_every_arrow_the_same_way() {
    for (name, e) in experiments() {
        for p in rows(&e).iter().take(60) {
            if p.interactions.is_empty() {
                continue;
            }
            let glyphs: Vec<i64> = diagram_text(&e, p)
                .lines()
                .rev()
                .filter_map(|l| match (l.contains('↗'), l.contains('↖')) {
                    (true, _) => Some(1),
                    (_, true) => Some(-1),
                    _ => None,
                })
                .collect();
            let scene = diagrams_scene(&e, std::slice::from_ref(p), "t");
            let svg: Vec<i64> = scene
                .segments
                .iter()
                .filter(|s| s.head)
                .take(p.interactions.len())
                .map(|s| (s.x2 - s.x1).signum() as i64)
                .collect();
            let expected: Vec<i64> = p.interactions.iter().map(arrow_heading).collect();
            assert_eq!(glyphs, expected, "{name}: text {:?}", p.interactions);
            assert_eq!(svg, expected, "{name}: svg {:?}", p.interactions);
        }
    }
}

/// Bundled cycle tables with their experiments.
const CYCLES: [(&str, &str); 5] = [
    ("carbonyl-pump-probe.toml", "carbonyl-2x2.cycle.toml"),
    ("carbonyl-pump-probe.toml", "carbonyl-2x2.csv"),
    (
        "dye-fluorescence-2d.toml",
        "dye-fluorescence-27step.cycle.toml",
    ),
    (
        "dye-fluorescence-2d.toml",
        "dye-fluorescence-leaky.cycle.toml",
    ),
    ("nmr-spin32-mqmas.toml", "nmr-cog23.cycle.toml"),
];

#[test]
fn leakage_charts_count_as_check_does_and_keep_labels_clear() {
    for (x, c) in CYCLES {
        let e = read_experiment(&scheme(x)).unwrap();
        let cycle = read_cycle(&scheme(c), None).unwrap();
        let sel = Selection::new(&e, &SelectionRequest::default()).unwrap();
        let report = check(&sel, &cycle, &CheckOptions::default()).unwrap();
        let chart = leakage_chart(&sel, &cycle, &SnapPolicy::default()).unwrap();
        assert_eq!(chart.series.len(), report.outputs.len(), "{c}");
        for (s, o) in chart.series.iter().zip(&report.outputs) {
            assert_eq!(s.rejected_checked(), o.rejected_checked, "{c} {}", o.name);
            assert_eq!(s.leak_count(), o.leak_count, "{c} {}", o.name);
            let passing = o.conjugates.iter().filter(|t| !t.cancelled).count();
            assert_eq!(s.conjugates_passing(), passing, "{c} {}", o.name);
            assert_eq!(s.lost(), o.lost.len(), "{c} {}", o.name);
            assert_eq!(s.exact, o.exact, "{c} {}", o.name);
        }
        let scene = leakage_scene(&chart);
        assert_clean(&scene, c);
        let svg = scene.to_svg();
        assert!(
            !svg.contains("=0.000"),
            "{c}: a nonzero leak printed as zero"
        );
    }
}

#[test]
fn leakage_chart_of_long_names_and_a_drifted_table_keeps_labels_clear() {
    // A 2x2 pump cycle whose second and third rows drifted by 0.01 and 0.02 degrees, judged
    // within the table's precision: the drift leaks from 2 pi x 0.01/360 x 2 ~ 3.5e-4 up
    // (common practice), and without beam geometry the 2Q terms (+1,+1,-2) pass a 2x2 pump
    // cycle whole (|F| = 4, as the kept terms). The axis spans 10^-4 .. 10^1, six decades.
    let text = "title = \"An invented sample with long names\"\norder = 3\n[detection]\nmode = \"pump-probe\"\n\
        [[field]]\nname = \"first-pump-from-the-shaper\"\n[[field]]\nname = \"second-pump\"\n\
        [[field]]\nname = \"white-light-continuum-probe\"\nphase = \"fixed\"\n\
        [levels]\nstates = [{ name = \"g\", manifold = 0 }, { name = \"e\", manifold = 1 }]\n\
        [[signal]]\nname = \"absorptive-signal-with-a-long-output-name\"\nclasses = [\"rephasing\", \"non-rephasing\"]\n";
    let e = exp(text);
    let csv = "# unit = degrees\nstep,first-pump-from-the-shaper,second-pump,w:absorptive-signal-with-a-long-output-name\n\
        1,0,0,1\n2,0,179.99,-1\n3,180.02,0,-1\n4,180,180,1\n";
    let d = tempfile::tempdir().unwrap();
    let path = d.path().join("drift.csv");
    std::fs::write(&path, csv).unwrap();
    let cycle = read_cycle(&path, None).unwrap();
    let sel = Selection::new(&e, &SelectionRequest::default()).unwrap();
    let report = check(&sel, &cycle, &CheckOptions::default()).unwrap();
    let chart = leakage_chart(&sel, &cycle, &SnapPolicy::default()).unwrap();
    let s = &chart.series[0];
    assert!(!s.exact && s.leak_count() > 0);
    assert_eq!(s.leak_count(), report.outputs[0].leak_count);
    let scene = leakage_scene(&chart);
    assert_clean(&scene, "drifted table");
    let svg = scene.to_svg();
    let decades: Vec<String> = scene
        .labels
        .iter()
        .filter(|l| l.plain().starts_with("10") && l.spans.len() == 2)
        .map(|l| l.spans[1].text.clone())
        .collect();
    assert_eq!(
        decades,
        ["1", "0", "\u{2212}1", "\u{2212}2", "\u{2212}3", "\u{2212}4"]
    );
    assert!(
        svg.contains("e\u{2212}4"),
        "three significant digits: {svg}"
    );
}

#[test]
fn phase_wheels_keep_their_labels_clear() {
    for (_, c) in CYCLES {
        let cycle = read_cycle(&scheme(c), None).unwrap();
        assert_clean(&wheels_scene(&cycle, &format!("{c} — a title")), c);
    }
    // Crowded wheels (4, 6, 8, 12, 30 phases) with a long field name: ring labels where their
    // measured boxes fit, a wrapped list otherwise, never an overlap.
    for n in [4usize, 6, 8, 12, 30] {
        let steps: Vec<String> = (0..n).map(|m| format!("[\"{m}/{n}\", \"0\"]")).collect();
        let text = format!(
            "[cycle]\nunit = \"turns\"\ngrid = [{n}, 1]\nfields = [\"a-field-with-a-rather-long-name-indeed\", \"b\"]\nsteps = [{}]\n",
            steps.join(", ")
        );
        let cycle =
            pathsieve::cycle::read_cycle_toml(&text, "w.cycle.toml".as_ref(), None).unwrap();
        assert_clean(&wheels_scene(&cycle, "crowded"), &format!("{n} phases"));
    }
}

#[test]
fn the_leak_axis_spans_only_decades_with_data() {
    // The leaky 8-step table gives leaks of |F| = 1 only (two phase values per pulse: each
    // sum over steps is 8/8 or 0), so each of its three panels holds one decade mark (10^0),
    // not the sixteen of a fixed floor; the exact 27-step cycle leaks nothing, so it draws no
    // log axis.
    let e = read_experiment(&scheme("dye-fluorescence-2d.toml")).unwrap();
    let sel = Selection::new(&e, &SelectionRequest::default()).unwrap();
    for (c, ticks) in [
        ("dye-fluorescence-leaky.cycle.toml", 3..=3),
        ("dye-fluorescence-27step.cycle.toml", 0..=0),
    ] {
        let cycle = read_cycle(&scheme(c), None).unwrap();
        let chart = leakage_chart(&sel, &cycle, &SnapPolicy::default()).unwrap();
        let scene = leakage_scene(&chart);
        let n = scene
            .labels
            .iter()
            .filter(|l| l.plain().starts_with("10") && l.spans.len() == 2)
            .count();
        assert!(ticks.contains(&n), "{c}: {n} decade labels");
    }
}

#[test]
fn small_leaks_keep_their_significant_digits() {
    assert_eq!(significant(9.1e-6), "9.10e-6");
    assert_eq!(significant(0.5), "0.500");
    assert_eq!(significant(1.0), "1.00");
    assert_eq!(significant(12.345), "12.3");
    assert_eq!(significant(9.996e-7), "1.00e-6");
    assert_eq!(significant(0.0123), "0.0123");
}

#[test]
fn draw_png_writes_a_png_beside_the_svg() {
    if cfg!(not(feature = "png")) {
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("leak.svg");
    let s = |p: &std::path::Path| p.to_str().unwrap().to_string();
    let (code, _, err) = run_cli(&[
        "draw",
        "leakage",
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-leaky.cycle.toml",
        "--out",
        &s(&out),
        "--png",
    ]);
    assert_eq!(code, 0, "{err}");
    let png = std::fs::read(d.path().join("leak.png")).unwrap();
    assert!(png.starts_with(b"\x89PNG\r\n\x1a\n"));
    assert!(std::fs::read_to_string(&out).unwrap().starts_with("<?xml"));
    // An existing PNG stops both files before any work; --out naming a .png is refused.
    let again = d.path().join("w.svg");
    std::fs::write(d.path().join("w.png"), b"keep").unwrap();
    let (code, _, err) = run_cli(&[
        "draw",
        "wheels",
        "schemes/carbonyl-2x2.cycle.toml",
        "--out",
        &s(&again),
        "--png",
    ]);
    assert_eq!(code, 2, "{err}");
    assert!(!again.exists(), "no SVG written when the PNG target exists");
    assert_eq!(std::fs::read(d.path().join("w.png")).unwrap(), b"keep");
    let (code, _, err) = run_cli(&[
        "draw",
        "wheels",
        "schemes/carbonyl-2x2.cycle.toml",
        "--out",
        &s(&d.path().join("x.png")),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("--png"), "{err}");
}
