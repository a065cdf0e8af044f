//! `pathsieve check` on the files a lab loads into its acquisition software: NumPy arrays as
//! numpy writes them (float64, float32, int32, int64; little and big endian; C and Fortran
//! order; `.npz` archives) and the tool's own NPY export with its sidecar, whose exact weights
//! make a weighted design re-check exactly. NumPy itself is the independent writer where it is
//! installed (skipped with a note otherwise); hand-built bytes per the format description in the
//! NumPy documentation (`numpy.lib.format`; NEP 1, R. Kern, 2007, from memory) run always.

mod common;

use std::path::Path;

const EXP: &str = "schemes/dye-fluorescence-2d.toml";

/// The nested 1x3x3x3 cycle (Tan, J. Chem. Phys. 129, 124501 (2008), from memory) over the
/// cycled fields 2, 3, 4 as grid indices on a 3-step grid, row-major.
fn nested_indices() -> Vec<[i64; 3]> {
    (0..27).map(|m| [m / 9, (m / 3) % 3, m % 3]).collect()
}

fn check_json(file: &Path, unit: Option<&str>) -> (i32, serde_json::Value, String) {
    let mut args = vec!["check", EXP, file.to_str().unwrap(), "--json"];
    if let Some(u) = unit {
        args.extend(["--unit", u]);
    }
    let (code, out, err) = common::run_cli(&args);
    let v = serde_json::from_str(&out).unwrap_or(serde_json::Value::Null);
    (code, v, err)
}

/// An NPY file by hand: version 1.0, the header dict padded to 64 bytes.
fn npy(descr: &str, fortran: bool, shape: (usize, usize), data: &[u8]) -> Vec<u8> {
    let mut h = format!(
        "{{'descr': '{descr}', 'fortran_order': {}, 'shape': ({}, {}), }}",
        if fortran { "True" } else { "False" },
        shape.0,
        shape.1
    );
    while (10 + h.len() + 1) % 64 != 0 {
        h.push(' ');
    }
    h.push('\n');
    let mut out = b"\x93NUMPY\x01\x00".to_vec();
    out.extend_from_slice(&(h.len() as u16).to_le_bytes());
    out.extend_from_slice(h.as_bytes());
    out.extend_from_slice(data);
    out
}

// The same 27-step table as big-endian float32 degrees in Fortran order and as little-endian
// int32 grid indices: the verdict of the exact table (clean through order 4, first leak 6);
// with step 11, field 4 at 210 deg instead of 120 deg it leaks and step 11 is named.
#[test]
fn hand_built_arrays_give_the_exact_tables_verdict_and_name_a_wrong_cell() {
    let d = tempfile::tempdir().unwrap();
    let idx = nested_indices();
    // Column-major: all of column 0, then column 1, then column 2.
    let col_major = |deg: &dyn Fn(usize, usize) -> f32| -> Vec<u8> {
        (0..3)
            .flat_map(|j| (0..27).map(move |m| (m, j)))
            .flat_map(|(m, j)| deg(m, j).to_be_bytes())
            .collect()
    };
    let good = col_major(&|m, j| 120.0 * idx[m][j] as f32);
    let p = d.path().join("be_f4_fortran.npy");
    std::fs::write(&p, npy(">f4", true, (27, 3), &good)).unwrap();
    let (code, v, err) = check_json(&p, Some("degrees"));
    assert_eq!(code, 0, "{err}");
    assert_eq!(
        (v["clean"].as_bool(), v["first_leak_order"].as_u64()),
        (Some(true), Some(6))
    );
    assert!(v["notes"]
        .to_string()
        .contains(">f4 (float32, big-endian, Fortran order)"));

    let ints: Vec<u8> = idx
        .iter()
        .flatten()
        .flat_map(|&k| (k as i32).to_le_bytes())
        .collect();
    let p = d.path().join("i4.npy");
    std::fs::write(&p, npy("<i4", false, (27, 3), &ints)).unwrap();
    let (code, v, err) = check_json(&p, Some("grid:3"));
    assert_eq!(code, 0, "{err}");
    assert_eq!(v["exact"], true);
    assert_eq!(v["outputs"][0]["class"], "exact");

    let bad = col_major(&|m, j| {
        if (m, j) == (10, 2) {
            210.0
        } else {
            120.0 * idx[m][j] as f32
        }
    });
    let p = d.path().join("bad.npy");
    std::fs::write(&p, npy(">f4", true, (27, 3), &bad)).unwrap();
    let (code, v, _) = check_json(&p, Some("degrees"));
    assert_eq!(code, 1);
    for o in v["outputs"].as_array().unwrap() {
        assert_eq!(o["suspect_steps"], serde_json::json!([11]), "{}", o["name"]);
    }
}

