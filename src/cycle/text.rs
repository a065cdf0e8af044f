//! The text forms of phases, weights and phase units inside cycle files, shared by the TOML and
//! CSV formats: one serialised form per exact number (`"p/q"` turns, Gaussian rationals or sums of
//! `c*exp(2*pi*i*k/n)`), and a leading `~` for values known only approximately.

use crate::exact::{
    parse_phase_written, parse_weight_written, Cyclo, PhaseUnit, PhaseValue, WeightValue,
};
use num_complex::Complex64;

use super::{Phase, Weight};

/// Parse a unit name as written in cycle files and on the command line:
/// `turns`, `degrees` (`deg`), `radians` (`rad`) or `index:M` / `grid:M` (step indices of an
/// M-step grid).
pub fn parse_unit(text: &str) -> Result<PhaseUnit, String> {
    let t = text.trim().to_ascii_lowercase();
    match t.as_str() {
        "turns" | "turn" => Ok(PhaseUnit::Turns),
        "degrees" | "degree" | "deg" => Ok(PhaseUnit::Degrees),
        "radians" | "radian" | "rad" => Ok(PhaseUnit::Radians),
        _ => {
            if let Some(m) = t.strip_prefix("grid:").or_else(|| t.strip_prefix("index:")) {
                match m.trim().parse::<u32>() {
                    Ok(m) if m > 0 => Ok(PhaseUnit::GridIndex(m)),
                    _ => Err(format!(
                        "unit `{text}`: index:M needs a positive step count M, e.g. index:8"
                    )),
                }
            } else {
                Err(format!(
                    "unknown phase unit `{text}`; use turns, degrees (deg), radians (rad) or index:M (grid:M)"
                ))
            }
        }
    }
}

/// The name of a unit as [`parse_unit`] reads it.
pub fn unit_name(unit: PhaseUnit) -> String {
    match unit {
        PhaseUnit::Turns => "turns".into(),
        PhaseUnit::Degrees => "degrees".into(),
        PhaseUnit::Radians => "radians".into(),
        PhaseUnit::GridIndex(m) => format!("grid:{m}"),
    }
}

/// Parse one phase cell. A leading `~` marks the value approximate whatever its form.
pub fn parse_phase_cell(text: &str, unit: PhaseUnit) -> Result<Phase, String> {
    parse_phase_cell_written(text, unit).map(|c| c.phase)
}

/// A phase cell as read: the phase (exact ones reduced into `[0, 1)`), its written half-width
/// in turns (`None` for a `~` cell) and the value in turns before reduction (for the unit
/// plausibility test).
#[derive(Clone, Debug, PartialEq)]
pub struct PhaseCell {
    /// The phase.
    pub phase: Phase,
    /// Written half-width in turns; 0 for exact forms, `None` for `~` cells.
    pub half_width: Option<f64>,
    /// The value in turns as written, not reduced modulo 1.
    pub raw_turns: f64,
}

/// [`parse_phase_cell`] with the written precision (see [`PhaseCell`]).
pub fn parse_phase_cell_written(text: &str, unit: PhaseUnit) -> Result<PhaseCell, String> {
    let (approx, body) = match text.trim().strip_prefix('~') {
        Some(rest) => (true, rest),
        None => (false, text.trim()),
    };
    if let (true, PhaseUnit::Turns, Some(x)) = (approx, unit, plain_float(body)) {
        // The written form of an approximate phase: the nearest double, as written.
        return Ok(PhaseCell {
            phase: Phase::Approx(x),
            half_width: None,
            raw_turns: x,
        });
    }
    let w = parse_phase_written(body, unit).map_err(|e| e.to_string())?;
    let half_width = (!approx).then_some(w.half_width_turns);
    let (phase, raw_turns) = match w.value {
        PhaseValue::Exact(t) => {
            let raw = *t.numer() as f64 / *t.denom() as f64;
            if approx {
                (Phase::Approx(raw), raw)
            } else {
                (Phase::Exact(crate::exact::reduce_turn(t)), raw)
            }
        }
        PhaseValue::Approx { turns } => (Phase::Approx(turns), turns),
    };
    Ok(PhaseCell {
        phase,
        half_width,
        raw_turns,
    })
}

/// A plain decimal (`-0.25`, `1e-7`, no expression) as the correctly rounded double.
fn plain_float(text: &str) -> Option<f64> {
    let ok = !text.is_empty()
        && text
            .bytes()
            .all(|b| b.is_ascii_digit() || matches!(b, b'.' | b'-' | b'+' | b'e' | b'E'));
    ok.then(|| text.parse::<f64>().ok())
        .flatten()
        .filter(|x| x.is_finite())
}

/// `a+bi` / `a-bi` with plain decimals (the written form of an approximate weight) as the
/// correctly rounded pair.
fn plain_complex(text: &str) -> Option<Complex64> {
    let body = text.strip_suffix('i')?;
    let bytes = body.as_bytes();
    let split = (1..bytes.len())
        .rev()
        .find(|&k| matches!(bytes[k], b'+' | b'-') && !matches!(bytes[k - 1], b'e' | b'E'))?;
    let re = plain_float(&body[..split])?;
    let im = plain_float(&body[split..])?;
    Some(Complex64::new(re, im))
}

