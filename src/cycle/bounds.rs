//! Size and range bounds of cycle files, checked before memory is spent: a cheap scan of a TOML
//! cycle's value count before the TOML parser materialises it, the cell count of a table, the
//! declared grid and `from_signature` entries. Every refusal names the line and the limit.

use crate::error::InputError;
use crate::limits::{MAX_CYCLE_CELLS, MAX_GRID, MAX_OUTPUTS, MAX_SIGNATURE_ENTRY, MAX_TOML_VALUES};
use std::path::Path;

/// Refuse a TOML text that could hold more than [`MAX_TOML_VALUES`] values, before parsing it.
///
/// Outside strings and comments every value needs at least one of `,` `[` `{` `=` (an array of
/// n values has one `[` and at least n - 1 commas; a key has its `=`), so their count bounds the
/// number of values the parser would build. Linear time, no allocation.
pub fn scan_toml_values(text: &str, path: &Path) -> Result<(), InputError> {
    let b = text.as_bytes();
    let (mut i, mut count, mut line) = (0usize, 0usize, 1usize);
    while i < b.len() {
        match b[i] {
            b'\n' => line += 1,
            b'#' => {
                while i < b.len() && b[i] != b'\n' {
                    i += 1;
                }
                continue;
            }
            q @ (b'"' | b'\'') => {
                let triple = b[i..].starts_with(if q == b'"' { b"\"\"\"" } else { b"'''" });
                i = skip_string(b, i, q, triple, &mut line);
                continue;
            }
            b',' | b'[' | b'{' | b'=' => {
                count += 1;
                if count > MAX_TOML_VALUES {
                    return Err(InputError::new(
                        path,
                        Some(line),
                        None,
                        format!("the TOML file holds more than {MAX_TOML_VALUES} values (the limit of the TOML form); write large tables as CSV, which streams (docs/cycle-format.md)"),
                    ));
                }
            }
            _ => {}
        }
        i += 1;
    }
    Ok(())
}

/// The index just past the string starting at `start` (unterminated: the end of the text; the
/// TOML parser then reports it).
fn skip_string(b: &[u8], start: usize, q: u8, triple: bool, line: &mut usize) -> usize {
    let mut i = start + if triple { 3 } else { 1 };
    while i < b.len() {
        match b[i] {
            b'\\' if q == b'"' => i += 1,
            b'\n' => {
                *line += 1;
                if !triple {
                    return i;
                }
            }
            c if c == q && (!triple || b[i..].starts_with(&[q, q, q])) => {
                return i + if triple { 3 } else { 1 };
            }
            _ => {}
        }
        i += 1;
    }
    b.len()
}

/// Refuse a table whose cells (steps x columns, derived weights included) exceed
/// [`MAX_CYCLE_CELLS`].
pub fn check_cells(steps: usize, columns: usize) -> Result<(), String> {
    match steps.checked_mul(columns) {
        Some(n) if n <= MAX_CYCLE_CELLS => Ok(()),
        _ => Err(format!(
            "{steps} steps x {columns} columns (phases and outputs) exceed the limit of {MAX_CYCLE_CELLS} cells; split the table or use fewer outputs"
        )),
    }
}

/// Refuse more than [`MAX_OUTPUTS`] outputs.
pub fn check_outputs(n: usize) -> Result<(), String> {
    if n > MAX_OUTPUTS {
        return Err(format!(
            "{n} outputs; at most {MAX_OUTPUTS} are allowed per cycle"
        ));
    }
    Ok(())
}

/// A declared grid: each entry in `1..=MAX_GRID` (a grid of the wrong length is noted and
/// ignored by the checker, not refused here).
pub fn check_grid(grid: &[u32]) -> Result<(), String> {
    match grid.iter().find(|g| !(1..=MAX_GRID).contains(*g)) {
        Some(g) => Err(format!(
            "grid entry {g} is out of range; each field's grid is 1..={MAX_GRID} steps per turn (1 for a field held fixed)"
        )),
        None => Ok(()),
    }
}

/// A `from_signature` entry list, each in `-MAX_SIGNATURE_ENTRY..=MAX_SIGNATURE_ENTRY`.
pub fn check_signature(s: &[i64]) -> Result<(), String> {
    let m = MAX_SIGNATURE_ENTRY;
    match s.iter().find(|x| !(-m..=m).contains(*x)) {
        Some(bad) => Err(format!(
            "signature entry {bad} is out of range; each entry must lie in -{m}..={m}"
        )),
        None => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scan_ignores_strings_and_comments() {
        let p = Path::new("c.toml");
        let many = ",".repeat(MAX_TOML_VALUES + 1);
        assert!(scan_toml_values(&format!("a = \"{many}\""), p).is_ok());
        assert!(scan_toml_values(&format!("a = '''\n{many}'''"), p).is_ok());
        assert!(scan_toml_values(&format!("# {many}\na = 1"), p).is_ok());
        let e = scan_toml_values(&format!("a = [\n{many}]"), p).unwrap_err();
        assert_eq!(e.line, Some(2));
    }

    #[test]
    fn grid_zero_and_extreme_signatures_are_refused() {
        assert!(check_grid(&[0, 0]).is_err());
        assert!(check_grid(&[1, 4]).is_ok());
        assert!(check_signature(&[i64::MIN, i64::MIN]).is_err());
        assert!(check_cells(usize::MAX, 2).is_err());
    }
}
