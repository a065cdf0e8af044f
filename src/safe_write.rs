//! Atomic file output: this module owns how pathsieve puts bytes on disk. Every output goes
//! through [`write_atomic`], [`write_atomic_with`] (streamed) or [`write_many_atomic`], which
//! write to a temporary file in the target's own directory, fsync it, and rename it into place,
//! so a reader never sees a half-written target.
//!
//! Before any byte is written (and, through [`check_targets`], before the caller computes
//! anything) every target is checked: its directory exists; it is not a directory, symbolic
//! link, FIFO, device or socket (refused even with `force`: a rename would replace the link or
//! node, not write through it); it is not one of the command's inputs; no two targets name the
//! same file under different spellings (`a.csv`, `./a.csv`, `d/../a.csv`); and without
//! `force` it does not exist. A new file gets the permissions the umask gives; an overwritten
//! file keeps its mode. Temporaries are removed on every error; a program that is interrupted
//! calls [`remove_staged_temporaries`] from its own signal handler (the library installs none).

use std::fs::File;
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::Mutex;

use tempfile::NamedTempFile;

/// Why a file could not be written. Every variant names the path concerned.
#[derive(Debug, thiserror::Error)]
pub enum WriteError {
    /// The target already exists and `force` was not given.
    #[error("{path} already exists; use --force to overwrite")]
    Exists {
        /// The existing target.
        path: PathBuf,
    },
    /// The directory that should hold the target does not exist.
    #[error("directory {dir} does not exist (needed for {path}); create it first")]
    MissingDirectory {
        /// The missing directory.
        dir: PathBuf,
        /// The target that was to be written into it.
        path: PathBuf,
    },
    /// A component of the path that should be a directory is a regular file.
    #[error("{dir} is not a directory, so {path} cannot be created; choose another output path")]
    NotADirectory {
        /// The component that is not a directory.
        dir: PathBuf,
        /// The target that was to be written.
        path: PathBuf,
    },
    /// The target names a directory, not a file.
    #[error("{path} is a directory; give a file name instead")]
    IsDirectory {
        /// The target that is a directory.
        path: PathBuf,
    },
    /// The target exists and is not a regular file (refused even with `--force`).
    #[error("{path} is {kind}, not a regular file; outputs are written to a temporary file and renamed into place, which would replace the {kind} itself, so it is refused even with --force; give the path of a regular file")]
    NotRegular {
        /// The target.
        path: PathBuf,
        /// What it is: "a symbolic link", "a FIFO", "a device", "a socket".
        kind: &'static str,
    },
    /// The operating system refused access.
    #[error(
        "permission denied writing {path}; choose a writable directory or fix its permissions"
    )]
    PermissionDenied {
        /// The target (or its directory) that could not be written.
        path: PathBuf,
    },
    /// Two targets of one write are the same file.
    #[error("{path} and {other} are the same file; give each output its own name")]
    Duplicate {
        /// The repeated target.
        path: PathBuf,
        /// The earlier spelling of the same file.
        other: PathBuf,
    },
    /// A target is one of the command's inputs.
    #[error("{path} is the input {input}; writing it would destroy the input, so it is refused even with --force; choose another output name")]
    IsInput {
        /// The target.
        path: PathBuf,
        /// The input it coincides with.
        input: PathBuf,
    },
    /// Any other I/O failure.
    #[error("cannot write {path}: {source}")]
    Io {
        /// The target being written.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: io::Error,
    },
}

/// Temporaries being written right now, and whether [`remove_staged_temporaries`] has run.
struct Registry {
    live: Vec<PathBuf>,
    closed: bool,
}

static STAGED: Mutex<Registry> = Mutex::new(Registry {
    live: Vec::new(),
    closed: false,
});

fn registry() -> std::sync::MutexGuard<'static, Registry> {
    STAGED.lock().unwrap_or_else(|e| e.into_inner())
}

