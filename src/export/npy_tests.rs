//! Unit tests for the NPY writer and reader: layout per NEP 1 (R. Kern, 2007, from memory) and
//! the numpy.lib.format documentation, round trips,
//! hand-computed bytes, malformed input, and never panicking on random bytes.

use super::*;
use proptest::prelude::*;

fn header_text(bytes: &[u8]) -> &str {
    let hlen = u16::from_le_bytes([bytes[8], bytes[9]]) as usize;
    std::str::from_utf8(&bytes[10..10 + hlen]).unwrap()
}

#[test]
fn header_matches_the_published_layout() {
    // Layout per numpy.lib.format / NEP 1 (Kern 2007): magic, 1.0, u16 LE length, dict.
    let b = npy_f64(&[2, 3], &[0.0; 6]).unwrap();
    assert_eq!(&b[..8], b"\x93NUMPY\x01\x00");
    let h = header_text(&b);
    assert!(h.starts_with("{'descr': '<f8', 'fortran_order': False, 'shape': (2, 3), }"));
    assert!(h.ends_with('\n'));
    assert!(h[..h.len() - 1].trim_end().ends_with('}'));
    assert_eq!((10 + h.len()) % 64, 0);
    assert_eq!(b.len(), 10 + h.len() + 6 * 8);
}

#[test]
fn shapes_are_python_tuples() {
    assert!(header_text(&npy_i64(&[], &[7]).unwrap()).contains("'shape': (), "));
    assert!(header_text(&npy_i64(&[3], &[1, 2, 3]).unwrap()).contains("'shape': (3,), "));
    assert!(header_text(&npy_i64(&[0, 4], &[]).unwrap()).contains("'shape': (0, 4), "));
}

#[test]
fn data_starts_on_a_64_byte_boundary_for_many_shapes() {
    for ndim in 0..=MAX_NDIM {
        for big in [1usize, 12345, 10usize.pow(9)] {
            let mut shape = vec![1usize; ndim];
            if ndim > 0 {
                shape[0] = big;
            }
            // Write a zero-length array of that rank to keep the test small.
            if ndim > 0 {
                shape[ndim - 1] = 0;
            }
            let n = element_count(&shape).unwrap();
            let b = npy_c128(&shape, &vec![Complex64::new(0.0, 0.0); n]).unwrap();
            assert_eq!((10 + header_text(&b).len()) % 64, 0, "shape {shape:?}");
            assert_eq!(read_npy(&b).unwrap().shape, shape);
        }
    }
}

#[test]
fn round_trips_each_dtype() {
    let f = vec![1.5, -0.0, f64::INFINITY, 1e-300, std::f64::consts::PI, 2.0];
    let a = read_npy(&npy_f64(&[3, 2], &f).unwrap()).unwrap();
    assert_eq!(a.shape, vec![3, 2]);
    match a.data {
        NpyData::F64(v) => {
            assert_eq!(v.len(), 6);
            for (x, y) in v.iter().zip(&f) {
                assert_eq!(x.to_bits(), y.to_bits());
            }
        }
        other => panic!("{other:?}"),
    }
    let c = vec![Complex64::new(1.0, -2.0), Complex64::new(0.25, 1e10)];
    let a = read_npy(&npy_c128(&[2], &c).unwrap()).unwrap();
    assert_eq!(a.data, NpyData::C128(c));
    let i = vec![i64::MIN, -1, 0, i64::MAX];
    let a = read_npy(&npy_i64(&[2, 1, 2], &i).unwrap()).unwrap();
    assert_eq!((a.shape, a.data), (vec![2, 1, 2], NpyData::I64(i)));
}

#[test]
fn known_bytes_for_a_tiny_array() {
    // Hand computation: 10 preamble bytes + 57-byte dict + newline = 68 > 64, so the data
    // starts at byte 128; 1.0f64 = 0x3FF0000000000000, little-endian.
    let b = npy_f64(&[1], &[1.0]).unwrap();
    assert_eq!(u16::from_le_bytes([b[8], b[9]]), 118);
    assert_eq!(b.len(), 128 + 8);
    assert_eq!(&b[128..], &[0, 0, 0, 0, 0, 0, 0xF0, 0x3F]);
}

