//! Unit tests for shaper masks: hand computations of the spectral phase, an independent
//! inverse DFT of the mask, the rotating frame, normalisation, validation and the writers.

use super::*;
use crate::export::npy::{read_npy, NpyData};
use proptest::prelude::*;
use std::f64::consts::TAU;

fn one(delay_fs: f64, amplitude: f64, phase_turns: f64) -> SubPulse {
    SubPulse {
        delay_fs,
        amplitude,
        phase_turns,
    }
}

fn linear(pixels: usize, first_thz: f64, step_thz: f64) -> Calibration {
    Calibration::Linear {
        pixels,
        first_thz,
        step_thz,
    }
}

/// Angular frequency in rad/fs of a frequency in THz (1 THz = 1e-3 cycles per fs).
fn omega(nu_thz: f64) -> f64 {
    TAU * nu_thz * 1e-3
}

/// Unwrap a phase sequence by removing jumps larger than pi (common practice).
fn unwrap(phases: &[f64]) -> Vec<f64> {
    let mut out = Vec::with_capacity(phases.len());
    let mut offset = 0.0;
    for (k, &p) in phases.iter().enumerate() {
        if k > 0 {
            let d = p - phases[k - 1];
            offset -= TAU * (d / TAU).round();
        }
        out.push(p + offset);
    }
    out
}

