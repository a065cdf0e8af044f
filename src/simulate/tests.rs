//! Physics checks of the simulator against textbook results (sources beside each check).

use super::*;
use crate::experiment_file::parse_experiment;
use crate::model::{Experiment, PathwayClass};
use num_complex::Complex64;
use std::path::Path;

pub(crate) fn experiment(text: &str) -> (Experiment, Dynamics) {
    let path = Path::new("test.toml");
    let exp = parse_experiment(text, path).unwrap();
    let dyn_ = parse_dynamics(text, path, exp.levels.as_ref().unwrap())
        .unwrap()
        .unwrap();
    (exp, dyn_)
}

pub(crate) fn grid(names: &[&str], specs: &[&str]) -> DelayGrid {
    DelayGrid {
        axes: names
            .iter()
            .zip(specs)
            .map(|(n, s)| DelayAxis {
                name: n.to_string(),
                times_fs: parse_delays(s, 1.0).unwrap(),
            })
            .collect(),
    }
}

/// Sum of the terms whose pathways all have class `class`.
fn class_signal(resp: &Response, class: PathwayClass) -> Vec<Complex64> {
    let mut out = vec![Complex64::new(0.0, 0.0); resp.grid.len()];
    for t in resp.terms.iter().filter(|t| t.classes == [class]) {
        for (o, v) in out.iter_mut().zip(&t.values) {
            *o += v;
        }
    }
    out
}

fn spectrum(values: &[Complex64], g: &DelayGrid, frame: f64, mode: ExcitationAxis) -> Spectrum2D {
    let req = SpectrumRequest {
        unit: EnergyUnit::Wavenumber,
        frame,
        min_points: 512,
        zone: [0.0, 0.0],
        mode,
    };
    spectrum_2d(values, g, &vec![0; g.axes.len() - 2], &req).unwrap()
}

/// The absorptive spectrum Re[S_R(-w1, w3) + S_NR(w1, w3)] (Hamm & Zanni 2011, ch. 4).
fn absorptive(resp: &Response, frame: f64) -> (Spectrum2D, Vec<f64>) {
    let g = &resp.grid;
    let r = spectrum(
        &class_signal(resp, PathwayClass::Rephasing),
        g,
        frame,
        ExcitationAxis::Flipped,
    );
    let nr = spectrum(
        &class_signal(resp, PathwayClass::NonRephasing),
        g,
        frame,
        ExcitationAxis::Direct,
    );
    assert_eq!(r.excitation.len(), nr.excitation.len());
    let a = r
        .values
        .iter()
        .zip(&nr.values)
        .map(|(x, y)| (x + y).re)
        .collect();
    (nr, a)
}

fn nearest(axis: &[f64], x: f64) -> usize {
    (0..axis.len())
        .min_by(|&a, &b| (axis[a] - x).abs().total_cmp(&(axis[b] - x).abs()))
        .unwrap()
}

/// Full width at half maximum of `y` around its maximum, by linear interpolation.
fn fwhm(x: &[f64], y: &[f64]) -> f64 {
    let k = (0..y.len()).max_by(|&a, &b| y[a].total_cmp(&y[b])).unwrap();
    let half = y[k] / 2.0;
    let cross = |range: Box<dyn Iterator<Item = usize>>| {
        let mut prev = k;
        for i in range {
            if y[i] < half {
                let f = (y[prev] - half) / (y[prev] - y[i]);
                return x[prev] + f * (x[i] - x[prev]);
            }
            prev = i;
        }
        panic!("no half-maximum crossing");
    };
    cross(Box::new(k + 1..y.len())) - cross(Box::new((0..k).rev()))
}

const TWO_LEVEL: &str = r#"
order = 3
[detection]
mode = "emission"
[[field]]
name = "1"
[[field]]
name = "2"
[[field]]
name = "3"
[[field]]
name = "LO"
kind = "lo"
[levels]
states = [{ name = "g", manifold = 0 }, { name = "e", manifold = 1, energy = 2000.0 }]
[dynamics]
energy_unit = "cm-1"
dephasing = 20.0
"#;

