//! Shared output helpers for the subcommands: stdout writing, JSON, tables, file output.

use clap::Args;
use comfy_table::{presets::UTF8_FULL_CONDENSED, ContentArrangement, Table};
use pathsieve::selection::{RejectionSource, SelectionRequest};
use std::io::Write;

/// Write text to stdout, flushing; a closed pipe surfaces as an io error the caller ignores.
pub fn print(text: &str) -> anyhow::Result<()> {
    let mut out = std::io::stdout().lock();
    out.write_all(text.as_bytes())?;
    out.flush()?;
    Ok(())
}

/// Write a human-readable report to stdout with its prose lines wrapped at spaces to the
/// tables' width (the terminal's, or [`DEFAULT_TABLE_WIDTH`] columns when stdout is not a
/// terminal); table lines are already that wide and are left alone. A wrapped line continues
/// two columns further in than it started.
pub fn print_report(text: &str) -> anyhow::Result<()> {
    let width = usize::from(table(&[]).width().unwrap_or(DEFAULT_TABLE_WIDTH));
    print(&wrap_prose(text, width))
}

/// The text with every line longer than `width` (that is not a table line) wrapped at spaces.
fn wrap_prose(text: &str, width: usize) -> String {
    let mut out = String::with_capacity(text.len() + text.len() / 40);
    for line in text.split_inclusive('\n') {
        let body = line.trim_end_matches(['\n', '\r']);
        let is_table = body.starts_with(['┌', '│', '├', '└', '╞', '║']);
        if is_table || body.chars().count() <= width {
            out.push_str(line);
            continue;
        }
        let indent = body.len() - body.trim_start().len();
        let next = " ".repeat(indent + 2);
        let opts = textwrap::Options::new(width)
            .subsequent_indent(&next)
            .break_words(false);
        out.push_str(&textwrap::fill(body, opts));
        out.push_str(&line[body.len()..]);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::wrap_prose;

    #[test]
    fn prose_wraps_at_spaces_and_tables_stay() {
        let text = "12 steps: a nested cycle that keeps R and cancels every rejected term through order four\n│ table line that is long enough to pass the width of the terminal easily ok │\n  - a note\n";
        let out = wrap_prose(text, 40);
        let lines: Vec<&str> = out.lines().collect();
        assert!(
            lines
                .iter()
                .all(|l| l.starts_with('│') || l.chars().count() <= 40),
            "{out}"
        );
        assert!(lines
            .iter()
            .any(|l| l.starts_with('│') && l.chars().count() > 40));
        // The paragraph's continuation lines are indented by two columns.
        assert!(
            lines[1].starts_with("  ") && !lines[1].starts_with("   "),
            "{out}"
        );
        assert!(out.ends_with("  - a note\n"));
        // Nothing is lost or reordered: the words read back the same.
        let words = |s: &str| s.split_whitespace().map(str::to_owned).collect::<Vec<_>>();
        assert_eq!(words(&out), words(text));
    }
}

/// Write bytes to stdout, flushing (as [`print`]).
pub fn print_bytes(bytes: &[u8]) -> anyhow::Result<()> {
    let mut out = std::io::stdout().lock();
    out.write_all(bytes)?;
    out.flush()?;
    Ok(())
}

/// Pretty JSON of a serialisable value (a struct or map), with the `schema_version` key
/// first and a trailing newline, to stdout.
pub fn print_json<T: serde::Serialize>(value: &T) -> anyhow::Result<()> {
    let mut s = serde_json::to_string_pretty(&pathsieve::export::meta::versioned(value))?;
    s.push('\n');
    print(&s)
}

/// Width of a table when stdout is not a terminal (a pipe, a file): cells wrap to fit.
pub const DEFAULT_TABLE_WIDTH: u16 = 80;

/// A table with our house style and the given header, wrapping its cells to the terminal's
/// width, or to [`DEFAULT_TABLE_WIDTH`] columns when stdout is not a terminal.
pub fn table(header: &[&str]) -> Table {
    let mut t = Table::new();
    t.load_preset(UTF8_FULL_CONDENSED)
        .set_content_arrangement(ContentArrangement::Dynamic)
        .set_header(header.iter().copied());
    if t.width().is_none() {
        t.set_width(DEFAULT_TABLE_WIDTH);
    }
    t
}

/// Which terms a cycle must cancel: shared by `design` and `check`.
#[derive(Args, Debug)]
pub struct RejectionArgs {
    /// Cancel every other term through this order K (default: the experiment's order).
    #[arg(long, value_name = "K")]
    pub order: Option<u32>,
    /// Use the enumerated pathways through K (and their conjugates) instead of the agnostic set.
    #[arg(long)]
    pub from_pathways: bool,
    /// Ignore the beam geometry: also cancel coherent terms that are not phase matched.
    #[arg(long)]
    pub no_geometry: bool,
}

impl RejectionArgs {
    /// The selection request these arguments ask for.
    pub fn request(&self) -> SelectionRequest {
        SelectionRequest {
            order: self.order,
            source: if self.from_pathways {
                RejectionSource::FromPathways
            } else {
                RejectionSource::Agnostic
            },
            geometry: self.no_geometry.then_some(false),
            ..SelectionRequest::default()
        }
    }
}
