//! Typed errors of the library. Each message names the bad value and says how to fix it.

use std::path::PathBuf;
use thiserror::Error;

/// An error in an input file, located by file, line (and column where known) and key.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[error("{}{}{}: {}{}", file.display(), line.map(|l| format!(":{l}")).unwrap_or_default(), column.filter(|_| line.is_some()).map(|c| format!(":{c}")).unwrap_or_default(), key.as_ref().map(|k| format!("`{k}`: ")).unwrap_or_default(), message)]
pub struct InputError {
    /// The file.
    pub file: PathBuf,
    /// 1-based line, when known.
    pub line: Option<usize>,
    /// 1-based column (in characters) on that line, when known.
    pub column: Option<usize>,
    /// The key or column at fault, when known.
    pub key: Option<String>,
    /// What is wrong and how to fix it.
    pub message: String,
}

impl InputError {
    /// A new error at a file position.
    pub fn new(
        file: impl Into<PathBuf>,
        line: Option<usize>,
        key: Option<&str>,
        message: impl Into<String>,
    ) -> Self {
        InputError {
            file: file.into(),
            line,
            column: None,
            key: key.map(str::to_string),
            message: message.into(),
        }
    }

    /// The same error located at a 1-based column of its line.
    pub fn at_column(mut self, column: usize) -> Self {
        self.column = Some(column);
        self
    }
}

/// A request that is well-formed but cannot be served by the model.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
pub enum ModelError {
    /// A phase-matching decision depends on how rounded beam components are read.
    #[error("{detail}; the geometry filter would have to guess. Fix: write the beam directions exactly (integers or simple fractions; scaling every beam by one factor changes nothing, so [1, 1] can stand for [0.707, 0.707]), or give more digits, or check without the geometry filter (--no-geometry)")]
    BeamRounding {
        /// Which term, which components, where written.
        detail: String,
    },
    /// A wanted class has no pathway in this level scheme and detection.
    #[error("output `{output}` asks for class {class}, but no signal pathway of this experiment has it (for 2Q the level scheme needs a two-quantum manifold); drop the class or extend the level scheme")]
    EmptyClass {
        /// Output name.
        output: String,
        /// Class label.
        class: String,
    },
    /// An NMR coherence path is malformed.
    #[error("bad coherence path: {reason}")]
    BadCoherencePath {
        /// Why.
        reason: String,
    },
    /// A size limit would be exceeded.
    #[error("{what} is {value}, above the limit of {limit}; {hint}")]
    TooLarge {
        /// What was counted.
        what: String,
        /// The requested size.
        value: u64,
        /// The limit.
        limit: u64,
        /// How to get under it.
        hint: String,
    },
}