// numpy (an independent writer) saves the table in every dtype, byte order and memory order
// the issue names, and as an .npz archive: each gives the exact table's verdict.
#[test]
fn arrays_numpy_saves_check_like_the_exact_table() {
    if !common::numpy_available() {
        eprintln!("note: python3 with numpy not found; NumPy writer cross-check skipped");
        return;
    }
    let d = tempfile::tempdir().unwrap();
    let script = r#"
import sys, numpy as np
d = sys.argv[1]
idx = np.array([[m // 9, (m // 3) % 3, m % 3] for m in range(27)])
deg = 120.0 * idx
np.save(d + '/f8.npy', deg)
np.save(d + '/f4F.npy', np.asfortranarray(deg.astype(np.float32)))
np.save(d + '/radBE.npy', np.radians(deg).astype('>f8'))
np.save(d + '/turnsF.npy', np.asfortranarray(idx / 3.0))
np.save(d + '/i4.npy', idx.astype(np.int32))
np.save(d + '/i8BE.npy', idx.astype('>i8'))
np.savez(d + '/a.npz', phases=deg)
"#;
    let st = std::process::Command::new("python3")
        .args(["-c", script, d.path().to_str().unwrap()])
        .status()
        .unwrap();
    assert!(st.success());
    for (f, unit) in [
        ("f8.npy", "degrees"),
        ("f4F.npy", "degrees"),
        ("radBE.npy", "radians"),
        ("turnsF.npy", "turns"),
        ("i4.npy", "grid:3"),
        ("i8BE.npy", "grid:3"),
        ("a.npz", "degrees"),
    ] {
        let (code, v, err) = check_json(&d.path().join(f), Some(unit));
        assert_eq!(code, 0, "{f}: {err}");
        assert_eq!(v["clean"], true, "{f}");
        assert_eq!(v["first_leak_order"], 6, "{f}");
        assert_eq!(v["exact"], true, "{f}: every cell exact or snapped");
    }
}

// Round trip design -> export NPY (phases + sidecar) -> check: the sidecar carries the exact
// weights, so the explicit-weight outputs re-check exactly (formerly complex128 floats only).
#[test]
fn an_npy_export_re_checks_exactly_with_its_weights() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("cycle.npy");
    let (code, _, err) = common::run_cli(&[
        "export",
        EXP,
        "schemes/dye-fluorescence-27step.cycle.toml",
        "--format",
        "npy",
        "--unit",
        "rad",
        "--order",
        "drift",
        "--out",
        p.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let (code, v, err) = check_json(&p, None);
    assert_eq!(code, 0, "{err}");
    assert_eq!(v["exact"], true);
    for o in v["outputs"].as_array().unwrap() {
        assert_eq!(o["weights"], "explicit");
        assert_eq!(o["class"], "exact");
    }
    assert_eq!(v["first_leak_order"], 6);
    // The leaky table's verdict survives the trip too.
    let q = d.path().join("leaky.npy");
    let (code, _, err) = common::run_cli(&[
        "export",
        EXP,
        "schemes/dye-fluorescence-leaky.cycle.toml",
        "--format",
        "npy",
        "--out",
        q.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let (code, v, _) = check_json(&q, None);
    assert_eq!((code, v["clean"].as_bool()), (1, Some(false)));
}

#[test]
fn arrays_that_cannot_be_read_say_why_and_how_to_fix_it() {
    let d = tempfile::tempdir().unwrap();
    let ints: Vec<u8> = nested_indices()
        .iter()
        .flatten()
        .flat_map(|&k| k.to_le_bytes())
        .collect();
    let p = d.path().join("i8.npy");
    std::fs::write(&p, npy("<i8", false, (27, 3), &ints)).unwrap();
    let (code, _, err) = common::run_cli(&["check", EXP, p.to_str().unwrap()]);
    assert_eq!(code, 2);
    assert!(
        err.contains("--unit") && err.contains("i8.meta.json"),
        "{err}"
    );
    let two: Vec<u8> = ints[..27 * 2 * 8].to_vec();
    let p2 = d.path().join("two.npy");
    std::fs::write(&p2, npy("<i8", false, (27, 2), &two)).unwrap();
    let (code, _, err) = common::run_cli(&["check", EXP, p2.to_str().unwrap(), "--unit", "grid:3"]);
    assert_eq!(code, 2);
    assert!(
        err.contains("2 columns") && err.contains("3 cycled fields"),
        "{err}"
    );
    let p3 = d.path().join("u2.npy");
    std::fs::write(&p3, npy("<u2", false, (1, 1), &[0, 0])).unwrap();
    let (code, _, err) = common::run_cli(&["check", EXP, p3.to_str().unwrap(), "--unit", "grid:3"]);
    assert_eq!(code, 2);
    assert!(err.contains("dtype") && err.contains("float64"), "{err}");
    std::fs::write(d.path().join("i8.meta.json"), "{\"tool\": 3}").unwrap();
    let (code, _, err) = common::run_cli(&["check", EXP, p.to_str().unwrap()]);
    assert_eq!(code, 2);
    assert!(
        err.contains("i8.meta.json") && err.contains("column"),
        "{err}"
    );
}

// Integer-valued float degrees (issue 8): `120.0` is exactly 1/3 turn, so the 27-step nested
// table (Tan, J. Chem. Phys. 129, 124501 (2008), from memory) saved as float64 degrees is
// checked as written, class "exact" with nothing snapped; the same array through the Python
// route (`cycle_from_arrays`) gives the same class. A value no double holds exactly (33.3 deg)
// is still snapped, and says so.
#[test]
fn integer_valued_float_degrees_are_exact_as_written() {
    let d = tempfile::tempdir().unwrap();
    let idx = nested_indices();
    let deg: Vec<Vec<f64>> = idx
        .iter()
        .map(|r| r.iter().map(|&k| 120.0 * k as f64).collect())
        .collect();
    let bytes: Vec<u8> = deg.iter().flatten().flat_map(|x| x.to_le_bytes()).collect();
    let p = d.path().join("f8.npy");
    std::fs::write(&p, npy("<f8", false, (27, 3), &bytes)).unwrap();
    let (code, v, err) = check_json(&p, Some("degrees"));
    assert_eq!(code, 0, "{err}");
    assert_eq!(v["snaps"], serde_json::json!([]));
    for o in v["outputs"].as_array().unwrap() {
        assert_eq!(o["class"], "exact", "{}", o["name"]);
    }

    let exp = pathsieve::experiment_file::read_experiment(Path::new(EXP)).unwrap();
    let check = |rows: &[Vec<f64>]| {
        let c = pathsieve::cycle::cycle_from_arrays(
            vec![],
            rows,
            pathsieve::exact::PhaseUnit::Degrees,
            vec![],
        )
        .unwrap();
        pathsieve::check::check_cycle(&exp, &c, &Default::default()).unwrap()
    };
    let r = check(&deg);
    assert!(r.clean && r.snaps.is_empty());
    assert!(r
        .outputs
        .iter()
        .all(|o| o.class == pathsieve::check::VerdictClass::Exact));
    // 90.000 and 22.5 deg are exact too (1/4 and 1/16 turn); 33.3 deg is snapped to 37/400.
    let mut odd = deg.clone();
    odd[1][2] = 90.0;
    odd[2][2] = 22.5;
    let r = check(&odd);
    assert!(r.snaps.is_empty(), "{:?}", r.snaps);
    odd[3][2] = 33.3;
    let r = check(&odd);
    assert_eq!(r.snaps.len(), 1, "{:?}", r.snaps);
    assert_eq!(r.snaps[0].exact, "37/400 turn");
    assert!(r
        .outputs
        .iter()
        .all(|o| o.class == pathsieve::check::VerdictClass::ExactAfterSnapping));
}

// An .npz with a `weights` member but no sidecar (issue 8): the weight columns are the
// experiment's wanted signals in order (R, NR, 2Q), as the Python route takes the same arrays,
// with F(b) = sum_m w_m exp(+2 pi i b.phi_m) (docs/combine.md). The nested 27-step cycle with
// w_m = exp(-2 pi i t.phi_m)/27 (Tan, J. Chem. Phys. 129, 124501 (2008), from memory) is
// clean; the opposite sign convention loses the kept terms (exit 1, LOST); a column count that
// does not match the wanted signals is refused with the fix.
#[test]
fn an_npz_with_weights_and_no_sidecar_is_read_in_the_documented_convention() {
    use num_complex::Complex64;
    let d = tempfile::tempdir().unwrap();
    let idx = nested_indices();
    let phases: Vec<u8> = idx
        .iter()
        .flatten()
        .flat_map(|&k| k.to_le_bytes())
        .collect();
    let kept: [[i64; 3]; 3] = [[1, 1, -1], [-1, 1, -1], [1, -1, -1]];
    let weights = |sign: f64, cols: usize| -> Vec<u8> {
        idx.iter()
            .flat_map(|r| {
                kept[..cols].iter().map(move |t| {
                    let tphi: i64 = t.iter().zip(r).map(|(a, b)| a * b).sum();
                    let x = sign * std::f64::consts::TAU * tphi as f64 / 3.0;
                    Complex64::from_polar(1.0 / 27.0, x)
                })
            })
            .flat_map(|z| [z.re.to_le_bytes(), z.im.to_le_bytes()].concat())
            .collect()
    };
    let archive = |name: &str, w: Vec<u8>, cols: usize| {
        let bytes = pathsieve::export::npz::write_npz(&[
            ("phases".into(), npy("<i8", false, (27, 3), &phases)),
            ("weights".into(), npy("<c16", false, (27, cols), &w)),
        ])
        .unwrap();
        let p = d.path().join(name);
        std::fs::write(&p, bytes).unwrap();
        p
    };
    let p = archive("good.npz", weights(-1.0, 3), 3);
    let (code, v, err) = check_json(&p, Some("grid:3"));
    assert_eq!(code, 0, "{err}");
    assert_eq!(v["clean"], true);
    assert!(
        v["notes"]
            .to_string()
            .contains("taken as the experiment's wanted signals R, NR, 2Q in order"),
        "{}",
        v["notes"]
    );
    let names: Vec<&str> = v["outputs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|o| o["name"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["R", "NR", "2Q"]);

    let p = archive("conjugated.npz", weights(1.0, 3), 3);
    let (code, v, err) = check_json(&p, Some("grid:3"));
    assert_eq!(code, 1, "{err}");
    assert!(!v["outputs"][0]["lost"].as_array().unwrap().is_empty());

    let p = archive("two.npz", weights(-1.0, 2), 2);
    let (code, _, err) = check_json(&p, Some("grid:3"));
    assert_eq!(code, 2);
    assert!(
        err.contains("2 column(s) with no names") && err.contains("[R, NR, 2Q]"),
        "{err}"
    );
}
