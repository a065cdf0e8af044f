//! The TOML cycle file (documented in `docs/cycle-format.md`): a `[cycle]` table with metadata,
//! the field names and the steps (compact `steps = [[..], ..]` or one `[[step]]` table per
//! step), then one `[[output]]` per output with explicit `weights` or a `from_signature`.
//! Reading reports file, line and key for every error; writing emits exact phases as `"p/q"`
//! turns so that a written cycle reads back identical.

use super::plausible::unit_warning;
use super::text::{
    format_phase, format_weight, parse_phase_cell_written, parse_unit, parse_weight_cell_written,
};
use super::{
    resolve_unit, weights_from_signature, Cycle, CycleMeta, CycleOutput, Phase, WeightSource,
    WrittenForm,
};
use crate::error::InputError;
use crate::exact::PhaseUnit;
use crate::limits::{MAX_FIELDS, MAX_STEPS};
use crate::signature::Signature;
use serde::Deserialize;
use std::fmt::Write as _;
use std::path::Path;
use toml::Spanned;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    cycle: Spanned<RawCycle>,
    #[serde(default)]
    step: Vec<Spanned<RawStep>>,
    #[serde(default)]
    output: Vec<Spanned<RawOutput>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCycle {
    title: Option<String>,
    unit: Option<Spanned<String>>,
    grid: Option<Vec<u32>>,
    made_by: Option<String>,
    experiment: Option<String>,
    #[serde(default)]
    notes: Vec<String>,
    fields: Spanned<Vec<String>>,
    steps: Option<Spanned<Vec<SpannedRow>>>,
}

/// One step of the compact form with its cell locations.
type SpannedRow = Spanned<Vec<Spanned<toml::Value>>>;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawStep {
    phases: Spanned<Vec<Spanned<toml::Value>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawOutput {
    name: Spanned<String>,
    weights: Option<Spanned<Vec<Spanned<toml::Value>>>>,
    from_signature: Option<Spanned<Vec<i64>>>,
}

struct Ctx<'a> {
    text: &'a str,
    path: &'a Path,
}

impl Ctx<'_> {
    fn line(&self, span: std::ops::Range<usize>) -> usize {
        let end = span.start.min(self.text.len());
        self.text.as_bytes()[..end]
            .iter()
            .filter(|&&b| b == b'\n')
            .count()
            + 1
    }
    fn err(&self, span: std::ops::Range<usize>, key: &str, msg: impl Into<String>) -> InputError {
        InputError::new(self.path, Some(self.line(span)), Some(key), msg)
    }
}

impl Ctx<'_> {
    /// The text of a cell: a string as given, a number as written in the file (so that its
    /// written digits keep their precision; `_` separators dropped).
    fn cell_text(&self, v: &Spanned<toml::Value>) -> Option<String> {
        match v.get_ref() {
            toml::Value::String(s) => Some(s.clone()),
            toml::Value::Integer(i) => Some(i.to_string()),
            toml::Value::Float(x) => Some(
                self.text
                    .get(v.span())
                    .filter(|t| !t.contains(['n', 'i']))
                    .map_or_else(|| x.to_string(), |t| t.replace('_', "")),
            ),
            _ => None,
        }
    }
}