#[test]
fn two_level_absorptive_peak_is_a_lorentzian_of_full_width_2g_on_both_axes() {
    // Mukamel 1995, ch. 6; Hamm & Zanni 2011, ch. 4 (memory): a coherence decaying as
    // exp(-G t) has a Lorentzian line of full width 2G; the absorptive 2D peak of a
    // homogeneous two-level system is the product of two, at (w_eg, w_eg).
    let (exp, dyn_) = experiment(TWO_LEVEL);
    let g = grid(&["t1", "t2", "t3"], &["0:20:2400", "0", "0:20:2400"]);
    let resp = simulate_response(&exp, &dyn_, 1900.0, &g, false).unwrap();
    let (s, a) = absorptive(&resp, 1900.0);
    let n3 = s.detection.len();
    let i = nearest(&s.excitation, 2000.0);
    let j = nearest(&s.detection, 2000.0);
    let k = (0..a.len()).max_by(|&p, &q| a[p].total_cmp(&a[q])).unwrap();
    let bin = s.detection[1] - s.detection[0];
    let (p1, p3) = (s.excitation[k / n3], s.detection[k % n3]);
    assert!(
        (p1 - 2000.0).abs() <= bin && (p3 - 2000.0).abs() <= bin,
        "peak at ({p1}, {p3})"
    );
    let row: Vec<f64> = a[i * n3..(i + 1) * n3].to_vec();
    let col: Vec<f64> = (0..s.excitation.len()).map(|r| a[r * n3 + j]).collect();
    let w3 = fwhm(&s.detection, &row);
    let w1 = fwhm(&s.excitation, &col);
    assert!(
        (w3 - 40.0).abs() < 0.8,
        "detection FWHM {w3} cm-1, want 2G = 40"
    );
    assert!(
        (w1 - 40.0).abs() < 0.8,
        "excitation FWHM {w1} cm-1, want 2G = 40"
    );
}

#[test]
fn inhomogeneous_rephasing_signal_echoes_at_t3_equal_t1_and_lies_along_the_diagonal() {
    // Static inhomogeneity: the rephasing signal rephases at t3 = t1 (photon echo) and its
    // spectrum is elongated along the diagonal (Mukamel 1995; Hamm & Zanni 2011, ch. 4
    // (memory)).
    let text = TWO_LEVEL.replace("dephasing = 20.0", "dephasing = 5.0\ninhomogeneous = 60.0");
    let (exp, dyn_) = experiment(&text);
    let g = grid(&["t1", "t2", "t3"], &["0:25:4000", "0", "0:25:4000"]);
    let resp = simulate_response(&exp, &dyn_, 1900.0, &g, false).unwrap();
    let r = class_signal(&resp, PathwayClass::Rephasing);
    let n3 = g.axes[2].times_fs.len();
    for t1_index in [12usize, 20, 32] {
        let row = &r[t1_index * n3..(t1_index + 1) * n3];
        let peak = (0..n3)
            .max_by(|&a, &b| row[a].norm().total_cmp(&row[b].norm()))
            .unwrap();
        assert_eq!(
            peak, t1_index,
            "echo of t1 = {} fs",
            g.axes[0].times_fs[t1_index]
        );
    }
    let nr = class_signal(&resp, PathwayClass::NonRephasing);
    let row = &nr[20 * n3..21 * n3];
    let peak = (0..n3)
        .max_by(|&a, &b| row[a].norm().total_cmp(&row[b].norm()))
        .unwrap();
    assert_eq!(peak, 0, "the non-rephasing signal shows no echo");
    let s = spectrum(&r, &g, 1900.0, ExcitationAxis::Flipped);
    let at = |w1: f64, w3: f64| {
        s.at(nearest(&s.excitation, w1), nearest(&s.detection, w3))
            .norm()
    };
    let centre = at(2000.0, 2000.0);
    let (diagonal, anti) = (at(2060.0, 2060.0), at(2060.0, 1940.0));
    assert!(diagonal > 0.4 * centre, "diagonal {diagonal} of {centre}");
    assert!(
        anti < 0.15 * diagonal,
        "anti-diagonal {anti} against diagonal {diagonal}"
    );
    // Without inhomogeneity the same points are equal by symmetry of the Lorentzians.
    let (exp, dyn_) = experiment(&TWO_LEVEL.replace("dephasing = 20.0", "dephasing = 5.0"));
    let resp = simulate_response(&exp, &dyn_, 1900.0, &g, false).unwrap();
    let s = spectrum(
        &class_signal(&resp, PathwayClass::Rephasing),
        &g,
        1900.0,
        ExcitationAxis::Flipped,
    );
    let at = |w1: f64, w3: f64| {
        s.at(nearest(&s.excitation, w1), nearest(&s.detection, w3))
            .norm()
    };
    assert!((at(2060.0, 2060.0) / at(2060.0, 1940.0) - 1.0).abs() < 0.05);
}