#[test]
fn writer_rejects_bad_shapes() {
    assert!(matches!(
        npy_f64(&[2, 2], &[1.0; 3]),
        Err(NpyError::ShapeMismatch {
            expected: 4,
            found: 3,
            ..
        })
    ));
    assert!(matches!(
        npy_f64(&[usize::MAX, 2], &[]),
        Err(NpyError::ShapeMismatch { .. })
    ));
    assert!(matches!(
        npy_f64(&[1; 33], &[1.0]),
        Err(NpyError::TooManyDims { ndim: 33 })
    ));
}

/// Hand-built file with a chosen version and header text.
fn raw(version: (u8, u8), header: &str, data: &[u8]) -> Vec<u8> {
    let mut b = MAGIC.to_vec();
    b.extend_from_slice(&[version.0, version.1]);
    if version.0 == 1 {
        b.extend_from_slice(&(header.len() as u16).to_le_bytes());
    } else {
        b.extend_from_slice(&(header.len() as u32).to_le_bytes());
    }
    b.extend_from_slice(header.as_bytes());
    b.extend_from_slice(data);
    b
}

#[test]
fn reads_version_2_and_other_key_orders() {
    // Key order and quoting vary between writers; only the contents matter.
    let h = "{\"shape\": (2,), \"fortran_order\": False, \"descr\": \"<i8\"}   \n";
    let mut data = 5i64.to_le_bytes().to_vec();
    data.extend_from_slice(&(-6i64).to_le_bytes());
    let a = read_npy(&raw((2, 0), h, &data)).unwrap();
    assert_eq!(a.data, NpyData::I64(vec![5, -6]));
    // Python 2 style long literal and 16-byte alignment from older NumPy.
    let h = "{'descr': '<f8', 'fortran_order': False, 'shape': (1L,), }\n";
    let a = read_npy(&raw((1, 0), h, &2.5f64.to_le_bytes())).unwrap();
    assert_eq!(a.data, NpyData::F64(vec![2.5]));
}

#[test]
fn rejects_malformed_files_with_clear_errors() {
    let ok = "{'descr': '<f8', 'fortran_order': False, 'shape': (1,), }\n";
    let one = 1.0f64.to_le_bytes();
    let cases: Vec<(Vec<u8>, &str)> = vec![
        (b"".to_vec(), "truncated"),
        (b"\x93NUMPZ\x01\x00".to_vec(), "magic"),
        (raw((3, 0), ok, &one), "version 3.0"),
        (raw((1, 0), ok, &one[..7]), "data section"),
        (raw((1, 0), ok, &[one, one].concat()), "data section"),
        (raw((1, 0), &ok.replace("<f8", "<u2"), &one), "dtype"),
        (raw((1, 0), &ok.replace("<f8", "|b1"), &one), "dtype"),
        (raw((1, 0), &ok.replace("<f8", "<f4"), &one), "data section"),
        (raw((1, 0), &ok.replace("(1,)", "(1)"), &one), "'(n,)'"),
        (raw((1, 0), &ok.replace("(1,)", "(-1,)"), &one), "integer"),
        (
            raw((1, 0), &ok.replace("'shape': (1,), ", ""), &one),
            "'shape' missing",
        ),
        (
            raw((1, 0), &ok.replace(", }", ", 'x': 1, }"), &one),
            "string, True",
        ),
        (
            raw((1, 0), &ok.replace(", }", ", 'x': True, }"), &one),
            "unexpected key",
        ),
        (raw((1, 0), ok.trim_end(), &one), "newline"),
        (
            raw((1, 0), &ok.replace("'descr'", "'descr"), &one),
            "expected",
        ),
        (
            raw(
                (1, 0),
                &ok.replace("(1,)", "(99999999999999999999999,)"),
                &one,
            ),
            "too large",
        ),
    ];
    for (bytes, needle) in cases {
        let e = read_npy(&bytes).unwrap_err().to_string();
        assert!(e.contains(needle), "{e:?} should mention {needle:?}");
    }
}

