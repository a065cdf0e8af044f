//! `pathsieve simulate` end to end and its physics: simulated steps combine to the same outputs
//! through `pathsieve combine`; a designed cycle removes backgrounds 1000 times the signal to
//! float precision; random phase errors leak as the tolerance analysis predicts; the
//! absorptive pump-probe spectrum is the sum of the rephasing and non-rephasing spectra.

mod common;

use common::{run_cli, scheme};
use num_complex::Complex64;
use pathsieve::check::tolerance::{per_term, ToleranceRequest};
use pathsieve::check::{bind_cycle, SnapPolicy};
use pathsieve::combine::filter;
use pathsieve::cycle::{read_cycle, Weight};
use pathsieve::experiment_file::read_experiment;
use pathsieve::export::npy::{read_npy, NpyData};
use pathsieve::export::npz::read_npz;
use pathsieve::model::{Backgrounds, PathwayClass};
use pathsieve::selection::{Selection, SelectionRequest};
use pathsieve::simulate::{
    ideal_outputs, parse_delays, parse_dynamics, simulate_cycle, simulate_response, spectrum_2d,
    DelayAxis, DelayGrid, ExcitationAxis, PhaseErrors, RunRequest, SpectrumRequest,
};
use std::path::Path;

fn s(p: &Path) -> String {
    p.display().to_string()
}

fn complex(data: NpyData) -> Vec<Complex64> {
    match data {
        NpyData::F64(v) => v.into_iter().map(|x| Complex64::new(x, 0.0)).collect(),
        NpyData::C128(v) => v,
        NpyData::I64(v) => v
            .into_iter()
            .map(|x| Complex64::new(x as f64, 0.0))
            .collect(),
    }
}

fn member(z: &[(String, pathsieve::export::npy::NpyArray)], name: &str) -> Vec<Complex64> {
    let a = z
        .iter()
        .find(|m| m.0 == name)
        .unwrap_or_else(|| panic!("no member {name}"));
    complex(a.1.data.clone())
}

fn peak(v: &[Complex64]) -> f64 {
    v.iter().map(|x| x.norm()).fold(0.0, f64::max)
}

fn design(dir: &Path, experiment: &Path) -> std::path::PathBuf {
    let out = dir.join("designed.cycle.toml");
    let (code, _, err) = run_cli(&["design", &s(experiment), "--out", &s(&out)]);
    assert_eq!(code, 0, "{err}");
    out
}

#[test]
fn simulated_steps_combine_through_pathsieve_combine_to_the_simulated_outputs() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run.npy");
    let (code, text, err) = run_cli(&[
        "simulate",
        &s(&scheme("carbonyl-2dir-dynamics.toml")),
        &s(&scheme("carbonyl-2x2.cycle.toml")),
        "--delay",
        "t1=0:4:400",
        "--delay",
        "t3=0:4:400",
        "--background",
        "unmodulated=1000",
        "--background",
        "scatter=300",
        "--noise",
        "0.01",
        "--seed",
        "3",
        "--out",
        &s(&out),
        "--json",
        "--png",
    ]);
    assert_eq!(code, 0, "{err}");
    let summary: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(summary["schema_version"], 1);
    assert_eq!(summary["steps_shape"], serde_json::json!([4, 101, 1, 101]));
    assert!(!summary["backgrounds"].as_array().unwrap().is_empty());
    for f in [
        "run.steps.npy",
        "run.absorptive.time.npy",
        "run.absorptive.spectrum.npy",
        "run.meta.json",
        "run.absorptive.svg",
        "run.absorptive.png",
    ] {
        assert!(dir.path().join(f).exists(), "{f}");
    }
    let (code, _, err) = run_cli(&[
        "combine",
        &s(&scheme("carbonyl-2dir-dynamics.toml")),
        &s(&scheme("carbonyl-2x2.cycle.toml")),
        &s(&dir.path().join("run.steps.npy")),
        "--out",
        &s(&dir.path().join("combined.npz")),
    ]);
    assert_eq!(code, 0, "{err}");
    let z = read_npz(&std::fs::read(dir.path().join("combined.npz")).unwrap()).unwrap();
    let combined = member(&z, "absorptive");
    let a = read_npy(&std::fs::read(dir.path().join("run.absorptive.time.npy")).unwrap()).unwrap();
    assert_eq!(a.shape, vec![101, 1, 101]);
    let simulated = complex(a.data);
    assert_eq!(combined.len(), simulated.len());
    let scale = peak(&simulated);
    let worst = combined
        .iter()
        .zip(&simulated)
        .map(|(x, y)| (x - y).norm())
        .fold(0.0, f64::max);
    assert!(worst <= 1e-12 * scale, "{worst} of {scale}");
    // Noise of 1 % of the peak: the leak is noise-sized, not background-sized.
    let rel = summary["outputs"][0]["leak_relative"].as_f64().unwrap();
    assert!(rel > 0.005 && rel < 0.1, "{rel}");
}

