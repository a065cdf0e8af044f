//! 2D spectra from time-domain data: a discrete Fourier transform (rustfft) over the first and
//! the last delay (the coherence times t1 and t3 of a third-order experiment) with the kernel
//! `exp(+i w t)`, the first time point halved on each axis (the usual first-point correction),
//! zero padding, and the excitation axis oriented so that every output's peaks appear at
//! positive excitation frequency: direct for non-rephasing-type data, flipped for rephasing-type
//! data (their t1 coherence oscillates at negative frequency), folded (both halves added) for
//! outputs that hold both, as the absorptive pump-probe output does (Hamm & Zanni 2011, ch. 4).

use super::grid::DelayGrid;
use super::units::EnergyUnit;
use super::SimulationError;
use num_complex::Complex64;
use rustfft::{FftDirection, FftPlanner};
use serde::Serialize;

/// Largest number of points of one 2D spectrum (after zero padding): 2^22 complex values are
/// 64 MiB.
pub const MAX_SPECTRUM_POINTS: usize = 1 << 22;

/// How the excitation axis is read from the transform over t1.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ExcitationAxis {
    /// `w1 = frame + nu1` (non-rephasing, double-quantum first delay).
    Direct,
    /// `w1 = frame - nu1` (rephasing).
    Flipped,
    /// Both halves added at `w1 = frame + |nu1|`-type positions (R + NR together).
    Folded,
}

/// A 2D spectrum on a regular frequency grid.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Spectrum2D {
    /// Excitation frequencies (from t1), increasing, in `unit`.
    pub excitation: Vec<f64>,
    /// Detection frequencies (from the last delay), increasing, in `unit`.
    pub detection: Vec<f64>,
    /// Values, row-major: `values[i * detection.len() + j]` at (excitation i, detection j).
    #[serde(skip)]
    pub values: Vec<Complex64>,
    /// How the excitation axis was read.
    pub mode: ExcitationAxis,
    /// Energy unit of both axes.
    pub unit: EnergyUnit,
}

impl Spectrum2D {
    /// The value at grid indices (excitation i, detection j).
    pub fn at(&self, i: usize, j: usize) -> Complex64 {
        self.values[i * self.detection.len() + j]
    }
}

/// How to transform.
#[derive(Clone, Debug, PartialEq)]
pub struct SpectrumRequest {
    /// Energy unit of the axes.
    pub unit: EnergyUnit,
    /// Rotating frame, in `unit` (0 = lab frame).
    pub frame: f64,
    /// Zero-pad each axis to at least this many points (rounded up to a power of two).
    pub min_points: usize,
    /// Offsets (rad/fs) added to (excitation, detection) frequencies: the Nyquist zone of an
    /// undersampled axis, 0 otherwise.
    pub zone: [f64; 2],
    /// Excitation-axis orientation.
    pub mode: ExcitationAxis,
}

