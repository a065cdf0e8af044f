//! 4f pulse-shaper masks: this module owns turning a phase-cycle step into the complex spectral
//! mask a shaper applies, one value per pixel, and writing a cycle's masks as CSV or NPY bytes.
//! A shaper's calibration maps pixel k to frequency nu_k (THz; omega_k = 2 pi nu_k). The mask
//! makes a train of sub-pulses j with delay tau_j (fs), amplitude a_j and phase phi_j (turns):
//! `M(omega) = sum_j a_j exp(i 2 pi phi_j) exp(i (omega - omega_0) tau_j)`, where omega_0 is the
//! rotating-frame frequency (0 for the lab frame). With the transform convention
//! `E(t) = (1/2 pi) integral E(omega) exp(-i omega t) d omega`, the factor exp(+i omega tau)
//! delays a pulse by +tau. The full statement of the conventions is docs/shaper-masks.md.

use num_complex::Complex64;

use super::npy::{npy_c128, NpyError};

/// Fewest pixels a calibration may have.
pub const MIN_PIXELS: usize = 1;
/// Most pixels a calibration may have.
pub const MAX_PIXELS: usize = 65_536;
/// Most sub-pulses in one mask.
pub const MAX_SUBPULSES: usize = 1_024;
/// Most mask values (steps x pixels) in one [`MaskSet`]: 2^24, 256 MiB of complex128.
pub const MAX_MASK_VALUES: usize = 1 << 24;

/// How shaper pixels map to optical frequency.
#[derive(Debug, Clone, PartialEq)]
pub enum Calibration {
    /// Evenly spaced: pixel k sits at `first_thz + k * step_thz` THz (the step may be negative).
    Linear {
        /// Number of pixels.
        pixels: usize,
        /// Frequency of pixel 0 in THz.
        first_thz: f64,
        /// Frequency spacing in THz (non-zero).
        step_thz: f64,
    },
    /// Measured: one frequency per pixel in THz, strictly increasing or strictly decreasing.
    Table(Vec<f64>),
}

impl Calibration {
    /// The validated frequency of each pixel in THz.
    ///
    /// # Errors
    /// [`MaskError::PixelCount`], [`MaskError::NonFinite`], [`MaskError::ZeroStep`],
    /// [`MaskError::NonPositiveFrequency`] or [`MaskError::NotMonotonic`].
    pub fn frequencies_thz(&self) -> Result<Vec<f64>, MaskError> {
        let freqs = match self {
            Calibration::Linear {
                pixels,
                first_thz,
                step_thz,
            } => {
                check_pixels(*pixels)?;
                finite("calibration first_thz", *first_thz)?;
                finite("calibration step_thz", *step_thz)?;
                if *step_thz == 0.0 {
                    return Err(MaskError::ZeroStep);
                }
                (0..*pixels)
                    .map(|k| first_thz + k as f64 * step_thz)
                    .collect()
            }
            Calibration::Table(t) => {
                check_pixels(t.len())?;
                for (k, &f) in t.iter().enumerate() {
                    finite(&format!("calibration table entry {k}"), f)?;
                }
                t.clone()
            }
        };
        for (pixel, &thz) in freqs.iter().enumerate() {
            if !(thz > 0.0 && thz.is_finite()) {
                return Err(MaskError::NonPositiveFrequency { pixel, thz });
            }
        }
        if freqs.len() > 1 {
            let rising = freqs[1] > freqs[0];
            for (k, w) in freqs.windows(2).enumerate() {
                if (rising && w[1] <= w[0]) || (!rising && w[1] >= w[0]) {
                    return Err(MaskError::NotMonotonic {
                        pixel: k + 1,
                        previous_thz: w[0],
                        thz: w[1],
                    });
                }
            }
        }
        Ok(freqs)
    }
}

/// One sub-pulse of the train a mask makes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SubPulse {
    /// Delay in fs; positive is later (see docs/shaper-masks.md).
    pub delay_fs: f64,
    /// Field amplitude before global normalisation (finite, >= 0).
    pub amplitude: f64,
    /// Phase in turns, used when a cycle step does not override it.
    pub phase_turns: f64,
}

/// Everything needed to compute a mask except the step phases.
#[derive(Debug, Clone, PartialEq)]
pub struct MaskSpec {
    /// Pixel-to-frequency map.
    pub calibration: Calibration,
    /// The sub-pulses, in the order the cycle's phases refer to them.
    pub subpulses: Vec<SubPulse>,
    /// Rotating-frame frequency nu_0 in THz (`None`: lab frame, nu_0 = 0).
    pub rotating_frame_thz: Option<f64>,
}