/// Remove every temporary file this process is writing and refuse further writes. For a
/// program's SIGINT/SIGTERM handler, which should exit right after. Returns how many
/// temporaries were removed.
pub fn remove_staged_temporaries() -> usize {
    let mut r = registry();
    r.closed = true;
    let n = r.live.len();
    for p in r.live.drain(..) {
        let _ = std::fs::remove_file(p);
    }
    n
}

/// The directory a target lives in (`.` for a bare file name).
fn parent_dir(path: &Path) -> PathBuf {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// Turn an I/O error into the matching typed error for `path`.
fn classify(path: &Path, source: io::Error) -> WriteError {
    match source.kind() {
        io::ErrorKind::PermissionDenied => WriteError::PermissionDenied {
            path: path.to_path_buf(),
        },
        io::ErrorKind::AlreadyExists => WriteError::Exists {
            path: path.to_path_buf(),
        },
        _ => WriteError::Io {
            path: path.to_path_buf(),
            source,
        },
    }
}

/// The target's directory must exist and be a directory; returns its canonical form.
fn check_dir(path: &Path) -> Result<PathBuf, WriteError> {
    let dir = parent_dir(path);
    let not_dir = || WriteError::NotADirectory {
        dir: dir.clone(),
        path: path.to_path_buf(),
    };
    match std::fs::metadata(&dir) {
        Ok(m) if m.is_dir() => {}
        Ok(_) => return Err(not_dir()),
        Err(e) if e.kind() == io::ErrorKind::NotFound => {
            return Err(WriteError::MissingDirectory {
                dir,
                path: path.to_path_buf(),
            });
        }
        // ENOTDIR (20 on Linux and the BSDs): some ancestor is a regular file.
        Err(e) if cfg!(unix) && e.raw_os_error() == Some(20) => return Err(not_dir()),
        Err(e) => return Err(classify(path, e)),
    }
    std::fs::canonicalize(&dir).map_err(|e| classify(path, e))
}

/// The file a target names, spelled canonically: the canonical directory plus the file name
/// (the target itself may not exist yet, and a symbolic link is not followed).
fn identity(path: &Path) -> Result<PathBuf, WriteError> {
    let dir = check_dir(path)?;
    match path.file_name() {
        Some(name) if !path.ends_with("..") => Ok(dir.join(name)),
        _ => Err(WriteError::IsDirectory {
            path: path.to_path_buf(),
        }),
    }
}

/// What a non-regular file is, for the refusal message.
fn special_kind(m: &std::fs::Metadata) -> Option<&'static str> {
    let t = m.file_type();
    if t.is_symlink() {
        return Some("a symbolic link");
    }
    if t.is_file() {
        return None;
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return Some("a FIFO (named pipe)");
        }
        if t.is_char_device() || t.is_block_device() {
            return Some("a device");
        }
        if t.is_socket() {
            return Some("a socket");
        }
    }
    Some("not a regular file")
}

/// True when both paths exist and are the same file (same device and inode on Unix).
fn same_existing_file(a: &Path, b: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        if let (Ok(x), Ok(y)) = (std::fs::metadata(a), std::fs::metadata(b)) {
            return x.dev() == y.dev() && x.ino() == y.ino();
        }
    }
    let _ = (a, b);
    false
}

/// Check one target: directory, input collision, kind, and existence without `force`.
fn precheck(path: &Path, ident: &Path, inputs: &[&Path], force: bool) -> Result<(), WriteError> {
    for input in inputs {
        let same = std::fs::canonicalize(input).is_ok_and(|c| c == ident)
            || same_existing_file(path, input);
        if same {
            return Err(WriteError::IsInput {
                path: path.to_path_buf(),
                input: input.to_path_buf(),
            });
        }
    }
    match std::fs::symlink_metadata(path) {
        Ok(m) if m.is_dir() => Err(WriteError::IsDirectory {
            path: path.to_path_buf(),
        }),
        Ok(m) => match special_kind(&m) {
            Some(kind) => Err(WriteError::NotRegular {
                path: path.to_path_buf(),
                kind,
            }),
            None if !force => Err(WriteError::Exists {
                path: path.to_path_buf(),
            }),
            None => Ok(()),
        },
        Err(e) if e.kind() == io::ErrorKind::NotFound => Ok(()),
        Err(e) => Err(classify(path, e)),
    }
}