const LADDER: &str = r#"
order = 3
[detection]
mode = "emission"
[[field]]
name = "1"
[[field]]
name = "2"
[[field]]
name = "3"
[[field]]
name = "LO"
kind = "lo"
[levels]
states = [
  { name = "g", manifold = 0 },
  { name = "e", manifold = 1, energy = 2000.0 },
  { name = "f", manifold = 2, energy = 3980.0 },
]
transitions = [{ from = "g", to = "e", dipole = 1.0 }, { from = "e", to = "f", dipole = 1.4142 }]
[dynamics]
energy_unit = "cm-1"
dephasing = 4.0
"#;

#[test]
fn ladder_esa_peak_is_shifted_by_the_anharmonicity_with_opposite_sign() {
    // Hamm & Zanni 2011, ch. 4: the 0-1 peak (GSB + SE) is positive on the diagonal, the
    // 1-2 peak (ESA) negative, shifted down the detection axis by the anharmonicity (20 cm-1).
    let (exp, dyn_) = experiment(LADDER);
    let g = grid(&["t1", "t2", "t3"], &["0:40:4000", "0", "0:40:4000"]);
    let resp = simulate_response(&exp, &dyn_, 1900.0, &g, false).unwrap();
    let (s, a) = absorptive(&resp, 1900.0);
    let n3 = s.detection.len();
    let i = nearest(&s.excitation, 2000.0);
    let row = &a[i * n3..(i + 1) * n3];
    let max = (0..n3).max_by(|&p, &q| row[p].total_cmp(&row[q])).unwrap();
    let min = (0..n3).min_by(|&p, &q| row[p].total_cmp(&row[q])).unwrap();
    assert!(row[max] > 0.0 && row[min] < 0.0);
    assert!(
        (s.detection[max] - 2000.0).abs() < 2.0,
        "GSB+SE at {}",
        s.detection[max]
    );
    assert!(
        (s.detection[min] - 1980.0).abs() < 2.0,
        "ESA at {}",
        s.detection[min]
    );
}