impl MaskSpec {
    /// The sub-pulses' own phases in turns, usable as a single step.
    pub fn own_phases(&self) -> Vec<f64> {
        self.subpulses.iter().map(|s| s.phase_turns).collect()
    }

    /// Check everything but the step phases; return the pixel frequencies in THz.
    ///
    /// # Errors
    /// Calibration errors, [`MaskError::SubPulseCount`], [`MaskError::NonFinite`],
    /// [`MaskError::NegativeAmplitude`] or [`MaskError::NegativeFrame`].
    pub fn validate(&self) -> Result<Vec<f64>, MaskError> {
        let freqs = self.calibration.frequencies_thz()?;
        let n = self.subpulses.len();
        if n == 0 || n > MAX_SUBPULSES {
            return Err(MaskError::SubPulseCount { count: n });
        }
        for (j, s) in self.subpulses.iter().enumerate() {
            finite(&format!("sub-pulse {j} delay_fs"), s.delay_fs)?;
            finite(&format!("sub-pulse {j} amplitude"), s.amplitude)?;
            finite(&format!("sub-pulse {j} phase_turns"), s.phase_turns)?;
            if s.amplitude < 0.0 {
                return Err(MaskError::NegativeAmplitude {
                    index: j,
                    value: s.amplitude,
                });
            }
        }
        if let Some(f) = self.rotating_frame_thz {
            finite("rotating_frame_thz", f)?;
            if f < 0.0 {
                return Err(MaskError::NegativeFrame { thz: f });
            }
        }
        Ok(freqs)
    }
}

/// The masks of all steps of a cycle, sharing one normalisation.
#[derive(Debug, Clone, PartialEq)]
pub struct MaskSet {
    /// Pixel frequencies in THz.
    pub freqs_thz: Vec<f64>,
    /// One mask per step, each with one value per pixel, already multiplied by `scale`.
    pub masks: Vec<Vec<Complex64>>,
    /// Factor applied to every raw mask so that max |M| <= 1 over the whole cycle
    /// (1 when the raw masks never exceed 1; masks are never scaled up).
    pub scale: f64,
    /// Rotating-frame frequency used, in THz (`None`: lab frame).
    pub rotating_frame_thz: Option<f64>,
}

/// Why a mask could not be computed or written.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MaskError {
    /// Pixel count outside the supported range.
    #[error("calibration has {pixels} pixels; it must have {MIN_PIXELS}..={MAX_PIXELS}")]
    PixelCount {
        /// Pixels requested.
        pixels: usize,
    },
    /// A NaN or infinite input.
    #[error("{what} is {value}; it must be a finite number")]
    NonFinite {
        /// Which input.
        what: String,
        /// The value given.
        value: f64,
    },
    /// A linear calibration with zero spacing.
    #[error("calibration step_thz is 0; pixels must have distinct frequencies")]
    ZeroStep,
    /// A pixel at zero or negative frequency.
    #[error("pixel {pixel} is at {thz} THz; frequencies must be positive (check first_thz and step_thz)")]
    NonPositiveFrequency {
        /// The pixel.
        pixel: usize,
        /// Its frequency.
        thz: f64,
    },
    /// A calibration table that changes direction or repeats a value.
    #[error("calibration table is not strictly monotonic at pixel {pixel}: {previous_thz} THz then {thz} THz")]
    NotMonotonic {
        /// The first offending pixel.
        pixel: usize,
        /// Frequency of the pixel before it.
        previous_thz: f64,
        /// Its frequency.
        thz: f64,
    },
    /// No sub-pulses, or too many.
    #[error("{count} sub-pulses given; a mask needs 1..={MAX_SUBPULSES}")]
    SubPulseCount {
        /// Sub-pulses given.
        count: usize,
    },
    /// A negative sub-pulse amplitude.
    #[error("sub-pulse {index} has amplitude {value}; use amplitude >= 0 and add 1/2 turn to its phase instead")]
    NegativeAmplitude {
        /// The sub-pulse.
        index: usize,
        /// Its amplitude.
        value: f64,
    },
    /// A negative rotating-frame frequency.
    #[error("rotating_frame_thz is {thz}; it must be >= 0 (omit it for the lab frame)")]
    NegativeFrame {
        /// The value given.
        thz: f64,
    },
    /// A step's phase list does not match the sub-pulses.
    #[error("step {step} gives {found} phases but the mask has {expected} sub-pulses; give one phase per sub-pulse")]
    PhaseCount {
        /// The step (0 for a single [`mask`] call).
        step: usize,
        /// Sub-pulses in the spec.
        expected: usize,
        /// Phases given.
        found: usize,
    },
    /// A cycle with no steps.
    #[error("the cycle has no steps; give at least one")]
    NoSteps,
    /// A cycle too large to hold.
    #[error("{steps} steps x {pixels} pixels exceeds the limit of {MAX_MASK_VALUES} mask values; use fewer steps or pixels")]
    TooLarge {
        /// Steps requested.
        steps: usize,
        /// Pixels per step.
        pixels: usize,
    },
    /// Encoding the NPY file failed.
    #[error(transparent)]
    Npy(#[from] NpyError),
}

