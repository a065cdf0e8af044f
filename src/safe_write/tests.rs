//! Tests of atomic output: no overwrite without force, no half-written or special targets,
//! modes kept, two spellings of one file refused.

use super::*;

fn dir_entries(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

#[test]
fn writes_new_file_and_leaves_no_temporaries() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("out.csv");
    write_atomic(&p, b"hello", false).unwrap();
    assert_eq!(std::fs::read(&p).unwrap(), b"hello");
    assert_eq!(dir_entries(d.path()), vec!["out.csv"]);
}

#[test]
fn refuses_to_overwrite_without_force_and_keeps_old_content() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("out.csv");
    std::fs::write(&p, b"old").unwrap();
    let err = write_atomic(&p, b"new", false).unwrap_err();
    assert!(matches!(err, WriteError::Exists { .. }));
    assert!(err.to_string().contains("use --force to overwrite"));
    assert!(err.to_string().contains("out.csv"));
    assert_eq!(std::fs::read(&p).unwrap(), b"old");
    assert_eq!(dir_entries(d.path()), vec!["out.csv"]);
}

#[test]
fn overwrites_with_force() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("out.csv");
    std::fs::write(&p, b"old").unwrap();
    write_atomic(&p, b"new", true).unwrap();
    assert_eq!(std::fs::read(&p).unwrap(), b"new");
}

#[test]
fn missing_directory_is_named() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("nope").join("out.csv");
    let err = write_atomic(&p, b"x", false).unwrap_err();
    match &err {
        WriteError::MissingDirectory { dir, .. } => assert!(dir.ends_with("nope")),
        other => panic!("unexpected {other:?}"),
    }
    assert!(err.to_string().contains("nope"));
}

#[test]
fn target_that_is_a_directory_is_rejected_even_with_force() {
    let d = tempfile::tempdir().unwrap();
    let err = write_atomic(d.path(), b"x", true).unwrap_err();
    assert!(matches!(err, WriteError::IsDirectory { .. }), "{err:?}");
}

#[test]
fn path_under_a_regular_file_is_unwritable() {
    // Works as root too, unlike permission bits (root bypasses those).
    let d = tempfile::tempdir().unwrap();
    let f = d.path().join("plain");
    std::fs::write(&f, b"").unwrap();
    for p in [f.join("out.csv"), f.join("sub").join("out.csv")] {
        let err = write_atomic(&p, b"x", false).unwrap_err();
        assert!(matches!(err, WriteError::NotADirectory { .. }), "{err:?}");
        assert!(err.to_string().contains("plain"));
    }
}

#[cfg(unix)]
#[test]
fn read_only_directory_gives_permission_denied() {
    use std::os::unix::fs::PermissionsExt;
    let d = tempfile::tempdir().unwrap();
    let ro = d.path().join("ro");
    std::fs::create_dir(&ro).unwrap();
    std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o555)).unwrap();
    // Root (and some CI sandboxes) bypass permission bits; detect that and skip.
    let probe = ro.join("probe");
    if std::fs::write(&probe, b"").is_ok() {
        let _ = std::fs::remove_file(&probe);
        eprintln!("note: permission bits are not enforced here (root?); test skipped");
    } else {
        let err = write_atomic(&ro.join("out.csv"), b"x", false).unwrap_err();
        assert!(
            matches!(err, WriteError::PermissionDenied { .. }),
            "{err:?}"
        );
        assert!(err.to_string().contains("out.csv"));
    }
    std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o755)).unwrap();
}

#[test]
fn many_writes_all_when_all_are_fine() {
    let d = tempfile::tempdir().unwrap();
    let files = vec![
        (d.path().join("a.npy"), b"A".to_vec()),
        (d.path().join("b.csv"), b"B".to_vec()),
    ];
    write_many_atomic(&files, false).unwrap();
    assert_eq!(dir_entries(d.path()), vec!["a.npy", "b.csv"]);
    assert_eq!(std::fs::read(d.path().join("b.csv")).unwrap(), b"B");
}

#[test]
fn many_writes_none_when_one_target_exists() {
    let d = tempfile::tempdir().unwrap();
    std::fs::write(d.path().join("b.csv"), b"old").unwrap();
    let files = vec![
        (d.path().join("a.npy"), b"A".to_vec()),
        (d.path().join("b.csv"), b"B".to_vec()),
    ];
    let err = write_many_atomic(&files, false).unwrap_err();
    assert!(matches!(err, WriteError::Exists { .. }));
    assert_eq!(dir_entries(d.path()), vec!["b.csv"]);
    assert_eq!(std::fs::read(d.path().join("b.csv")).unwrap(), b"old");
}

#[test]
fn many_writes_none_when_one_directory_is_missing() {
    let d = tempfile::tempdir().unwrap();
    let files = vec![
        (d.path().join("a.npy"), b"A".to_vec()),
        (d.path().join("missing").join("b.csv"), b"B".to_vec()),
    ];
    let err = write_many_atomic(&files, false).unwrap_err();
    assert!(matches!(err, WriteError::MissingDirectory { .. }));
    assert!(dir_entries(d.path()).is_empty());
}

