//! Masks over delay scans: this module owns the masks of every (delay, step) of a scan — one
//! or more scanned sub-pulses, each with a list of delays — under one common normalisation, and
//! the aliasing check. A scanned pulse's delay is its interval after the sub-pulse before it in
//! the shaper file (t1 = pulse 2 after pulse 1, t2 = pulse 3 after pulse 2, ...; for the first
//! sub-pulse, its delay from time zero); every later sub-pulse keeps its own interval, so it
//! moves with the scanned one. The scan points are all combinations of the scanned delays, the
//! first scanned pulse slowest. The shaper's frame applies as in [`super::mask`]: in a rotating
//! frame the delays may be undersampled freely.
//!
//! Aliasing: sub-pulse j adds the spectral phase `(nu - nu_0) tau_j` turns (nu in THz, tau in
//! ps); between adjacent pixels k, k+1 it changes by `(nu_{k+1} - nu_k) tau_j`. A pixelated
//! shaper can only show a phase ramp that changes by at most half a turn per pixel (the
//! sampling theorem, common practice); past that the sub-pulse appears at the wrong delay.
//! [`first_aliasing`] finds the first (scan point, pixel) past half a turn.

use super::mask::{masks_for_cycle, MaskError, MaskSpec, MAX_MASK_VALUES};
use num_complex::Complex64;

/// How far past half a turn per pixel counts as aliasing: the rounding of pixel frequencies
/// computed as `first + k * step` (1e-9 turn; a delay 1e-9 of the limit past it is caught).
pub const ALIAS_SLACK: f64 = 1e-9;

/// One scanned sub-pulse: its index in the shaper file and its delays (fs).
#[derive(Clone, Debug, PartialEq)]
pub struct ScanAxis {
    /// The sub-pulse (shaper file order).
    pub subpulse: usize,
    /// The delays in fs: the interval after the previous sub-pulse (see the module notes).
    pub delays_fs: Vec<f64>,
}

/// The masks of a whole scan.
#[derive(Clone, Debug, PartialEq)]
pub struct MaskScan {
    /// Pixel frequencies in THz.
    pub freqs_thz: Vec<f64>,
    /// Per scan point, the scanned delays (one per axis, fs).
    pub points_fs: Vec<Vec<f64>>,
    /// Per scan point, every sub-pulse's delay from time zero (fs).
    pub subpulse_delays_fs: Vec<Vec<f64>>,
    /// masks[point][step][pixel], already multiplied by `scale`.
    pub masks: Vec<Vec<Vec<Complex64>>>,
    /// The one factor applied to every mask so that max |M| <= 1 over the whole scan.
    pub scale: f64,
    /// Rotating-frame frequency in THz (`None`: lab frame).
    pub rotating_frame_thz: Option<f64>,
}

/// Where the spectral phase first changes by more than half a turn between adjacent pixels.
#[derive(Clone, Debug, PartialEq)]
pub struct Aliasing {
    /// The scan point (0 without a scan).
    pub point: usize,
    /// The sub-pulse.
    pub subpulse: usize,
    /// Its delay from time zero (fs).
    pub delay_fs: f64,
    /// The pixel k: the change is between pixels k and k + 1.
    pub pixel: usize,
    /// The change in turns (> 0.5 in magnitude).
    pub turns_per_pixel: f64,
}

/// Why a scan could not be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ScanError {
    /// A mask error.
    #[error(transparent)]
    Mask(#[from] MaskError),
    /// More mask values than the limit.
    #[error("{points} delays x {steps} steps x {pixels} pixels exceeds the limit of {MAX_MASK_VALUES} mask values; scan fewer delays or use fewer pixels")]
    TooLarge {
        /// Scan points.
        points: usize,
        /// Steps.
        steps: usize,
        /// Pixels.
        pixels: usize,
    },
    /// A scanned sub-pulse that does not exist, or an empty axis.
    #[error("scan axis {axis}: {reason}")]
    BadAxis {
        /// The axis (0-based).
        axis: usize,
        /// What is wrong.
        reason: String,
    },
}

/// Every sub-pulse's delay from time zero at one scan point.
fn delays_at(spec: &MaskSpec, axes: &[ScanAxis], values: &[f64]) -> Vec<f64> {
    let base: Vec<f64> = spec.subpulses.iter().map(|s| s.delay_fs).collect();
    let mut out = Vec::with_capacity(base.len());
    for j in 0..base.len() {
        let interval = match axes.iter().position(|a| a.subpulse == j) {
            Some(k) => values[k],
            None if j == 0 => base[0],
            None => base[j] - base[j - 1],
        };
        let prev = if j == 0 { 0.0 } else { out[j - 1] };
        out.push(prev + interval);
    }
    out
}

