//! Shared helpers for the integration tests: build experiments from inline TOML.
#![allow(dead_code)]

use pathsieve::experiment_file::parse_experiment;
use pathsieve::model::Experiment;

/// Parse inline experiment TOML, panicking with the error text (tests only).
pub fn exp(text: &str) -> Experiment {
    parse_experiment(text, "inline.toml".as_ref()).unwrap_or_else(|e| panic!("{e}"))
}

/// `n` pulse field tables named 1..n, optionally followed by an LO.
pub fn pulses(n: usize, lo: bool) -> String {
    let mut s = String::new();
    for j in 1..=n {
        s.push_str(&format!("[[field]]\nname = \"{j}\"\n"));
    }
    if lo {
        s.push_str("[[field]]\nname = \"LO\"\nkind = \"lo\"\n");
    }
    s
}

/// A two-level scheme.
pub const TWO_LEVEL: &str =
    "[levels]\nstates = [{ name = \"g\", manifold = 0 }, { name = \"e\", manifold = 1 }]\n";

/// A three-level ladder g-e-f.
pub const LADDER: &str = "[levels]\nstates = [{ name = \"g\", manifold = 0 }, { name = \"e\", manifold = 1 }, { name = \"f\", manifold = 2 }]\n";

/// A path in the repository (relative to its root).
pub fn root(p: &str) -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(p)
}

/// Path of a bundled scheme.
pub fn scheme(name: &str) -> std::path::PathBuf {
    root("schemes").join(name)
}

/// A path as a command-line argument (the test paths are UTF-8).
pub fn path_arg(p: &std::path::Path) -> &str {
    p.to_str().unwrap()
}

/// Run the binary with arguments; returns (exit code, stdout, stderr).
pub fn run_cli(args: &[&str]) -> (i32, String, String) {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_pathsieve"))
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args(args)
        .output()
        .expect("the binary runs");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// True when `python3` with `numpy` can be run (the NumPy cross-checks skip otherwise).
pub fn numpy_available() -> bool {
    std::process::Command::new("python3")
        .args(["-c", "import numpy"])
        .output()
        .map(|o| o.status.success())
        .unwrap_or(false)
}

/// The human report with its wrapped prose rejoined (the CLI wraps prose at 80 columns when
/// stdout is not a terminal, continuing a line two columns further in): a line indented deeper
/// than the line it follows and not starting a `- ` item continues it.
#[allow(dead_code)]
pub fn unwrapped(out: &str) -> String {
    let mut lines: Vec<String> = Vec::new();
    let indent = |l: &str| l.len() - l.trim_start().len();
    for l in out.lines() {
        let table = |s: &str| s.starts_with(['┌', '│', '├', '└', '╞']);
        match lines.last_mut() {
            Some(prev)
                if !l.trim().is_empty()
                    && !prev.trim().is_empty()
                    && !table(l)
                    && !table(prev)
                    && indent(l) >= indent(prev) + 2
                    && !l.trim_start().starts_with("- ") =>
            {
                prev.push(' ');
                prev.push_str(l.trim_start());
            }
            _ => lines.push(l.to_string()),
        }
    }
    lines.join("\n") + "\n"
}
