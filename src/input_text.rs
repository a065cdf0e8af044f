//! Reading any input file as UTF-8 text with a size limit, so every reader reports oversize,
//! unreadable and non-UTF-8 files the same way (file and line named).

use crate::error::InputError;
use crate::limits::MAX_FILE_BYTES;
use std::path::Path;

/// Read a whole input file as bytes, refusing directories and files above [`MAX_FILE_BYTES`].
pub fn read_bytes(path: &Path) -> Result<Vec<u8>, InputError> {
    read_bytes_limited(path, MAX_FILE_BYTES)
}

/// Read a whole input file as bytes, refusing directories and files above `limit` bytes
/// before reading.
pub fn read_bytes_limited(path: &Path, limit: u64) -> Result<Vec<u8>, InputError> {
    let meta = std::fs::metadata(path).map_err(|e| {
        InputError::new(
            path,
            None,
            None,
            format!("cannot read the file: {e}; check the path"),
        )
    })?;
    if meta.is_dir() {
        return Err(InputError::new(
            path,
            None,
            None,
            "is a directory; give a file",
        ));
    }
    if meta.len() > limit {
        return Err(InputError::new(
            path,
            None,
            None,
            format!("file is {} bytes, above the limit of {limit}", meta.len()),
        ));
    }
    std::fs::read(path)
        .map_err(|e| InputError::new(path, None, None, format!("cannot read the file: {e}")))
}

/// Read a whole input file as UTF-8, refusing oversize and non-UTF-8 files with a located error.
pub fn read_text(path: &Path) -> Result<String, InputError> {
    let bytes = read_bytes(path)?;
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
