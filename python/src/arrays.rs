//! NumPy arrays in and out: row-major tables to 2-D arrays and back, and the unit names.

use crate::lib_err;
use num_complex::Complex64;
use numpy::ndarray::Array2;
use numpy::{Element, IntoPyArray, PyArray2, PyReadonlyArray2};
use pathsieve::cycle::text::parse_unit;
use pathsieve::exact::PhaseUnit;
use pyo3::prelude::*;

/// A (rows x cols) array from rows of equal length; `cols` gives the width when there are no
/// rows or the rows are empty.
pub fn table_to_array<'py, T: Element + Clone>(
    py: Python<'py>,
    rows: &[Vec<T>],
    cols: usize,
) -> PyResult<Bound<'py, PyArray2<T>>> {
    let flat: Vec<T> = rows.iter().flatten().cloned().collect();
    let a = Array2::from_shape_vec((rows.len(), cols), flat).map_err(lib_err)?;
    Ok(a.into_pyarray(py))
}

/// Rows of a 2-D array (any memory layout).
pub fn array_rows<T: Element + Clone>(a: &PyReadonlyArray2<'_, T>) -> Vec<Vec<T>> {
    a.as_array()
        .rows()
        .into_iter()
        .map(|r| r.to_vec())
        .collect()
}

/// Columns of a 2-D array (any memory layout).
pub fn array_columns(a: &PyReadonlyArray2<'_, Complex64>) -> Vec<Vec<Complex64>> {
    a.as_array()
        .columns()
        .into_iter()
        .map(|c| c.to_vec())
        .collect()
}

/// A phase unit: `turns`, `deg`/`degrees`, `rad`/`radians`, or `index:M` (also `grid:M`),
/// integer steps of an M-step grid.
pub fn unit(text: &str) -> PyResult<PhaseUnit> {
    parse_unit(text).map_err(|m| lib_err(format!("unit: {m}")))
}
