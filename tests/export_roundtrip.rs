//! `pathsieve export` and `pathsieve draw` as a user runs them: export -> re-import -> the exact
//! checker gives the same verdict (CSV, JSON, NPY); NPY headers per the NumPy format
//! description; a two-pulse shaper mask through the CLI; all-or-nothing safe writing.

mod common;

use common::{path_arg as s, root, run_cli as run};

use num_complex::Complex64;
use pathsieve::check::{check_cycle, CheckReport, CheckRequest};
use pathsieve::cycle::{read_cycle, Cycle};
use pathsieve::experiment_file::read_experiment;
use pathsieve::export::npy::{read_npy, NpyData};
use pathsieve::export::phase_import::{
    read_phase_list_csv, read_phase_list_json, read_phase_list_npy,
};
use std::path::PathBuf;
use std::process::Command;

/// The parts of a verdict that must survive a round trip.
/// (clean, first leak order, per output: name, clean, leak count, kept count).
type Verdict = (bool, Option<u32>, Vec<(String, bool, usize, usize)>);

fn verdict(r: &CheckReport) -> Verdict {
    (
        r.clean,
        r.first_leak_order,
        r.outputs
            .iter()
            .map(|o| (o.name.clone(), o.clean, o.leak_count, o.kept.len()))
            .collect(),
    )
}

fn check(exp: &str, c: &Cycle) -> CheckReport {
    let e = read_experiment(&root(exp)).unwrap();
    check_cycle(&e, c, &CheckRequest::default()).unwrap()
}

const CASES: &[(&str, &str)] = &[
    // Nested 1x3x3x3 (Tan, J. Chem. Phys. 129, 124501 (2008), from memory): clean, 3 outputs.
    (
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-27step.cycle.toml",
    ),
    // Pump-probe 2x2, weights +-1 (common practice): clean, keeps R + NR.
    (
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
    ),
    // A leaky table: the verdict "leaks" must survive too.
    (
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-leaky.cycle.toml",
    ),
];

#[test]
fn csv_json_and_npy_exports_re_import_to_the_same_exact_verdict() {
    let d = tempfile::tempdir().unwrap();
    for (k, (exp, cyc)) in CASES.iter().enumerate() {
        let original = verdict(&check(exp, &read_cycle(&root(cyc), None).unwrap()));
        for order in ["designed", "drift"] {
            for unit in ["turns", "deg", "rad", "index"] {
                let p = d.path().join(format!("{k}-{order}-{unit}.csv"));
                let w = d.path().join(format!("{k}-{order}-{unit}.w.csv"));
                let (code, _, err) = run(&[
                    "export",
                    exp,
                    cyc,
                    "--format",
                    "csv",
                    "--unit",
                    unit,
                    "--order",
                    order,
                    "--out",
                    s(&p),
                    "--weights",
                    s(&w),
                ]);
                assert_eq!(code, 0, "{err}");
                let c = read_phase_list_csv(
                    &std::fs::read_to_string(&p).unwrap(),
                    Some(&std::fs::read_to_string(&w).unwrap()),
                    &p,
                )
                .unwrap();
                let r = check(exp, &c);
                assert!(r.exact, "{cyc} {unit}: re-imported CSV is exact");
                assert_eq!(verdict(&r), original, "{cyc} csv {unit} {order}");
            }
            let j = d.path().join(format!("{k}-{order}.json"));
            let (code, _, err) = run(&[
                "export",
                exp,
                cyc,
                "--format",
                "json",
                "--unit",
                "deg",
                "--order",
                order,
                "--out",
                s(&j),
            ]);
            assert_eq!(code, 0, "{err}");
            let c = read_phase_list_json(&std::fs::read_to_string(&j).unwrap(), &j).unwrap();
            assert_eq!(verdict(&check(exp, &c)), original, "{cyc} json {order}");

            let n = d.path().join(format!("{k}-{order}.npy"));
            let wn = d.path().join(format!("{k}-{order}.w.npy"));
            let (code, _, err) = run(&[
                "export",
                exp,
                cyc,
                "--format",
                "npy",
                "--unit",
                "rad",
                "--order",
                order,
                "--out",
                s(&n),
                "--weights",
                s(&wn),
            ]);
            assert_eq!(code, 0, "{err}");
            let meta =
                std::fs::read_to_string(d.path().join(format!("{k}-{order}.meta.json"))).unwrap();
            let c = read_phase_list_npy(
                &std::fs::read(&n).unwrap(),
                &meta,
                Some(&std::fs::read(&wn).unwrap()),
                &n,
            )
            .unwrap();
            // NPY weights are complex128 floats, so the re-imported verdict is numeric.
            assert_eq!(verdict(&check(exp, &c)), original, "{cyc} npy {order}");
        }
    }
}

