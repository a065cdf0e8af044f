//! Reading any input file as UTF-8 text with a size limit, so every reader reports oversize,
//! unreadable and non-UTF-8 files the same way (file and line named).

use crate::error::InputError;
use crate::limits::MAX_FILE_BYTES;
use std::path::Path;

/// Read a whole input file as UTF-8, refusing oversize and non-UTF-8 files with a located error.
pub fn read_text(path: &Path) -> Result<String, InputError> {
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
    if meta.len() > MAX_FILE_BYTES {
        return Err(InputError::new(
            path,
            None,
            None,
            format!(
                "file is {} bytes, above the limit of {MAX_FILE_BYTES}",
                meta.len()
            ),
        ));
    }
    let bytes = std::fs::read(path)
        .map_err(|e| InputError::new(path, None, None, format!("cannot read the file: {e}")))?;
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