/// Check every output of a command before any work: each target as described in the module
/// documentation, no two targets the same file, no target equal to one of `inputs`.
///
/// # Errors
/// [`WriteError::Duplicate`], [`WriteError::IsInput`], [`WriteError::NotRegular`], and the
/// errors of [`write_atomic`].
pub fn check_targets(outputs: &[&Path], inputs: &[&Path], force: bool) -> Result<(), WriteError> {
    let mut seen: Vec<(PathBuf, &Path)> = Vec::with_capacity(outputs.len());
    for &path in outputs {
        let ident = identity(path)?;
        if let Some((_, other)) = seen
            .iter()
            .find(|(i, o)| *i == ident || same_existing_file(o, path))
        {
            return Err(WriteError::Duplicate {
                path: path.to_path_buf(),
                other: other.to_path_buf(),
            });
        }
        precheck(path, &ident, inputs, force)?;
        seen.push((ident, path));
    }
    Ok(())
}

/// A temporary file being written, registered so an interrupted program can remove it.
struct Staged {
    tmp: Option<NamedTempFile>,
}

impl Drop for Staged {
    fn drop(&mut self) {
        if let Some(tmp) = self.tmp.take() {
            let p = tmp.path().to_path_buf();
            let mut r = registry();
            r.live.retain(|x| *x != p);
            drop(tmp); // deletes the file
        }
    }
}

/// Create a temporary file next to `path` (umask permissions, or the mode of the file it will
/// replace), fill it through `fill` and fsync it.
fn stage(
    path: &Path,
    fill: impl FnOnce(&mut dyn Write) -> io::Result<()>,
) -> Result<Staged, WriteError> {
    let dir = parent_dir(path);
    let mut builder = tempfile::Builder::new();
    builder.prefix(".pathsieve-").suffix(".tmp");
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        // Passed to open(2), so the umask applies, as for any new file.
        builder.permissions(std::fs::Permissions::from_mode(0o666));
    }
    let staged = {
        let mut r = registry();
        if r.closed {
            return Err(classify(
                path,
                io::Error::new(io::ErrorKind::Interrupted, "interrupted"),
            ));
        }
        let tmp = builder.tempfile_in(&dir).map_err(|e| classify(path, e))?;
        r.live.push(tmp.path().to_path_buf());
        Staged { tmp: Some(tmp) }
    };
    let file = staged.tmp.as_ref().map(NamedTempFile::as_file);
    let Some(file) = file else {
        return Err(classify(path, io::Error::other("no temporary file")));
    };
    match std::fs::metadata(path) {
        Ok(old) if old.is_file() => file
            .set_permissions(old.permissions())
            .map_err(|e| classify(path, e))?,
        _ => {}
    }
    let mut w = BufWriter::new(file);
    fill(&mut w).map_err(|e| classify(path, e))?;
    w.flush().map_err(|e| classify(path, e))?;
    drop(w);
    file.sync_all().map_err(|e| classify(path, e))?;
    Ok(staged)
}

/// Rename a staged file onto `path` (refusing to replace an existing file unless `force`), then
/// fsync the directory so the rename itself survives a crash (best effort: not every platform
/// can open a directory).
fn commit(mut staged: Staged, path: &Path, force: bool) -> Result<(), WriteError> {
    let Some(tmp) = staged.tmp.take() else {
        return Err(classify(path, io::Error::other("no temporary file")));
    };
    let tmp_path = tmp.path().to_path_buf();
    {
        let mut r = registry();
        r.live.retain(|x| *x != tmp_path);
        if r.closed {
            drop(tmp);
            return Err(classify(
                path,
                io::Error::new(io::ErrorKind::Interrupted, "interrupted"),
            ));
        }
        let result = if force {
            tmp.persist(path)
        } else {
            tmp.persist_noclobber(path)
        };
        // On failure the PersistError drops the temporary file, which deletes it.
        result.map_err(|e| classify(path, e.error))?;
    }
    if let Ok(d) = File::open(parent_dir(path)) {
        let _ = d.sync_all();
    }
    Ok(())
}

