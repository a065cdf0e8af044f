//! The plain-table cycle format (documented in `docs/cycle-format.md`), as spreadsheets export
//! it: optional `# key = value` directive lines (`unit`, `title`, `made_by`, `experiment`,
//! `grid`, `note`), a header row naming one column per field, optional `w:NAME` weight columns
//! (one per output) and an optional `step` index column, then one row per step. Errors name
//! the file line (row) and the column. Spreadsheet dialects (byte-order mark, CRLF, semicolon
//! or tab separators, decimal commas, units in header names, empty trailing columns) are
//! detected by [`super::dialect`] and named in the cycle's [`WrittenForm`]; each cell's written
//! precision is recorded there too.

use super::dialect::{decimal_point, detect, split_header_unit, Dialect};
use super::plausible::unit_warning;
use super::text::{
    format_phase, format_weight, parse_phase_cell_written, parse_unit, parse_weight_cell_written,
    unit_name,
};
use super::{
    resolve_unit, Cycle, CycleMeta, CycleOutput, Phase, Weight, WeightSource, WrittenForm,
};
use crate::error::InputError;
use crate::exact::PhaseUnit;
use crate::limits::{MAX_FIELDS, MAX_STEPS};
use std::path::Path;

enum Column {
    Step,
    Field(usize, PhaseUnit),
    Weight(usize),
}

fn weight_name(h: &str) -> Option<&str> {
    let h = h.trim();
    h.strip_prefix("w:")
        .or_else(|| h.strip_prefix("weight:"))
        .map(str::trim)
}

/// The leading `# key = value` directives.
struct Directives {
    meta: CycleMeta,
    unit: Option<PhaseUnit>,
    unit_line: Option<usize>,
}

fn read_directives(text: &str, path: &Path) -> Result<Directives, InputError> {
    let err =
        |line: Option<usize>, key: Option<&str>, msg: String| InputError::new(path, line, key, msg);
    let mut d = Directives {
        meta: CycleMeta::default(),
        unit: None,
        unit_line: None,
    };
    let mut seen: Vec<(String, usize)> = Vec::new();
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
        let k = if k == "made by" {
            "made_by".to_string()
        } else {
            k
        };
        let known = ["unit", "title", "made_by", "experiment", "grid"];
        if known.contains(&k.as_str()) {
            if let Some((_, first)) = seen.iter().find(|(s, _)| *s == k) {
                return Err(err(
                    Some(i + 1),
                    Some(&k),
                    format!("directive `{k}` is given twice (first on line {first}); keep one"),
                ));
            }
            seen.push((k.clone(), i + 1));
        }
        match k.as_str() {
            "unit" => {
                d.unit = Some(parse_unit(&v).map_err(|m| err(Some(i + 1), Some("unit"), m))?);
                d.unit_line = Some(i + 1);
            }
            "title" => d.meta.title = Some(v),
            "made_by" => d.meta.made_by = Some(v),
            "experiment" => d.meta.experiment = Some(v),
            "note" => d.meta.notes.push(v),
            "grid" => {
                let g: Result<Vec<u32>, _> = v
                    .split(|c: char| c == 'x' || c == ',' || c.is_whitespace())
                    .filter(|s| !s.is_empty())
                    .map(str::parse)
                    .collect();
                let g = g.map_err(|_| {
                    err(
                        Some(i + 1),
                        Some("grid"),
                        format!("grid `{v}`: write steps per turn per field, e.g. 1x3x3x3"),
                    )
                })?;
                super::bounds::check_grid(&g).map_err(|m| err(Some(i + 1), Some("grid"), m))?;
                d.meta.grid = Some(g);
            }
            _ => {}
        }
    }
    Ok(d)
}

/// The header row as columns: field names with their units, weight outputs, trailing empty
/// columns dropped (spreadsheets write them).
struct Header {
    columns: Vec<Column>,
    fields: Vec<String>,
    outputs: Vec<String>,
    line: Option<usize>,
}

