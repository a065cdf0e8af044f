//! `pathsieve export --format mask-* --scan FIELD=DELAYS`: every (delay, step) mask in one
//! array (delays x steps x pixels), whose time-domain peaks sit at the requested delays (FFT by
//! rustfft, an independent library); one CSV per delay; the aliasing check refuses exactly past
//! half a turn per pixel and `--allow-aliasing` writes with a warning.

mod common;

use common::path_arg as s;

use num_complex::Complex64;
use pathsieve::export::npy::{read_npy, NpyData};
use rustfft::FftPlanner;
use std::path::Path;

const EXP: &str = "schemes/carbonyl-pump-probe.toml";
const CYC: &str = "schemes/carbonyl-2x2.cycle.toml";
const SHAPER: &str = "schemes/carbonyl-shaper.toml";

/// `pathsieve export` of the carbonyl 2x2 cycle as shaper masks (`format`) over the delay
/// scans given, written to `out`, with any further arguments.
fn export_masks(format: &str, scans: &[&str], out: &Path, extra: &[&str]) -> (i32, String, String) {
    let mut args = vec!["export", EXP, CYC, "--format", format, "--shaper", SHAPER];
    for scan in scans {
        args.extend(["--scan", scan]);
    }
    args.extend(["--out", s(out)]);
    args.extend_from_slice(extra);
    common::run_cli(&args)
}

/// The two largest bins of the forward DFT of one mask (the field in time with the transform
/// of docs/shaper-masks.md; DFT shift theorem, common practice), in increasing order.
fn two_peaks(mask: &[Complex64]) -> Vec<usize> {
    let mut x = mask.to_vec();
    FftPlanner::new().plan_fft_forward(x.len()).process(&mut x);
    let mut idx: Vec<usize> = (0..x.len()).collect();
    idx.sort_by(|&a, &b| x[b].norm().total_cmp(&x[a].norm()));
    let mut two = idx[..2].to_vec();
    two.sort_unstable();
    two
}

#[test]
fn a_t1_scan_gives_every_mask_with_its_peaks_at_the_requested_delay() {
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("scan.npy");
    // 128 pixels of 0.025 THz: one DFT bin is 1 / (128 x 0.025 THz) = 312.5 fs.
    let (code, _, err) = export_masks("mask-npy", &["pu2=0:312.5:3125"], &out, &[]);
    assert_eq!(code, 0, "{err}");
    let a = read_npy(&std::fs::read(&out).unwrap()).unwrap();
    assert_eq!(a.shape, [11, 4, 128]);
    let NpyData::C128(v) = a.data else {
        panic!("not complex")
    };
    for p in 0..11 {
        for m in 0..4 {
            let mask = &v[(p * 4 + m) * 128..(p * 4 + m + 1) * 128];
            let want = if p == 0 { vec![0, 1] } else { vec![0, p] };
            if p == 0 {
                // Both pulses at t = 0: one peak (the second largest bin is a side lobe).
                assert_eq!(two_peaks(mask)[0], 0);
            } else {
                assert_eq!(two_peaks(mask), want, "delay point {p}, step {m}");
            }
        }
    }
    let meta: serde_json::Value =
        serde_json::from_slice(&std::fs::read(d.path().join("scan.meta.json")).unwrap()).unwrap();
    assert_eq!(meta["scan"]["fields"], serde_json::json!(["pu2"]));
    assert_eq!(meta["scan"]["delays_fs"][3], serde_json::json!([937.5]));
    assert_eq!(meta["pixel_freqs_thz"].as_array().unwrap().len(), 128);
    // One CSV per delay.
    let csv = d.path().join("m.csv");
    let (code, _, err) = export_masks("mask-csv", &["pu2=0,600"], &csv, &[]);
    assert_eq!(code, 0, "{err}");
    for p in ["m.delay0.csv", "m.delay1.csv"] {
        let t = std::fs::read_to_string(d.path().join(p)).unwrap();
        assert_eq!(
            t.lines().filter(|l| !l.starts_with('#')).count(),
            1 + 4 * 128,
            "{p}"
        );
    }
}

#[test]
fn aliasing_is_refused_exactly_past_half_a_turn_per_pixel() {
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("a.npy");
    let run = |delays: &str, allow: bool| {
        let extra: &[&str] = if allow {
            &["--force", "--allow-aliasing"]
        } else {
            &["--force"]
        };
        export_masks("mask-npy", &[delays], &out, extra)
    };
    // 0.025 THz per pixel: half a turn per pixel at 20 ps.
    let (code, _, err) = run("pu2=19000,20000", false);
    assert_eq!(code, 0, "{err}");
    let (code, _, err) = run("pu2=19000,20000,20000.01", false);
    assert_eq!(code, 2);
    assert!(
        err.contains("scan point 2")
            && err.contains("pu2 = 20000.01 fs")
            && err.contains("between pixels 0 and 1"),
        "{err}"
    );
    let (code, _, err) = run("pu2=19000,20000,20000.01", true);
    assert_eq!(code, 0, "{err}");
    assert!(err.contains("warning") && err.contains("aliasing"), "{err}");
}

#[test]
fn a_scan_above_the_size_limit_is_refused_before_any_work() {
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("m.csv");
    // 5001 x 5001 delay points: above the 2^24 mask values before a single mask is made.
    let (code, _, err) = export_masks("mask-csv", &["pu1=0:1:5000", "pu2=0:1:5000"], &out, &[]);
    assert_eq!(code, 2);
    assert!(err.contains("exceed the limit"), "{err}");
    assert_eq!(std::fs::read_dir(d.path()).unwrap().count(), 0);
}
