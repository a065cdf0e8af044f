//! Bounds on the numbers an experiment file gives: signature entries, beam components, state
//! energies and yields. Out-of-range values are refused here, at read time, with the line and
//! the allowed range, so no later sum or product of them can overflow.

use super::Ctx;
use crate::error::InputError;
use crate::limits::{MAX_BEAM_COMPONENT, MAX_SIGNATURE_ENTRY};
use num_rational::Ratio;
use toml::Spanned;

/// A wanted signature's entries, each within `-MAX_SIGNATURE_ENTRY..=MAX_SIGNATURE_ENTRY`.
pub(super) fn signature_entries(
    ctx: &Ctx,
    sig: &Spanned<Vec<i64>>,
    key: &str,
) -> Result<Vec<i64>, InputError> {
    let m = MAX_SIGNATURE_ENTRY;
    if let Some(bad) = sig.get_ref().iter().find(|x| !(-m..=m).contains(*x)) {
        return Err(ctx.err(
            sig.span(),
            key,
            format!("signature entry {bad} is out of range; each entry must lie in -{m}..={m} (a term of order K has |b_j| <= K)"),
        ));
    }
    Ok(sig.get_ref().clone())
}

/// One numeric beam component: an integer or a decimal with at most 6 decimals, of magnitude
/// at most `MAX_BEAM_COMPONENT`, as the exact rational it denotes.
pub(super) fn beam_component(value: &toml::Value) -> Result<Ratio<i64>, String> {
    let m = MAX_BEAM_COMPONENT;
    let range = || format!("beam components must lie in -{m}..={m} with at most 6 decimals");
    match value {
        toml::Value::Integer(i) if (-m..=m).contains(i) => Ok(Ratio::from_integer(*i)),
        toml::Value::Integer(i) => Err(format!("beam component {i} is out of range; {}", range())),
        toml::Value::Float(x) if x.is_finite() && x.abs() <= m as f64 => {
            // Rust prints the shortest decimal that reads back as `x`, never in exponent form:
            // that is the number the user wrote.
            decimal_ratio(&format!("{x}")).ok_or_else(|| format!("beam component {x}: {}", range()))
        }
        toml::Value::Float(x) => Err(format!("beam component {x:e} is out of range; {}", range())),
        _ => Err("beam components must be numbers".into()),
    }
}

/// `"-12.345"` as the exact rational `-12345/1000`, when it has at most 6 decimals.
fn decimal_ratio(text: &str) -> Option<Ratio<i64>> {
    let (neg, body) = match text.strip_prefix('-') {
        Some(b) => (true, b),
        None => (false, text),
    };
    let (int, frac) = body.split_once('.').unwrap_or((body, ""));
    if frac.len() > 6 || int.len() > 7 {
        return None;
    }
    let digits: i64 = format!("{int}{frac}").parse().ok()?;
    let den = 10i64.checked_pow(u32::try_from(frac.len()).ok()?)?;
    let r = Ratio::new(if neg { -digits } else { digits }, den);
    (r.numer().abs() <= MAX_BEAM_COMPONENT * r.denom()).then_some(r)
}

/// A state's energy: finite when given.
pub(super) fn energy(ctx: &Ctx, e: &Option<Spanned<f64>>) -> Result<Option<f64>, InputError> {
    match e {
        Some(v) if !v.get_ref().is_finite() => Err(ctx.err(
            v.span(),
            "levels.states.energy",
            format!(
                "energy {} is not a finite number; give the energy in eV, e.g. 2.1",
                v.get_ref()
            ),
        )),
        Some(v) => Ok(Some(*v.get_ref())),
        None => Ok(None),
    }
}

/// A state's yield: finite and not negative.
pub(super) fn yield_weight(ctx: &Ctx, y: &Spanned<f64>) -> Result<f64, InputError> {
    let v = *y.get_ref();
    if !v.is_finite() || v < 0.0 {
        return Err(ctx.err(
            y.span(),
            "levels.states.yield",
            format!("yield {v} is not allowed; a yield is a finite number >= 0 (0 = dark, 1 = fully emitting)"),
        ));
    }
    Ok(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimals_are_exact() {
        assert_eq!(decimal_ratio("0.1"), Some(Ratio::new(1, 10)));
        assert_eq!(decimal_ratio("-2.5"), Some(Ratio::new(-5, 2)));
        assert_eq!(decimal_ratio("0.1234567"), None);
        assert_eq!(decimal_ratio("1000000.5"), None);
    }

    #[test]
    fn beam_components_are_bounded() {
        assert!(beam_component(&toml::Value::Integer(i64::MIN)).is_err());
        assert!(beam_component(&toml::Value::Float(1e300)).is_err());
        assert!(beam_component(&toml::Value::Float(f64::NAN)).is_err());
        assert_eq!(
            beam_component(&toml::Value::Float(0.25)).unwrap(),
            Ratio::new(1, 4)
        );
    }
}