fn read_header(
    header: &csv::StringRecord,
    path: &Path,
    declared: Option<PhaseUnit>,
    unit_override: Option<PhaseUnit>,
    unit_line: Option<usize>,
) -> Result<Header, InputError> {
    let line = header.position().map(|p| p.line() as usize);
    let err = |key: Option<&str>, msg: String| InputError::new(path, line, key, msg);
    let cells: Vec<&str> = header.iter().map(str::trim).collect();
    let width = cells
        .iter()
        .rposition(|c| !c.is_empty())
        .map_or(0, |k| k + 1);
    let mut h = Header {
        columns: Vec::new(),
        fields: Vec::new(),
        outputs: Vec::new(),
        line,
    };
    for (c, &cell) in cells[..width].iter().enumerate() {
        let key = format!("column {}", c + 1);
        if cell.is_empty() {
            return Err(err(Some(&key), "empty column name in the header row; name every column (field names, `w:NAME` weights)".into()));
        }
        if c == 0
            && (cell.eq_ignore_ascii_case("step")
                || cell == "#"
                || cell.eq_ignore_ascii_case("index"))
        {
            h.columns.push(Column::Step);
        } else if let Some(w) = weight_name(cell) {
            if h.outputs.iter().any(|o| o == w) || w.is_empty() {
                return Err(err(
                    Some(cell),
                    format!("weight column `{cell}` is empty or repeated"),
                ));
            }
            h.columns.push(Column::Weight(h.outputs.len()));
            h.outputs.push(w.to_string());
        } else {
            let (name, col_unit) = split_header_unit(cell).map_err(|m| err(Some(&key), m))?;
            if h.fields.contains(&name) {
                return Err(err(Some(cell), format!("field column `{name}` repeated")));
            }
            let unit = match (col_unit, declared.or(unit_override)) {
                (Some(u), Some(d)) if u != d => {
                    return Err(err(
                        Some(cell),
                        format!(
                            "the header says {} but the file's unit is {}; make them agree",
                            unit_name(u),
                            unit_name(d)
                        ),
                    ))
                }
                (Some(u), _) => u,
                (None, _) => resolve_unit(path, unit_line, declared, unit_override)?,
            };
            h.columns.push(Column::Field(h.fields.len(), unit));
            h.fields.push(name);
        }
    }
    super::bounds::check_outputs(h.outputs.len()).map_err(|m| err(None, m))?;
    if h.fields.is_empty() || h.fields.len() > MAX_FIELDS {
        return Err(err(
            None,
            format!(
                "the header must name 1..={MAX_FIELDS} field columns (weight columns are `w:NAME`)"
            ),
        ));
    }
    Ok(h)
}

/// Parse a cycle table in any of the spreadsheet dialects of [`super::dialect`].
pub fn read_cycle_csv(
    text: &str,
    path: &Path,
    unit_override: Option<PhaseUnit>,
) -> Result<Cycle, InputError> {
    let (mut dialect, text) = detect(text, path);
    let d = read_directives(text, path)?;
    let mut rdr = csv::ReaderBuilder::new()
        .delimiter(dialect.delimiter)
        .comment(Some(b'#'))
        .flexible(true)
        .has_headers(false)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let mut records = rdr.records();
    let header = match records.next() {
        Some(Ok(h)) => h,
        Some(Err(e)) => return Err(InputError::new(path, None, None, format!("cannot read the header row: {e}"))),
        None => return Err(InputError::new(path, None, None, "the table is empty: give a header row naming the field columns, then one row per step (0 steps is not a cycle)")),
    };
    let h = read_header(&header, path, d.unit, unit_override, d.unit_line)?;
    let mut rows = Rows::new(&h);
    for rec in records {
        let rec =
            rec.map_err(|e| InputError::new(path, None, None, format!("cannot read a row: {e}")))?;
        rows.push(&rec, &h, &mut dialect, path)?;
    }
    rows.finish(h, d.meta, dialect, path)
}

/// The steps, weights and written precisions read so far.
struct Rows {
    steps: Vec<Vec<Phase>>,
    half_widths: Vec<Vec<Option<f64>>>,
    raw: Vec<Vec<f64>>,
    weights: Vec<Vec<Weight>>,
    radii: Vec<Vec<Option<f64>>>,
}