fn check_pixels(pixels: usize) -> Result<(), MaskError> {
    if (MIN_PIXELS..=MAX_PIXELS).contains(&pixels) {
        Ok(())
    } else {
        Err(MaskError::PixelCount { pixels })
    }
}

fn finite(what: &str, value: f64) -> Result<(), MaskError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(MaskError::NonFinite {
            what: what.to_string(),
            value,
        })
    }
}

/// Raw (unnormalised) mask for already-validated inputs.
fn raw_mask(spec: &MaskSpec, freqs: &[f64], phases: &[f64]) -> Vec<Complex64> {
    let nu0 = spec.rotating_frame_thz.unwrap_or(0.0);
    freqs
        .iter()
        .map(|&nu| {
            spec.subpulses
                .iter()
                .zip(phases)
                .map(|(s, &phi)| {
                    // Phase in turns: phi + (nu - nu0)[THz] * tau[fs] * 1e-3. Working in turns and
                    // dropping whole turns before multiplying by 2 pi keeps large delays accurate.
                    let turns = phi + (nu - nu0) * s.delay_fs * 1e-3;
                    let frac = turns - turns.floor();
                    Complex64::from_polar(s.amplitude, std::f64::consts::TAU * frac)
                })
                .sum()
        })
        .collect()
}

fn check_phases(step: usize, expected: usize, phases: &[f64]) -> Result<(), MaskError> {
    if phases.len() != expected {
        return Err(MaskError::PhaseCount {
            step,
            expected,
            found: phases.len(),
        });
    }
    for (j, &p) in phases.iter().enumerate() {
        finite(&format!("step {step} phase {j}"), p)?;
    }
    Ok(())
}

/// The raw mask (no normalisation) for one step; `phases_turns_for_step[j]` replaces the phase
/// of sub-pulse j. Use [`MaskSpec::own_phases`] to keep the sub-pulses' own phases.
///
/// # Errors
/// Any [`MaskSpec::validate`] error, or [`MaskError::PhaseCount`] / [`MaskError::NonFinite`]
/// for the phases.
pub fn mask(spec: &MaskSpec, phases_turns_for_step: &[f64]) -> Result<Vec<Complex64>, MaskError> {
    let freqs = spec.validate()?;
    check_phases(0, spec.subpulses.len(), phases_turns_for_step)?;
    Ok(raw_mask(spec, &freqs, phases_turns_for_step))
}