/// Parse the text of a TOML cycle file (`path` is used in error messages only).
pub fn read_cycle_toml(
    text: &str,
    path: &Path,
    unit_override: Option<PhaseUnit>,
) -> Result<Cycle, InputError> {
    let ctx = Ctx { text, path };
    super::bounds::scan_toml_values(text, path)?;
    let raw: RawFile = toml::from_str(text).map_err(|e| {
        let line = e.span().map(|s| ctx.line(s));
        InputError::new(
            path,
            line,
            None,
            format!("not a valid cycle file: {}", e.message()),
        )
    })?;
    let cyc_span = raw.cycle.span();
    let c = raw.cycle.into_inner();
    if let Some(g) = &c.grid {
        super::bounds::check_grid(g).map_err(|m| ctx.err(cyc_span.clone(), "cycle.grid", m))?;
    }
    if let Some(extra) = raw.output.get(crate::limits::MAX_OUTPUTS) {
        let m = super::bounds::check_outputs(raw.output.len()).unwrap_err();
        return Err(ctx.err(extra.span(), "output", m));
    }
    let declared = match &c.unit {
        Some(u) => Some(parse_unit(u.get_ref()).map_err(|m| ctx.err(u.span(), "cycle.unit", m))?),
        None => None,
    };
    let unit = resolve_unit(
        path,
        Some(ctx.line(cyc_span.clone())),
        declared,
        unit_override,
    )?;
    let fields_span = c.fields.span();
    let fields = c.fields.into_inner();
    if fields.is_empty() || fields.len() > MAX_FIELDS {
        return Err(ctx.err(
            fields_span,
            "cycle.fields",
            format!("list 1..={MAX_FIELDS} field names, one per phase column"),
        ));
    }
    for (i, f) in fields.iter().enumerate() {
        if fields[..i].contains(f) {
            return Err(ctx.err(
                fields_span,
                "cycle.fields",
                format!("field `{f}` listed twice"),
            ));
        }
    }
    // Steps: exactly one of the two forms.
    let rows: Vec<(std::ops::Range<usize>, Vec<Spanned<toml::Value>>)> = match (
        c.steps,
        raw.step.is_empty(),
    ) {
        (Some(_), false) => return Err(ctx.err(
            cyc_span,
            "cycle.steps",
            "give the steps either as `steps = [[..]]` in [cycle] or as [[step]] tables, not both",
        )),
        (Some(s), true) => s
            .into_inner()
            .into_iter()
            .map(|r| (r.span(), r.into_inner()))
            .collect(),
        (None, _) => raw
            .step
            .into_iter()
            .map(|s| {
                let p = s.into_inner().phases;
                (p.span(), p.into_inner())
            })
            .collect(),
    };
    if rows.is_empty() {
        return Err(ctx.err(
            cyc_span,
            "cycle.steps",
            "the cycle has 0 steps; give at least one step",
        ));
    }
    if rows.len() > MAX_STEPS {
        return Err(ctx.err(
            cyc_span,
            "cycle.steps",
            format!("{} steps exceed the limit of {MAX_STEPS}", rows.len()),
        ));
    }
    super::bounds::check_cells(rows.len(), fields.len() + raw.output.len())
        .map_err(|m| ctx.err(cyc_span.clone(), "cycle.steps", m))?;
    let mut steps = Vec::with_capacity(rows.len());
    let mut half_widths = Vec::with_capacity(rows.len());
    let mut raw_turns = vec![Vec::with_capacity(rows.len()); fields.len()];
    for (m, (span, row)) in rows.into_iter().enumerate() {
        if row.len() != fields.len() {
            return Err(ctx.err(
                span,
                &format!("step {}", m + 1),
                format!(
                    "step {} has {} phases but the cycle has {} fields ({})",
                    m + 1,
                    row.len(),
                    fields.len(),
                    fields.join(", ")
                ),
            ));
        }
        let mut out = Vec::with_capacity(row.len());
        let mut hw = Vec::with_capacity(row.len());
        for (j, v) in row.into_iter().enumerate() {
            let key = format!("step {}, field {}", m + 1, fields[j]);
            let t = ctx
                .cell_text(&v)
                .ok_or_else(|| ctx.err(v.span(), &key, "a phase is a string or a number"))?;
            let cell =
                parse_phase_cell_written(&t, unit).map_err(|e| ctx.err(v.span(), &key, e))?;
            out.push(cell.phase);
            hw.push(cell.half_width);
            raw_turns[j].push(cell.raw_turns);
        }
        steps.push(out);
        half_widths.push(hw);
    }
    let mut outputs = Vec::new();
    let mut radii = Vec::new();
    for o in raw.output {
        let ospan = o.span();
        let o = o.into_inner();
        let name = o.name.get_ref().trim().to_string();
        if name.is_empty() || outputs.iter().any(|x: &CycleOutput| x.name == name) {
            return Err(ctx.err(
                o.name.span(),
                "output.name",
                format!("output name `{name}` is empty or used twice"),
            ));
        }
        let out = match (o.weights, o.from_signature) {
            (Some(w), None) => {
                let wspan = w.span();
                let w = w.into_inner();
                if w.len() != steps.len() {
                    return Err(ctx.err(
                        wspan,
                        &format!("output {name}.weights"),
                        format!(
                            "{} weights for {} steps; give one weight per step",
                            w.len(),
                            steps.len()
                        ),
                    ));
                }
                let mut ws = Vec::with_capacity(w.len());
                let mut rs = Vec::with_capacity(w.len());
                for (m, v) in w.into_iter().enumerate() {
                    let key = format!("output {name}, weight of step {}", m + 1);
                    let t = ctx.cell_text(&v).ok_or_else(|| {
                        ctx.err(v.span(), &key, "a weight is a string or a number")
                    })?;
                    let (w, r) =
                        parse_weight_cell_written(&t).map_err(|e| ctx.err(v.span(), &key, e))?;
                    ws.push(w);
                    rs.push(r);
                }
                radii.push(rs);
                CycleOutput {
                    name,
                    weights: ws,
                    source: WeightSource::Explicit,
                }
            }
            (None, Some(s)) => {
                let sspan = s.span();
                let s = s.into_inner();
                super::bounds::check_signature(&s).map_err(|m| {
                    ctx.err(sspan.clone(), &format!("output {name}.from_signature"), m)
                })?;
                if s.len() != fields.len() {
                    return Err(ctx.err(
                        sspan,
                        &format!("output {name}.from_signature"),
                        format!(
                            "signature has {} entries, the cycle has {} fields ({})",
                            s.len(),
                            fields.len(),
                            fields.join(", ")
                        ),
                    ));
                }
                radii.push(Vec::new());
                CycleOutput {
                    name,
                    weights: weights_from_signature(&steps, &s),
                    source: WeightSource::FromSignature(Signature(s)),
                }
            }
            _ => {
                return Err(ctx.err(
                    ospan,
                    &format!("output {name}"),
                    "give exactly one of `weights = [..]` or `from_signature = [..]`",
                ))
            }
        };
        outputs.push(out);
    }
    let warnings = fields
        .iter()
        .zip(&raw_turns)
        .filter_map(|(f, r)| unit_warning(f, unit, r))
        .collect();
    Ok(Cycle {
        fields,
        steps,
        outputs,
        meta: CycleMeta {
            title: c.title,
            grid: c.grid,
            made_by: c.made_by,
            experiment: c.experiment,
            notes: c.notes,
            written: Some(WrittenForm {
                dialect: None,
                phase_half_width: half_widths,
                weight_radius: radii,
                warnings,
            }),
        },
    })
}