/// Parse one weight cell. A leading `~` marks the value approximate whatever its form.
pub fn parse_weight_cell(text: &str) -> Result<Weight, String> {
    parse_weight_cell_written(text).map(|(w, _)| w)
}

/// [`parse_weight_cell`] with the written radius (`None` for a `~` cell).
pub fn parse_weight_cell_written(text: &str) -> Result<(Weight, Option<f64>), String> {
    let (approx, body) = match text.trim().strip_prefix('~') {
        Some(rest) => (true, rest),
        None => (false, text.trim()),
    };
    if let (true, Some(z)) = (approx, plain_complex(body)) {
        return Ok((Weight::Approx(z), None));
    }
    let w = parse_weight_written(body).map_err(|e| e.to_string())?;
    let radius = (!approx).then_some(w.radius);
    let weight = match w.value {
        WeightValue::Exact(c) if !approx => Weight::Exact(c),
        WeightValue::Exact(c) => Weight::Approx(c.to_complex()),
        WeightValue::Approx(z) => Weight::Approx(z),
    };
    Ok((weight, radius))
}

/// The file form of a phase: `"p/q"` turns (reduced, in `[0, 1)`), or `~x` decimal turns.
pub fn format_phase(p: &Phase) -> String {
    match p {
        Phase::Exact(t) => {
            let t = crate::exact::reduce_turn(*t);
            if *t.denom() == 1 {
                t.numer().to_string()
            } else {
                format!("{}/{}", t.numer(), t.denom())
            }
        }
        Phase::Approx(x) => format!("~{}", crate::numfmt::decimal(*x)),
    }
}

/// The file form of a weight: a Gaussian rational as `re + im i` (the [`Cyclo`] display form),
/// any other cyclotomic number as a sum of `c*exp(2*pi*i*k/n)`, an approximate value as `~a+bi`.
pub fn format_weight(w: &Weight) -> String {
    match w {
        Weight::Exact(c) => format_cyclo(c),
        Weight::Approx(z) => format_complex_approx(*z),
    }
}

fn format_cyclo(c: &Cyclo) -> String {
    if c.gaussian_parts().is_some() {
        return c.to_string();
    }
    let n = c.order();
    let mut out = String::new();
    for (k, q) in c.coeffs().iter().enumerate() {
        if num_traits::Zero::is_zero(q) {
            continue;
        }
        let neg = num_traits::Signed::is_negative(q);
        if out.is_empty() {
            if neg {
                out.push('-');
            }
        } else {
            out.push_str(if neg { " - " } else { " + " });
        }
        let mag = num_traits::Signed::abs(q);
        if k == 0 {
            out.push_str(&mag.to_string());
        } else {
            out.push_str(&format!("{mag}*exp(2*pi*i*{k}/{n})"));
        }
    }
    if out.is_empty() {
        "0".into()
    } else {
        out
    }
}

fn format_complex_approx(z: Complex64) -> String {
    let sign = if z.im < 0.0 { "-" } else { "+" };
    use crate::numfmt::decimal;
    format!("~{}{sign}{}i", decimal(z.re), decimal(z.im.abs()))
}

#[cfg(test)]
mod tests {
    use super::*;

    // Round trips of the one serialised form per number (style guide item 6; common practice).
    #[test]
    fn exact_weights_round_trip_through_their_text() {
        for text in [
            "1",
            "-i",
            "1/2+1/2i",
            "-1/27",
            "exp(-i*2*pi/3)",
            "1/27*exp(-i*2*pi/3)",
            "e^(i*pi/4)",
            "0",
        ] {
            let w = parse_weight_cell(text).unwrap();
            let back = parse_weight_cell(&format_weight(&w)).unwrap();
            assert_eq!(w, back, "{text} -> {}", format_weight(&w));
        }
    }

    #[test]
    fn phases_round_trip_and_approx_keeps_its_mark() {
        for (text, unit) in [
            ("120", PhaseUnit::Degrees),
            ("33.3", PhaseUnit::Degrees),
            ("-1/4", PhaseUnit::Turns),
            ("2*pi/3", PhaseUnit::Radians),
            ("2.0944", PhaseUnit::Radians),
            ("3", PhaseUnit::GridIndex(8)),
        ] {
            let p = parse_phase_cell(text, unit).unwrap();
            let back = parse_phase_cell(&format_phase(&p), PhaseUnit::Turns).unwrap();
            assert_eq!(p, back, "{text}");
        }
        assert_eq!(
            format_phase(&parse_phase_cell("240", PhaseUnit::Degrees).unwrap()),
            "2/3"
        );
    }

    #[test]
    fn units_parse_and_name() {
        for u in ["turns", "degrees", "radians", "grid:12"] {
            assert_eq!(unit_name(parse_unit(u).unwrap()), u);
        }
        assert!(parse_unit("grid:0").is_err());
        assert!(parse_unit("gradians")
            .unwrap_err()
            .contains("turns, degrees"));
    }
}
