//! Tests of masks over delay scans: the time-domain peaks of every (delay, step) mask sit at
//! the requested delays (an FFT by rustfft, an independent library), t2 scans move the later
//! pulse with t1, one common normalisation, and the aliasing check fires exactly past half a
//! turn per pixel.

use super::*;
use crate::export::mask::{Calibration, MaskSpec, SubPulse};
use rustfft::FftPlanner;

const PIXELS: usize = 512;
const STEP_THZ: f64 = 0.05;
/// One DFT bin in time: 1 / (PIXELS * STEP_THZ) ps = 39.0625 fs (exact in binary).
const BIN_FS: f64 = 1000.0 / (PIXELS as f64 * STEP_THZ);

fn spec(delays: &[f64], frame: Option<f64>) -> MaskSpec {
    MaskSpec {
        calibration: Calibration::Linear {
            pixels: PIXELS,
            first_thz: 360.0,
            step_thz: STEP_THZ,
        },
        subpulses: delays
            .iter()
            .map(|&d| SubPulse {
                delay_fs: d,
                amplitude: 1.0,
                phase_turns: 0.0,
            })
            .collect(),
        rotating_frame_thz: frame,
    }
}

/// The bins of the largest |X| values of the forward DFT of one mask, largest first. With
/// E(t) = (1/2 pi) integral E(omega) exp(-i omega t) d omega (docs/shaper-masks.md), a mask
/// sampled at nu_k = nu_0 + k d_nu gives the field at t_n = n / (N d_nu) as the forward DFT
/// sum_k M_k exp(-2 pi i k n / N), up to a constant phase (the DFT shift theorem, common
/// practice); exp(+i omega tau) then peaks at n = tau N d_nu.
fn peak_bins(mask: &[Complex64], count: usize) -> Vec<usize> {
    let mut x = mask.to_vec();
    FftPlanner::new().plan_fft_forward(x.len()).process(&mut x);
    let mut idx: Vec<usize> = (0..x.len()).collect();
    idx.sort_by(|&a, &b| x[b].norm().total_cmp(&x[a].norm()));
    idx.truncate(count);
    idx.sort_unstable();
    idx
}

#[test]
fn every_two_pulse_mask_of_a_t1_scan_peaks_at_the_requested_delays() {
    let bins = [3usize, 10, 57, 128, 200];
    let t1: Vec<f64> = bins.iter().map(|&k| k as f64 * BIN_FS).collect();
    // Two steps of a cycle: the second pulse at 0 and at 1/4 turn.
    let steps = vec![vec![0.0, 0.0], vec![0.0, 0.25]];
    for frame in [Some(375.0), None] {
        let axes = [ScanAxis {
            subpulse: 1,
            delays_fs: t1.clone(),
        }];
        let scan = mask_scan(&spec(&[0.0, 0.0], frame), &axes, &steps).unwrap();
        assert_eq!(scan.masks.len(), bins.len());
        for (p, &k) in bins.iter().enumerate() {
            assert_eq!(scan.points_fs[p], vec![t1[p]]);
            assert_eq!(scan.masks[p].len(), 2);
            for mask in &scan.masks[p] {
                assert_eq!(peak_bins(mask, 2), vec![0, k], "delay {} fs", t1[p]);
            }
        }
        assert!(first_aliasing(&scan.freqs_thz, &scan.subpulse_delays_fs, &[true, true]).is_none());
    }
}

#[test]
fn a_t2_scan_moves_the_third_pulse_with_t1_and_keeps_one_scale() {
    // Pulse 2 after pulse 1 by t1, pulse 3 after pulse 2 by t2.
    let steps = vec![vec![0.0, 0.0, 0.0]];
    let axes = [
        ScanAxis {
            subpulse: 1,
            delays_fs: vec![4.0 * BIN_FS, 9.0 * BIN_FS],
        },
        ScanAxis {
            subpulse: 2,
            delays_fs: vec![20.0 * BIN_FS, 31.0 * BIN_FS, 40.0 * BIN_FS],
        },
    ];
    let scan = mask_scan(&spec(&[0.0, 0.0, 0.0], Some(375.0)), &axes, &steps).unwrap();
    assert_eq!(scan.masks.len(), 6);
    let mut p = 0;
    for a in [4usize, 9] {
        for b in [20usize, 31, 40] {
            assert_eq!(peak_bins(&scan.masks[p][0], 3), vec![0, a, a + b]);
            assert_eq!(scan.subpulse_delays_fs[p][2], (a + b) as f64 * BIN_FS);
            p += 1;
        }
    }
    // Three unit sub-pulses reach |M| = 3 somewhere: one factor 1/3 for the whole scan.
    let peak = scan
        .masks
        .iter()
        .flatten()
        .flatten()
        .map(|z| z.norm())
        .fold(0.0, f64::max);
    assert!(peak <= 1.0 + 1e-12 && peak > 0.9, "{peak}");
    assert!((scan.scale - 1.0 / 3.0).abs() < 1e-9, "{}", scan.scale);
}

