//! NPY array files: this module owns the byte layout of NumPy's `.npy` format, writing version
//! 1.0 files of little-endian `<f8`, `<c16` and `<i8` arrays in C order and reading arrays as
//! NumPy writes them (versions 1.0 and 2.0; float32/64, int32/64, complex64/128 in either byte
//! order; C or Fortran order). The layout follows the format description in the NumPy
//! documentation (`numpy.lib.format`; NumPy Enhancement Proposal 1, "A simple file format for
//! NumPy arrays", R. Kern, 2007, author and year from memory): the magic string `\x93NUMPY`,
//! two version bytes, a little-endian header length (u16 in 1.0, u32 in 2.0), then an ASCII
//! Python dict literal with the keys `descr`, `fortran_order` and `shape`, padded with spaces
//! and ended by `\n` so that the data starts at a multiple of 64 bytes. The reader never
//! panics: malformed input is a typed [`NpyError`].

use num_complex::Complex64;

/// The six magic bytes that open every NPY file.
const MAGIC: &[u8; 6] = b"\x93NUMPY";
/// Data offset alignment required by current NumPy (older releases used 16).
const ALIGN: usize = 64;
/// Most dimensions accepted (NumPy 1.x allows 32).
pub const MAX_NDIM: usize = 32;
/// Longest header the reader accepts (NumPy itself refuses headers above 10 000 bytes by
/// default; we allow a little more).
const MAX_HEADER: usize = 65_536;

/// Why NPY bytes could not be written or read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum NpyError {
    /// The shape does not multiply to the number of elements given.
    #[error("shape {shape:?} holds {expected} elements but {found} were given")]
    ShapeMismatch {
        /// The requested shape.
        shape: Vec<usize>,
        /// Product of the shape.
        expected: usize,
        /// Number of elements supplied.
        found: usize,
    },
    /// Too many dimensions.
    #[error("{ndim} dimensions requested; at most {MAX_NDIM} are supported")]
    TooManyDims {
        /// Number of dimensions requested.
        ndim: usize,
    },
    /// The input is shorter than the format requires.
    #[error("NPY data truncated: {what} needs {needed} bytes, only {available} present")]
    Truncated {
        /// The part being read.
        what: &'static str,
        /// Bytes needed.
        needed: usize,
        /// Bytes available.
        available: usize,
    },
    /// The file does not start with `\x93NUMPY`.
    #[error("not an NPY file: it does not start with the magic bytes \\x93NUMPY")]
    BadMagic,
    /// A format version other than 1.0 or 2.0.
    #[error("NPY format version {major}.{minor} is not supported; write version 1.0 or 2.0")]
    UnsupportedVersion {
        /// Major version byte.
        major: u8,
        /// Minor version byte.
        minor: u8,
    },
    /// The header is not the expected dict literal.
    #[error("malformed NPY header: {reason}")]
    BadHeader {
        /// What is wrong with it.
        reason: String,
    },
    /// A dtype other than float32/64, int32/64, complex64/128.
    #[error("NPY dtype {descr:?} is not supported; save float64, float32, int64, int32, complex128 or complex64 (e.g. a.astype(np.float64))")]
    UnsupportedDtype {
        /// The `descr` found.
        descr: String,
    },
    /// The data section has the wrong length.
    #[error("NPY data section has {found} bytes but shape {shape:?} of {descr} needs {expected}")]
    DataLength {
        /// Shape from the header.
        shape: Vec<usize>,
        /// The dtype.
        descr: &'static str,
        /// Bytes needed.
        expected: usize,
        /// Bytes present.
        found: usize,
    },
}

/// The element data of an NPY array.
#[derive(Debug, Clone, PartialEq)]
pub enum NpyData {
    /// `f8` or `f4` (either byte order): IEEE 754 values, widened exactly to f64.
    F64(Vec<f64>),
    /// `c16` or `c8`: (real, imaginary) pairs, widened exactly to f64.
    C128(Vec<Complex64>),
    /// `i8` or `i4`: signed integers, widened to i64.
    I64(Vec<i64>),
}

