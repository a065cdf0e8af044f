//! `pathsieve combine` end to end: export a cycle in drift order, simulate the data an
//! acquisition would record in that order, combine, read the outputs back.

mod common;

use common::run_cli;
use num_complex::Complex64;
use pathsieve::export::npy::{npy_f64, read_npy, NpyData};
use pathsieve::export::npz::read_npz;
use pathsieve::export::phase_import::read_phase_list_file;

/// Pump-probe data for the carbonyl 2x2 cycle (common practice: phases {0, 1/2}^2 on the two
/// pumps, weights +-1 keep R + NR): a pump-probe background of 1000 (b = 0), pump-probe
/// scatter terms b = +-(1,0) and +-(0,1) of 300, and R (-1,1) with NR = conj(R) (1,-1)
/// carrying `a * (1 + k)` in column k. Rows in the export's order.
fn simulate(rows: &[Vec<f64>], a: Complex64, cols: usize) -> Vec<f64> {
    let mut out = Vec::new();
    for r in rows {
        let (p1, p2) = (r[0], r[1]);
        let e = |x: f64| Complex64::from_polar(1.0, std::f64::consts::TAU * x);
        for k in 0..cols {
            let ak = a * (1.0 + k as f64);
            let s = 1000.0
                + 2.0 * (300.0 * e(p1)).re
                + 2.0 * (300.0 * e(p2)).re
                + 2.0 * (ak * e(p2 - p1)).re;
            out.push(s);
        }
    }
    out
}

#[test]
fn combining_a_drift_ordered_acquisition_recovers_r_plus_nr() {
    let dir = tempfile::tempdir().unwrap();
    let d = |n: &str| dir.path().join(n).display().to_string();
    let (code, _, err) = run_cli(&[
        "export",
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
        "--format",
        "csv",
        "--order",
        "drift",
        "--out",
        &d("phases.csv"),
    ]);
    assert_eq!(code, 0, "{err}");
    let (export, meta) = read_phase_list_file(&dir.path().join("phases.csv")).unwrap();
    assert_eq!(meta.step_order, "drift");
    let rows: Vec<Vec<f64>> = export.phases_f64();
    let a = Complex64::new(0.3, -0.8);
    let data = simulate(&rows, a, 3);
    std::fs::write(
        dir.path().join("scan.npy"),
        npy_f64(&[4, 3], &data).unwrap(),
    )
    .unwrap();
    let args = [
        "combine",
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
        &d("scan.npy"),
        "--export",
        &d("phases.csv"),
        "--out",
        &d("out.npy"),
    ];
    let (code, _, err) = run_cli(&args);
    assert_eq!(code, 0, "{err}");
    let arr = read_npy(&std::fs::read(dir.path().join("out.absorptive.npy")).unwrap()).unwrap();
    assert_eq!(arr.shape, vec![3]);
    let NpyData::F64(v) = arr.data else {
        panic!("real output expected")
    };
    for (k, x) in v.iter().enumerate() {
        // R + NR = 2 Re(a) per column (1 + k).
        assert!((x - 2.0 * a.re * (1.0 + k as f64)).abs() < 1e-9, "{v:?}");
    }
    let side: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.path().join("out.meta.json")).unwrap()).unwrap();
    assert_eq!(side["schema_version"], 1);
    assert_eq!(side["step_order"], "drift");
    assert_eq!(side["combined"]["outputs"][0]["scale"][0], 0.25);
    // Without --export the same data are taken in the designed order: wrong, and the
    // metadata says the order was assumed.
    let mut no_export = args.to_vec();
    no_export.drain(4..6);
    let np = d("assumed.npz");
    let n = no_export.len();
    no_export[n - 1] = &np;
    let (code, _, err) = run_cli(&no_export);
    assert_eq!(code, 0, "{err}");
    let z = read_npz(&std::fs::read(dir.path().join("assumed.npz")).unwrap()).unwrap();
    assert_eq!(z[0].0, "absorptive");
    let side: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.path().join("assumed.meta.json")).unwrap())
            .unwrap();
    assert!(side["step_order"].as_str().unwrap().contains("assumed"));
}