#[test]
fn aliasing_fires_exactly_past_half_a_turn_per_pixel_and_names_the_pixel() {
    // Spacings 0.25, 0.25, 1.0, 0.25 THz (exact in binary).
    let f = [256.0, 256.25, 256.5, 257.5, 257.75];
    let at = |tau: f64| first_aliasing(&f, &[vec![0.0, tau]], &[true, true]);
    // 1.0 THz x 500 fs = 0.5 turn: on the limit, not past it.
    assert_eq!(at(500.0), None);
    let a = at(500.001).unwrap();
    assert_eq!((a.point, a.subpulse, a.pixel), (0, 1, 2));
    assert!(a.turns_per_pixel > 0.5);
    // 0.25 THz x 2000 fs = 0.5 exactly at pixels 0, 1, 3; pixel 2 is past it.
    assert_eq!(at(2000.0).unwrap().pixel, 2);
    assert_eq!(at(2000.001).unwrap().pixel, 0);
    // Negative delays alias the same way; an absent pulse (amplitude 0) does not.
    assert_eq!(at(-500.001).unwrap().pixel, 2);
    assert_eq!(
        first_aliasing(&f, &[vec![0.0, 9000.0]], &[true, false]),
        None
    );
    // The scan point is named: the second point is the first past the limit.
    let d = [vec![0.0, 400.0], vec![0.0, 600.0]];
    assert_eq!(first_aliasing(&f, &d, &[true, true]).unwrap().point, 1);
}

#[test]
fn scans_over_the_size_limit_and_bad_axes_are_refused_before_work() {
    let steps = vec![vec![0.0, 0.0]; 64];
    let axes = [ScanAxis {
        subpulse: 1,
        delays_fs: vec![1.0; 1024],
    }];
    assert!(matches!(
        mask_scan(&spec(&[0.0, 0.0], None), &axes, &steps),
        Err(ScanError::TooLarge { .. })
    ));
    let axes = [ScanAxis {
        subpulse: 5,
        delays_fs: vec![1.0],
    }];
    assert!(matches!(
        mask_scan(&spec(&[0.0, 0.0], None), &axes, &steps),
        Err(ScanError::BadAxis { .. })
    ));
}

#[test]
fn a_wavelength_calibration_gives_c_over_lambda() {
    // c = 299 792 458 m/s exactly (SI definition, 2019): 800 nm is 374.7405725 THz.
    let text = r#"
        [calibration]
        kind = "wavelength"
        pixels = 3
        first_nm = 800.0
        step_nm = -100.0
        [[pulse]]
        field = "1"
        delay_fs = 0.0
    "#;
    let s = crate::export::shaper::parse_shaper(text, std::path::Path::new("s.toml")).unwrap();
    let f = s.spec.calibration.frequencies_thz().unwrap();
    assert!((f[0] - 374.7405725).abs() < 1e-9, "{f:?}");
    assert!((f[2] - 499.654_096_666_666_7).abs() < 1e-9, "{f:?}");
    let table = text.replace(
        "kind = \"wavelength\"\n        pixels = 3\n        first_nm = 800.0\n        step_nm = -100.0",
        "kind = \"wavelength-table\"\n        wavelengths_nm = [800.0, 700.0, 600.0]",
    );
    let t = crate::export::shaper::parse_shaper(&table, std::path::Path::new("s.toml")).unwrap();
    assert_eq!(t.spec.calibration.frequencies_thz().unwrap(), f);
    let bad = table.replace("600.0", "0.0");
    assert!(crate::export::shaper::parse_shaper(&bad, std::path::Path::new("s.toml")).is_err());
}
