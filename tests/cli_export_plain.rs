//! Exports that load unedited: the plain CSV/TSV tables (one header row, numbers only, a
//! sidecar) read by the `csv` crate with default options and by NumPy/Python's csv module
//! (when python3 has numpy), read back by `check` to the same exact verdict; the NPZ bundle;
//! the receiver/LO table against the weights; `-` for stdin and stdout.

mod common;

use common::{path_arg as s, root, run_cli as run};

use pathsieve::check::{check_cycle, CheckRequest};
use pathsieve::cycle::read_cycle;
use pathsieve::experiment_file::read_experiment;
use pathsieve::export::npy::NpyData;
use pathsieve::export::npz::{read_npz, read_npz_text};
use std::io::Write;
use std::path::Path;
use std::process::{Command, Stdio};

const DYE: &str = "schemes/dye-fluorescence-2d.toml";
const CASES: &[(&str, &str)] = &[
    // Nested 1x3x3x3 (Tan, J. Chem. Phys. 129, 124501 (2008), from memory): clean, 3 outputs.
    (DYE, "schemes/dye-fluorescence-27step.cycle.toml"),
    // Pump-probe 2x2, weights +-1 (common practice): clean, keeps R + NR.
    (
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
    ),
    // A leaky table: the verdict "leaks" must survive too.
    (DYE, "schemes/dye-fluorescence-leaky.cycle.toml"),
];

/// Every record of a table as the `csv` crate reads it with default options (first row a
/// header, no comment character): all cells must be numbers.
fn numbers(path: &Path) -> (Vec<String>, Vec<Vec<f64>>) {
    let delim = if path.extension().is_some_and(|e| e == "tsv") {
        b'\t'
    } else {
        b','
    };
    let mut r = csv::ReaderBuilder::new()
        .delimiter(delim)
        .from_path(path)
        .unwrap();
    let head = r.headers().unwrap().iter().map(str::to_string).collect();
    let rows = r
        .records()
        .map(|rec| {
            rec.unwrap()
                .iter()
                .map(|c| {
                    c.parse::<f64>()
                        .unwrap_or_else(|_| panic!("{c} in {path:?}"))
                })
                .collect()
        })
        .collect();
    (head, rows)
}

#[test]
fn plain_tables_are_numbers_only_and_check_reads_them_back_to_the_same_verdict() {
    let d = tempfile::tempdir().unwrap();
    for (k, (exp, cyc)) in CASES.iter().enumerate() {
        let e = read_experiment(&root(exp)).unwrap();
        let original = check_cycle(
            &e,
            &read_cycle(&root(cyc), None).unwrap(),
            &CheckRequest::default(),
        )
        .unwrap();
        for (fmt, ext) in [("plain-csv", "csv"), ("plain-tsv", "tsv")] {
            for unit in ["turns", "deg", "rad", "index"] {
                let p = d.path().join(format!("{k}-{unit}-{fmt}.{ext}"));
                let (code, _, err) = run(&[
                    "export",
                    exp,
                    cyc,
                    "--format",
                    fmt,
                    "--unit",
                    unit,
                    "--order",
                    "drift",
                    "--out",
                    s(&p),
                ]);
                assert_eq!(code, 0, "{err}");
                let text = std::fs::read_to_string(&p).unwrap();
                assert!(!text.contains('#') && !text.contains('"'), "{text}");
                let (head, rows) = numbers(&p);
                assert_eq!(head[0], "step");
                assert_eq!(rows.len(), original.steps);
                let back = read_cycle(&p, None).unwrap();
                let r = check_cycle(&e, &back, &CheckRequest::default()).unwrap();
                assert!(r.exact, "{fmt} {unit}: not exact after re-import");
                assert_eq!(
                    (r.clean, r.first_leak_order),
                    (original.clean, original.first_leak_order),
                    "{exp} {cyc} {fmt} {unit}"
                );
                let (code, out, _) = run(&["check", exp, s(&p)]);
                assert_eq!(code, i32::from(!original.clean), "{out}");
            }
        }
    }
}