/// Least-squares straight line y = slope * x + intercept.
fn fit(x: &[f64], y: &[f64]) -> (f64, f64) {
    let n = x.len() as f64;
    let mx = x.iter().sum::<f64>() / n;
    let my = y.iter().sum::<f64>() / n;
    let sxy: f64 = x.iter().zip(y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = x.iter().map(|a| (a - mx) * (a - mx)).sum();
    let slope = sxy / sxx;
    (slope, my - slope * mx)
}

/// Plain O(n^2) DFT with the exp(-i omega t) kernel of docs/shaper-masks.md:
/// X_n = sum_k x_k exp(-2 pi i k n / N). Written here, independent of the code under test.
fn dft(x: &[Complex64]) -> Vec<Complex64> {
    let n = x.len();
    (0..n)
        .map(|m| {
            x.iter()
                .enumerate()
                .map(|(k, &v)| {
                    let a = -TAU * ((k * m) % n) as f64 / n as f64;
                    v * Complex64::new(a.cos(), a.sin())
                })
                .sum()
        })
        .collect()
}

/// Wrap an angle into (-pi, pi].
fn wrap(a: f64) -> f64 {
    let w = a - TAU * (a / TAU).round();
    if w <= -std::f64::consts::PI {
        w + TAU
    } else {
        w
    }
}

#[test]
fn single_delay_gives_linear_spectral_phase_with_slope_tau() {
    // Hand computation: M(omega) = exp(i 2 pi phi) exp(i (omega - omega_0) tau), so
    // d arg M / d omega = tau exactly, in both the lab frame and a rotating frame.
    let tau = 1000.0;
    for frame in [None, Some(380.0)] {
        let spec = MaskSpec {
            calibration: linear(512, 370.0, 0.05),
            subpulses: vec![one(tau, 1.0, 0.2)],
            rotating_frame_thz: frame,
        };
        let freqs = spec.calibration.frequencies_thz().unwrap();
        let m = mask(&spec, &[0.2]).unwrap();
        let w: Vec<f64> = freqs.iter().map(|&f| omega(f)).collect();
        let ph = unwrap(&m.iter().map(|z| z.arg()).collect::<Vec<_>>());
        let (slope, intercept) = fit(&w, &ph);
        assert!(
            ((slope - tau) / tau).abs() < 1e-9,
            "slope {slope} fs, expected {tau} fs"
        );
        // Intercept: 2 pi phi - omega_0 tau, modulo 2 pi.
        let expect = TAU * 0.2 - omega(frame.unwrap_or(0.0)) * tau;
        assert!(wrap(intercept - expect).abs() < 1e-9, "frame {frame:?}");
        assert!(m.iter().all(|z| (z.norm() - 1.0).abs() < 1e-12));
    }
}

#[test]
fn two_subpulses_appear_at_their_delays_with_their_relative_phase() {
    // Pixels P, spacing dnu: the DFT time bin is dt = 1 / (P dnu) = 1000 / (P dnu[THz]) fs.
    let (p, first, dnu, frame) = (256usize, 360.0, 0.1, 375.0);
    let dt = 1000.0 / (p as f64 * dnu); // 39.0625 fs
    let (m1, m2) = (10usize, 37usize);
    let (tau1, tau2) = (m1 as f64 * dt, m2 as f64 * dt);
    let (phi1, phi2) = (0.125, 0.4);
    let spec = MaskSpec {
        calibration: linear(p, first, dnu),
        subpulses: vec![one(tau1, 1.0, 0.0), one(tau2, 0.6, 0.0)],
        rotating_frame_thz: Some(frame),
    };
    let x = dft(&mask(&spec, &[phi1, phi2]).unwrap());
    let mut order: Vec<usize> = (0..p).collect();
    order.sort_by(|&a, &b| x[b].norm().total_cmp(&x[a].norm()));
    let mut peaks = [order[0], order[1]];
    peaks.sort_unstable();
    // Peaks at +tau (bins m1, m2), not at -tau (bins P - m): exp(+i omega tau) is a delay.
    assert_eq!(peaks, [m1, m2]);
    // On-bin delays: x_m = P a_j exp(i 2 pi phi_j) exp(i (omega_first - omega_0) tau_j) exactly,
    // so the relative phase is 2 pi (phi2 - phi1) plus the carrier term
    // (omega_first - omega_0)(tau2 - tau1) left by starting the DFT at pixel 0.
    let carrier = (omega(first) - omega(frame)) * (tau2 - tau1);
    let rel = wrap((x[m2] / x[m1]).arg() - carrier);
    // Tolerance 1e-6 rad: the exact answer has no leakage, so only rounding remains (256-term
    // sums, 0.1 THz not exact in binary: ~1e-12 rad); 1e-6 leaves a wide margin.
    assert!((rel - wrap(TAU * (phi2 - phi1))).abs() < 1e-6, "rel {rel}");
    assert!((x[m2].norm() / x[m1].norm() - 0.6).abs() < 1e-9);
    // Off-bin delay: the peak still lands within one bin of tau / dt.
    let spec = MaskSpec {
        subpulses: vec![one(12.4 * dt, 1.0, 0.0)],
        ..spec
    };
    let x = dft(&mask(&spec, &[0.0]).unwrap());
    let best = (0..p).max_by(|&a, &b| x[a].norm().total_cmp(&x[b].norm()));
    assert!(matches!(best, Some(12 | 13)), "{best:?}");
}

#[test]
fn rotating_frame_phase_at_omega_0_is_the_subpulse_phase() {
    // (nu - nu_0) is exactly 0 at the pixel sitting on nu_0, so no delay phase is added.
    let spec = MaskSpec {
        calibration: Calibration::Table(vec![370.0, 372.5, 375.0, 377.5]),
        subpulses: vec![one(123.4, 0.8, 0.3)],
        rotating_frame_thz: Some(375.0),
    };
    let m = mask(&spec, &[0.3]).unwrap();
    assert!((m[2].arg() - TAU * 0.3).abs() < 1e-15);
    assert!((m[2].norm() - 0.8).abs() < 1e-15);
    assert!(
        (m[0].arg() - TAU * 0.3).abs() > 1e-3,
        "other pixels do carry delay phase"
    );
    // Two sub-pulses: M(omega_0) = sum_j a_j exp(i 2 pi phi_j), delays drop out.
    let spec = MaskSpec {
        subpulses: vec![one(50.0, 1.0, 0.0), one(-900.0, 0.5, 0.0)],
        ..spec
    };
    let m = mask(&spec, &[0.1, 0.75]).unwrap();
    let want = Complex64::from_polar(1.0, TAU * 0.1) + Complex64::from_polar(0.5, TAU * 0.75);
    assert!((m[2] - want).norm() < 1e-15);
}

#[test]
fn step_phases_override_and_lab_frame_keeps_carrier_phase() {
    let spec = MaskSpec {
        calibration: Calibration::Table(vec![400.0]),
        subpulses: vec![one(10.0, 1.0, 0.9)],
        rotating_frame_thz: None,
    };
    // Lab frame: phase = 2 pi (phi + nu tau 1e-3) = 2 pi (0.25 + 4.0) -> 0.25 turn.
    let m = mask(&spec, &[0.25]).unwrap();
    assert!((m[0] - Complex64::new(0.0, 1.0)).norm() < 1e-12);
    assert_eq!(spec.own_phases(), vec![0.9]);
}

#[test]
fn cycle_is_normalised_by_one_common_factor() {
    let spec = MaskSpec {
        calibration: linear(64, 370.0, 0.2),
        subpulses: vec![one(0.0, 1.0, 0.0), one(300.0, 1.0, 0.0)],
        rotating_frame_thz: Some(370.0),
    };
    let steps = vec![vec![0.0, 0.0], vec![0.0, 0.5]];
    let set = masks_for_cycle(&spec, &steps).unwrap();
    // At pixel 0 (nu = nu_0) step 0 adds two unit phasors in phase: |M| = 2, so scale = 1/2.
    assert!((set.scale - 0.5).abs() < 1e-15);
    let peak = set
        .masks
        .iter()
        .flatten()
        .map(|z| z.norm())
        .fold(0.0, f64::max);
    assert!(peak <= 1.0 && (peak - 1.0).abs() < 1e-12);
    for (m, phases) in steps.iter().enumerate() {
        let raw = mask(&spec, phases).unwrap();
        for (a, b) in raw.iter().zip(&set.masks[m]) {
            assert!((a * 0.5 - b).norm() < 1e-15);
        }
    }
    // A mask that never exceeds 1 is left alone (not scaled up).
    let spec = MaskSpec {
        subpulses: vec![one(0.0, 0.3, 0.0)],
        ..spec
    };
    let set = masks_for_cycle(&spec, &[vec![0.0]]).unwrap();
    assert_eq!(set.scale, 1.0);
}

#[test]
fn invalid_specs_are_typed_errors() {
    let good = MaskSpec {
        calibration: linear(8, 370.0, 0.5),
        subpulses: vec![one(0.0, 1.0, 0.0), one(100.0, 1.0, 0.0)],
        rotating_frame_thz: None,
    };
    let with_cal = |c| MaskSpec {
        calibration: c,
        ..good.clone()
    };
    let e = |s: &MaskSpec| mask(s, &[0.0, 0.0]).unwrap_err();
    assert_eq!(
        e(&with_cal(linear(0, 370.0, 0.5))),
        MaskError::PixelCount { pixels: 0 }
    );
    assert!(matches!(
        e(&with_cal(linear(65_537, 370.0, 0.5))),
        MaskError::PixelCount { pixels: 65_537 }
    ));
    assert!(mask(&with_cal(linear(65_536, 370.0, 1e-3)), &[0.0, 0.0]).is_ok());
    assert_eq!(e(&with_cal(linear(8, 370.0, 0.0))), MaskError::ZeroStep);
    assert!(matches!(
        e(&with_cal(linear(8, f64::NAN, 0.5))),
        MaskError::NonFinite { .. }
    ));
    assert!(matches!(
        e(&with_cal(linear(8, 1.0, -0.5))),
        MaskError::NonPositiveFrequency { pixel: 2, .. }
    ));
    let err = e(&with_cal(Calibration::Table(vec![370.0, 371.0, 371.0])));
    assert!(matches!(err, MaskError::NotMonotonic { pixel: 2, .. }));
    assert!(err.to_string().contains("371"));
    assert!(mask(
        &with_cal(Calibration::Table(vec![380.0, 375.0])),
        &[0.0, 0.0]
    )
    .is_ok());
    assert!(matches!(
        e(&with_cal(Calibration::Table(vec![370.0, f64::INFINITY]))),
        MaskError::NonFinite { .. }
    ));
    let err = mask(&good, &[0.0]).unwrap_err();
    assert_eq!(
        err,
        MaskError::PhaseCount {
            step: 0,
            expected: 2,
            found: 1
        }
    );
    assert!(matches!(
        masks_for_cycle(&good, &[vec![0.0, 0.0], vec![0.0, 0.0, 0.0]]),
        Err(MaskError::PhaseCount { step: 1, .. })
    ));
    assert!(matches!(
        mask(&good, &[0.0, f64::NAN]),
        Err(MaskError::NonFinite { .. })
    ));
    assert_eq!(masks_for_cycle(&good, &[]).unwrap_err(), MaskError::NoSteps);
    let wide = with_cal(linear(MAX_PIXELS, 370.0, 1e-3));
    let steps = vec![vec![0.0, 0.0]; MAX_MASK_VALUES / MAX_PIXELS + 1];
    assert!(matches!(
        masks_for_cycle(&wide, &steps),
        Err(MaskError::TooLarge { .. })
    ));
    let mut s = good.clone();
    s.subpulses[1].amplitude = -1.0;
    assert!(matches!(
        e(&s),
        MaskError::NegativeAmplitude { index: 1, .. }
    ));
    s.subpulses.clear();
    assert_eq!(
        mask(&s, &[]).unwrap_err(),
        MaskError::SubPulseCount { count: 0 }
    );
    let mut s = good.clone();
    s.rotating_frame_thz = Some(-1.0);
    assert!(matches!(e(&s), MaskError::NegativeFrame { .. }));
    let mut s = good.clone();
    s.subpulses[0].amplitude = f64::MAX;
    s.subpulses[1].amplitude = f64::MAX;
    assert!(matches!(
        masks_for_cycle(&s, &[vec![0.0, 0.0]]),
        Err(MaskError::NonFinite { .. })
    ));
}

#[test]
fn csv_has_metadata_header_and_consistent_rows() {
    let spec = MaskSpec {
        calibration: linear(5, 370.0, 0.25),
        subpulses: vec![one(0.0, 1.0, 0.0), one(200.0, 1.0, 0.0)],
        rotating_frame_thz: Some(371.0),
    };
    let set = masks_for_cycle(&spec, &[vec![0.0, 0.0], vec![0.0, 0.25], vec![0.0, 0.5]]).unwrap();
    let text = String::from_utf8(mask_set_csv(&set)).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 2 + 3 * 5);
    assert!(lines[0].starts_with("# pathsieve shaper masks v1; steps=3; pixels=5; scale="));
    assert!(lines[0].contains("rotating_frame_thz=371;"));
    assert_eq!(lines[1], CSV_COLUMNS);
    let mut rdr = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    let mut n = 0;
    for (i, rec) in rdr.records().enumerate() {
        let rec = rec.unwrap();
        let v: Vec<f64> = rec.iter().map(|c| c.parse().unwrap()).collect();
        let (step, pixel) = (i / 5, i % 5);
        assert_eq!((v[0], v[1]), (step as f64, pixel as f64));
        assert_eq!(v[2], set.freqs_thz[pixel]);
        let z = set.masks[step][pixel];
        // Shortest round-trip formatting: values read back bit for bit.
        assert_eq!((v[5], v[6]), (z.re, z.im));
        assert!((Complex64::from_polar(v[3], v[4]) - z).norm() < 1e-15);
        n += 1;
    }
    assert_eq!(n, 15);
}