fn quote(s: &str) -> String {
    // A TOML basic string (serde_json's escaping is a valid subset for our texts).
    serde_json::to_string(s).unwrap_or_else(|_| "\"\"".into())
}

fn list(items: impl Iterator<Item = String>) -> String {
    let v: Vec<String> = items.collect();
    format!("[{}]", v.join(", "))
}

/// Write a cycle as a TOML cycle file (phases in exact `"p/q"` turns, `unit = "turns"`).
pub fn write_cycle_toml(cycle: &Cycle) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# pathsieve cycle file (format: docs/cycle-format.md)");
    let _ = writeln!(s, "[cycle]");
    if let Some(t) = &cycle.meta.title {
        let _ = writeln!(s, "title = {}", quote(t));
    }
    let _ = writeln!(s, "unit = \"turns\"");
    if let Some(g) = &cycle.meta.grid {
        let _ = writeln!(s, "grid = {}", list(g.iter().map(|x| x.to_string())));
    }
    if let Some(m) = &cycle.meta.made_by {
        let _ = writeln!(s, "made_by = {}", quote(m));
    }
    if let Some(e) = &cycle.meta.experiment {
        let _ = writeln!(s, "experiment = {}", quote(e));
    }
    if !cycle.meta.notes.is_empty() {
        let _ = writeln!(
            s,
            "notes = {}",
            list(cycle.meta.notes.iter().map(|n| quote(n)))
        );
    }
    let _ = writeln!(
        s,
        "fields = {}",
        list(cycle.fields.iter().map(|f| quote(f)))
    );
    let _ = writeln!(s, "steps = [");
    for row in &cycle.steps {
        let _ = writeln!(
            s,
            "  {},",
            list(row.iter().map(|p: &Phase| quote(&format_phase(p))))
        );
    }
    let _ = writeln!(s, "]");
    for o in &cycle.outputs {
        let _ = writeln!(s, "\n[[output]]\nname = {}", quote(&o.name));
        match &o.source {
            WeightSource::FromSignature(t) => {
                let _ = writeln!(
                    s,
                    "from_signature = {}",
                    list(t.0.iter().map(|b| b.to_string()))
                );
            }
            WeightSource::Explicit => {
                let _ = writeln!(s, "weights = [");
                for w in &o.weights {
                    let _ = writeln!(s, "  {},", quote(&format_weight(w)));
                }
                let _ = writeln!(s, "]");
            }
        }
    }
    s
}
