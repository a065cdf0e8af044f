//! `-` as a file argument: standard input for one input of a command (read by the library's
//! `input_text`, which keeps it for a second read), standard output for an output that is one
//! file. An output with companions (a sidecar, per-output files) cannot go to stdout and is
//! refused with the reason before any work.

use anyhow::bail;
use pathsieve::safe_write::{write_set_atomic, Content};
use std::io::Write;
use std::path::{Path, PathBuf};

/// True for `-`.
pub fn is_dash(p: &Path) -> bool {
    p.as_os_str() == "-"
}

/// At most one input may be `-` (standard input is read once).
pub fn check_one_stdin(inputs: &[Option<&Path>]) -> anyhow::Result<()> {
    if inputs.iter().flatten().filter(|p| is_dash(p)).count() > 1 {
        bail!("only one input can be `-` (standard input); give the others as files");
    }
    Ok(())
}

/// The outputs that are files (to check with `safe_write`), after checking that a `-` among
/// `outputs` is the only stdout target and has no companion file (`-.meta.json`, ...).
pub fn split_stdout(outputs: &[PathBuf]) -> anyhow::Result<Vec<PathBuf>> {
    let dashes = outputs.iter().filter(|p| is_dash(p)).count();
    if dashes > 1 {
        bail!("only one output can be `-` (standard output); give the others file names");
    }
    let companions: Vec<String> = outputs
        .iter()
        .filter(|p| {
            p.file_name()
                .is_some_and(|n| n.to_string_lossy().starts_with("-."))
                && p.parent().is_none_or(|d| d.as_os_str().is_empty())
        })
        .map(|p| p.display().to_string())
        .collect();
    if !companions.is_empty() {
        bail!(
            "`-` (standard output) holds one file, but this output comes with {} ({}); give a file name instead of `-`, or a single-file format",
            if companions.len() == 1 { "a companion file" } else { "companion files" },
            companions.join(", ")
        );
    }
    Ok(outputs.iter().filter(|p| !is_dash(p)).cloned().collect())
}

/// Write every file atomically (all or none), then stream the `-` output, if any, to stdout.
/// Returns the names written, `-` shown as `stdout`.
pub fn write_outputs<'a>(
    files: Vec<(PathBuf, Vec<u8>)>,
    streams: Vec<(PathBuf, pathsieve::safe_write::Filler<'a>)>,
    force: bool,
) -> anyhow::Result<Vec<String>> {
    let mut to_stdout: Option<Content<'_>> = None;
    let mut set: Vec<(PathBuf, Content<'_>)> = Vec::new();
    let mut names = Vec::new();
    for (p, b) in &files {
        names.push(name(p));
        if is_dash(p) {
            to_stdout = Some(Content::Bytes(b.as_slice()));
        } else {
            set.push((p.clone(), Content::Bytes(b.as_slice())));
        }
    }
    for (k, (p, fill)) in streams.into_iter().enumerate() {
        names.insert(k, name(&p));
        if is_dash(&p) {
            to_stdout = Some(Content::Stream(fill));
        } else {
            set.insert(k, (p, Content::Stream(fill)));
        }
    }
    write_set_atomic(set, force)?;
    if let Some(c) = to_stdout {
        let mut out = std::io::BufWriter::new(std::io::stdout().lock());
        match c {
            Content::Bytes(b) => out.write_all(b)?,
            Content::Stream(fill) => fill(&mut out)?,
        }
        out.flush()?;
    }
    Ok(names)
}

fn name(p: &Path) -> String {
    if is_dash(p) {
        "stdout".into()
    } else {
        p.display().to_string()
    }
}
