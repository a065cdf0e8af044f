//! Reading a numeric `beam = [x, y]` direction with the precision its digits carry. Integers
//! and decimals without a point are exact. A decimal such as `0.707` stands for `0.707 +-
//! 0.0005`: it is snapped to the simplest rational inside that interval when one is simple
//! enough for the precision (the rule of [`crate::exact::snap`]: denominator `q` with
//! `q^2 * width <= 1/8`; `0.333` -> 1/3, `0.5` stays 1/2), with a note; otherwise it keeps its
//! written value and is recorded as a [`RoundedComponent`], so that the selection can refuse a
//! phase-matching decision that depends on the rounding.

use super::Ctx;
use crate::error::InputError;
use crate::model::geometry::RoundedComponent;
use num_rational::Ratio;

/// Largest denominator a beam component snaps to.
const MAX_BEAM_DENOMINATOR: u64 = 1000;

/// One component read.
pub(super) struct Component {
    /// Its exact value (snapped or as written).
    pub value: Ratio<i64>,
    /// A note when it was snapped.
    pub note: Option<String>,
    /// The written form kept with its precision, when not exact and not snapped.
    pub rounded: Option<RoundedComponent>,
}

/// The written texts of the elements of a TOML array (`[0.707, -0.707]`, comments allowed).
pub(super) fn element_texts(source: &str) -> Vec<String> {
    let body: String = source
        .lines()
        .map(|l| l.split('#').next().unwrap_or(""))
        .collect::<Vec<_>>()
        .join(" ");
    body.trim()
        .trim_start_matches('[')
        .trim_end_matches(']')
        .split(',')
        .map(|s| s.trim().replace('_', ""))
        .filter(|s| !s.is_empty())
        .collect()
}

/// A decimal literal as an exact ratio and the half unit of its last digit (0 without a
/// point); `None` when it does not fit 64-bit ratios (more than about 15 digits).
fn decimal(text: &str) -> Option<(Ratio<i64>, Ratio<i64>)> {
    let (mant, exp) = match text.find(['e', 'E']) {
        Some(i) => (&text[..i], text[i + 1..].parse::<i32>().ok()?),
        None => (text, 0),
    };
    let (neg, mant) = match mant.strip_prefix('-') {
        Some(m) => (true, m),
        None => (false, mant.strip_prefix('+').unwrap_or(mant)),
    };
    let (int, frac, pointed) = match mant.split_once('.') {
        Some((i, f)) => (i, f, true),
        None => (mant, "", false),
    };
    if !(int.chars().chain(frac.chars()).all(|c| c.is_ascii_digit())) || int.len() + frac.len() > 15
    {
        return None;
    }
    let digits: i64 = format!("{int}{frac}").parse().ok()?;
    let scale = exp.checked_sub(i32::try_from(frac.len()).ok()?)?;
    if scale.abs() > 15 {
        return None;
    }
    let pow = 10i64.checked_pow(scale.unsigned_abs())?;
    let (v, unit) = if scale >= 0 {
        (
            Ratio::from_integer(digits.checked_mul(pow)?),
            Ratio::from_integer(pow),
        )
    } else {
        (Ratio::new(digits, pow), Ratio::new(1, pow))
    };
    let v = if neg { -v } else { v };
    let half = if pointed {
        unit / 2
    } else {
        Ratio::from_integer(0)
    };
    Some((v, half))
}

/// Read component `dim` of field `field`'s beam: `value` as TOML parsed it, `text` as written.
pub(super) fn component(
    ctx: &Ctx,
    line: usize,
    field: (usize, &str),
    dim: usize,
    value: &toml::Value,
    text: Option<&str>,
) -> Result<Component, InputError> {
    let err = |m: String| InputError::new(&ctx.path, Some(line), Some("field.beam"), m);
    let exact = |v| Component {
        value: v,
        note: None,
        rounded: None,
    };
    let x = match value {
        toml::Value::Integer(i) => return Ok(exact(Ratio::from_integer(*i))),
        toml::Value::Float(f) if f.is_finite() => *f,
        _ => return Err(err("beam components must be numbers".into())),
    };
    let written = text.map_or_else(|| format!("{x:?}"), str::to_string);
    let Some((v, half)) = decimal(&written) else {
        return Err(err(format!(
            "beam component `{written}` of field `{}` has too many digits for an exact reading; write at most 15 significant digits, or a direction with integer components (only the ratios between beams matter when every beam is scaled alike)",
            field.1
        )));
    };
    if half == Ratio::from_integer(0) {
        return Ok(exact(v));
    }
    let h = *half.numer() as f64 / *half.denom() as f64;
    let xf = *v.numer() as f64 / *v.denom() as f64;
    let snapped = crate::exact::snap::snap_rational(xf, h, MAX_BEAM_DENOMINATOR, true)
        .filter(|r| (*r - v) <= half && (v - *r) <= half);
    match snapped {
        Some(r) if r == v => Ok(exact(v)),
        Some(r) => Ok(Component {
            value: r,
            note: Some(format!(
                "beam of field `{}`, component {}: `{written}` taken as {} (the simplest value within its written precision +-{h}; line {line})",
                field.1,
                dim + 1,
                r
            )),
            rounded: None,
        }),
        None => Ok(Component {
            value: v,
            note: None,
            rounded: Some(RoundedComponent {
                field: field.0,
                dim,
                text: written,
                value: v,
                half,
                location: format!("{} line {line}", ctx.path.display()),
            }),
        }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimals_read_exactly_with_their_half_unit() {
        assert_eq!(
            decimal("0.707"),
            Some((Ratio::new(707, 1000), Ratio::new(1, 2000)))
        );
        assert_eq!(
            decimal("-1.5e-1"),
            Some((Ratio::new(-3, 20), Ratio::new(1, 200)))
        );
        assert_eq!(
            decimal("2e3"),
            Some((Ratio::from_integer(2000), Ratio::from_integer(0)))
        );
        assert_eq!(decimal("0.1234567890123456789"), None);
        assert_eq!(
            element_texts("[0.707, -0.707, # a comment\n 1_0 ]"),
            vec!["0.707", "-0.707", "10"]
        );
    }
}
