//! NumPy arrays as cycle tables for `pathsieve check`, so the file the acquisition software
//! loads is the file that is checked: an `.npy` array, or an `.npz` archive with a `phases`
//! member (or a single member) and optionally a complex `weights` member. With the sidecar
//! `NAME.meta.json` that `pathsieve export` writes, fields, unit, grid and the exact weights
//! come from it (or from the `meta` member of an NPZ that `pathsieve export --format npz` wrote);
//! without one (an array as numpy saved it) the unit must be given, the columns are the
//! experiment's cycled fields in order and the `weights` columns its wanted signals in order
//! (both assigned when the cycle is bound, and said in a note).
//! Float phases carry no decimal precision: the checker snaps them within its snapping
//! tolerance, as it does `~` cells; integer phases are exact.

use super::meta::read_sidecar;
use super::npy::{read_npy, NpyArray, NpyData};
use super::npz::read_npz;
use super::phase_import::{cycle_of_arrays, to_phase};
use crate::cycle::{Cycle, CycleMeta, CycleOutput, Phase, Weight, WeightSource, WrittenForm};
use crate::error::InputError;
use crate::exact::{reduce_turn, PhaseUnit, Turns};
use num_complex::Complex64;
use std::path::Path;

/// Read an `.npy` or `.npz` file as a cycle (see the module notes).
///
/// # Errors
/// [`InputError`] naming the file and the fix: malformed arrays, a missing unit, shapes that
/// do not fit, weights without the names of their outputs.
pub fn read_array_cycle(
    path: &Path,
    unit_override: Option<PhaseUnit>,
) -> Result<Cycle, InputError> {
    let bad = |m: String| InputError::new(path, None, None, m);
    let bytes = crate::input_text::read_bytes(path)?;
    let is_npz = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("npz"))
        || (crate::input_text::is_stdin(path) && bytes.starts_with(b"PK"));
    let (phases, weights) = if is_npz {
        npz_members(&bytes, path)?
    } else {
        (read_npy(&bytes).map_err(|e| bad(e.to_string()))?, None)
    };
    let layout = describe(&phases);
    let embedded = if is_npz {
        super::npz::read_npz_text(&bytes, "meta")
            .map_err(&bad)?
            .map(|t| {
                let meta = super::meta::parse_sidecar(&t, path)?;
                Ok::<_, InputError>((path.to_path_buf(), meta))
            })
            .transpose()?
    } else {
        None
    };
    let meta = match embedded {
        Some(m) => Some(m),
        None => read_sidecar(path)?,
    };
    match meta {
        Some((side, meta)) => {
            if unit_override
                .is_some_and(|u| Some(u) != crate::cycle::text::parse_unit(&meta.unit).ok())
            {
                return Err(bad(format!(
                    "--unit differs from the unit `{}` in {}; drop --unit",
                    meta.unit,
                    side.display()
                )));
            }
            let mut c = cycle_of_arrays(&meta, phases, weights, path)?;
            c.meta.written = Some(WrittenForm {
                dialect: Some(format!(
                    "{layout}, fields, unit and weights from {}",
                    side.display()
                )),
                ..WrittenForm::default()
            });
            Ok(c)
        }
        None => bare(phases, weights, unit_override, &layout, path),
    }
}

/// The `phases` and `weights` members of an archive (`phases` may be the only member).
fn npz_members(bytes: &[u8], path: &Path) -> Result<(NpyArray, Option<NpyArray>), InputError> {
    let bad = |m: String| InputError::new(path, None, None, m);
    let members = read_npz(bytes).map_err(&bad)?;
    let names: Vec<String> = members.iter().map(|m| m.0.clone()).collect();
    let mut phases = None;
    let mut weights = None;
    let single = members.len() == 1;
    for (name, a) in members {
        match name.as_str() {
            "weights" => weights = Some(a),
            "phases" => phases = Some(a),
            _ if single => phases = Some(a),
            _ => {}
        }
    }
    let phases = phases.ok_or_else(|| {
        bad(format!(
            "the archive holds {} but no `phases` member; save it as np.savez(NAME, phases=..., weights=...)",
            names.join(", ")
        ))
    })?;
    Ok((phases, weights))
}

/// The array's layout in words, for the report.
fn describe(a: &NpyArray) -> String {
    let kind = match a.descr.trim_start_matches(['<', '>']) {
        "f8" => "float64",
        "f4" => "float32",
        "i8" => "int64",
        "i4" => "int32",
        "c16" => "complex128",
        _ => "complex64",
    };
    format!(
        "NumPy array {} ({kind}, {}, {}), shape {:?}",
        a.descr,
        if a.descr.starts_with('>') {
            "big-endian"
        } else {
            "little-endian"
        },
        if a.fortran_order {
            "Fortran order"
        } else {
            "C order"
        },
        a.shape
    )
}

