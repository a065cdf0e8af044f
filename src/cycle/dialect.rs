//! The spreadsheet dialects of the plain cycle table, detected rather than demanded: a UTF-8
//! byte-order mark (Excel "CSV UTF-8"), CRLF line ends, comma / semicolon / tab separators
//! (semicolons with decimal commas as European-locale spreadsheets write them; tabs as LabVIEW's
//! spreadsheet strings, common practice), and units written in header names (`phi2 (deg)`,
//! `phi2 [rad]`, `phi2/turn`). The reader names the dialect it found in the report.

use super::text::parse_unit;
use crate::exact::PhaseUnit;
use std::path::Path;

/// What the reader found about how the table was written.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Dialect {
    /// Cell separator.
    pub delimiter: u8,
    /// Decimal commas (only with a semicolon or tab separator).
    pub decimal_comma: bool,
    /// The text started with a UTF-8 byte-order mark.
    pub bom: bool,
    /// Lines end in CRLF.
    pub crlf: bool,
}

impl Dialect {
    /// A short description for the report, e.g. `CSV, semicolon-separated, decimal commas`.
    pub fn describe(&self) -> String {
        let sep = match self.delimiter {
            b'\t' => "tab-separated",
            b';' => "semicolon-separated",
            _ => "comma-separated",
        };
        let mut parts = vec![format!("CSV, {sep}")];
        if self.decimal_comma {
            parts.push("decimal commas".into());
        }
        if self.bom {
            parts.push("UTF-8 byte-order mark".into());
        }
        if self.crlf {
            parts.push("CRLF line ends".into());
        }
        parts.join(", ")
    }
}

/// Count `c` in `line` outside double quotes.
fn count_unquoted(line: &str, c: char) -> usize {
    let mut quoted = false;
    let mut n = 0;
    for ch in line.chars() {
        if ch == '"' {
            quoted = !quoted;
        } else if ch == c && !quoted {
            n += 1;
        }
    }
    n
}

/// Detect the dialect of `text` (a `.tsv` path means tabs) and return it with the text
/// stripped of its byte-order mark. The separator is read off the header row (the first line
/// that is neither empty nor a `#` line): tabs if it has any, else semicolons if it has any,
/// else commas. Decimal commas are recognised later, cell by cell, with a semicolon or tab
/// separator only.
pub fn detect<'a>(text: &'a str, path: &Path) -> (Dialect, &'a str) {
    let (bom, body) = match text.strip_prefix('\u{feff}') {
        Some(rest) => (true, rest),
        None => (false, text),
    };
    let tsv = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("tsv"));
    let header = body
        .lines()
        .map(str::trim)
        .find(|l| !l.is_empty() && !l.starts_with('#'))
        .unwrap_or("");
    let delimiter = if tsv || count_unquoted(header, '\t') > 0 {
        b'\t'
    } else if count_unquoted(header, ';') > 0 {
        b';'
    } else {
        b','
    };
    let dialect = Dialect {
        delimiter,
        decimal_comma: false,
        bom,
        crlf: body.contains("\r\n"),
    };
    (dialect, body)
}

/// A cell with decimal commas turned into points when the separator allows them (`0,5` ->
/// `0.5`); returns the text and whether anything changed.
pub fn decimal_point(cell: &str, dialect: &Dialect) -> (String, bool) {
    if dialect.delimiter != b',' && cell.contains(',') {
        (cell.replace(',', "."), true)
    } else {
        (cell.to_string(), false)
    }
}

/// Split a unit written in a header name: `phi2 (deg)`, `phi2 [rad]`, `phi2/turn`,
/// `phi2 / degrees` give (`phi2`, unit). Names without such a suffix come back whole.
/// An unknown word in brackets is an error naming the valid units.
pub fn split_header_unit(h: &str) -> Result<(String, Option<PhaseUnit>), String> {
    let h = h.trim();
    let bracketed = [('(', ')'), ('[', ']')].iter().find_map(|&(open, close)| {
        let inner = h.strip_suffix(close)?;
        let k = inner.rfind(open)?;
        Some((&inner[..k], &inner[k + 1..]))
    });
    let (name, unit) = match bracketed {
        Some(x) => x,
        None => match h.rsplit_once('/') {
            Some((n, u)) if parse_header_unit(u).is_ok() => (n, u),
            _ => return Ok((h.to_string(), None)),
        },
    };
    let name = name.trim();
    if name.is_empty() {
        return Ok((h.to_string(), None));
    }
    let unit = parse_header_unit(unit)
        .map_err(|m| format!("header `{h}`: {m}; write e.g. `{name} (deg)`"))?;
    Ok((name.to_string(), Some(unit)))
}

fn parse_header_unit(u: &str) -> Result<PhaseUnit, String> {
    match u.trim() {
        "°" => Ok(PhaseUnit::Degrees),
        other => parse_unit(other),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Excel "CSV UTF-8" starts with a byte-order mark and ends lines in CRLF; European locales
    // separate with semicolons and write decimal commas; LabVIEW's spreadsheet strings use
    // tabs (common practice).
    #[test]
    fn dialects_are_recognised() {
        let (d, body) = detect(
            "\u{feff}# unit = deg\r\nstep,a\r\n1,0\r\n",
            "x.csv".as_ref(),
        );
        assert!(d.bom && d.crlf && d.delimiter == b',');
        assert!(body.starts_with('#'));
        let (d, _) = detect("a;b;w:R\n0;90;0,5\n", "x.csv".as_ref());
        assert_eq!(d.delimiter, b';');
        assert_eq!(decimal_point("0,5", &d), ("0.5".into(), true));
        let (d, _) = detect("a\tb\n0.0\t90.0\n", "x.txt".as_ref());
        assert_eq!(d.delimiter, b'\t');
        let (d, _) = detect("\"a;b\",c\n", "x.csv".as_ref());
        assert_eq!(d.delimiter, b',');
        assert_eq!(decimal_point("0,5", &d), ("0,5".into(), false));
    }

    #[test]
    fn units_in_headers_are_split_off() {
        let f = |h| split_header_unit(h).unwrap();
        assert_eq!(f("phi2 (deg)"), ("phi2".into(), Some(PhaseUnit::Degrees)));
        assert_eq!(f("phi2 [rad]"), ("phi2".into(), Some(PhaseUnit::Radians)));
        assert_eq!(f("phi2/turn"), ("phi2".into(), Some(PhaseUnit::Turns)));
        assert_eq!(f("phi2 (°)"), ("phi2".into(), Some(PhaseUnit::Degrees)));
        assert_eq!(f("pu1"), ("pu1".into(), None));
        assert_eq!(f("a/b"), ("a/b".into(), None));
        assert!(split_header_unit("phi2 (furlongs)")
            .unwrap_err()
            .contains("turns, degrees"));
    }
}