#[test]
fn overflowing_shape_is_a_data_length_error() {
    let h = "{'descr': '<c16', 'fortran_order': False, 'shape': (4294967296, 4294967296, 2), }\n";
    assert!(matches!(
        read_npy(&raw((1, 0), h, &[])),
        Err(NpyError::DataLength { .. })
    ));
}

proptest! {
    #[test]
    fn random_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..300)) {
        let _ = read_npy(&bytes);
    }

    #[test]
    fn corrupted_valid_files_never_panic(
        data in proptest::collection::vec(any::<f64>(), 0..8),
        flips in proptest::collection::vec((any::<usize>(), any::<u8>()), 1..6),
        cut in any::<usize>(),
    ) {
        let mut b = npy_f64(&[data.len()], &data).unwrap();
        for (at, v) in flips {
            let n = b.len();
            b[at % n] = v;
        }
        let cut = cut % (b.len() + 1);
        let _ = read_npy(&b[..cut]);
        let _ = read_npy(&b);
    }

    #[test]
    fn writer_and_reader_agree(
        rows in 0usize..5, cols in 0usize..5, seed in any::<i64>(),
    ) {
        let v: Vec<i64> = (0..rows * cols).map(|k| seed.wrapping_mul(k as i64 + 1)).collect();
        let a = read_npy(&npy_i64(&[rows, cols], &v).unwrap()).unwrap();
        prop_assert_eq!(a.shape, vec![rows, cols]);
        prop_assert_eq!(a.data, NpyData::I64(v));
    }
}

// Byte orders and widths as NumPy writes them (format description in the NumPy documentation,
// `numpy.lib.format`; NEP 1, R. Kern, 2007, from memory): '>' is big-endian, 'f4'/'i4' are
// 4-byte IEEE single / two's-complement integers; Fortran order lists the first index fastest.
#[test]
fn big_endian_narrow_and_fortran_arrays_read_in_c_order() {
    let h = |descr: &str, shape: &str, fortran: &str| {
        format!("{{'descr': '{descr}', 'fortran_order': {fortran}, 'shape': {shape}, }}\n")
    };
    let be: Vec<u8> = [1.5f64, -2.0]
        .iter()
        .flat_map(|x| x.to_be_bytes())
        .collect();
    let a = read_npy(&raw((1, 0), &h(">f8", "(2,)", "False"), &be)).unwrap();
    assert_eq!(a.data, NpyData::F64(vec![1.5, -2.0]));
    let f4: Vec<u8> = [0.25f32, 120.0]
        .iter()
        .flat_map(|x| x.to_le_bytes())
        .collect();
    let a = read_npy(&raw((1, 0), &h("<f4", "(2,)", "False"), &f4)).unwrap();
    assert_eq!(a.data, NpyData::F64(vec![0.25, 120.0]));
    let i4: Vec<u8> = [-7i32, 3].iter().flat_map(|x| x.to_be_bytes()).collect();
    let a = read_npy(&raw((1, 0), &h(">i4", "(2,)", "False"), &i4)).unwrap();
    assert_eq!(a.data, NpyData::I64(vec![-7, 3]));
    // [[0, 1, 2], [3, 4, 5]] stored column-major: 0, 3, 1, 4, 2, 5.
    let col: Vec<u8> = [0i64, 3, 1, 4, 2, 5]
        .iter()
        .flat_map(|x| x.to_le_bytes())
        .collect();
    let a = read_npy(&raw((1, 0), &h("<i8", "(2, 3)", "True"), &col)).unwrap();
    assert_eq!(a.shape, vec![2, 3]);
    assert_eq!(a.data, NpyData::I64(vec![0, 1, 2, 3, 4, 5]));
    let c8: Vec<u8> = [1.0f32, -0.5]
        .iter()
        .flat_map(|x| x.to_le_bytes())
        .collect();
    let a = read_npy(&raw((1, 0), &h("<c8", "(1,)", "False"), &c8)).unwrap();
    assert_eq!(a.data, NpyData::C128(vec![Complex64::new(1.0, -0.5)]));
}
