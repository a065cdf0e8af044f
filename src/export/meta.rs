//! Export metadata: this module owns the provenance every exported file carries (tool name and
//! version, SHA-256 of the experiment file, grid, unit, step order, field and output names) and
//! its three written forms: `# key: value` comment lines for CSV, a `meta` object for JSON and a
//! sidecar `NAME.meta.json` for NPY, which has no metadata slot of its own, and the one reader
//! of that sidecar ([`read_sidecar`]). Metadata is ASCII: other characters are written as
//! `\uXXXX` escapes ([`ascii_escaped`]).

use crate::error::InputError;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::path::{Path, PathBuf};

/// Layout version of every JSON document pathsieve writes (reports on stdout, exports,
/// sidecars): the `schema_version` key. Raised when a key changes meaning or goes away.
pub const SCHEMA_VERSION: u32 = 1;

/// A JSON document with its `schema_version` key first, then the body's own keys.
#[derive(Serialize)]
pub struct Versioned<'a, T: Serialize + ?Sized> {
    /// [`SCHEMA_VERSION`].
    pub schema_version: u32,
    /// The document's own keys (a struct or map).
    #[serde(flatten)]
    pub body: &'a T,
}

/// `body` with the current [`SCHEMA_VERSION`].
pub fn versioned<T: Serialize + ?Sized>(body: &T) -> Versioned<'_, T> {
    Versioned {
        schema_version: SCHEMA_VERSION,
        body,
    }
}

/// Provenance and layout of one export.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct ExportMeta {
    /// Always `pathsieve`.
    pub tool: String,
    /// The tool's version.
    pub version: String,
    /// What the file holds (`phases`, `weights`, `phases+weights`, `shaper masks`).
    pub content: String,
    /// The experiment file name, if one was given.
    pub experiment: Option<String>,
    /// Lower-case hex SHA-256 of the experiment file's bytes, if one was given.
    pub experiment_sha256: Option<String>,
    /// The cycle file name.
    pub cycle: Option<String>,
    /// The cycle's title.
    pub title: Option<String>,
    /// Field names, one per phase column, in column order.
    pub fields: Vec<String>,
    /// Output names, one per weight column.
    pub outputs: Vec<String>,
    /// Phase unit name (`turns`, `degrees`, `radians`, `grid:M`).
    pub unit: String,
    /// Steps per turn per field (declared by the cycle or derived from its exact phases).
    pub grid: Option<Vec<u64>>,
    /// Number of steps N.
    pub steps: usize,
    /// `designed` or `drift`.
    pub step_order: String,
    /// For each exported row, the 0-based step of the cycle file it comes from.
    pub source_steps: Vec<usize>,
    /// Free notes (drift moment, checker verdict, mask scale, ...).
    pub notes: Vec<String>,
    /// The exact weight texts of every output, one per exported row (docs/cycle-format.md
    /// weight form), for formats whose arrays hold only floats (the NPY sidecar): a re-import
    /// then checks the weighted design exactly.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub weights: Vec<ExportedWeights>,
    /// The form of the file this sidecar describes, when `check` can read it back with this
    /// sidecar: `plain-csv` or `plain-tsv` (see [`super::plain`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub layout: Option<String>,
    /// The centre frequency of every shaper pixel in THz, for mask exports.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pixel_freqs_thz: Option<Vec<f64>>,
    /// The delay scan of a mask export: the masks' first axis runs over its points.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scan: Option<ScanMeta>,
}

/// The delay scan of a mask export (docs/shaper-masks.md).
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct ScanMeta {
    /// The scanned pulses' fields, one per column of `delays_fs`.
    pub fields: Vec<String>,
    /// Per scan point, each scanned pulse's delay after the pulse before it (fs).
    pub delays_fs: Vec<Vec<f64>>,
    /// Per scan point, every sub-pulse's delay from time zero (fs), in shaper file order.
    pub subpulse_delays_fs: Vec<Vec<f64>>,
}

/// `text` with every non-ASCII character escaped: `\uXXXX` (UTF-16 units, so JSON reads it
/// back to the same string) — metadata is ASCII, whatever names the experiment uses.
pub fn ascii_escaped(text: &str) -> String {
    let mut s = String::with_capacity(text.len());
    for c in text.chars() {
        if c.is_ascii() {
            s.push(c);
        } else {
            let mut buf = [0u16; 2];
            for u in c.encode_utf16(&mut buf) {
                s.push_str(&format!("\\u{u:04x}"));
            }
        }
    }
    s
}

/// The exact weights of one output in an export.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct ExportedWeights {
    /// The output's name.
    pub name: String,
    /// One exact weight text per exported row.
    pub exact: Vec<String>,
}