#[test]
fn an_export_of_another_cycle_and_a_wrong_step_count_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = |n: &str| dir.path().join(n).display().to_string();
    std::fs::write(
        dir.path().join("three.csv"),
        "step,signal\n0,1.0\n1,2.0\n2,3.0\n",
    )
    .unwrap();
    let (code, _, err) = run_cli(&[
        "combine",
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
        &d("three.csv"),
        "--out",
        &d("o.csv"),
    ]);
    assert_eq!(code, 2);
    assert!(
        err.contains("3 entries") && err.contains("4 steps"),
        "{err}"
    );
    // An export of the 27-step cycle against the 2x2 cycle.
    let (code, _, err) = run_cli(&[
        "export",
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-27step.cycle.toml",
        "--format",
        "json",
        "--out",
        &d("other.json"),
    ]);
    assert_eq!(code, 0, "{err}");
    std::fs::write(dir.path().join("four.csv"), "1\n2\n3\n4\n").unwrap();
    let (code, _, err) = run_cli(&[
        "combine",
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
        &d("four.csv"),
        "--export",
        &d("other.json"),
        "--out",
        &d("o.csv"),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("27 rows"), "{err}");
    assert!(!dir.path().join("o.csv").exists());
}

#[test]
fn real_fluorescence_data_give_a_complex_csv_and_the_notes_say_why() {
    let dir = tempfile::tempdir().unwrap();
    let d = |n: &str| dir.path().join(n).display().to_string();
    let rows: String = (0..27).map(|m| format!("{}\n", 1.0 + m as f64)).collect();
    std::fs::write(dir.path().join("f.csv"), format!("fluorescence\n{rows}")).unwrap();
    let (code, _, err) = run_cli(&[
        "combine",
        "schemes/dye-fluorescence-2d.toml",
        "schemes/dye-fluorescence-27step.cycle.toml",
        &d("f.csv"),
        "--out",
        &d("c.csv"),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(err.contains("complex although the data are real"), "{err}");
    let text = std::fs::read_to_string(dir.path().join("c.csv")).unwrap();
    let head = text.lines().next().unwrap();
    assert!(
        head.starts_with("index,") && head.contains(".re,") && head.contains(".im"),
        "{head}"
    );
    assert_eq!(text.lines().count(), 2);
}

// Every file `combine` writes is checked before any work (issue 12): with --out comb.npy the
// output `absorptive` goes to comb.absorptive.npy. An existing one is refused without --force,
// and the same path as the data input is refused even with --force, both before the data are
// read (the data file here is not NPY at all, so reading it would fail differently).
#[test]
fn every_output_file_is_checked_before_the_data_are_read() {
    let dir = tempfile::tempdir().unwrap();
    let d = |n: &str| dir.path().join(n).display().to_string();
    let per_output = d("comb.absorptive.npy");
    std::fs::write(&per_output, "keep me").unwrap();
    std::fs::write(d("scan.npy"), "not an array").unwrap();
    let combine = |data: &str, force: bool| {
        let mut args = vec![
            "combine",
            "schemes/carbonyl-pump-probe.toml",
            "schemes/carbonyl-2x2.cycle.toml",
            data,
            "--out",
        ];
        let out = d("comb.npy");
        args.push(&out);
        if force {
            args.push("--force");
        }
        run_cli(&args)
    };
    let (code, _, err) = combine(&d("scan.npy"), false);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("comb.absorptive.npy already exists"), "{err}");
    assert_eq!(std::fs::read_to_string(&per_output).unwrap(), "keep me");
    let (code, _, err) = combine(&per_output, true);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("is the input"), "{err}");
    assert_eq!(std::fs::read_to_string(&per_output).unwrap(), "keep me");
    // The sidecar too: comb.meta.json existing is refused before the data are read.
    std::fs::remove_file(&per_output).unwrap();
    std::fs::write(d("comb.meta.json"), "{}").unwrap();
    let (code, _, err) = combine(&d("scan.npy"), false);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("comb.meta.json already exists"), "{err}");
    assert!(!dir.path().join("comb.absorptive.npy").exists());
}