#[test]
fn uncoupled_two_level_systems_in_fluorescence_detection_give_no_cross_peaks() {
    // Two independent two-level systems A and B seen through fluorescence: the joint states
    // are g, eA, eB and f = eA + eB; the doubly excited state emits twice (yield 2). Their
    // cross peaks cancel exactly, since nothing couples them (Malý & Mančal, J. Phys. Chem.
    // Lett. 2018 (memory)).
    let text = r#"
order = 4
[detection]
mode = "population"
[[field]]
name = "1"
[[field]]
name = "2"
[[field]]
name = "3"
[[field]]
name = "4"
[levels]
states = [
  { name = "g", manifold = 0 },
  { name = "eA", manifold = 1, energy = 2000.0, yield = 1.0 },
  { name = "eB", manifold = 1, energy = 2150.0, yield = 1.0 },
  { name = "f", manifold = 2, energy = 4150.0, yield = 2.0 },
]
transitions = [
  { from = "g", to = "eA", dipole = 1.0 }, { from = "g", to = "eB", dipole = 0.7 },
  { from = "eA", to = "f", dipole = 0.7 }, { from = "eB", to = "f", dipole = 1.0 },
]
[dynamics]
energy_unit = "cm-1"
dephasing = 10.0
"#;
    let single = |energy: f64, dipole: f64| {
        text.split("[levels]").next().unwrap().to_string()
            + &format!(
                "[levels]\nstates = [{{ name = \"g\", manifold = 0 }}, {{ name = \"e\", manifold = 1, energy = {energy}, yield = 1.0 }}]\ntransitions = [{{ from = \"g\", to = \"e\", dipole = {dipole} }}]\n[dynamics]\nenergy_unit = \"cm-1\"\ndephasing = 10.0\n"
            )
    };
    let g = grid(&["t1", "t2", "t3"], &["0:30:1500", "0", "0:30:1500"]);
    let run = |text: &str, class| {
        let (exp, dyn_) = experiment(text);
        let resp = simulate_response(&exp, &dyn_, 1950.0, &g, false).unwrap();
        class_signal(&resp, class)
    };
    for class in [PathwayClass::Rephasing, PathwayClass::NonRephasing] {
        let joint = run(text, class);
        let a = run(&single(2000.0, 1.0), class);
        let b = run(&single(2150.0, 0.7), class);
        let scale = joint.iter().map(|v| v.norm()).fold(0.0, f64::max);
        assert!(scale > 0.1);
        let worst = joint
            .iter()
            .zip(a.iter().zip(&b))
            .map(|(j, (x, y))| (j - x - y).norm())
            .fold(0.0, f64::max);
        assert!(
            worst < 1e-12 * scale,
            "{class:?}: joint - A - B = {worst} of {scale}"
        );
        // Control: with an f-yield of 1 (the doubly excited state emits once, as if the
        // systems quenched each other) the cross peaks no longer cancel.
        let quenched = run(&text.replace("yield = 2.0", "yield = 1.0"), class);
        let cross = quenched
            .iter()
            .zip(a.iter().zip(&b))
            .map(|(j, (x, y))| (j - x - y).norm())
            .fold(0.0, f64::max);
        assert!(cross > 0.1 * scale, "{class:?}: control {cross} of {scale}");
    }
}

#[test]
fn a_coarse_step_is_refused_unless_undersampling_is_asked_for() {
    let (exp, dyn_) = experiment(TWO_LEVEL);
    let g = grid(&["t1", "t2", "t3"], &["0:10:100", "0", "0:10:100"]);
    let err = simulate_response(&exp, &dyn_, 0.0, &g, false).unwrap_err();
    assert!(err.to_string().contains("aliases"), "{err}");
    assert!(simulate_response(&exp, &dyn_, 0.0, &g, true).is_ok());
}

#[test]
fn the_ladder_spectrum_renders_as_svg_and_png() {
    use crate::render::spectrum_svg::{spectrum_svg, Component, Panel, SpectrumPicture};
    let (exp, dyn_) = experiment(LADDER);
    let g = grid(&["t1", "t2", "t3"], &["0:40:2000", "0", "0:40:2000"]);
    let resp = simulate_response(&exp, &dyn_, 1900.0, &g, false).unwrap();
    let r = spectrum(
        &class_signal(&resp, PathwayClass::Rephasing),
        &g,
        1900.0,
        ExcitationAxis::Flipped,
    );
    let nr = spectrum(
        &class_signal(&resp, PathwayClass::NonRephasing),
        &g,
        1900.0,
        ExcitationAxis::Direct,
    );
    let mut absorptive = nr.clone();
    for (a, x) in absorptive.values.iter_mut().zip(&r.values) {
        *a += x;
    }
    let pic = SpectrumPicture {
        title: "Ladder g-e-f, absorptive R + NR (real part); the ESA peak lies 20 cm-1 below the diagonal".into(),
        panels: vec![
            Panel { caption: "R + NR".into(), spectrum: &absorptive },
            Panel { caption: "non-rephasing only".into(), spectrum: &nr },
        ],
        component: Component::Real,
        window: [1940.0, 2060.0],
    };
    let svg = spectrum_svg(&pic);
    assert!(svg.contains("detection ω3 (cm-1)") && svg.contains("excitation ω1 (cm-1)"));
    #[cfg(feature = "png")]
    {
        let png = crate::render::png::svg_to_png(&svg, 1.0).unwrap();
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
        if let Ok(dir) = std::env::var("PATHSIEVE_PICTURES") {
            std::fs::write(format!("{dir}/ladder-spectrum.png"), &png).unwrap();
        }
    }
}