#[test]
fn many_rejects_duplicate_targets() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("a.npy");
    let files = vec![(p.clone(), b"A".to_vec()), (p, b"B".to_vec())];
    let err = write_many_atomic(&files, false).unwrap_err();
    assert!(matches!(err, WriteError::Duplicate { .. }));
    assert!(dir_entries(d.path()).is_empty());
}

#[test]
fn two_spellings_of_one_file_are_one_file() {
    let d = tempfile::tempdir().unwrap();
    let sub = d.path().join("d");
    std::fs::create_dir(&sub).unwrap();
    let a = sub.join("x.csv");
    let b = d.path().join("d").join("..").join("d").join("x.csv");
    let c = sub.join(".").join("x.csv");
    for other in [b, c] {
        let files = vec![(a.clone(), b"A".to_vec()), (other, b"B".to_vec())];
        let err = write_many_atomic(&files, true).unwrap_err();
        assert!(matches!(err, WriteError::Duplicate { .. }), "{err:?}");
        assert!(err.to_string().contains("are the same file"), "{err}");
    }
    assert!(dir_entries(&sub).is_empty());
}

#[test]
fn an_input_is_never_an_output() {
    let d = tempfile::tempdir().unwrap();
    let input = d.path().join("in.toml");
    std::fs::write(&input, b"keep").unwrap();
    let spelled = d.path().join(".").join("in.toml");
    let err = check_targets(&[&spelled], &[&input], true).unwrap_err();
    assert!(matches!(err, WriteError::IsInput { .. }), "{err:?}");
    assert_eq!(std::fs::read(&input).unwrap(), b"keep");
}

#[cfg(unix)]
#[test]
fn links_fifos_and_devices_are_refused_even_with_force() {
    let d = tempfile::tempdir().unwrap();
    let real = d.path().join("real.csv");
    std::fs::write(&real, b"old").unwrap();
    let link = d.path().join("link.csv");
    std::os::unix::fs::symlink(&real, &link).unwrap();
    let err = write_atomic(&link, b"new", true).unwrap_err();
    assert!(
        matches!(
            err,
            WriteError::NotRegular {
                kind: "a symbolic link",
                ..
            }
        ),
        "{err:?}"
    );
    assert!(err.to_string().contains("even with --force"));
    assert!(std::fs::symlink_metadata(&link)
        .unwrap()
        .file_type()
        .is_symlink());
    assert_eq!(std::fs::read(&real).unwrap(), b"old");
    let err = write_atomic(Path::new("/dev/null"), b"x", true).unwrap_err();
    assert!(
        matches!(
            err,
            WriteError::NotRegular {
                kind: "a device",
                ..
            }
        ),
        "{err:?}"
    );
    let fifo = d.path().join("fifo");
    let made = std::process::Command::new("mkfifo").arg(&fifo).status();
    if made.is_ok_and(|s| s.success()) {
        let err = write_atomic(&fifo, b"x", true).unwrap_err();
        assert!(matches!(err, WriteError::NotRegular { .. }), "{err:?}");
    }
    assert_eq!(dir_entries(d.path()).len(), 3);
}

#[cfg(unix)]
#[test]
fn new_files_follow_the_umask_and_overwrites_keep_the_mode() {
    use std::os::unix::fs::PermissionsExt;
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("new.csv");
    write_atomic(&p, b"x", false).unwrap();
    // Compare with what the process's umask gives an ordinary new file.
    let probe = d.path().join("probe");
    std::fs::write(&probe, b"").unwrap();
    let mode = |q: &Path| std::fs::metadata(q).unwrap().permissions().mode() & 0o777;
    assert_eq!(mode(&p), mode(&probe));
    std::fs::set_permissions(&p, std::fs::Permissions::from_mode(0o640)).unwrap();
    write_atomic(&p, b"y", true).unwrap();
    assert_eq!(mode(&p), 0o640);
    assert_eq!(std::fs::read(&p).unwrap(), b"y");
}

#[test]
fn streamed_output_failure_leaves_nothing() {
    let d = tempfile::tempdir().unwrap();
    let p = d.path().join("big.csv");
    let err = write_atomic_with(&p, false, |w| {
        w.write_all(b"partial")?;
        Err(io::Error::other("generator failed"))
    })
    .unwrap_err();
    assert!(matches!(err, WriteError::Io { .. }));
    assert!(dir_entries(d.path()).is_empty());
    write_atomic_with(&p, false, |w| {
        for k in 0..1000 {
            writeln!(w, "{k}")?;
        }
        Ok(())
    })
    .unwrap();
    assert_eq!(std::fs::read_to_string(&p).unwrap().lines().count(), 1000);
}
