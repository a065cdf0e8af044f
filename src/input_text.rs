//! Reading any input file as UTF-8 text with a size limit, so every reader reports oversize,
//! unreadable and non-UTF-8 files the same way (file and line named).
//!
//! The limit is enforced while reading (at most `limit + 1` bytes are ever taken from the
//! source), not from the file's metadata, so pipes, FIFOs, process substitutions and device
//! nodes such as `/dev/zero` are bounded exactly like regular files. The path `-` is standard
//! input, read once and kept for the process (a command has at most one `-` input).

use crate::error::InputError;
use crate::limits::MAX_FILE_BYTES;
use std::io::Read;
use std::path::Path;

/// Read a whole input file as bytes, refusing directories and inputs above [`MAX_FILE_BYTES`].
pub fn read_bytes(path: &Path) -> Result<Vec<u8>, InputError> {
    read_bytes_limited(path, MAX_FILE_BYTES)
}

/// Read a whole input as bytes, refusing directories and inputs above `limit` bytes.
///
/// Works for regular files, pipes, FIFOs and devices alike: the source is read through a
/// `take(limit + 1)` adapter, so no more than `limit + 1` bytes are ever held in memory, and a
/// source that yields more is refused.
pub fn read_bytes_limited(path: &Path, limit: u64) -> Result<Vec<u8>, InputError> {
    if is_stdin(path) {
        return read_stdin(path, limit);
    }
    let file = std::fs::File::open(path).map_err(|e| {
        InputError::new(
            path,
            None,
            None,
            format!("cannot read the file: {e}; check the path"),
        )
    })?;
    let meta = file.metadata().ok();
    if meta.as_ref().is_some_and(|m| m.is_dir()) {
        return Err(InputError::new(
            path,
            None,
            None,
            "is a directory; give a file",
        ));
    }
    let known = meta.filter(|m| m.is_file()).map(|m| m.len());
    if let Some(len) = known.filter(|&len| len > limit) {
        return Err(too_big(path, limit, Some(len)));
    }
    read_capped(file, limit).map_err(|e| match e {
        CappedError::TooBig => too_big(path, limit, None),
        CappedError::Io(e) => {
            InputError::new(path, None, None, format!("cannot read the file: {e}"))
        }
    })
}

/// True for the path `-`, which means standard input.
pub fn is_stdin(path: &Path) -> bool {
    path.as_os_str() == "-"
}

/// Standard input, read once and kept: a command that reads its one `-` input twice (its
/// bytes for a checksum, then its parsed form) gets the same bytes both times.
static STDIN: std::sync::OnceLock<Result<Vec<u8>, String>> = std::sync::OnceLock::new();

fn read_stdin(path: &Path, limit: u64) -> Result<Vec<u8>, InputError> {
    let got = STDIN.get_or_init(|| {
        read_capped(
            std::io::stdin().lock(),
            crate::limits::MAX_FILE_BYTES.max(limit),
        )
        .map_err(|e| match e {
            CappedError::TooBig => String::new(),
            CappedError::Io(e) => format!("cannot read standard input: {e}"),
        })
    });
    match got {
        Ok(b) if b.len() as u64 > limit => Err(too_big(path, limit, None)),
        Ok(b) => Ok(b.clone()),
        Err(m) if m.is_empty() => Err(too_big(path, limit, None)),
        Err(m) => Err(InputError::new(path, None, None, m.clone())),
    }
}

/// Why [`read_capped`] failed.
#[derive(Debug)]
pub enum CappedError {
    /// The source holds more than the limit.
    TooBig,
    /// Reading failed.
    Io(std::io::Error),
}

/// Read everything from `source`, refusing once more than `limit` bytes arrive. At most
/// `limit + 1` bytes are read and at most that much memory is used (the buffer grows with
/// the data, it is not reserved up front).
pub fn read_capped(source: impl Read, limit: u64) -> Result<Vec<u8>, CappedError> {
    let mut buf = Vec::new();
    source
        .take(limit.saturating_add(1))
        .read_to_end(&mut buf)
        .map_err(CappedError::Io)?;
    if buf.len() as u64 > limit {
        return Err(CappedError::TooBig);
    }
    Ok(buf)
}

fn too_big(path: &Path, limit: u64, len: Option<u64>) -> InputError {
    let size = match len {
        Some(n) => format!("the file is {n} bytes"),
        None => format!("the input holds more than {limit} bytes"),
    };
    InputError::new(
        path,
        None,
        None,
        format!("{size}, above the limit of {limit} bytes; give a smaller file (limits: docs/limits.md)"),
    )
}

/// Read a whole input file as UTF-8, refusing oversize and non-UTF-8 files with a located error.
pub fn read_text(path: &Path) -> Result<String, InputError> {
    read_text_limited(path, MAX_FILE_BYTES)
}

/// [`read_text`] with a caller-chosen size limit.
pub fn read_text_limited(path: &Path, limit: u64) -> Result<String, InputError> {
    let bytes = read_bytes_limited(path, limit)?;
    String::from_utf8(bytes).map_err(|e| {
        let good = e.utf8_error().valid_up_to();
        let line = e.as_bytes()[..good].iter().filter(|&&c| c == b'\n').count() + 1;
        InputError::new(
            path,
            Some(line),
            None,
            format!("the file is not UTF-8 text (invalid byte at offset {good}); save it as UTF-8"),
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn capped_reader_stops_at_limit_plus_one() {
        let endless = std::io::repeat(b'x');
        assert!(matches!(
            read_capped(endless, 1000),
            Err(CappedError::TooBig)
        ));
        assert_eq!(read_capped(&b"abc"[..], 3).unwrap(), b"abc");
        assert!(matches!(
            read_capped(&b"abcd"[..], 3),
            Err(CappedError::TooBig)
        ));
    }

    #[cfg(unix)]
    #[test]
    fn devices_are_bounded() {
        let err = read_bytes_limited(Path::new("/dev/zero"), 4096).unwrap_err();
        assert!(err.message.contains("above the limit of 4096"), "{err}");
    }
}
