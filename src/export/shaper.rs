//! The shaper description file (`--shaper shaper.toml`, docs/export-formats.md): this module
//! owns reading it — pixel calibration (linear in THz, a THz table, linear in wavelength (nm)
//! or a wavelength table, converted with nu = c / lambda), one sub-pulse per field with its
//! delay (fs), amplitude and phase offset (turns), and the rotating-frame frequency (THz) — and
//! mapping the rows of a [`PhaseList`] onto the sub-pulses, giving the per-step phases
//! [`super::mask::masks_for_cycle`] takes. The field's cycle phase is added to the pulse's own
//! offset.

use super::mask::{Calibration, MaskSpec, SubPulse};
use super::phase_list::PhaseList;
use crate::error::InputError;
use serde::Deserialize;
use std::path::Path;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ShaperFile {
    title: Option<String>,
    rotating_frame_thz: Option<f64>,
    calibration: CalibrationFile,
    #[serde(rename = "pulse")]
    pulses: Vec<PulseFile>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields, tag = "kind", rename_all = "lowercase")]
enum CalibrationFile {
    Linear {
        pixels: usize,
        first_thz: f64,
        step_thz: f64,
    },
    Table {
        frequencies_thz: Vec<f64>,
    },
    /// Evenly spaced in wavelength (nm); the pixel frequencies are c / lambda.
    Wavelength {
        pixels: usize,
        first_nm: f64,
        step_nm: f64,
    },
    /// Measured wavelengths (nm), one per pixel.
    #[serde(rename = "wavelength-table")]
    WavelengthTable {
        wavelengths_nm: Vec<f64>,
    },
}

/// The speed of light in nm THz (c = 299 792 458 m/s exactly, SI definition): nu = C / lambda.
pub const C_NM_THZ: f64 = 299_792.458;

/// Pixel frequencies (THz) of wavelengths (nm); a wavelength <= 0 or not finite is refused.
fn thz_of_nm(nm: &[f64], path: &Path) -> Result<Vec<f64>, InputError> {
    nm.iter()
        .enumerate()
        .map(|(k, &l)| {
            if l.is_finite() && l > 0.0 {
                Ok(C_NM_THZ / l)
            } else {
                Err(InputError::new(
                    path,
                    None,
                    Some("calibration"),
                    format!("pixel {k} is at wavelength {l} nm; wavelengths must be > 0"),
                ))
            }
        })
        .collect()
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PulseFile {
    field: String,
    delay_fs: f64,
    #[serde(default = "one")]
    amplitude: f64,
    #[serde(default)]
    phase_turns: f64,
}

fn one() -> f64 {
    1.0
}

/// A parsed shaper: the mask spec and, per sub-pulse, the field it makes.
#[derive(Clone, Debug, PartialEq)]
pub struct Shaper {
    /// Title, if given.
    pub title: Option<String>,
    /// Calibration, sub-pulses (in file order) and rotating frame.
    pub spec: MaskSpec,
    /// Field name of each sub-pulse.
    pub fields: Vec<String>,
}

/// Parse shaper TOML. Validation of the numbers is [`MaskSpec::validate`]'s (run here too, so
/// errors name this file).
///
/// # Errors
/// [`InputError`] for syntax, unknown keys, repeated fields or invalid numbers.
pub fn parse_shaper(text: &str, path: &Path) -> Result<Shaper, InputError> {
    let f: ShaperFile = toml::from_str(text).map_err(|e| {
        InputError::new(
            path,
            None,
            None,
            format!(
                "{}; see docs/export-formats.md for the shaper file",
                e.message()
            ),
        )
    })?;
    let calibration = match f.calibration {
        CalibrationFile::Linear {
            pixels,
            first_thz,
            step_thz,
        } => Calibration::Linear {
            pixels,
            first_thz,
            step_thz,
        },
        CalibrationFile::Table { frequencies_thz } => Calibration::Table(frequencies_thz),
        CalibrationFile::Wavelength {
            pixels,
            first_nm,
            step_nm,
        } => {
            if !(1..=super::mask::MAX_PIXELS).contains(&pixels) {
                return Err(InputError::new(
                    path,
                    None,
                    Some("calibration"),
                    format!(
                        "calibration has {pixels} pixels; it must have 1..={}",
                        super::mask::MAX_PIXELS
                    ),
                ));
            }
            let nm: Vec<f64> = (0..pixels).map(|k| first_nm + k as f64 * step_nm).collect();
            Calibration::Table(thz_of_nm(&nm, path)?)
        }
        CalibrationFile::WavelengthTable { wavelengths_nm } => {
            Calibration::Table(thz_of_nm(&wavelengths_nm, path)?)
        }
    };
    let mut fields: Vec<String> = Vec::new();
    for p in &f.pulses {
        if fields.contains(&p.field) {
            return Err(InputError::new(
                path,
                None,
                Some("pulse.field"),
                format!(
                    "field `{}` has two [[pulse]] tables; give each field one",
                    p.field
                ),
            ));
        }
        fields.push(p.field.clone());
    }
    let spec = MaskSpec {
        calibration,
        subpulses: f
            .pulses
            .iter()
            .map(|p| SubPulse {
                delay_fs: p.delay_fs,
                amplitude: p.amplitude,
                phase_turns: p.phase_turns,
            })
            .collect(),
        rotating_frame_thz: f.rotating_frame_thz,
    };
    spec.validate()
        .map_err(|e| InputError::new(path, None, None, e.to_string()))?;
    Ok(Shaper {
        title: f.title,
        spec,
        fields,
    })
}

impl Shaper {
    /// The sub-pulse phases (turns) of every row: the row's phase of the pulse's field plus
    /// the pulse's own offset.
    ///
    /// # Errors
    /// A message when a pulse names a field the list lacks, or a field whose phase changes
    /// over the cycle has no pulse (the shaper would not apply the cycle).
    pub fn step_phases(&self, list: &PhaseList) -> Result<Vec<Vec<f64>>, String> {
        let turns = list.turns_f64();
        let mut cols = Vec::with_capacity(self.fields.len());
        for f in &self.fields {
            match list.fields.iter().position(|x| x == f) {
                Some(c) => cols.push(c),
                None => {
                    return Err(format!(
                        "the shaper file has a pulse for field `{f}`, which the experiment does not have (fields: {})",
                        list.fields.join(", ")
                    ))
                }
            }
        }
        for (c, f) in list.fields.iter().enumerate() {
            let varies = turns.iter().any(|r| r[c] != turns[0][c]);
            if varies && !self.fields.contains(f) {
                return Err(format!(
                    "field `{f}` is cycled but the shaper file has no [[pulse]] for it; add one (field = \"{f}\")"
                ));
            }
        }
        Ok(turns
            .iter()
            .map(|r| {
                cols.iter()
                    .zip(&self.spec.subpulses)
                    .map(|(&c, s)| r[c] + s.phase_turns)
                    .collect()
            })
            .collect())
    }
}
