//! Reading the `[backgrounds]` table: one `KEY = SIZE` line per rule, keys as in
//! [`crate::model::backgrounds::parse_key`], sizes relative to the wanted signal's amplitude.
//! Errors name the line and the valid forms.

use super::Ctx;
use crate::error::InputError;
use crate::model::backgrounds::{check_size, parse_key, BackgroundRule};
use crate::model::{Backgrounds, Experiment};
use std::collections::BTreeMap;
use toml::{Spanned, Value};

/// Build the background sizes from the raw table, the fields being known.
pub(super) fn build_backgrounds(
    ctx: &Ctx,
    raw: Option<Spanned<BTreeMap<String, Spanned<Value>>>>,
    exp: &Experiment,
) -> Result<Backgrounds, InputError> {
    let mut out = Backgrounds::default();
    let Some(raw) = raw else {
        return Ok(out);
    };
    for (key, v) in raw.into_inner() {
        let span = v.span();
        let err = |m: String| ctx.err(span.clone(), &format!("backgrounds.{key}"), m);
        let k = parse_key(&key, exp).map_err(err)?;
        let size = match v.get_ref() {
            Value::Integer(i) => *i as f64,
            Value::Float(f) => *f,
            other => {
                return Err(err(format!(
                    "`{other}` is not a number; give the size relative to the wanted signal, e.g. {key} = 1e3"
                )))
            }
        };
        let size = check_size(&key, size).map_err(err)?;
        out.set(BackgroundRule {
            key: k,
            size,
            given_in: format!("experiment file line {}", ctx.line_of(span.start)),
        });
    }
    Ok(out)
}