#[test]
fn a_designed_cycle_removes_backgrounds_1000_times_the_signal_to_float_precision() {
    // A cycle whose F(b) is exactly zero on the rejection set removes any background in it,
    // whatever its size, up to rounding (domain notes, section 1; common practice).
    let dir = tempfile::tempdir().unwrap();
    let exp = scheme("two-level-emission.toml");
    let cycle = design(dir.path(), &exp);
    let out = dir.path().join("bg.npz");
    let (code, text, err) = run_cli(&[
        "simulate",
        &s(&exp),
        &s(&cycle),
        "--delay",
        "t1=0:4:200",
        "--delay",
        "t2=0,50",
        "--delay",
        "t3=0:4:200",
        "--frame",
        "2.2",
        "--background",
        "default=1000",
        "--out",
        &s(&out),
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let bgs = v["backgrounds"].as_array().unwrap();
    assert!(bgs.len() > 10, "{} backgrounds", bgs.len());
    assert!(bgs.iter().all(|b| b["size"] == 1000.0));
    let z = read_npz(&std::fs::read(&out).unwrap()).unwrap();
    for name in ["R", "NR"] {
        let measured = member(&z, &format!("{name}.time"));
        let ideal = member(&z, &format!("{name}.ideal_time"));
        let scale = peak(&ideal);
        assert!(scale > 0.0);
        let worst = measured
            .iter()
            .zip(&ideal)
            .map(|(x, y)| (x - y).norm())
            .fold(0.0, f64::max);
        // Backgrounds of 1000 x peak summed over the steps: rounding ~ 1e-16 x 1000 x N.
        assert!(worst <= 1e-9 * scale, "{name}: leak {worst} of {scale}");
    }
    // The per-step data do hold the backgrounds: the raw steps are ~1000 x the signal.
    let steps = read_npz(&std::fs::read(dir.path().join("bg.steps.npz")).unwrap()).unwrap();
    let raw = member(&steps, "steps");
    let scale = v["reference_amplitude"].as_f64().unwrap();
    assert!(peak(&raw) > 100.0 * scale);
}

/// A grid of one point per delay.
fn point_grid(n: usize) -> DelayGrid {
    DelayGrid {
        axes: (1..=n)
            .map(|k| DelayAxis {
                name: format!("t{k}"),
                times_fs: parse_delays("10", 1.0).unwrap(),
            })
            .collect(),
    }
}

#[test]
fn one_degree_rms_phase_errors_leak_as_the_tolerance_analysis_predicts() {
    // Gaussian phase errors of RMS sigma per step and cycled field: E|F'(b)|^2 =
    // |F(b)|^2 e^{-s2} + sum |w|^2 (1 - e^{-s2}), s2 = (2 pi sigma)^2 sum_j b_j^2 (the
    // closed form of `check --tolerance`). With backgrounds of random phase (independent
    // per seed), the mean square leak is the sum over backgrounds of (size x RMS figure)^2.
    // Agreement within a factor 1.25 over 400 seeds (statistical error ~5 %).
    let dir = tempfile::tempdir().unwrap();
    let path = scheme("two-level-emission.toml");
    let cycle_path = design(dir.path(), &path);
    let exp = read_experiment(&path).unwrap();
    let text = std::fs::read_to_string(&path).unwrap();
    let dyn_ = parse_dynamics(&text, &path, exp.levels.as_ref().unwrap())
        .unwrap()
        .unwrap();
    let cycle = read_cycle(&cycle_path, None).unwrap();
    let sel = Selection::new(&exp, &SelectionRequest::default()).unwrap();
    let grid = point_grid(3);
    let resp = simulate_response(&exp, &dyn_, 2.2, &grid, true).unwrap();
    let mut rules = Backgrounds::default();
    rules.set(pathsieve::model::backgrounds::BackgroundRule {
        key: pathsieve::model::backgrounds::parse_key("scatter", &exp).unwrap(),
        size: 1000.0,
        given_in: "test".into(),
    });
    let sigma = 1.0 / 360.0;
    let bound = bind_cycle(&sel, &cycle, &SnapPolicy::default()).unwrap();
    let phases = bound.phases_f64();
    for (oi, out) in bound.outputs.iter().enumerate() {
        let w: Vec<Complex64> = out.weights.iter().map(Weight::to_complex).collect();
        let ref_abs = filter(&w, &phases, &out.kept[0]).norm();
        let set = sel.rejection_of_output(oi);
        let figures = per_term(
            &bound,
            out,
            &set,
            ref_abs,
            &ToleranceRequest {
                delta_turns: sigma,
                bits: None,
            },
            |b| filter(&w, &phases, b).norm(),
        );
        let rms = |b: &pathsieve::signature::Signature| {
            figures
                .iter()
                .find(|f| f.signature == *b)
                .map(|f| f.rms)
                .expect("background in the rejection set")
        };
        let mut observed = 0.0;
        let mut predicted = 0.0;
        let seeds = 400;
        for seed in 0..seeds {
            let req = RunRequest {
                backgrounds: rules.clone(),
                errors: PhaseErrors {
                    rms: sigma,
                    ..PhaseErrors::default()
                },
                noise: 0.0,
                seed,
            };
            let run = simulate_cycle(&sel, &cycle, &resp, &req).unwrap();
            let leak = run.combined.outputs[oi].values[0] - run.ideal[oi][0];
            observed += leak.norm_sqr();
            if seed == 0 {
                assert!(!run.backgrounds.is_empty());
                for bg in &run.backgrounds {
                    let a = bg.size * run.reference;
                    let b = &bg.signature;
                    predicted += a * a * (rms(b).powi(2) + rms(&b.conjugate()).powi(2));
                }
            }
        }
        observed /= seeds as f64;
        let ratio = observed / predicted;
        eprintln!(
            "output {}: observed / predicted mean square leak = {ratio:.4}",
            out.name
        );
        assert!(
            (0.8..1.25).contains(&ratio),
            "output {}: mean square leak {observed:.4e}, tolerance analysis {predicted:.4e}",
            out.name
        );
    }
}

#[test]
fn the_absorptive_pump_probe_spectrum_is_the_sum_of_rephasing_and_non_rephasing() {
    // Pump-probe geometry detects R + NR together; folding the t1 transform gives the
    // absorptive spectrum Re[S_R(-w1, w3) + S_NR(w1, w3)] (common practice; Hamm & Zanni 2011,
    // ch. 4 (memory)). The real detected signal also holds the negative-frequency half, whose
    // Lorentzian tails reach the positive quadrant at ~G/(2w) ~ 1e-3 of the peak (found: 1.3e-4).
    let path = scheme("carbonyl-2dir-dynamics.toml");
    let exp = read_experiment(&path).unwrap();
    let text = std::fs::read_to_string(&path).unwrap();
    let dyn_ = parse_dynamics(&text, &path, exp.levels.as_ref().unwrap())
        .unwrap()
        .unwrap();
    let sel = Selection::new(&exp, &SelectionRequest::default()).unwrap();
    let axis = |name: &str, spec: &str| DelayAxis {
        name: name.into(),
        times_fs: parse_delays(spec, 1.0).unwrap(),
    };
    let grid = DelayGrid {
        axes: vec![
            axis("t1", "0:4:3000"),
            axis("t2", "0"),
            axis("t3", "0:4:3000"),
        ],
    };
    let resp = simulate_response(&exp, &dyn_, 0.0, &grid, false).unwrap();
    let absorptive = &ideal_outputs(&sel, &resp)[0].1;
    let class = |c: PathwayClass| {
        let mut v = vec![Complex64::new(0.0, 0.0); grid.len()];
        for t in resp.terms.iter().filter(|t| t.classes == [c]) {
            for (o, x) in v.iter_mut().zip(&t.values) {
                *o += x;
            }
        }
        v
    };
    let spec = |values: &[Complex64], mode| {
        let req = SpectrumRequest {
            unit: dyn_.energy_unit,
            frame: 0.0,
            min_points: 1024,
            zone: [0.0, 0.0],
            mode,
        };
        spectrum_2d(values, &grid, &[0], &req).unwrap()
    };
    let pp = spec(absorptive, ExcitationAxis::Folded);
    let r = spec(&class(PathwayClass::Rephasing), ExcitationAxis::Flipped);
    let nr = spec(&class(PathwayClass::NonRephasing), ExcitationAxis::Direct);
    // The flipped axis runs over the mirrored bins: match rows by frequency.
    let row = |axis: &[f64], w: f64| {
        let i = axis
            .iter()
            .position(|&x| (x - w).abs() < 1e-6)
            .expect("same bins");
        i
    };
    let inside = |w: f64| (1900.0..2060.0).contains(&w);
    let mut worst: f64 = 0.0;
    let mut top: f64 = 0.0;
    for i in (0..pp.excitation.len()).filter(|&i| inside(pp.excitation[i])) {
        let (ir, inr) = (
            row(&r.excitation, pp.excitation[i]),
            row(&nr.excitation, pp.excitation[i]),
        );
        for j in (0..pp.detection.len()).filter(|&j| inside(pp.detection[j])) {
            let want = (r.at(ir, j) + nr.at(inr, j)).re;
            top = top.max(want.abs());
            worst = worst.max((pp.at(i, j).re - want).abs());
        }
    }
    assert!(top > 0.0);
    eprintln!("pump-probe - (R + NR): {:.3e} of the peak", worst / top);
    assert!(
        worst < 2e-3 * top,
        "pump-probe - (R + NR): {worst} of {top}"
    );
}

#[test]
fn draw_spectrum_reads_a_run_back_and_refuses_what_it_cannot_draw() {
    let dir = tempfile::tempdir().unwrap();
    let run = dir.path().join("run.npz");
    let (code, _, err) = run_cli(&[
        "simulate",
        &s(&scheme("carbonyl-2dir-dynamics.toml")),
        &s(&scheme("carbonyl-2x2.cycle.toml")),
        "--delay",
        "t1=0:4:800",
        "--delay",
        "t3=0:4:800",
        "--background",
        "scatter=30",
        "--phase-rms",
        "2",
        "--out",
        &s(&run),
    ]);
    assert_eq!(code, 0, "{err}");
    let svg = dir.path().join("map.svg");
    let (code, _, err) = run_cli(&["draw", "spectrum", &s(&run), "--out", &s(&svg), "--png"]);
    assert_eq!(code, 0, "{err}");
    let text = std::fs::read_to_string(&svg).unwrap();
    // Three panels on one scale, both axes named with their unit, signed colours.
    for want in [
        "ideal",
        "as measured",
        "leak = measured − ideal",
        "excitation ω1 (cm-1)",
        "detection ω3 (cm-1)",
        "real part / scale",
        "stroke-dasharray",
    ] {
        assert!(text.contains(want), "{want}");
    }
    let png = std::fs::read(dir.path().join("map.png")).unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    if let Ok(d) = std::env::var("PATHSIEVE_PICTURES") {
        std::fs::write(format!("{d}/carbonyl-run.png"), &png).unwrap();
    }
    // No overwrite without --force; an unknown output is named with the choices.
    let (code, _, err) = run_cli(&["draw", "spectrum", &s(&run), "--out", &s(&svg)]);
    assert_eq!(code, 2);
    assert!(err.contains("--force"), "{err}");
    let (code, _, err) = run_cli(&[
        "draw",
        "spectrum",
        &s(&run),
        "--output",
        "R",
        "--out",
        &s(&dir.path().join("r.svg")),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("absorptive"), "{err}");
}

#[test]
fn simulate_refuses_bad_requests_before_writing_anything() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("x.npz");
    let exp = s(&scheme("two-level-emission.toml"));
    let cases: [(&[&str], &str); 4] = [
        (&["--delay", "t1=0:4:100"], "give the delay t3"),
        (
            &["--delay", "t1=0:20:100", "--delay", "t3=0:20:100"],
            "aliases",
        ),
        (
            &[
                "--delay",
                "t1=0:4:100",
                "--delay",
                "t3=0:4:100",
                "--noise",
                "0.1",
            ],
            "give a CYCLE",
        ),
        (
            &["--delay", "t1=100:4:0", "--delay", "t3=0:4:100"],
            "STOP >= START",
        ),
    ];
    for (args, want) in cases {
        let mut all = vec!["simulate", exp.as_str(), "--out", out.to_str().unwrap()];
        all.extend_from_slice(args);
        let (code, _, err) = run_cli(&all);
        assert_eq!(code, 2, "{args:?}");
        assert!(err.contains(want), "{args:?}: {err}");
        assert!(std::fs::read_dir(dir.path()).unwrap().next().is_none());
    }
    let (code, _, err) = run_cli(&[
        "simulate",
        &s(&scheme("ladder-heterodyne.toml")),
        "--delay",
        "t1=0:4:100",
        "--delay",
        "t3=0:4:100",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("no [dynamics] table"), "{err}");
}

#[test]
fn a_fixed_phase_offset_turns_each_kept_term_by_its_signature_and_still_cancels_backgrounds() {
    // A constant offset d_j on field j multiplies every term b by exp(+i 2 pi b.d) (the
    // convention of docs/combine.md): a cycle that cancels b still cancels it, and a kept term
    // t comes out turned by exp(+i 2 pi t.d) (common practice: a phase offset rotates the
    // signal's phase, it does not add leaks).
    let dir = tempfile::tempdir().unwrap();
    let path = scheme("two-level-emission.toml");
    let cycle_path = design(dir.path(), &path);
    let exp = read_experiment(&path).unwrap();
    let text = std::fs::read_to_string(&path).unwrap();
    let dyn_ = parse_dynamics(&text, &path, exp.levels.as_ref().unwrap())
        .unwrap()
        .unwrap();
    let cycle = read_cycle(&cycle_path, None).unwrap();
    let sel = Selection::new(&exp, &SelectionRequest::default()).unwrap();
    let resp = simulate_response(&exp, &dyn_, 2.2, &point_grid(3), true).unwrap();
    let mut rules = Backgrounds::default();
    rules.set(pathsieve::model::backgrounds::BackgroundRule {
        key: pathsieve::model::backgrounds::parse_key("default", &exp).unwrap(),
        size: 1000.0,
        given_in: "test".into(),
    });
    let offsets = vec![0.0, 10.0 / 360.0, -25.0 / 360.0, 0.0];
    let req = RunRequest {
        backgrounds: rules,
        errors: PhaseErrors {
            offsets: offsets.clone(),
            ..PhaseErrors::default()
        },
        noise: 0.0,
        seed: 5,
    };
    let run = simulate_cycle(&sel, &cycle, &resp, &req).unwrap();
    for (o, ideal) in run.combined.outputs.iter().zip(&run.ideal) {
        let t = &o.kept[0];
        let turns: f64 = t.0.iter().zip(&offsets).map(|(&b, d)| b as f64 * d).sum();
        let want = ideal[0] * Complex64::from_polar(1.0, std::f64::consts::TAU * turns);
        let got = o.values[0];
        assert!(
            (got - want).norm() <= 1e-9 * ideal[0].norm(),
            "{}: {got} against {want}",
            o.name
        );
        assert!((got - ideal[0]).norm() > 0.1 * ideal[0].norm());
    }
}