impl ExportMeta {
    /// The metadata as leading `# key: value` CSV comment lines (each line ends in `\n`).
    /// Keys `unit` and `grid` use the forms the cycle CSV reader understands.
    pub fn csv_comments(&self) -> String {
        let mut s = String::new();
        let mut put = |k: &str, v: &str| {
            // One line per key: newlines in free text would end the comment early.
            let v = ascii_escaped(&v.replace(['\n', '\r'], " "));
            s.push_str(&format!("# {k}: {v}\n"));
        };
        put("tool", &format!("{} {}", self.tool, self.version));
        put("content", &self.content);
        if let Some(e) = &self.experiment {
            put("experiment", e);
        }
        if let Some(h) = &self.experiment_sha256 {
            put("experiment_sha256", h);
        }
        if let Some(c) = &self.cycle {
            put("cycle", c);
        }
        if let Some(t) = &self.title {
            put("title", t);
        }
        put("fields", &self.fields.join(", "));
        if !self.outputs.is_empty() {
            put("outputs", &self.outputs.join(", "));
        }
        put("unit", &self.unit);
        if let Some(g) = &self.grid {
            let g: Vec<String> = g.iter().map(u64::to_string).collect();
            put("grid", &g.join("x"));
        }
        put("steps", &self.steps.to_string());
        put("step_order", &self.step_order);
        let src: Vec<String> = self.source_steps.iter().map(usize::to_string).collect();
        put("source_steps", &src.join(" "));
        for n in &self.notes {
            put("note", n);
        }
        s
    }

    /// The metadata as pretty JSON bytes (the NPY sidecar), with a trailing newline and the
    /// `schema_version` key first.
    pub fn json_bytes(&self) -> Vec<u8> {
        let s = serde_json::to_string_pretty(&versioned(self)).unwrap_or_else(|_| "{}".into());
        // Non-ASCII occurs only inside JSON strings, where the escape reads back the same.
        let mut s = ascii_escaped(&s);
        s.push('\n');
        s.into_bytes()
    }
}

/// Parse sidecar metadata (`NAME.meta.json`) read from `path`; errors name the file, line and
/// column. The one reader of sidecars: phase-list re-import and `check` both use it.
///
/// # Errors
/// [`InputError`] for text that is not the metadata object.
pub fn parse_sidecar(text: &str, path: &Path) -> Result<ExportMeta, InputError> {
    serde_json::from_str(text).map_err(|e| {
        InputError::new(
            path,
            Some(e.line()),
            None,
            format!(
                "column {}: not the metadata pathsieve writes beside an NPY file ({e}); export the cycle again or remove the file",
                e.column()
            ),
        )
    })
}

/// The sidecar of an NPY or NPZ file, if one exists beside it: its path and metadata.
///
/// # Errors
/// [`InputError`] for an unreadable or malformed sidecar.
pub fn read_sidecar(data: &Path) -> Result<Option<(PathBuf, ExportMeta)>, InputError> {
    let side = sidecar_path(data);
    if crate::input_text::is_stdin(data) || !side.is_file() {
        return Ok(None);
    }
    let text = crate::input_text::read_text(&side)?;
    Ok(Some((side.clone(), parse_sidecar(&text, &side)?)))
}

/// Lower-case hex SHA-256 of some bytes.
pub fn sha256_hex(bytes: &[u8]) -> String {
    let d = Sha256::digest(bytes);
    d.iter().map(|b| format!("{b:02x}")).collect()
}

/// The sidecar path of an NPY or NPZ file: `x.npy` -> `x.meta.json`; any other name gets
/// `.meta.json` appended (`x.csv` -> `x.csv.meta.json`, so a plain table and an NPY export of
/// the same name never share, or overwrite, one sidecar).
pub fn sidecar_path(npy: &Path) -> PathBuf {
    let name = npy
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let stem = [".npy", ".NPY", ".npz", ".NPZ"]
        .iter()
        .find_map(|e| name.strip_suffix(e))
        .unwrap_or(&name);
    npy.with_file_name(format!("{stem}.meta.json"))
}

#[cfg(test)]
mod tests {
    use super::*;

    // SHA-256 test vector "abc" (NIST FIPS 180-2, appendix B.1, 2002).
    #[test]
    fn sha256_of_abc_matches_the_fips_vector() {
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn sidecar_replaces_the_npy_extension() {
        assert_eq!(
            sidecar_path(Path::new("d/phases.npy")),
            PathBuf::from("d/phases.meta.json")
        );
        assert_eq!(sidecar_path(Path::new("w")), PathBuf::from("w.meta.json"));
        assert_eq!(
            sidecar_path(Path::new("p.tsv")),
            PathBuf::from("p.tsv.meta.json")
        );
    }

    #[test]
    fn metadata_is_ascii_and_reads_back_the_same() {
        let m = ExportMeta {
            title: Some("\u{3c6} scan \u{1d70f}".into()),
            fields: vec!["\u{e9}1".into()],
            ..ExportMeta::default()
        };
        let bytes = m.json_bytes();
        assert!(bytes.is_ascii());
        let text = String::from_utf8(bytes).unwrap();
        let back = parse_sidecar(&text, Path::new("x.meta.json")).unwrap();
        assert_eq!(back, m);
        assert!(m.csv_comments().is_ascii());
    }

    #[test]
    fn csv_comments_are_one_line_per_key() {
        let m = ExportMeta {
            tool: "pathsieve".into(),
            version: "0".into(),
            title: Some("a\nb".into()),
            unit: "degrees".into(),
            grid: Some(vec![1, 3]),
            ..ExportMeta::default()
        };
        let c = m.csv_comments();
        assert!(c.lines().all(|l| l.starts_with("# ")));
        assert!(c.contains("# title: a b\n") && c.contains("# grid: 1x3\n"));
    }
}