/// The masks of every step of a cycle, scaled by one common factor so that max |M| <= 1 over
/// all steps and pixels (a shaper cannot amplify). Relative amplitudes and phases between
/// steps are kept, so weights computed for the cycle still apply; the factor is reported in
/// [`MaskSet::scale`].
///
/// # Example
/// Two equal sub-pulses 500 fs apart, second one cycled through 0 and 1/2 turn:
/// ```
/// use pathsieve::export::mask::{masks_for_cycle, mask_set_npy, Calibration, MaskSpec, SubPulse};
/// let spec = MaskSpec {
///     calibration: Calibration::Linear { pixels: 640, first_thz: 360.0, step_thz: 0.05 },
///     subpulses: vec![
///         SubPulse { delay_fs: 0.0, amplitude: 1.0, phase_turns: 0.0 },
///         SubPulse { delay_fs: 500.0, amplitude: 1.0, phase_turns: 0.0 },
///     ],
///     rotating_frame_thz: Some(375.0),
/// };
/// let set = masks_for_cycle(&spec, &[vec![0.0, 0.0], vec![0.0, 0.5]])?;
/// assert_eq!(set.scale, 0.5); // |M| reaches 2 at 375 THz in step 0
/// assert_eq!(set.masks.len(), 2);
/// let npy_bytes = mask_set_npy(&set)?;
/// # assert!(!npy_bytes.is_empty());
/// # Ok::<(), pathsieve::export::mask::MaskError>(())
/// ```
///
/// # Errors
/// As [`mask`] (naming the step), plus [`MaskError::NoSteps`] and [`MaskError::TooLarge`].
pub fn masks_for_cycle(spec: &MaskSpec, steps: &[Vec<f64>]) -> Result<MaskSet, MaskError> {
    let freqs = spec.validate()?;
    if steps.is_empty() {
        return Err(MaskError::NoSteps);
    }
    if steps.len().saturating_mul(freqs.len()) > MAX_MASK_VALUES {
        return Err(MaskError::TooLarge {
            steps: steps.len(),
            pixels: freqs.len(),
        });
    }
    for (m, phases) in steps.iter().enumerate() {
        check_phases(m, spec.subpulses.len(), phases)?;
    }
    let mut masks: Vec<Vec<Complex64>> = steps.iter().map(|p| raw_mask(spec, &freqs, p)).collect();
    let peak = masks
        .iter()
        .flatten()
        .map(|z| z.norm())
        .fold(0.0_f64, f64::max);
    finite("largest mask magnitude", peak)?;
    let scale = if peak > 1.0 { 1.0 / peak } else { 1.0 };
    if scale != 1.0 {
        for z in masks.iter_mut().flatten() {
            *z *= scale;
        }
    }
    Ok(MaskSet {
        freqs_thz: freqs,
        masks,
        scale,
        rotating_frame_thz: spec.rotating_frame_thz,
    })
}

/// The column header line of [`mask_set_csv`].
pub const CSV_COLUMNS: &str = "step,pixel,freq_thz,amplitude,phase_rad,re,im";

/// CSV bytes for a mask set: a `#` metadata comment line, the [`CSV_COLUMNS`] header, then one
/// row per step and pixel (both 0-based, step-major). `amplitude` = |M|, `phase_rad` = arg M
/// in (-pi, pi], `re`/`im` the same value in Cartesian form. Numbers use the shortest text that
/// reads back to the identical f64. Format documented in docs/shaper-masks.md.
pub fn mask_set_csv(set: &MaskSet) -> Vec<u8> {
    let mut out = Vec::new();
    // Writing into a Vec cannot fail.
    let _ = write_mask_set_csv(set, &mut out);
    out
}

/// [`mask_set_csv`] streamed into `w` row by row, so a set at the size limit (2^24 values) is
/// never held as text in memory. Floats in the shortest positional form that reads back
/// identical ([`crate::numfmt::decimal`]).
///
/// # Errors
/// Any error of `w`.
pub fn write_mask_set_csv(set: &MaskSet, w: &mut dyn std::io::Write) -> std::io::Result<()> {
    use crate::numfmt::decimal;
    let frame = match set.rotating_frame_thz {
        Some(f) => decimal(f),
        None => "none".to_string(),
    };
    writeln!(
        w,
        "# pathsieve shaper masks v1; steps={}; pixels={}; scale={}; \
         rotating_frame_thz={frame}; convention=M(omega)=sum_j a_j exp(i 2pi phi_j) \
         exp(i (omega-omega_0) tau_j), see docs/shaper-masks.md\n{CSV_COLUMNS}",
        set.masks.len(),
        set.freqs_thz.len(),
        decimal(set.scale),
    )?;
    for (m, mask) in set.masks.iter().enumerate() {
        for (k, (z, nu)) in mask.iter().zip(&set.freqs_thz).enumerate() {
            writeln!(
                w,
                "{m},{k},{},{},{},{},{}",
                decimal(*nu),
                decimal(z.norm()),
                decimal(z.arg()),
                decimal(z.re),
                decimal(z.im)
            )?;
        }
    }
    Ok(())
}

/// NPY bytes for a mask set: a complex128 array of shape (steps, pixels), C order.
///
/// # Errors
/// [`MaskError::Npy`] only if the set was built by hand with ragged rows.
pub fn mask_set_npy(set: &MaskSet) -> Result<Vec<u8>, MaskError> {
    let flat: Vec<Complex64> = set.masks.iter().flatten().copied().collect();
    Ok(npy_c128(&[set.masks.len(), set.freqs_thz.len()], &flat)?)
}

#[cfg(test)]
#[path = "mask_tests.rs"]
mod tests;
