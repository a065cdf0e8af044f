//! The plain-table cycle format (documented in `docs/cycle-format.md`), as spreadsheets export
//! it: optional `# key = value` directive lines (`unit`, `title`, `made_by`, `experiment`,
//! `grid`, `note`), a header row naming one column per field, optional `w:NAME` weight columns
//! (one per output) and an optional `step` index column, then one row per step. Errors name
//! the file line (row) and the column.

use super::text::{format_phase, format_weight, parse_phase_cell, parse_unit, parse_weight_cell};
use super::{resolve_unit, Cycle, CycleMeta, CycleOutput, WeightSource};
use crate::error::InputError;
use crate::exact::PhaseUnit;
use crate::limits::{MAX_FIELDS, MAX_STEPS};
use std::path::Path;

enum Column {
    Step,
    Field(usize),
    Weight(usize),
}

fn weight_name(h: &str) -> Option<&str> {
    let h = h.trim();
    h.strip_prefix("w:")
        .or_else(|| h.strip_prefix("weight:"))
        .map(str::trim)
}

/// Parse a CSV (or, for a `.tsv` path, tab-separated) cycle table.
pub fn read_cycle_csv(
    text: &str,
    path: &Path,
    unit_override: Option<PhaseUnit>,
) -> Result<Cycle, InputError> {
    let err =
        |line: Option<usize>, key: Option<&str>, msg: String| InputError::new(path, line, key, msg);
    let mut meta = CycleMeta::default();
    let mut declared = None;
    let mut unit_line = None;
    for (i, line) in text.lines().enumerate() {
        let l = line.trim();
        if l.is_empty() {
            continue;
        }
        let Some(body) = l.strip_prefix('#') else {
            break;
        };
        let Some((k, v)) = body.split_once(['=', ':']) else {
            continue;
        };
        let (k, v) = (k.trim().to_ascii_lowercase(), v.trim().to_string());
        match k.as_str() {
            "unit" => {
                declared = Some(parse_unit(&v).map_err(|m| err(Some(i + 1), Some("unit"), m))?);
                unit_line = Some(i + 1);
            }
            "title" => meta.title = Some(v),
            "made_by" | "made by" => meta.made_by = Some(v),
            "experiment" => meta.experiment = Some(v),
            "note" => meta.notes.push(v),
            "grid" => {
                let g: Result<Vec<u32>, _> = v
                    .split(|c: char| c == 'x' || c == ',' || c.is_whitespace())
                    .filter(|s| !s.is_empty())
                    .map(str::parse)
                    .collect();
                meta.grid = Some(g.map_err(|_| {
                    err(
                        Some(i + 1),
                        Some("grid"),
                        format!("grid `{v}`: write steps per turn per field, e.g. 1x3x3x3"),
                    )
                })?);
            }
            _ => {}
        }
    }
    let unit = resolve_unit(path, unit_line, declared, unit_override)?;
    let delim = if path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("tsv"))
    {
        b'\t'
    } else {
        b','
    };
    let mut rdr = csv::ReaderBuilder::new()
        .delimiter(delim)
        .comment(Some(b'#'))
        .flexible(true)
        .has_headers(false)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let mut records = rdr.records();
    let header = match records.next() {
        Some(Ok(h)) => h,
        Some(Err(e)) => return Err(err(None, None, format!("cannot read the header row: {e}"))),
        None => return Err(err(None, None, "the table is empty: give a header row naming the field columns, then one row per step (0 steps is not a cycle)".into())),
    };
    let header_line = header.position().map(|p| p.line() as usize);
    let mut columns = Vec::new();
    let mut fields: Vec<String> = Vec::new();
    let mut outputs: Vec<String> = Vec::new();
    for (c, h) in header.iter().enumerate() {
        let h = h.trim();
        if h.is_empty() {
            return Err(err(
                header_line,
                Some(&format!("column {}", c + 1)),
                "empty column name in the header row".into(),
            ));
        }
        if c == 0 && (h.eq_ignore_ascii_case("step") || h == "#" || h.eq_ignore_ascii_case("index"))
        {
            columns.push(Column::Step);
        } else if let Some(w) = weight_name(h) {
            if outputs.iter().any(|o| o == w) || w.is_empty() {
                return Err(err(
                    header_line,
                    Some(h),
                    format!("weight column `{h}` is empty or repeated"),
                ));
            }
            columns.push(Column::Weight(outputs.len()));
            outputs.push(w.to_string());
        } else {
            if fields.iter().any(|f| f == h) {
                return Err(err(
                    header_line,
                    Some(h),
                    format!("field column `{h}` repeated"),
                ));
            }
            columns.push(Column::Field(fields.len()));
            fields.push(h.to_string());
        }
    }
    if fields.is_empty() || fields.len() > MAX_FIELDS {
        return Err(err(
            header_line,
            None,
            format!(
                "the header must name 1..={MAX_FIELDS} field columns (weight columns are `w:NAME`)"
            ),
        ));
    }
    let mut steps = Vec::new();
    let mut weights: Vec<Vec<_>> = vec![Vec::new(); outputs.len()];
    for rec in records {
        let rec = rec.map_err(|e| err(None, None, format!("cannot read a row: {e}")))?;
        let line = rec.position().map(|p| p.line() as usize);
        if rec.iter().all(|c| c.is_empty()) {
            continue;
        }
        if steps.len() >= MAX_STEPS {
            return Err(err(line, None, format!("more than {MAX_STEPS} steps (the limit); split the table or use a coarser cycle")));
        }
        if rec.len() != columns.len() {
            return Err(err(line, None, format!(
                "row {} has {} cells but the header has {} columns; every row needs one cell per column",
                steps.len() + 1,
                rec.len(),
                columns.len()
            )));
        }
        let mut row = vec![crate::cycle::Phase::Approx(0.0); fields.len()];
        for (cell, col) in rec.iter().zip(&columns) {
            match col {
                Column::Step => {}
                Column::Field(j) => {
                    row[*j] = parse_phase_cell(cell, unit)
                        .map_err(|e| err(line, Some(&format!("column {}", fields[*j])), e))?;
                }
                Column::Weight(o) => {
                    weights[*o].push(
                        parse_weight_cell(cell).map_err(|e| {
                            err(line, Some(&format!("column w:{}", outputs[*o])), e)
                        })?,
                    );
                }
            }
        }
        steps.push(row);
    }
    if steps.is_empty() {
        return Err(err(
            header_line,
            None,
            "the table has 0 steps; give at least one row after the header".into(),
        ));
    }
    let outputs = outputs
        .into_iter()
        .zip(weights)
        .map(|(name, weights)| CycleOutput {
            name,
            weights,
            source: WeightSource::Explicit,
        })
        .collect();
    Ok(Cycle {
        fields,
        steps,
        outputs,
        meta,
    })
}