#[test]
fn weights_and_receiver_tables_agree_with_the_cycle() {
    let d = tempfile::tempdir().unwrap();
    let (exp, cyc) = CASES[0];
    let (p, w, r) = (
        d.path().join("p.csv"),
        d.path().join("w.csv"),
        d.path().join("rx.csv"),
    );
    let (code, _, err) = run(&[
        "export",
        exp,
        cyc,
        "--format",
        "plain-csv",
        "--out",
        s(&p),
        "--weights",
        s(&w),
        "--receiver",
        s(&r),
    ]);
    assert_eq!(code, 0, "{err}");
    for f in [&p, &w, &r] {
        let side = pathsieve::export::meta::sidecar_path(f);
        assert!(side.is_file(), "{side:?}");
        assert!(std::fs::read(&side).unwrap().is_ascii());
    }
    let (wh, wrows) = numbers(&w);
    let (rh, rrows) = numbers(&r);
    assert_eq!(wh.len(), rh.len());
    let n = wrows.len() as f64;
    for (wr, rr) in wrows.iter().zip(&rrows) {
        for o in 0..(wh.len() - 1) / 2 {
            // w_m = amplitude exp(-2 pi i phase) / N, phase in turns.
            let (phase, amp) = (rr[1 + 2 * o], rr[2 + 2 * o]);
            let z = num_complex::Complex64::from_polar(amp / n, -std::f64::consts::TAU * phase);
            assert!((z.re - wr[1 + 2 * o]).abs() < 1e-12 && (z.im - wr[2 + 2 * o]).abs() < 1e-12);
            assert!(
                (amp - 1.0).abs() < 1e-12,
                "lattice weights have unit modulus"
            );
        }
    }
    // One file per field, a single column each.
    let pf = d.path().join("f.csv");
    let (code, _, err) = run(&[
        "export",
        exp,
        cyc,
        "--format",
        "plain-csv",
        "--per-field",
        "--unit",
        "deg",
        "--out",
        s(&pf),
    ]);
    assert_eq!(code, 0, "{err}");
    for f in ["1", "2", "3", "4"] {
        let (h, rows) = numbers(&d.path().join(format!("f.{f}.csv")));
        assert_eq!(h, vec![f.to_string()]);
        assert_eq!(rows.len(), 27);
        assert!(rows
            .iter()
            .all(|r| r.len() == 1 && [0.0, 120.0, 240.0].contains(&r[0])));
    }
}

#[test]
fn the_npz_bundle_holds_phases_weights_and_metadata_and_checks_clean() {
    let d = tempfile::tempdir().unwrap();
    let (exp, cyc) = CASES[0];
    let z = d.path().join("c.npz");
    let (code, _, err) = run(&["export", exp, cyc, "--format", "npz", "--out", s(&z)]);
    assert_eq!(code, 0, "{err}");
    let bytes = std::fs::read(&z).unwrap();
    let members = read_npz(&bytes).unwrap();
    let names: Vec<&str> = members.iter().map(|m| m.0.as_str()).collect();
    assert_eq!(names, ["phases", "weights"]);
    assert_eq!(members[0].1.shape, [27, 4]);
    assert!(matches!(members[1].1.data, NpyData::C128(_)));
    let meta = read_npz_text(&bytes, "meta").unwrap().unwrap();
    assert!(meta.contains("\"schema_version\": 1") && meta.is_ascii());
    let (code, out, _) = run(&["check", exp, s(&z)]);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("exact"), "{out}");
}