/// An array read from NPY bytes: its shape and its elements in C (row-major) order.
#[derive(Debug, Clone, PartialEq)]
pub struct NpyArray {
    /// Extent of each dimension (empty for a scalar).
    pub shape: Vec<usize>,
    /// The elements, row-major.
    pub data: NpyData,
    /// The dtype as the file declared it, e.g. `>f4`.
    pub descr: &'static str,
    /// True when the file stored the elements in Fortran (column-major) order.
    pub fortran_order: bool,
}

/// Number of elements of `shape`, or `None` on overflow.
fn element_count(shape: &[usize]) -> Option<usize> {
    shape.iter().try_fold(1usize, |acc, &d| acc.checked_mul(d))
}

/// Python tuple literal for a shape: `()`, `(5,)`, `(2, 3)`.
fn shape_literal(shape: &[usize]) -> String {
    match shape {
        [] => "()".to_string(),
        [n] => format!("({n},)"),
        _ => {
            let parts: Vec<String> = shape.iter().map(|d| d.to_string()).collect();
            format!("({})", parts.join(", "))
        }
    }
}

/// Build the full preamble (magic, version 1.0, length, padded header) for a C-order array.
fn preamble(descr: &str, shape: &[usize], n: usize) -> Result<Vec<u8>, NpyError> {
    if shape.len() > MAX_NDIM {
        return Err(NpyError::TooManyDims { ndim: shape.len() });
    }
    match element_count(shape) {
        Some(e) if e == n => {}
        expected => {
            return Err(NpyError::ShapeMismatch {
                shape: shape.to_vec(),
                expected: expected.unwrap_or(usize::MAX),
                found: n,
            })
        }
    }
    let mut dict = format!(
        "{{'descr': '{descr}', 'fortran_order': False, 'shape': {}, }}",
        shape_literal(shape)
    );
    // 10 = magic (6) + version (2) + header length (2); +1 for the final newline.
    let unpadded = 10 + dict.len() + 1;
    let pad = (ALIGN - unpadded % ALIGN) % ALIGN;
    dict.extend(std::iter::repeat_n(' ', pad));
    dict.push('\n');
    // With at most MAX_NDIM dimensions of at most 20 digits each the header is < 1 KiB.
    let hlen = u16::try_from(dict.len()).map_err(|_| NpyError::BadHeader {
        reason: "header longer than 65535 bytes".into(),
    })?;
    let mut out = Vec::with_capacity(10 + dict.len() + n * 16);
    out.extend_from_slice(MAGIC);
    out.extend_from_slice(&[1, 0]);
    out.extend_from_slice(&hlen.to_le_bytes());
    out.extend_from_slice(dict.as_bytes());
    Ok(out)
}

/// NPY 1.0 bytes for a C-order `<f8` array of the given shape.
///
/// # Errors
/// [`NpyError::ShapeMismatch`] if the shape's product is not `data.len()`,
/// [`NpyError::TooManyDims`] above [`MAX_NDIM`] dimensions.
pub fn npy_f64(shape: &[usize], data: &[f64]) -> Result<Vec<u8>, NpyError> {
    let mut out = preamble("<f8", shape, data.len())?;
    for x in data {
        out.extend_from_slice(&x.to_le_bytes());
    }
    Ok(out)
}

/// NPY 1.0 bytes for a C-order `<c16` (complex128) array of the given shape.
///
/// # Errors
/// As [`npy_f64`].
pub fn npy_c128(shape: &[usize], data: &[Complex64]) -> Result<Vec<u8>, NpyError> {
    let mut out = preamble("<c16", shape, data.len())?;
    for z in data {
        out.extend_from_slice(&z.re.to_le_bytes());
        out.extend_from_slice(&z.im.to_le_bytes());
    }
    Ok(out)
}

/// NPY 1.0 bytes of a NumPy string scalar (`<U` dtype, shape `()`, UTF-32 little-endian):
/// `np.load` returns it without pickling, `str(a)` is the text. For metadata inside an NPZ.
///
/// # Errors
/// As [`npy_f64`] (never, for a scalar).
pub fn npy_text(text: &str) -> Result<Vec<u8>, NpyError> {
    let chars: Vec<char> = text.chars().collect();
    let descr = format!("<U{}", chars.len().max(1));
    let mut out = preamble(&descr, &[], 1)?;
    for c in &chars {
        out.extend_from_slice(&u32::from(*c).to_le_bytes());
    }
    if chars.is_empty() {
        out.extend_from_slice(&[0; 4]);
    }
    Ok(out)
}

