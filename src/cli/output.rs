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