/// Run the binary with `stdin` piped in.
fn run_stdin(args: &[&str], stdin: &[u8]) -> (i32, Vec<u8>, String) {
    let mut c = Command::new(env!("CARGO_BIN_EXE_pathsieve"))
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    c.stdin.take().unwrap().write_all(stdin).unwrap();
    let o = c.wait_with_output().unwrap();
    (
        o.status.code().unwrap_or(-1),
        o.stdout,
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

#[test]
fn dash_is_stdin_and_stdout_and_multi_file_outputs_refuse_it() {
    let (exp, cyc) = CASES[0];
    // export to stdout, then check from stdin: the CSV with its metadata lines.
    let (code, csv, err) = run_stdin(&["export", exp, cyc, "--format", "csv", "--out", "-"], b"");
    assert_eq!(code, 0, "{err}");
    assert!(String::from_utf8_lossy(&csv).starts_with("# tool: pathsieve"));
    let (code, out, err) = run_stdin(&["check", exp, "-"], &csv);
    assert_eq!(code, 0, "{err}");
    assert!(String::from_utf8_lossy(&out).contains("27 steps"));
    // The TOML cycle and the experiment from stdin too.
    let toml = std::fs::read(root(cyc)).unwrap();
    assert_eq!(run_stdin(&["check", exp, "-"], &toml).0, 0);
    let e = std::fs::read(root(exp)).unwrap();
    assert_eq!(run_stdin(&["check", "-", cyc], &e).0, 0);
    assert_eq!(run_stdin(&["pathways", "-", "--summary"], &e).0, 0);
    // Two stdin inputs, or a format with a sidecar on stdout: refused, nothing written.
    let (code, _, err) = run_stdin(&["check", "-", "-"], &e);
    assert_eq!(code, 2);
    assert!(err.contains("only one input can be `-`"), "{err}");
    for fmt in ["plain-csv", "npy"] {
        let (code, out, err) = run_stdin(&["export", exp, cyc, "--format", fmt, "--out", "-"], b"");
        assert_eq!(code, 2, "{fmt}");
        assert!(out.is_empty() && err.contains("-.meta.json"), "{err}");
    }
    // design --out - : the cycle file on stdout, checked from stdin.
    let (code, cycle, err) = run_stdin(
        &["design", "schemes/two-level-emission.toml", "--out", "-"],
        b"",
    );
    assert_eq!(code, 0, "{err}");
    assert!(err.contains("steps"), "the report goes to stderr: {err}");
    let (code, _, err) = run_stdin(&["check", "schemes/two-level-emission.toml", "-"], &cycle);
    assert_eq!(code, 0, "{err}");
}

/// `-` for the remaining file arguments: a picture of `draw` on stdout (not with `--png`, which
/// needs a name), and the phase list `combine --export` checks the step order against, from
/// stdin in either text format the export writes (JSON or CSV).
#[test]
fn draw_writes_to_stdout_and_combine_reads_its_export_from_stdin() {
    let (code, svg, err) = run_stdin(
        &[
            "draw",
            "wheels",
            "schemes/carbonyl-2x2.cycle.toml",
            "--out",
            "-",
        ],
        b"",
    );
    assert_eq!(code, 0, "{err}");
    assert!(String::from_utf8_lossy(&svg).contains("<svg"));
    let (code, out, err) = run_stdin(
        &[
            "draw",
            "wheels",
            "schemes/carbonyl-2x2.cycle.toml",
            "--out",
            "-",
            "--png",
        ],
        b"",
    );
    assert!(
        code == 2 && out.is_empty() && err.contains("--png needs a file name"),
        "{err}"
    );
    let (exp, cyc) = (
        "schemes/carbonyl-pump-probe.toml",
        "schemes/carbonyl-2x2.cycle.toml",
    );
    let dir = tempfile::tempdir().unwrap();
    // Four steps of data, one sample each (the values do not matter for the order check).
    let data = dir.path().join("steps.csv");
    std::fs::write(&data, "1\n2\n3\n4\n").unwrap();
    for fmt in ["csv", "json"] {
        let (code, list, err) = run_stdin(
            &[
                "export", exp, cyc, "--format", fmt, "--order", "drift", "--out", "-",
            ],
            b"",
        );
        assert_eq!(code, 0, "{err}");
        let out = dir.path().join(format!("combined-{fmt}.csv"));
        let (code, _, err) = run_stdin(
            &[
                "combine",
                exp,
                cyc,
                data.to_str().unwrap(),
                "--export",
                "-",
                "--out",
                out.to_str().unwrap(),
            ],
            &list,
        );
        assert_eq!(code, 0, "{fmt}: {err}");
        assert!(out.exists(), "{fmt}");
    }
}

#[test]
fn completions_man_and_help_with_examples_and_exit_codes() {
    for shell in ["bash", "zsh", "fish", "powershell", "elvish"] {
        let (code, out, err) = run(&["completions", shell]);
        assert_eq!(code, 0, "{err}");
        assert!(
            out.contains("pathsieve") && out.contains("export"),
            "{shell}"
        );
    }
    let (code, out, _) = run(&["man"]);
    assert_eq!(code, 0);
    assert!(
        out.starts_with(".ie") || out.contains(".TH pathsieve"),
        "{}",
        &out[..200.min(out.len())]
    );
    let (code, out, _) = run(&["man", "check"]);
    assert_eq!(code, 0);
    assert!(out.contains("pathsieve\\-check") || out.contains("pathsieve-check"));
    assert_eq!(run(&["man", "nosuch"]).0, 2);
    for sub in ["diagrams", "leakage", "wheels", "spectrum"] {
        let (code, out, _) = run(&["draw", sub, "--help"]);
        assert_eq!(code, 0);
        assert!(
            out.contains("Example") && out.contains("Exit codes"),
            "draw {sub}: {out}"
        );
        assert!(
            out.lines().all(|l| l.chars().count() <= 80),
            "draw {sub}: {out}"
        );
    }
    for cmd in [
        "pathways", "agnostic", "design", "check", "export", "combine", "draw",
    ] {
        let (code, out, _) = run(&[cmd, "--help"]);
        assert_eq!(code, 0);
        assert!(
            out.contains("Example") && out.contains("Exit codes"),
            "{cmd}: {out}"
        );
    }
    let (_, out, _) = run(&["--help"]);
    assert!(out.contains("130") && out.contains("index:M"), "{out}");
}

#[test]
fn the_design_table_fits_80_columns() {
    for exp in [
        DYE,
        "schemes/ladder-heterodyne.toml",
        "schemes/photocurrent-fifth-order.toml",
    ] {
        let (code, out, err) = run(&["design", exp]);
        assert!(code == 0 || code == 1, "{err}");
        for l in out
            .lines()
            .filter(|l| l.starts_with(['┌', '│', '├', '└', '╞']))
        {
            assert!(
                l.chars().count() <= 80,
                "{exp}: {} columns: {l}",
                l.chars().count()
            );
        }
    }
    // e(x) notation for a 27-step nested design with three outputs.
    let (_, out, _) = run(&["design", DYE]);
    assert!(out.contains("e(") && out.contains("/27"), "{out}");
}

#[test]
fn pathways_svg_honours_force_and_dash_writes_the_svg_to_stdout() {
    let d = tempfile::tempdir().unwrap();
    let svg = d.path().join("p.svg");
    let e = "schemes/two-level-emission.toml";
    assert_eq!(run(&["pathways", e, "--svg", s(&svg)]).0, 0);
    let (code, _, err) = run(&["pathways", e, "--svg", s(&svg)]);
    assert_eq!(code, 2);
    assert!(err.contains("--force"), "{err}");
    assert_eq!(run(&["pathways", e, "--svg", s(&svg), "--force"]).0, 0);
    let (code, out, _) = run(&["pathways", e, "--svg", "-"]);
    assert_eq!(code, 0);
    assert!(
        out.trim_start().starts_with("<svg") || out.starts_with("<?xml"),
        "{}",
        &out[..80.min(out.len())]
    );
    assert!(!d.path().join("-").exists());
}