/// NPY 1.0 bytes for a C-order `<i8` (int64) array of the given shape.
///
/// # Errors
/// As [`npy_f64`].
pub fn npy_i64(shape: &[usize], data: &[i64]) -> Result<Vec<u8>, NpyError> {
    let mut out = preamble("<i8", shape, data.len())?;
    for x in data {
        out.extend_from_slice(&x.to_le_bytes());
    }
    Ok(out)
}

/// One value of the header dict.
#[derive(Debug, PartialEq)]
enum Value {
    Str(String),
    Bool(bool),
    Tuple(Vec<usize>),
}

/// A tiny parser for the subset of Python literals NPY headers use.
struct Parser<'a> {
    s: &'a [u8],
    i: usize,
}

impl<'a> Parser<'a> {
    fn err<T>(&self, what: &str) -> Result<T, NpyError> {
        Err(NpyError::BadHeader {
            reason: format!("{what} at byte {} of the header", self.i),
        })
    }
    fn ws(&mut self) {
        while self.i < self.s.len() && matches!(self.s[self.i], b' ' | b'\t' | b'\n' | b'\r') {
            self.i += 1;
        }
    }
    fn peek(&self) -> Option<u8> {
        self.s.get(self.i).copied()
    }
    fn expect(&mut self, c: u8) -> Result<(), NpyError> {
        self.ws();
        if self.peek() == Some(c) {
            self.i += 1;
            Ok(())
        } else {
            self.err(&format!("expected '{}'", c as char))
        }
    }
    fn string(&mut self) -> Result<String, NpyError> {
        self.ws();
        let q = match self.peek() {
            Some(q @ (b'\'' | b'"')) => q,
            _ => return self.err("expected a quoted string"),
        };
        self.i += 1;
        let start = self.i;
        while let Some(c) = self.peek() {
            if c == q {
                let text = String::from_utf8_lossy(&self.s[start..self.i]).into_owned();
                self.i += 1;
                return Ok(text);
            }
            if c == b'\\' {
                return self.err("escape sequences are not supported in header strings");
            }
            self.i += 1;
        }
        self.err("unterminated string")
    }
    fn integer(&mut self) -> Result<usize, NpyError> {
        self.ws();
        let start = self.i;
        while matches!(self.peek(), Some(b'0'..=b'9')) {
            self.i += 1;
        }
        if start == self.i {
            return self.err("expected a non-negative integer");
        }
        // Python 2 era files may write long integers as `3L`.
        if self.peek() == Some(b'L') {
            self.i += 1;
        }
        let digits = std::str::from_utf8(&self.s[start..self.i]).unwrap_or("");
        match digits.trim_end_matches('L').parse::<usize>() {
            Ok(v) => Ok(v),
            Err(_) => self.err("dimension too large"),
        }
    }
    fn value(&mut self) -> Result<Value, NpyError> {
        self.ws();
        match self.peek() {
            Some(b'\'' | b'"') => Ok(Value::Str(self.string()?)),
            Some(b'T') if self.s[self.i..].starts_with(b"True") => {
                self.i += 4;
                Ok(Value::Bool(true))
            }
            Some(b'F') if self.s[self.i..].starts_with(b"False") => {
                self.i += 5;
                Ok(Value::Bool(false))
            }
            Some(b'(') => {
                self.i += 1;
                let mut dims = Vec::new();
                loop {
                    self.ws();
                    if self.peek() == Some(b')') {
                        self.i += 1;
                        break;
                    }
                    if dims.len() >= MAX_NDIM {
                        return Err(NpyError::TooManyDims {
                            ndim: dims.len() + 1,
                        });
                    }
                    dims.push(self.integer()?);
                    self.ws();
                    match self.peek() {
                        Some(b',') => self.i += 1,
                        Some(b')') => {
                            // `(3)` is an int in Python, not a tuple; numpy never writes it.
                            if dims.len() == 1 {
                                return self.err("one-element shape must be written '(n,)'");
                            }
                        }
                        _ => return self.err("expected ',' or ')' in shape"),
                    }
                }
                Ok(Value::Tuple(dims))
            }
            _ => self.err("expected a string, True, False or a shape tuple"),
        }
    }
    /// Parse `{key: value, ...}` with an optional trailing comma.
    fn dict(&mut self) -> Result<Vec<(String, Value)>, NpyError> {
        self.expect(b'{')?;
        let mut items = Vec::new();
        loop {
            self.ws();
            if self.peek() == Some(b'}') {
                self.i += 1;
                break;
            }
            let k = self.string()?;
            self.expect(b':')?;
            let v = self.value()?;
            items.push((k, v));
            self.ws();
            match self.peek() {
                Some(b',') => self.i += 1,
                Some(b'}') => {}
                _ => return self.err("expected ',' or '}'"),
            }
        }
        self.ws();
        if self.i != self.s.len() {
            return self.err("unexpected text after the dict");
        }
        Ok(items)
    }
}

