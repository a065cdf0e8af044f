//! Cross-check of the NPY writer and reader against NumPy itself, an independent
//! implementation of the format of NEP 1 (R. Kern, 2007, from memory). Skipped, with a printed
//! note, when `python3` with `numpy` is not installed.

mod common;

use std::process::Command;

use num_complex::Complex64;
use pathsieve::export::mask::{mask_set_npy, masks_for_cycle, Calibration, MaskSpec, SubPulse};
use pathsieve::export::npy::{npy_c128, npy_f64, npy_i64, read_npy, NpyData};
use pathsieve::safe_write::write_atomic;

#[test]
fn numpy_loads_what_pathsieve_writes_and_the_reverse() {
    if !common::numpy_available() {
        eprintln!("note: python3 with numpy not found; NumPy cross-check skipped");
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("f.npy");
    let c = dir.path().join("c.npy");
    let i = dir.path().join("i.npy");
    let back = dir.path().join("back.npy");
    let fv: Vec<f64> = (0..6).map(|k| k as f64 * 0.5 - 1.0).collect();
    write_atomic(&f, &npy_f64(&[2, 3], &fv).unwrap(), false).unwrap();
    let cv = vec![Complex64::new(1.0, -2.0), Complex64::new(0.25, 3.5)];
    write_atomic(&c, &npy_c128(&[2], &cv).unwrap(), false).unwrap();
    write_atomic(&i, &npy_i64(&[], &[-7]).unwrap(), false).unwrap();
    let m = dir.path().join("m.npy");
    let spec = MaskSpec {
        calibration: Calibration::Table(vec![370.0, 371.0, 372.0]),
        subpulses: vec![SubPulse {
            delay_fs: 0.0,
            amplitude: 1.0,
            phase_turns: 0.0,
        }],
        rotating_frame_thz: None,
    };
    let set = masks_for_cycle(&spec, &[vec![0.0], vec![0.25]]).unwrap();
    write_atomic(&m, &mask_set_npy(&set).unwrap(), false).unwrap();
    let script = r#"
import sys, numpy as np
f, c, i, m, back = sys.argv[1:6]
a = np.load(f); assert a.dtype == np.float64 and a.shape == (2, 3), (a.dtype, a.shape)
assert (a == np.arange(6).reshape(2, 3) * 0.5 - 1.0).all()
b = np.load(c); assert b.dtype == np.complex128 and b.shape == (2,)
assert (b == np.array([1 - 2j, 0.25 + 3.5j])).all()
d = np.load(i); assert d.dtype == np.int64 and d.shape == () and d == -7
e = np.load(m); assert e.dtype == np.complex128 and e.shape == (2, 3), (e.dtype, e.shape)
assert np.allclose(e[0], 1) and np.allclose(e[1], 1j)
np.save(back, np.arange(12, dtype=np.int64).reshape(3, 4))
print("numpy", np.__version__, "ok")
"#;
    let out = Command::new("python3")
        .arg("-c")
        .arg(script)
        .args([&f, &c, &i, &m, &back])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "numpy rejected our files: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let a = read_npy(&std::fs::read(&back).unwrap()).unwrap();
    assert_eq!(a.shape, vec![3, 4]);
    assert_eq!(a.data, NpyData::I64((0..12).collect()));
}