/// Write a cycle as a CSV table: directives, header, one row per step, exact phases as `p/q`
/// turns. Outputs whose weights derive from a signature get explicit weight columns.
pub fn write_cycle_csv(cycle: &Cycle) -> String {
    let mut s =
        String::from("# pathsieve cycle table (format: docs/cycle-format.md)\n# unit = turns\n");
    if let Some(t) = &cycle.meta.title {
        s.push_str(&format!("# title = {t}\n"));
    }
    if let Some(g) = &cycle.meta.grid {
        let g: Vec<String> = g.iter().map(|x| x.to_string()).collect();
        s.push_str(&format!("# grid = {}\n", g.join("x")));
    }
    if let Some(m) = &cycle.meta.made_by {
        s.push_str(&format!("# made_by = {m}\n"));
    }
    if let Some(e) = &cycle.meta.experiment {
        s.push_str(&format!("# experiment = {e}\n"));
    }
    let mut wtr = csv::WriterBuilder::new().from_writer(Vec::new());
    let mut header = vec!["step".to_string()];
    header.extend(cycle.fields.iter().cloned());
    header.extend(cycle.outputs.iter().map(|o| format!("w:{}", o.name)));
    let _ = wtr.write_record(&header);
    for (m, row) in cycle.steps.iter().enumerate() {
        let mut r = vec![(m + 1).to_string()];
        r.extend(row.iter().map(format_phase));
        r.extend(
            cycle
                .outputs
                .iter()
                .map(|o| o.weights.get(m).map(format_weight).unwrap_or_default()),
        );
        let _ = wtr.write_record(&r);
    }
    let body = wtr.into_inner().unwrap_or_default();
    s.push_str(&String::from_utf8_lossy(&body));
    s
}