/// The scan points: every combination of the axes' delays, the first axis slowest.
fn points(axes: &[ScanAxis]) -> Vec<Vec<f64>> {
    let mut pts = vec![Vec::new()];
    for a in axes {
        pts = pts
            .into_iter()
            .flat_map(|p| {
                a.delays_fs.iter().map(move |&d| {
                    let mut q = p.clone();
                    q.push(d);
                    q
                })
            })
            .collect();
    }
    pts
}

/// The masks of every scan point and step (`steps[m][j]`: phase of sub-pulse j at step m, in
/// turns), with one common scale. No axes: one point at the shaper file's own delays.
///
/// # Errors
/// [`ScanError`] for bad axes, sizes above the limit (checked before any mask is computed)
/// and the errors of [`masks_for_cycle`].
pub fn mask_scan(
    spec: &MaskSpec,
    axes: &[ScanAxis],
    steps: &[Vec<f64>],
) -> Result<MaskScan, ScanError> {
    let freqs = spec.validate()?;
    for (k, a) in axes.iter().enumerate() {
        let bad = |reason: String| ScanError::BadAxis { axis: k, reason };
        if a.subpulse >= spec.subpulses.len() {
            return Err(bad(format!("no sub-pulse {}", a.subpulse)));
        }
        if a.delays_fs.is_empty() || a.delays_fs.iter().any(|d| !d.is_finite()) {
            return Err(bad("give at least one finite delay".into()));
        }
        if axes[..k].iter().any(|b| b.subpulse == a.subpulse) {
            return Err(bad("this pulse is scanned twice".into()));
        }
    }
    let n_points = axes
        .iter()
        .try_fold(1usize, |n, a| n.checked_mul(a.delays_fs.len()));
    let total = n_points
        .and_then(|p| p.checked_mul(steps.len()))
        .and_then(|v| v.checked_mul(freqs.len()));
    if total.is_none_or(|t| t > MAX_MASK_VALUES) {
        return Err(ScanError::TooLarge {
            points: n_points.unwrap_or(usize::MAX),
            steps: steps.len(),
            pixels: freqs.len(),
        });
    }
    let pts = points(axes);
    let mut all = Vec::with_capacity(pts.len());
    let mut delays = Vec::with_capacity(pts.len());
    let mut peak_scale = f64::INFINITY;
    for p in &pts {
        let d = delays_at(spec, axes, p);
        let mut s = spec.clone();
        for (sp, &t) in s.subpulses.iter_mut().zip(&d) {
            sp.delay_fs = t;
        }
        let set = masks_for_cycle(&s, steps)?;
        // Undo each point's own scale: one common scale is applied below.
        peak_scale = peak_scale.min(set.scale);
        all.push((set.masks, set.scale));
        delays.push(d);
    }
    let masks = all
        .into_iter()
        .map(|(m, own)| {
            let f = peak_scale / own;
            m.into_iter()
                .map(|row| row.into_iter().map(|z| z * f).collect())
                .collect()
        })
        .collect();
    Ok(MaskScan {
        freqs_thz: freqs,
        points_fs: pts,
        subpulse_delays_fs: delays,
        masks,
        scale: peak_scale,
        rotating_frame_thz: spec.rotating_frame_thz,
    })
}

/// The first scan point, sub-pulse and pixel where the spectral phase changes by more than
/// half a turn between adjacent pixels, or `None` when every mask is sampled well enough.
/// `nonzero[j]` says whether sub-pulse j has a non-zero amplitude (an absent pulse cannot
/// alias).
pub fn first_aliasing(
    freqs_thz: &[f64],
    subpulse_delays_fs: &[Vec<f64>],
    nonzero: &[bool],
) -> Option<Aliasing> {
    for (point, d) in subpulse_delays_fs.iter().enumerate() {
        for (pixel, w) in freqs_thz.windows(2).enumerate() {
            let dnu = w[1] - w[0];
            for (j, &tau) in d.iter().enumerate() {
                let turns = dnu * tau / 1000.0;
                if nonzero.get(j).copied().unwrap_or(true) && turns.abs() > 0.5 + ALIAS_SLACK {
                    return Some(Aliasing {
                        point,
                        subpulse: j,
                        delay_fs: tau,
                        pixel,
                        turns_per_pixel: turns,
                    });
                }
            }
        }
    }
    None
}

/// The masks as one complex128 NPY array of shape (points, steps, pixels).
///
/// # Errors
/// [`MaskError::Npy`] only for a scan built by hand with ragged rows.
pub fn mask_scan_npy(scan: &MaskScan) -> Result<Vec<u8>, MaskError> {
    let flat: Vec<Complex64> = scan.masks.iter().flatten().flatten().copied().collect();
    let steps = scan.masks.first().map_or(0, Vec::len);
    Ok(super::npy::npy_c128(
        &[scan.masks.len(), steps, scan.freqs_thz.len()],
        &flat,
    )?)
}

#[cfg(test)]
#[path = "mask_scan_tests.rs"]
mod tests;
