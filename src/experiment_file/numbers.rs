//! Bounds on the numbers an experiment file gives: signature entries, state energies and
//! yields (beam components: `beams.rs`). Out-of-range values are refused here, at read time, with the line and
//! the allowed range, so no later sum or product of them can overflow.

use super::Ctx;
use crate::error::InputError;
use crate::limits::MAX_SIGNATURE_ENTRY;
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
