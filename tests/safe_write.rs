//! Writes that can never lose data (issue 12): two spellings of one output, outputs that are
//! inputs, special targets under --force, output checks before any work, file modes, the
//! format `design --out` writes, and interrupted runs (exit codes 3 and 130).

mod common;

use common::path_arg as s;

use std::path::{Path, PathBuf};

fn entries(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

fn carbonyl() -> (PathBuf, PathBuf) {
    (
        common::scheme("carbonyl-pump-probe.toml"),
        common::scheme("carbonyl-2x2.cycle.toml"),
    )
}

#[test]
fn two_spellings_of_one_output_are_refused_before_anything_is_written() {
    let d = tempfile::tempdir().unwrap();
    let (exp, cyc) = carbonyl();
    std::fs::create_dir(d.path().join("d")).unwrap();
    let a = d.path().join("a.csv");
    let a2 = d.path().join(".").join("a.csv");
    let x = d.path().join("d").join("x.csv");
    let x2 = d.path().join("d").join("..").join("d").join("x.csv");
    for (out, weights) in [(&a, &a2), (&x, &x2)] {
        let (code, _, err) = common::run_cli(&[
            "export",
            s(&exp),
            s(&cyc),
            "--format",
            "csv",
            "--out",
            s(out),
            "--weights",
            s(weights),
            "--force",
        ]);
        assert_eq!(code, 2, "{err}");
        assert!(err.contains("are the same file"), "{err}");
    }
    assert_eq!(entries(d.path()), vec!["d"]);
    assert!(entries(&d.path().join("d")).is_empty());
}

#[test]
fn an_input_is_never_overwritten_even_with_force() {
    let d = tempfile::tempdir().unwrap();
    let (exp, cyc) = carbonyl();
    let copy = d.path().join("c.cycle.toml");
    std::fs::copy(&cyc, &copy).unwrap();
    let before = std::fs::read(&copy).unwrap();
    let spelled = d.path().join(".").join("c.cycle.toml");
    let (code, _, err) = common::run_cli(&[
        "export",
        s(&exp),
        s(&copy),
        "--format",
        "csv",
        "--out",
        s(&spelled),
        "--force",
    ]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("would destroy the input"), "{err}");
    assert_eq!(std::fs::read(&copy).unwrap(), before);
    let exp_copy = d.path().join("e.toml");
    std::fs::copy(&exp, &exp_copy).unwrap();
    let (code, _, err) =
        common::run_cli(&["design", s(&exp_copy), "--out", s(&exp_copy), "--force"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("would destroy the input") || err.contains(".toml"),
        "{err}"
    );
    assert_eq!(
        std::fs::read(&exp_copy).unwrap(),
        std::fs::read(&exp).unwrap()
    );
}

#[cfg(unix)]
#[test]
fn links_fifos_and_devices_are_refused_even_with_force() {
    let d = tempfile::tempdir().unwrap();
    let (exp, cyc) = carbonyl();
    let real = d.path().join("real.svg");
    std::fs::write(&real, b"keep").unwrap();
    let link = d.path().join("link.svg");
    std::os::unix::fs::symlink(&real, &link).unwrap();
    let fifo = d.path().join("fifo.svg");
    let have_fifo = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .is_ok_and(|st| st.success());
    let mut targets = vec![
        (link.clone(), "symbolic link"),
        (PathBuf::from("/dev/null"), "device"),
    ];
    if have_fifo {
        targets.push((fifo.clone(), "FIFO"));
    }
    for (t, kind) in targets {
        let (code, _, err) = common::run_cli(&[
            "draw",
            "leakage",
            s(&exp),
            s(&cyc),
            "--out",
            s(&t),
            "--force",
        ]);
        assert_eq!(code, 2, "{err}");
        assert!(
            err.contains(kind) && err.contains("even with --force"),
            "{err}"
        );
    }
    assert!(std::fs::symlink_metadata(&link)
        .unwrap()
        .file_type()
        .is_symlink());
    assert_eq!(std::fs::read(&real).unwrap(), b"keep");
    assert!(!entries(d.path())
        .iter()
        .any(|e| e.starts_with(".pathsieve-")));
}

#[test]
fn output_paths_are_checked_before_any_work() {
    let d = tempfile::tempdir().unwrap();
    // The experiment is unreadable, but the output's missing directory is reported first.
    let bad = d.path().join("broken.toml");
    std::fs::write(&bad, "order = [").unwrap();
    let out = d.path().join("missing").join("c.toml");
    let (code, _, err) = common::run_cli(&["design", s(&bad), "--out", s(&out)]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("does not exist") && err.contains("missing"),
        "{err}"
    );
    let (exp, cyc) = carbonyl();
    let (code, _, err) = common::run_cli(&[
        "export",
        s(&bad),
        s(&cyc),
        "--format",
        "csv",
        "--out",
        s(&out),
    ]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("does not exist"), "{err}");
    let _ = exp;
}

#[cfg(unix)]
#[test]
fn modes_follow_the_umask_and_survive_an_overwrite() {
    use std::os::unix::fs::PermissionsExt;
    let d = tempfile::tempdir().unwrap();
    let (exp, cyc) = carbonyl();
    let mode = |p: &Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o777;
    let probe = d.path().join("probe");
    std::fs::write(&probe, b"").unwrap(); // what this process's umask gives a new file
    let out = d.path().join("w.svg");
    let args = ["draw", "wheels", s(&cyc), "--out", s(&out)];
    let (code, _, err) = common::run_cli(&args);
    assert_eq!(code, 0, "{err}");
    assert_eq!(
        mode(&out),
        mode(&probe),
        "a new file honours the umask, not 0600"
    );
    std::fs::set_permissions(&out, std::fs::Permissions::from_mode(0o640)).unwrap();
    let (code, _, err) = common::run_cli(&[args.as_slice(), &["--force"]].concat());
    assert_eq!(code, 0, "{err}");
    assert_eq!(
        mode(&out),
        0o640,
        "--force keeps the overwritten file's mode"
    );
    let _ = exp;
}

#[test]
fn design_writes_the_format_its_out_extension_names() {
    let d = tempfile::tempdir().unwrap();
    let exp = common::scheme("carbonyl-pump-probe.toml");
    let csv = d.path().join("c.csv");
    let (code, _, err) = common::run_cli(&["design", s(&exp), "--out", s(&csv)]);
    assert_eq!(code, 0, "{err}");
    let text = std::fs::read_to_string(&csv).unwrap();
    assert!(text.starts_with("# pathsieve cycle table"), "{text}");
    let (code, out, err) = common::run_cli(&["check", s(&exp), s(&csv)]);
    assert_eq!(code, 0, "{out}{err}");
    let txt = d.path().join("c.txt");
    let (code, _, err) = common::run_cli(&["design", s(&exp), "--out", s(&txt)]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains(".toml") && err.contains(".csv"), "{err}");
    assert!(!txt.exists());
}

/// Start a long design (the fifth-order photocurrent scheme searches for minutes), send
/// SIGINT after `first` and optionally again after `second`; returns the exit code.
#[cfg(unix)]
fn interrupt_design(out: &Path, second: Option<std::time::Duration>) -> i32 {
    use std::time::Duration;
    let exp = common::scheme("photocurrent-fifth-order.toml");
    let child = std::process::Command::new(env!("CARGO_BIN_EXE_pathsieve"))
        .args(["design", s(&exp), "--out", s(out)])
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let pid = child.id().to_string();
    std::thread::sleep(Duration::from_secs(2));
    let kill = || {
        std::process::Command::new("kill")
            .args(["-INT", &pid])
            .status()
            .unwrap()
    };
    kill();
    if let Some(d) = second {
        std::thread::sleep(d);
        kill();
    }
    let out = child.wait_with_output().unwrap();
    out.status.code().unwrap_or(-1)
}

#[cfg(unix)]
#[test]
fn an_interrupted_design_says_it_is_not_proven_minimal() {
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("pc.toml");
    assert_eq!(
        interrupt_design(&out, None),
        3,
        "documented exit code of an interrupted design"
    );
    let text = std::fs::read_to_string(&out).unwrap();
    assert!(text.contains("NOT PROVEN MINIMAL"), "{text}");
    // A second signal abandons the run: exit 130, nothing written, no temporary left. It
    // follows the first after 20 ms: the search now stops about 70 ms after the first.
    let out2 = d.path().join("pc2.toml");
    let code = interrupt_design(&out2, Some(std::time::Duration::from_millis(20)));
    assert_eq!(code, 130);
    assert!(!out2.exists());
    assert!(!entries(d.path())
        .iter()
        .any(|e| e.starts_with(".pathsieve-")));
}
