//! Reading the top-level `overlap` key: `true` (every pulse overlaps), `false`, one group of
//! pulse names (`["2", "3"]`) or several (`[["1", "2"], ["3", "4"]]`). Each group must hold
//! two or more pulses adjacent in time order; errors name the line and the fix.

use super::Ctx;
use crate::error::InputError;
use crate::model::{Detection, Field, FieldKind, Overlap};
use toml::{Spanned, Value};

const FORMS: &str = "use `true`, `false`, one group of pulse names such as [\"2\", \"3\"], or several such as [[\"1\", \"2\"], [\"3\", \"4\"]]";

/// Build the overlap groups from the raw value, the fields being known.
pub(super) fn build_overlap(
    ctx: &Ctx,
    raw: Option<Spanned<Value>>,
    fields: &[Field],
    detection: &Detection,
) -> Result<Overlap, InputError> {
    let Some(raw) = raw else {
        return Ok(Overlap::none());
    };
    let span = raw.span();
    let err = |msg: String| ctx.err(span.clone(), "overlap", msg);
    let pulses: Vec<usize> = (0..fields.len())
        .filter(|&j| fields[j].kind == FieldKind::Pulse)
        .collect();
    let value = raw.into_inner();
    let strings = |items: &[Value]| -> Option<Vec<String>> {
        items
            .iter()
            .map(|v| v.as_str().map(str::to_string))
            .collect()
    };
    let names: Vec<Vec<String>> = match &value {
        Value::Boolean(false) => return Ok(Overlap::none()),
        Value::Array(items) if items.is_empty() => return Ok(Overlap::none()),
        _ if matches!(detection, Detection::Nmr { .. }) => {
            return Err(err(
                "NMR coherence paths follow the pulse order; remove `overlap`".into(),
            ))
        }
        Value::Boolean(true) => return Ok(Overlap::all(&pulses)),
        Value::Array(items) => match strings(items) {
            Some(group) => vec![group],
            None => items
                .iter()
                .map(|g| g.as_array().and_then(|g| strings(g)))
                .collect::<Option<_>>()
                .ok_or_else(|| err(FORMS.into()))?,
        },
        _ => return Err(err(FORMS.into())),
    };
    let mut groups: Vec<Vec<usize>> = Vec::new();
    for group in &names {
        let mut members = Vec::new();
        for name in group {
            let Some(j) = fields.iter().position(|f| &f.name == name) else {
                let valid: Vec<&str> = pulses.iter().map(|&j| fields[j].name.as_str()).collect();
                return Err(err(format!(
                    "unknown pulse `{name}`; the pulses are {}",
                    valid.join(", ")
                )));
            };
            if fields[j].kind != FieldKind::Pulse {
                return Err(err(format!(
                    "`{name}` is the detection reference, not a pulse; only pulses overlap"
                )));
            }
            if groups.iter().flatten().chain(&members).any(|&m| m == j) {
                return Err(err(format!("pulse `{name}` is listed twice; a pulse belongs to one group (merge groups that share it)")));
            }
            members.push(j);
        }
        members.sort_unstable();
        if members.len() < 2 {
            return Err(err(format!("the group [{}] has fewer than two pulses; a group lists the pulses that overlap one another", group.join(", "))));
        }
        let (first, last) = (members[0], members[members.len() - 1]);
        if let Some(&gap) = pulses
            .iter()
            .find(|&&j| j > first && j < last && !members.contains(&j))
        {
            return Err(err(format!(
                "pulses `{}` and `{}` overlap, so pulse `{}` between them overlaps too: add it to the group",
                fields[first].name, fields[last].name, fields[gap].name
            )));
        }
        groups.push(members);
    }
    groups.sort();
    Ok(Overlap { groups })
}