impl Rows {
    fn new(h: &Header) -> Rows {
        Rows {
            steps: Vec::new(),
            half_widths: Vec::new(),
            raw: vec![Vec::new(); h.fields.len()],
            weights: vec![Vec::new(); h.outputs.len()],
            radii: vec![Vec::new(); h.outputs.len()],
        }
    }

    fn push(
        &mut self,
        rec: &csv::StringRecord,
        h: &Header,
        dialect: &mut Dialect,
        path: &Path,
    ) -> Result<(), InputError> {
        let line = rec.position().map(|p| p.line() as usize);
        let err = |key: Option<&str>, msg: String| InputError::new(path, line, key, msg);
        if rec.iter().all(|c| c.is_empty()) {
            return Ok(());
        }
        if self.steps.len() >= MAX_STEPS {
            return Err(err(None, format!("more than {MAX_STEPS} steps (the limit); split the table or use a coarser cycle")));
        }
        super::bounds::check_cells(self.steps.len() + 1, h.columns.len())
            .map_err(|m| err(None, m))?;
        let cells: Vec<&str> = rec.iter().collect();
        let width = cells
            .iter()
            .rposition(|c| !c.is_empty())
            .map_or(0, |k| k + 1);
        if width > h.columns.len() || rec.len() < h.columns.len() {
            return Err(err(None, format!(
                "row {} has {} cells but the header has {} columns; every row needs one cell per column",
                self.steps.len() + 1,
                width.max(rec.len().min(h.columns.len())),
                h.columns.len()
            )));
        }
        let mut row = vec![Phase::Approx(0.0); h.fields.len()];
        let mut hw = vec![None; h.fields.len()];
        for (c, (cell, col)) in rec.iter().zip(&h.columns).enumerate() {
            let (cell, comma) = decimal_point(cell, dialect);
            dialect.decimal_comma |= comma;
            match col {
                Column::Step => {}
                Column::Field(j, unit) => {
                    let key = format!("column {} (#{})", h.fields[*j], c + 1);
                    let p =
                        parse_phase_cell_written(&cell, *unit).map_err(|e| err(Some(&key), e))?;
                    row[*j] = p.phase;
                    hw[*j] = p.half_width;
                    self.raw[*j].push(p.raw_turns);
                }
                Column::Weight(o) => {
                    let key = format!("column w:{} (#{})", h.outputs[*o], c + 1);
                    let (w, r) =
                        parse_weight_cell_written(&cell).map_err(|e| err(Some(&key), e))?;
                    self.weights[*o].push(w);
                    self.radii[*o].push(r);
                }
            }
        }
        self.steps.push(row);
        self.half_widths.push(hw);
        Ok(())
    }

    fn finish(
        self,
        h: Header,
        mut meta: CycleMeta,
        dialect: Dialect,
        path: &Path,
    ) -> Result<Cycle, InputError> {
        if self.steps.is_empty() {
            return Err(InputError::new(
                path,
                h.line,
                None,
                "the table has 0 steps; give at least one row after the header",
            ));
        }
        let warnings = h
            .columns
            .iter()
            .filter_map(|c| match c {
                Column::Field(j, unit) => unit_warning(&h.fields[*j], *unit, &self.raw[*j]),
                _ => None,
            })
            .collect();
        meta.written = Some(WrittenForm {
            dialect: Some(dialect.describe()),
            phase_half_width: self.half_widths,
            weight_radius: self.radii,
            warnings,
        });
        let outputs = h
            .outputs
            .into_iter()
            .zip(self.weights)
            .map(|(name, weights)| CycleOutput {
                name,
                weights,
                source: WeightSource::Explicit,
            })
            .collect();
        Ok(Cycle {
            fields: h.fields,
            steps: self.steps,
            outputs,
            meta,
        })
    }
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
    for n in &cycle.meta.notes {
        s.push_str(&format!("# note = {}\n", n.replace(['\n', '\r'], " ")));
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