/// An array as numpy saved it, without metadata: phases in the given unit, field names left
/// empty for the binder to assign.
fn bare(
    a: NpyArray,
    weights: Option<NpyArray>,
    unit: Option<PhaseUnit>,
    layout: &str,
    path: &Path,
) -> Result<Cycle, InputError> {
    let bad = |m: String| InputError::new(path, None, None, m);
    let side = super::meta::sidecar_path(path);
    let Some(unit) = unit else {
        return Err(bad(format!(
            "a NumPy array without its sidecar {} does not say its phase unit; pass --unit turns, degrees, radians or grid:M",
            side.display()
        )));
    };
    let cols = match a.shape[..] {
        [_, c] => c,
        [_] => 1,
        _ => {
            return Err(bad(format!(
                "phases have shape {:?}; save a (steps, fields) array",
                a.shape
            )))
        }
    };
    let steps: Vec<Vec<Phase>> = match a.data {
        NpyData::I64(v) => v
            .chunks(cols.max(1))
            .map(|r| r.iter().map(|&k| int_phase(k, unit)).collect())
            .collect(),
        NpyData::F64(v) => v
            .chunks(cols.max(1))
            .map(|r| r.iter().map(|&x| to_phase(x, unit, None)).collect())
            .collect(),
        NpyData::C128(_) => {
            return Err(bad(
                "phases must be real (float or integer), not complex".into()
            ))
        }
    };
    if let Some((m, j)) = steps.iter().enumerate().find_map(|(m, r)| {
        r.iter()
            .position(|p| !p.turns_f64().is_finite())
            .map(|j| (m, j))
    }) {
        return Err(bad(format!(
            "row {}, column {}: not a finite number; every phase must be a number",
            m + 1,
            j + 1
        )));
    }
    let outputs = match weights {
        Some(w) => unnamed_outputs(w, steps.len(), path)?,
        None => Vec::new(),
    };
    let weight_radius = outputs
        .iter()
        .map(|_| vec![Some(0.0); steps.len()])
        .collect();
    Ok(Cycle {
        fields: Vec::new(),
        steps,
        outputs,
        meta: CycleMeta {
            written: Some(WrittenForm {
                dialect: Some(format!(
                    "{layout} without a sidecar, phases in {}",
                    crate::cycle::text::unit_name(unit)
                )),
                // Weights as written in double precision (as the Python route takes them).
                weight_radius,
                ..WrittenForm::default()
            }),
            ..CycleMeta::default()
        },
    })
}

/// The `weights` member of an archive without a sidecar: one column per output (steps x
/// outputs, or a vector for one output), real or complex, with no names; the binder names
/// them after the experiment's wanted signals in order
/// ([`crate::check::bind::bind_cycle`]), as the Python route does.
fn unnamed_outputs(w: NpyArray, n: usize, path: &Path) -> Result<Vec<CycleOutput>, InputError> {
    let bad = |m: String| InputError::new(path, None, None, m);
    let k = match w.shape[..] {
        [rows] if rows == n => 1,
        [rows, k] if rows == n && k >= 1 => k,
        _ => {
            return Err(bad(format!(
                "the `weights` member has shape {:?} for {n} steps; save it as (steps, outputs), one column per wanted signal of the experiment in its order",
                w.shape
            )))
        }
    };
    crate::cycle::bounds::check_outputs(k)
        .map_err(|m| bad(format!("the `weights` member: {m}")))?;
    let values: Vec<Complex64> = match w.data {
        NpyData::C128(v) => v,
        NpyData::F64(v) => v.into_iter().map(|x| Complex64::new(x, 0.0)).collect(),
        NpyData::I64(v) => v
            .into_iter()
            .map(|x| Complex64::new(x as f64, 0.0))
            .collect(),
    };
    if let Some(i) = values.iter().position(|z| !z.is_finite()) {
        return Err(bad(format!(
            "the `weights` member: step {}, column {} is not a finite number; every weight must be a number",
            i / k + 1,
            i % k + 1
        )));
    }
    Ok((0..k)
        .map(|o| CycleOutput {
            name: String::new(),
            weights: (0..n).map(|m| Weight::Approx(values[m * k + o])).collect(),
            source: WeightSource::Explicit,
        })
        .collect())
}

/// An integer phase: exact in turns, degrees and grid steps; radians are not rational turns.
fn int_phase(k: i64, unit: PhaseUnit) -> Phase {
    let exact = |d: i64| Phase::Exact(reduce_turn(Turns::new(k, d)));
    match unit {
        PhaseUnit::Turns => exact(1),
        PhaseUnit::Degrees => exact(360),
        PhaseUnit::GridIndex(m) => exact(i64::from(m)),
        PhaseUnit::Radians => Phase::Approx(k as f64 / std::f64::consts::TAU),
    }
}
