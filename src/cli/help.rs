//! The text `--help` shows after the options of each command: an example, what `-` means and
//! the exit codes (the table of docs/limits.md, said once here for every command).

/// Exit codes of every command but `design` (docs/limits.md): 0, optionally 1, 2, 130.
macro_rules! exit_codes {
    ($zero:expr) => {
        concat!(
            "Exit codes:\n  0    ",
            $zero,
            "\n  2    usage or input error, or a limit exceeded (nothing written)\n",
            "  130  interrupted by Ctrl-C or SIGTERM (nothing written, temporaries removed)"
        )
    };
    ($zero:expr, $one:expr) => {
        concat!(
            "Exit codes:\n  0    ",
            $zero,
            "\n  1    ",
            $one,
            "\n  2    usage or input error, or a limit exceeded (nothing written)\n",
            "  130  interrupted by Ctrl-C or SIGTERM (nothing written, temporaries removed)"
        )
    };
}

/// What `-` means for file arguments.
macro_rules! dash {
    () => {
        "A file argument `-` reads standard input (one input per command) or writes\n\
standard output (single-file outputs only).\n"
    };
}

/// The top-level help.
pub const TOP: &str = concat!(
    "Example:\n  pathsieve design scheme.toml --out cycle.toml\n  pathsieve check scheme.toml cycle.toml\n\n",
    "Phase units, wherever phases are read or written: turns, deg, rad, index (grid\n\
indices) or index:M (indices on an M-step grid).\n",
    dash!(),
    "\nExit codes:\n  0    success; for `check`, a clean cycle\n  \
1    leaks found (`check`), or no design possible (`design`)\n  \
2    usage or input error, or a limit exceeded (nothing written)\n  \
3    `design` interrupted: best cycle so far written, NOT PROVEN MINIMAL\n  \
130  interrupted by Ctrl-C or SIGTERM (nothing written, temporaries removed)\n\n",
    "Shell completions: pathsieve completions bash|zsh|fish|powershell|elvish\nManual page: pathsieve man [COMMAND]"
);

/// `pathways`.
pub const PATHWAYS: &str = concat!(
    "Example:\n  pathsieve pathways scheme.toml --select R --diagrams\n  pathsieve pathways scheme.toml --summary --all --through 5\n\n",
    dash!(),
    "\n",
    exit_codes!("success")
);

/// `agnostic`.
pub const AGNOSTIC: &str = concat!(
    "Example:\n  pathsieve agnostic scheme.toml --order 5 --json\n\n",
    dash!(),
    "\n",
    exit_codes!("success")
);

/// `design`.
pub const DESIGN: &str = concat!(
    "Example:\n  pathsieve design scheme.toml --grid 8 --out cycle.toml\n  \
pathsieve design scheme.toml --out - > cycle.toml  # report on stderr\n\n",
    dash!(),
    "\nExit codes:\n  0    a design was found\n  1    no design possible (the reason is printed)\n  \
2    usage or input error, or a limit exceeded (nothing written)\n  \
3    interrupted (Ctrl-C, SIGTERM, --time-limit): best cycle so far written,\n       \
marked NOT PROVEN MINIMAL\n  \
130  a second Ctrl-C (nothing written, temporaries removed)"
);

/// `check`.
pub const CHECK: &str = concat!(
    "Example:\n  pathsieve check scheme.toml cycle.toml --tolerance 0.5\n  \
pathsieve export scheme.toml cycle.toml --format csv --out - |\n    pathsieve check scheme.toml -\n\n",
    dash!(),
    "\n",
    exit_codes!(
        "the cycle is clean through the order",
        "something leaks (listed)"
    )
);

/// `export`.
pub const EXPORT: &str = concat!(
    "Example:\n  pathsieve export scheme.toml cycle.toml --format plain-csv --unit deg \\\n      \
--out phases.csv\n  pathsieve export scheme.toml cycle.toml --format npz --out cycle.npz\n  \
pathsieve export scheme.toml cycle.toml --format mask-npy --shaper shaper.toml \\\n      \
--scan pu2=0:10:2000 --out masks.npy\n\n",
    "plain-csv/plain-tsv: one header row, numbers only, read as is by\n\
numpy.loadtxt(f, delimiter=\",\", skiprows=1), Excel, MATLAB readmatrix;\n\
metadata in NAME.csv.meta.json.\n",
    dash!(),
    "\n",
    exit_codes!("written")
);

/// `combine`: its own `after_help` (in combine_cmd.rs) holds the example and exit codes.
/// `draw`.
pub const DRAW: &str = concat!(
    "Example:\n  pathsieve draw leakage scheme.toml cycle.toml --out leakage.svg\n\n",
    exit_codes!("written")
);

/// `draw diagrams`.
pub const DRAW_DIAGRAMS: &str = concat!(
    "Example:\n  pathsieve draw diagrams scheme.toml --class R --out r.svg --png\n  \
pathsieve draw diagrams scheme.toml --signature=-1,1,1,-1 --out t.svg\n\n",
    dash!(),
    "\n",
    exit_codes!("written")
);

/// `draw leakage`.
pub const DRAW_LEAKAGE: &str = concat!(
    "Example:\n  pathsieve draw leakage scheme.toml cycle.toml --out leakage.svg --png\n\n",
    dash!(),
    "\n",
    exit_codes!("written")
);

/// `draw wheels`.
pub const DRAW_WHEELS: &str = concat!(
    "Example:\n  pathsieve draw wheels cycle.toml --out wheels.svg --png\n\n",
    dash!(),
    "\n",
    exit_codes!("written")
);

/// `completions`.
pub const COMPLETIONS: &str = "Example:\n  pathsieve completions bash \\\n      \
> ~/.local/share/bash-completion/completions/pathsieve\n  \
pathsieve completions zsh > ~/.zfunc/_pathsieve\n\nExit codes:\n  0    written\n  2    usage error";

/// `man`.
pub const MAN: &str = "Example:\n  pathsieve man > pathsieve.1 && man ./pathsieve.1\n  \
pathsieve man check > pathsieve-check.1\n\nExit codes:\n  0    written\n  2    usage error (no such command)";