/// Fetch `n` bytes at `at`, or a [`NpyError::Truncated`].
fn take<'b>(
    bytes: &'b [u8],
    at: usize,
    n: usize,
    what: &'static str,
) -> Result<&'b [u8], NpyError> {
    bytes
        .get(at..at.saturating_add(n))
        .ok_or(NpyError::Truncated {
            what,
            needed: at.saturating_add(n),
            available: bytes.len(),
        })
}

/// Element kinds the reader accepts.
#[derive(Clone, Copy)]
enum Kind {
    Float,
    Int,
    Complex,
}

/// Every dtype read: `descr`, kind, bytes per element. Floats (`f4`, `f8`) are read as f64
/// (exactly: every f32 is an f64), integers (`i4`, `i8`) as i64, complex (`c8`, `c16`) as
/// pairs of f64; either byte order.
const DTYPES: [(&str, Kind, usize); 12] = [
    ("<f8", Kind::Float, 8),
    (">f8", Kind::Float, 8),
    ("<f4", Kind::Float, 4),
    (">f4", Kind::Float, 4),
    ("<i8", Kind::Int, 8),
    (">i8", Kind::Int, 8),
    ("<i4", Kind::Int, 4),
    (">i4", Kind::Int, 4),
    ("<c16", Kind::Complex, 16),
    (">c16", Kind::Complex, 16),
    ("<c8", Kind::Complex, 8),
    (">c8", Kind::Complex, 8),
];

/// Elements stored in Fortran (column-major) order for `shape`, returned in C (row-major)
/// order; `shape` empty means already in C order.
fn c_order<T: Clone>(v: Vec<T>, shape: &[usize]) -> Vec<T> {
    if shape.len() < 2 {
        return v;
    }
    // Fortran stride of dimension k: the product of the extents before it.
    let mut stride = vec![1usize; shape.len()];
    for k in 1..shape.len() {
        stride[k] = stride[k - 1] * shape[k - 1];
    }
    let mut idx = vec![0usize; shape.len()];
    let mut out = Vec::with_capacity(v.len());
    for _ in 0..v.len() {
        let off: usize = idx.iter().zip(&stride).map(|(i, s)| i * s).sum();
        out.push(v[off].clone());
        for k in (0..shape.len()).rev() {
            idx[k] += 1;
            if idx[k] < shape[k] {
                break;
            }
            idx[k] = 0;
        }
    }
    out
}