#[test]
fn npy_holds_steps_by_pixels_complex128() {
    let spec = MaskSpec {
        calibration: linear(7, 370.0, 0.25),
        subpulses: vec![one(40.0, 1.0, 0.0)],
        rotating_frame_thz: None,
    };
    let set = masks_for_cycle(&spec, &[vec![0.0], vec![0.5]]).unwrap();
    let a = read_npy(&mask_set_npy(&set).unwrap()).unwrap();
    assert_eq!(a.shape, vec![2, 7]);
    assert_eq!(a.data, NpyData::C128(set.masks.concat()));
    let mut ragged = set.clone();
    ragged.masks[1].pop();
    assert!(matches!(mask_set_npy(&ragged), Err(MaskError::Npy(_))));
}

proptest! {
    #[test]
    fn normalised_masks_never_exceed_one(
        amps in proptest::collection::vec(0.0f64..5.0, 1..4),
        delay in -2000.0f64..2000.0,
        phase in 0.0f64..1.0,
    ) {
        let subpulses = amps
            .iter()
            .enumerate()
            .map(|(j, &a)| one(delay * j as f64, a, 0.0))
            .collect::<Vec<_>>();
        let n = subpulses.len();
        let spec = MaskSpec {
            calibration: linear(32, 370.0, 0.3),
            subpulses,
            rotating_frame_thz: Some(375.0),
        };
        let set = masks_for_cycle(&spec, &[vec![phase; n], vec![0.0; n]]).unwrap();
        prop_assert!(set.scale > 0.0 && set.scale <= 1.0);
        for z in set.masks.iter().flatten() {
            prop_assert!(z.norm() <= 1.0 + 1e-12);
        }
    }
}