// The plain index CSV is also a valid cycle table for `pathsieve check` itself (unit grid:M,
// docs/cycle-format.md), without a weights file (weights derived from the wanted signatures).
#[test]
fn an_index_csv_export_is_a_cycle_table_pathsieve_check_accepts() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("idx.csv");
    let (code, _, err) = run(&[
        "export",
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-27step.cycle.toml",
        "--format",
        "csv",
        "--unit",
        "index",
        "--out",
        s(&p),
    ]);
    assert_eq!(code, 0, "{err}");
    let text = std::fs::read_to_string(&p).unwrap();
    assert!(text.contains("# unit: grid:3\n") && text.contains("\nstep,1,2,3,4\n"));
    let (code, out, err) = run(&["check", "schemes/dye-fluorescence-2d.toml", s(&p), "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["clean"], true);
    assert_eq!(v["first_leak_order"], 6);
}

// Drift order: a permutation of the designed steps whose source steps are recorded, and whose
// first moment does not grow (reordering never changes any F(b); the verdict test above).
#[test]
fn the_drift_order_is_a_recorded_permutation() {
    let d = tempfile::tempdir().unwrap();
    let j = d.path().join("o.json");
    let (code, _, err) = run(&[
        "export",
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-27step.cycle.toml",
        "--format",
        "json",
        "--order",
        "drift",
        "--out",
        s(&j),
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(&j).unwrap()).unwrap();
    assert_eq!(v["schema_version"], 1);
    let mut src: Vec<u64> = v["meta"]["source_steps"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_u64().unwrap())
        .collect();
    assert_eq!(v["meta"]["step_order"], "drift");
    src.sort_unstable();
    assert_eq!(src, (0..27).collect::<Vec<u64>>());
    let note = v["meta"]["notes"].to_string();
    assert!(note.contains("drift-robust order"), "{note}");
}

// Metadata: the experiment hash equals what coreutils `sha256sum` (an independent
// implementation of FIPS 180-4) computes; grid, unit and fields are recorded.
#[test]
fn json_metadata_names_tool_hash_grid_and_units() {
    let d = tempfile::tempdir().unwrap();
    let j = d.path().join("m.json");
    let (code, _, err) = run(&[
        "export",
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
        "--format",
        "json",
        "--unit",
        "index",
        "--out",
        s(&j),
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(&j).unwrap()).unwrap();
    let m = &v["meta"];
    assert_eq!(m["tool"], "pathsieve");
    assert_eq!(m["version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(m["unit"], "grid:2");
    assert_eq!(m["grid"], serde_json::json!([2, 2, 1]));
    assert_eq!(m["fields"], serde_json::json!(["pu1", "pu2", "pr"]));
    assert_eq!(v["phases"][3], serde_json::json!([1, 1, 0]));
    if let Ok(o) = Command::new("sha256sum")
        .arg(root("schemes/carbonyl-pump-probe.toml"))
        .output()
    {
        let text = String::from_utf8_lossy(&o.stdout);
        let want = text.split_whitespace().next().unwrap_or("");
        assert_eq!(m["experiment_sha256"], want);
    }
}

#[test]
fn index_export_off_the_grid_is_refused_with_exit_two() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("x.csv");
    let (code, _, err) = run(&[
        "export",
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
        "--format",
        "csv",
        "--unit",
        "index",
        "--grid",
        "3",
        "--out",
        s(&p),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("not on the 3-step grid"), "{err}");
    assert!(!p.exists());
}

/// Parse an NPY header by hand, per the format description in the NumPy documentation
/// (`numpy.lib.format`; NEP 1, R. Kern, 2007, from memory): magic, version, u16 header
/// length, dict literal, data at a multiple of 64 bytes. Returns (descr, shape text).
fn npy_header(bytes: &[u8]) -> (String, String) {
    assert_eq!(&bytes[..6], b"\x93NUMPY");
    assert_eq!((bytes[6], bytes[7]), (1, 0));
    let len = u16::from_le_bytes([bytes[8], bytes[9]]) as usize;
    assert_eq!((10 + len) % 64, 0, "data offset aligned to 64");
    let h = std::str::from_utf8(&bytes[10..10 + len]).unwrap();
    assert!(
        h.ends_with('\n') && h.contains("'fortran_order': False"),
        "{h}"
    );
    let field = |k: &str| {
        let i = h.find(k).unwrap() + k.len();
        let rest = &h[i..];
        let end = rest
            .find(if rest.starts_with('(') { ')' } else { ',' })
            .unwrap();
        rest[..=end]
            .trim_end_matches(',')
            .trim_matches('\'')
            .to_string()
    };
    (field("'descr': "), field("'shape': "))
}

#[test]
fn npy_exports_have_the_documented_headers_and_shapes() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("i.npy");
    let w = d.path().join("w.npy");
    let (code, _, err) = run(&[
        "export",
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-27step.cycle.toml",
        "--format",
        "npy",
        "--unit",
        "index",
        "--out",
        s(&p),
        "--weights",
        s(&w),
    ]);
    assert_eq!(code, 0, "{err}");
    let pb = std::fs::read(&p).unwrap();
    assert_eq!(npy_header(&pb), ("<i8".into(), "(27, 4)".into()));
    let wb = std::fs::read(&w).unwrap();
    assert_eq!(npy_header(&wb), ("<c16".into(), "(27, 3)".into()));
    assert!(d.path().join("i.meta.json").exists() && d.path().join("w.meta.json").exists());
    // Step 5 of the nested cycle is (0, 0, 1/3, 2/3) turn: indices (0, 0, 1, 2).
    let NpyData::I64(v) = read_npy(&pb).unwrap().data else {
        panic!()
    };
    assert_eq!(&v[20..24], &[0, 0, 1, 2]);
    // Weights of R = exp(-2 pi i t.phi)/27 have modulus 1/27.
    let NpyData::C128(z) = read_npy(&wb).unwrap().data else {
        panic!()
    };
    assert!(z.iter().all(|x| (x.norm() - 1.0 / 27.0).abs() < 1e-15));
    let (code, _, _) = run(&[
        "export",
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-27step.cycle.toml",
        "--format",
        "npy",
        "--unit",
        "deg",
        "--out",
        s(&d.path().join("f.npy")),
    ]);
    assert_eq!(code, 0);
    let fb = std::fs::read(d.path().join("f.npy")).unwrap();
    assert_eq!(npy_header(&fb), ("<f8".into(), "(27, 4)".into()));
}

// Fourier shift theorem (Bracewell, The Fourier Transform and Its Applications, 1965, from
// memory): with E(t) = sum_k M_k exp(-i (omega_k - omega_0) t), the mask
// sum_j a_j exp(i 2 pi phi_j) exp(i (omega - omega_0) tau_j) peaks at t = tau_j with phase
// 2 pi phi_j. 2048 pixels of 0.0125 THz span 25.6 THz, so for tau = 625 fs the other pulse's
// Dirichlet kernel is exactly zero at each delay (25.6 THz * 625 fs = 16 turns): the relative
// phase and amplitude there are exact to float rounding (tolerance 1e-9). The maxima of |E|
// on a 1 fs scan may move by the other pulse's sidelobe slope: tolerance +-2 fs (main lobe
// width 1/25.6 THz = 39 fs).
#[test]
fn a_two_pulse_mask_from_the_cli_peaks_at_the_delays_with_the_relative_phase() {
    let d = tempfile::tempdir().unwrap();
    let shaper = d.path().join("shaper.toml");
    std::fs::write(
        &shaper,
        "rotating_frame_thz = 60.0\n[calibration]\nkind = \"linear\"\npixels = 2048\nfirst_thz = 56.8\nstep_thz = 0.0125\n\
         [[pulse]]\nfield = \"pu1\"\ndelay_fs = 0.0\n[[pulse]]\nfield = \"pu2\"\ndelay_fs = 625.0\namplitude = 0.5\n",
    )
    .unwrap();
    let m = d.path().join("m.npy");
    let (code, _, err) = run(&[
        "export",
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
        "--format",
        "mask-npy",
        "--shaper",
        s(&shaper),
        "--out",
        s(&m),
    ]);
    assert_eq!(code, 0, "{err}");
    let a = read_npy(&std::fs::read(&m).unwrap()).unwrap();
    assert_eq!(a.shape, vec![4, 2048]);
    let NpyData::C128(z) = a.data else { panic!() };
    let freqs: Vec<f64> = (0..2048).map(|k| 56.8 + k as f64 * 0.0125).collect();
    let field = |row: &[Complex64], t_fs: f64| -> Complex64 {
        row.iter()
            .zip(&freqs)
            .map(|(mk, nu)| {
                mk * Complex64::from_polar(1.0, -std::f64::consts::TAU * (nu - 60.0) * t_fs * 1e-3)
            })
            .sum()
    };
    // Each step: pu1 phase, pu2 phase in turns (the 2x2 table).
    for (step, (p1, p2)) in [(0.0, 0.0), (0.0, 0.5), (0.5, 0.0), (0.5, 0.5)]
        .iter()
        .enumerate()
    {
        let row = &z[step * 2048..(step + 1) * 2048];
        let scan: Vec<f64> = (-1000..=1600)
            .map(|t| field(row, t as f64).norm())
            .collect();
        let max = scan.iter().cloned().fold(0.0, f64::max);
        let peaks: Vec<i64> = (1..scan.len() - 1)
            .filter(|&i| scan[i] > scan[i - 1] && scan[i] >= scan[i + 1] && scan[i] > 0.3 * max)
            .map(|i| i as i64 - 1000)
            .collect();
        assert_eq!(peaks.len(), 2, "step {step}: {peaks:?}");
        assert!(
            peaks[0].abs() <= 2 && (peaks[1] - 625).abs() <= 2,
            "step {step}: {peaks:?}"
        );
        let (e1, e2) = (field(row, 0.0), field(row, 625.0));
        assert!(
            (e2.norm() / e1.norm() - 0.5).abs() < 1e-9,
            "amplitude ratio"
        );
        let rel = (e2 / e1).arg();
        let want = std::f64::consts::TAU * (p2 - p1);
        let diff = (rel - want).rem_euclid(std::f64::consts::TAU);
        assert!(
            diff.min(std::f64::consts::TAU - diff) < 1e-9,
            "step {step}: {rel} vs {want}"
        );
    }
}

#[test]
fn an_existing_file_is_kept_without_force_and_replaced_with_it() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("p.csv");
    std::fs::write(&p, "old").unwrap();
    let args = |force: bool| {
        let mut v = vec![
            "export".to_string(),
            "schemes/carbonyl-pump-probe.toml".into(),
            "schemes/carbonyl-2x2.cycle.toml".into(),
            "--format".into(),
            "csv".into(),
            "--out".into(),
            s(&p).into(),
        ];
        if force {
            v.push("--force".into());
        }
        v
    };
    let a: Vec<String> = args(false);
    let (code, _, err) = run(&a.iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!(code, 2);
    assert!(
        err.contains("already exists") && err.contains("--force"),
        "{err}"
    );
    assert_eq!(std::fs::read_to_string(&p).unwrap(), "old");
    let a: Vec<String> = args(true);
    let (code, _, err) = run(&a.iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!(code, 0, "{err}");
    assert!(std::fs::read_to_string(&p)
        .unwrap()
        .starts_with("# tool: pathsieve"));
}

#[test]
fn several_files_are_written_all_or_nothing() {
    let d = tempfile::tempdir().unwrap();
    let w = d.path().join("w.csv");
    std::fs::write(&w, "old").unwrap();
    let p = d.path().join("p.npy");
    let (code, _, err) = run(&[
        "export",
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
        "--format",
        "npy",
        "--out",
        s(&p),
        "--weights",
        s(&w),
    ]);
    assert_eq!(code, 2, "{err}");
    let mut names: Vec<String> = std::fs::read_dir(d.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(
        names,
        vec!["w.csv"],
        "no phases, no sidecar, no temporary file"
    );
}

// An unwritable directory: a path under a regular file (unwritable even for root).
#[test]
fn an_unwritable_path_exits_two_and_leaves_no_partial_file() {
    let d = tempfile::tempdir().unwrap();
    let plain = d.path().join("plain");
    std::fs::write(&plain, "").unwrap();
    let p = plain.join("p.json");
    let (code, _, err) = run(&[
        "export",
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
        "--format",
        "json",
        "--out",
        s(&p),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("not a directory"), "{err}");
    let names: Vec<_> = std::fs::read_dir(d.path()).unwrap().collect();
    assert_eq!(names.len(), 1);
}

#[test]
fn the_three_pictures_are_svg_documents() {
    let d = tempfile::tempdir().unwrap();
    let cases: Vec<(PathBuf, Vec<&str>)> = vec![
        (
            d.path().join("d.svg"),
            vec![
                "draw",
                "diagrams",
                "schemes/dye-fluorescence-2d.toml",
                "--signature=-1,1,1,-1",
            ],
        ),
        (
            d.path().join("l.svg"),
            vec![
                "draw",
                "leakage",
                "schemes/dye-fluorescence-2d.toml",
                "schemes/dye-fluorescence-leaky.cycle.toml",
            ],
        ),
        (
            d.path().join("w.svg"),
            vec![
                "draw",
                "wheels",
                "schemes/dye-fluorescence-27step.cycle.toml",
            ],
        ),
    ];
    for (out, mut args) in cases {
        args.extend(["--out", s(&out)]);
        let (code, _, err) = run(&args);
        assert_eq!(code, 0, "{err}");
        let text = std::fs::read_to_string(&out).unwrap();
        assert!(text.starts_with("<?xml") && text.trim_end().ends_with("</svg>"));
    }
    // Four rephasing pathways with signature (-1,+1,+1,-1) ending in a population (domain notes
    // section 8: 3 ending in e, 1 in f; common practice in fluorescence-detected 2D).
    let text = std::fs::read_to_string(d.path().join("d.svg")).unwrap();
    assert_eq!(text.matches(">#").count(), 4);
    let leak = std::fs::read_to_string(d.path().join("l.svg")).unwrap();
    // As `check` counts them: 4 leaking rejected terms, and the passing conjugate apart.
    assert!(
        leak.contains("4 leaks, 1 conjugate passes") && leak.contains("order 4"),
        "leaky table"
    );
}