/// The 2D spectrum of `values` (C order on `grid`) over the first and last axes, at the
/// indices `fixed` of the axes in between (one per middle axis).
pub fn spectrum_2d(
    values: &[Complex64],
    grid: &DelayGrid,
    fixed: &[usize],
    req: &SpectrumRequest,
) -> Result<Spectrum2D, SimulationError> {
    let shape = grid.shape();
    let nd = shape.len();
    if nd < 3 || fixed.len() != nd - 2 || fixed.iter().zip(&shape[1..]).any(|(&i, &n)| i >= n) {
        return Err(SimulationError::BadRequest(format!(
            "a 2D spectrum needs at least three delays and one index per middle delay; the grid has shape {shape:?}"
        )));
    }
    let (ax1, ax3) = (&grid.axes[0], &grid.axes[nd - 1]);
    let (Some(dt1), Some(dt3)) = (ax1.step(), ax3.step()) else {
        return Err(SimulationError::BadRequest(format!(
            "{} and {} need evenly spaced delays (START:STEP:STOP) of at least two points for a spectrum",
            ax1.name, ax3.name
        )));
    };
    let (n1, n3) = (shape[0], shape[nd - 1]);
    let l1 = n1.max(req.min_points).next_power_of_two();
    let l3 = n3.max(req.min_points).next_power_of_two();
    if l1.saturating_mul(l3) > MAX_SPECTRUM_POINTS {
        return Err(SimulationError::BadRequest(format!(
            "a {l1} x {l3} spectrum is above the limit of {MAX_SPECTRUM_POINTS} points; pad less (--pad) or take fewer delays"
        )));
    }
    // Stride of the first and last axes and the offset of the fixed middle indices.
    let stride1: usize = shape[1..].iter().product();
    let mut base = 0;
    let mut stride = 1;
    for k in (1..nd - 1).rev() {
        stride *= shape[k + 1];
        base += fixed[k - 1] * stride;
    }
    let mut buf = vec![Complex64::new(0.0, 0.0); l1 * l3];
    for i in 0..n1 {
        for j in 0..n3 {
            let w = if i == 0 { 0.5 } else { 1.0 } * if j == 0 { 0.5 } else { 1.0 };
            buf[i * l3 + j] = values[i * stride1 + base + j] * w * dt1 * dt3;
        }
    }
    let mut planner = FftPlanner::new();
    let f3 = planner.plan_fft(l3, FftDirection::Inverse);
    f3.process(&mut buf);
    let f1 = planner.plan_fft(l1, FftDirection::Inverse);
    let mut col = vec![Complex64::new(0.0, 0.0); l1];
    for j in 0..l3 {
        for i in 0..l1 {
            col[i] = buf[i * l3 + j];
        }
        f1.process(&mut col);
        for i in 0..l1 {
            buf[i * l3 + j] = col[i];
        }
    }
    Ok(arrange(&buf, l1, l3, dt1, dt3, req))
}

/// Signed frequency (rad/fs) of FFT bin `k` of `l` points at step `dt`.
fn bin_frequency(k: usize, l: usize, dt: f64) -> f64 {
    let signed = if k >= l / 2 {
        k as f64 - l as f64
    } else {
        k as f64
    };
    std::f64::consts::TAU * signed / (l as f64 * dt)
}

/// Bins in increasing order of signed frequency.
fn shifted(l: usize) -> impl Iterator<Item = usize> {
    (l / 2..l).chain(0..l / 2)
}

fn arrange(
    buf: &[Complex64],
    l1: usize,
    l3: usize,
    dt1: f64,
    dt3: f64,
    req: &SpectrumRequest,
) -> Spectrum2D {
    let unit = req.unit;
    let to_unit = |w: f64| unit.from_angular(w);
    let frame = unit.to_angular(req.frame);
    let detection: Vec<f64> = shifted(l3)
        .map(|k| to_unit(frame + req.zone[1] + bin_frequency(k, l3, dt3)))
        .collect();
    // Excitation rows: for each output row, the source bin(s) on the t1 transform.
    let mut rows: Vec<(f64, Vec<usize>)> = shifted(l1)
        .map(|k| {
            let nu = bin_frequency(k, l1, dt1);
            let mirror = (l1 - k) % l1;
            match req.mode {
                ExcitationAxis::Direct => (frame + req.zone[0] + nu, vec![k]),
                ExcitationAxis::Flipped => (frame + req.zone[0] - nu, vec![k]),
                ExcitationAxis::Folded if mirror == k => (frame + req.zone[0] + nu, vec![k]),
                ExcitationAxis::Folded => (frame + req.zone[0] + nu, vec![k, mirror]),
            }
        })
        .collect();
    rows.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut values = Vec::with_capacity(l1 * l3);
    for (_, sources) in &rows {
        for j in shifted(l3) {
            values.push(sources.iter().map(|&k| buf[k * l3 + j]).sum());
        }
    }
    Spectrum2D {
        excitation: rows.iter().map(|r| to_unit(r.0)).collect(),
        detection,
        values,
        mode: req.mode,
        unit,
    }
}