/// Write `bytes` to `path` atomically.
///
/// The data goes to a temporary file in the same directory, is fsynced, and is renamed onto
/// `path`; on any failure the temporary file is removed and `path` is untouched. Without `force`
/// an existing `path` is never replaced (the check is repeated atomically at rename time, so a
/// file created meanwhile is not clobbered either).
///
/// # Errors
/// [`WriteError::Exists`] (no `force`), [`WriteError::MissingDirectory`],
/// [`WriteError::NotADirectory`], [`WriteError::IsDirectory`], [`WriteError::NotRegular`],
/// [`WriteError::PermissionDenied`], or [`WriteError::Io`] for anything else.
pub fn write_atomic(path: &Path, bytes: &[u8], force: bool) -> Result<(), WriteError> {
    write_atomic_with(path, force, |w| w.write_all(bytes))
}

/// [`write_atomic`] for output produced piece by piece: `fill` streams into the (buffered)
/// temporary file, so a large output never has to be built in memory first.
///
/// # Errors
/// As [`write_atomic`]; an error returned by `fill` becomes [`WriteError::Io`] and the
/// temporary file is removed.
pub fn write_atomic_with(
    path: &Path,
    force: bool,
    fill: impl FnOnce(&mut dyn Write) -> io::Result<()>,
) -> Result<(), WriteError> {
    check_targets(&[path], &[], force)?;
    let staged = stage(path, fill)?;
    commit(staged, path, force)
}

/// Write several files, checking all of them before any target is touched.
///
/// Phase 1 checks every target (and rejects two spellings of one file); phase 2 writes and
/// fsyncs every temporary file; only then does phase 3 rename them into place. So a missing
/// directory, an existing file, a permission problem or a full disk stops the whole set before
/// any target appears. A failure inside phase 3 itself (e.g. another process creating a target
/// in the meantime) can leave the targets before it in place; the error names the one that
/// failed.
///
/// # Errors
/// As [`write_atomic`], plus [`WriteError::Duplicate`].
pub fn write_many_atomic(files: &[(PathBuf, Vec<u8>)], force: bool) -> Result<(), WriteError> {
    let set = files
        .iter()
        .map(|(p, b)| (p.clone(), Content::Bytes(b.as_slice())))
        .collect();
    write_set_atomic(set, force)
}

/// What one file of a [`write_set_atomic`] call holds.
pub enum Content<'a> {
    /// Bytes already in memory.
    Bytes(&'a [u8]),
    /// Bytes produced piece by piece into the temporary file.
    Stream(Filler<'a>),
}

/// A function that streams a file's bytes into the writer it is given.
pub type Filler<'a> = Box<dyn FnOnce(&mut dyn Write) -> io::Result<()> + 'a>;

/// [`write_many_atomic`] where some files are streamed (see [`Content`]).
///
/// # Errors
/// As [`write_many_atomic`].
pub fn write_set_atomic(files: Vec<(PathBuf, Content<'_>)>, force: bool) -> Result<(), WriteError> {
    let targets: Vec<&Path> = files.iter().map(|(p, _)| p.as_path()).collect();
    check_targets(&targets, &[], force)?;
    let mut staged = Vec::with_capacity(files.len());
    for (path, content) in files {
        let tmp = match content {
            Content::Bytes(b) => stage(&path, |w| w.write_all(b))?,
            Content::Stream(f) => stage(&path, f)?,
        };
        staged.push((tmp, path));
    }
    for (tmp, path) in staged {
        commit(tmp, &path, force)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests;
