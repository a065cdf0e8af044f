//! Python bindings of pathsieve: the native module `pathsieve._pathsieve`, wrapped by the pure
//! Python package `pathsieve` (`python/pathsieve/`). This crate is an adapter like the command
//! line: values go in, the library's results come out as NumPy arrays, plain lists and JSON
//! text (the Python wrapper turns JSON into dicts and exact phases into `fractions.Fraction`).
//! Nothing here decides physics. Every library error becomes `pathsieve.PathsieveError` (a
//! `ValueError`) carrying the library's message unchanged.

use pyo3::prelude::*;

mod arrays;
mod check;
mod combine;
mod cycle;
mod design;
mod experiment;
mod export;

pyo3::create_exception!(
    pathsieve,
    PathsieveError,
    pyo3::exceptions::PyValueError,
    "An input or request the pathsieve library refused; the message names the bad value and the fix."
);

/// A library error as a Python exception with the library's message.
pub(crate) fn lib_err(e: impl std::fmt::Display) -> PyErr {
    PathsieveError::new_err(e.to_string())
}

/// JSON text of a serialisable library result with its `schema_version` key, as the command
/// line prints it (the wrapper parses it into dicts and lists).
pub(crate) fn to_json<T: serde::Serialize>(value: &T) -> PyResult<String> {
    serde_json::to_string(&pathsieve::export::meta::versioned(value)).map_err(lib_err)
}

/// The native half of the `pathsieve` Python package.
#[pymodule]
mod _pathsieve {
    use pyo3::prelude::*;

    #[pymodule_export]
    use super::PathsieveError;

    #[pymodule_export]
    use super::experiment::PyExperiment;

    #[pymodule_export]
    use super::cycle::PyCycle;

    #[pymodule_export]
    use super::design::design;

    #[pymodule_export]
    use super::check::check;

    #[pymodule_export]
    use super::export::{export_phases, masks};

    #[pymodule_export]
    use super::combine::{combine_complex, combine_real, export_order};

    #[pymodule_init]
    fn init(m: &Bound<'_, PyModule>) -> PyResult<()> {
        m.add("__version__", env!("CARGO_PKG_VERSION"))
    }
}