/// Parse NPY bytes (format 1.0 or 2.0, C or Fortran order, dtype `f8`, `f4`, `i8`, `i4`,
/// `c16` or `c8` in either byte order), returning the elements in C order.
///
/// # Errors
/// A [`NpyError`] describing the first problem found; the function never panics.
pub fn read_npy(bytes: &[u8]) -> Result<NpyArray, NpyError> {
    let magic = take(bytes, 0, 6, "magic string")?;
    if magic != MAGIC {
        return Err(NpyError::BadMagic);
    }
    let ver = take(bytes, 6, 2, "version")?;
    let (hlen, hstart) = match (ver[0], ver[1]) {
        (1, 0) => {
            let l = take(bytes, 8, 2, "header length")?;
            (u16::from_le_bytes([l[0], l[1]]) as usize, 10)
        }
        (2, 0) => {
            let l = take(bytes, 8, 4, "header length")?;
            (u32::from_le_bytes([l[0], l[1], l[2], l[3]]) as usize, 12)
        }
        (major, minor) => return Err(NpyError::UnsupportedVersion { major, minor }),
    };
    if hlen > MAX_HEADER {
        return Err(NpyError::BadHeader {
            reason: format!("header length {hlen} exceeds the limit of {MAX_HEADER} bytes"),
        });
    }
    let header = take(bytes, hstart, hlen, "header")?;
    if !header.is_ascii() {
        return Err(NpyError::BadHeader {
            reason: "header is not ASCII".into(),
        });
    }
    if header.last() != Some(&b'\n') {
        return Err(NpyError::BadHeader {
            reason: "header does not end with a newline".into(),
        });
    }
    let items = Parser { s: header, i: 0 }.dict()?;
    let mut descr = None;
    let mut fortran = None;
    let mut shape = None;
    for (k, v) in items {
        match (k.as_str(), v) {
            ("descr", Value::Str(s)) if descr.is_none() => descr = Some(s),
            ("fortran_order", Value::Bool(b)) if fortran.is_none() => fortran = Some(b),
            ("shape", Value::Tuple(t)) if shape.is_none() => shape = Some(t),
            (k @ ("descr" | "fortran_order" | "shape"), _) => {
                return Err(NpyError::BadHeader {
                    reason: format!("key '{k}' repeated or of the wrong type"),
                })
            }
            (other, _) => {
                return Err(NpyError::BadHeader {
                    reason: format!("unexpected key '{other}'"),
                })
            }
        }
    }
    let missing = |k: &str| NpyError::BadHeader {
        reason: format!("key '{k}' missing"),
    };
    let descr = descr.ok_or_else(|| missing("descr"))?;
    let fortran = fortran.ok_or_else(|| missing("fortran_order"))?;
    let shape = shape.ok_or_else(|| missing("shape"))?;
    let Some(&(name, kind, size)) = DTYPES.iter().find(|d| d.0 == descr) else {
        return Err(NpyError::UnsupportedDtype { descr });
    };
    let data = &bytes[hstart + hlen..];
    let expected = element_count(&shape).and_then(|n| n.checked_mul(size));
    if expected != Some(data.len()) {
        return Err(NpyError::DataLength {
            shape,
            descr: name,
            expected: expected.unwrap_or(usize::MAX),
            found: data.len(),
        });
    }
    let big = name.starts_with('>');
    let real = |c: &[u8]| -> f64 {
        let mut b = [0u8; 8];
        b[..c.len()].copy_from_slice(c);
        match (c.len(), big) {
            (4, false) => f64::from(f32::from_le_bytes([b[0], b[1], b[2], b[3]])),
            (4, true) => f64::from(f32::from_be_bytes([b[0], b[1], b[2], b[3]])),
            (_, false) => f64::from_le_bytes(b),
            (_, true) => f64::from_be_bytes(b),
        }
    };
    let int = |c: &[u8]| -> i64 {
        let mut b = [0u8; 8];
        b[..c.len()].copy_from_slice(c);
        match (c.len(), big) {
            (4, false) => i64::from(i32::from_le_bytes([b[0], b[1], b[2], b[3]])),
            (4, true) => i64::from(i32::from_be_bytes([b[0], b[1], b[2], b[3]])),
            (_, false) => i64::from_le_bytes(b),
            (_, true) => i64::from_be_bytes(b),
        }
    };
    // A 0- or 1-dimensional array reads the same in either order, as in NumPy.
    let fortran = fortran && shape.iter().filter(|&&d| d > 1).count() > 1;
    let dims: &[usize] = if fortran { &shape } else { &[] };
    let data = match kind {
        Kind::Float => NpyData::F64(c_order(data.chunks_exact(size).map(real).collect(), dims)),
        Kind::Complex => NpyData::C128(c_order(
            data.chunks_exact(size)
                .map(|c| Complex64::new(real(&c[..size / 2]), real(&c[size / 2..])))
                .collect(),
            dims,
        )),
        Kind::Int => NpyData::I64(c_order(data.chunks_exact(size).map(int).collect(), dims)),
    };
    Ok(NpyArray {
        shape,
        data,
        descr: name,
        fortran_order: fortran,
    })
}

#[cfg(test)]
#[path = "npy_tests.rs"]
mod tests;
