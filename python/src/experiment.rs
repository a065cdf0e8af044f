//! `Experiment`: an experiment read from a TOML file or string by the library's reader, with
//! its source text kept for the SHA-256 that export metadata records.

use crate::{lib_err, to_json};
use pathsieve::experiment_file::parse_experiment;
use pathsieve::export::meta::sha256_hex;
use pathsieve::input_text::read_text;
use pathsieve::limits::MAX_FILE_BYTES;
use pathsieve::model::{Experiment, PhaseControl};
use pathsieve::selection::{RejectionSource, SelectionRequest};
use pyo3::prelude::*;
use std::path::{Path, PathBuf};

/// An experiment (fields, level scheme, detection, wanted signals) as the library reads it.
#[pyclass(frozen, name = "Experiment", module = "pathsieve")]
pub struct PyExperiment {
    pub(crate) exp: Experiment,
    /// The TOML text it was read from.
    pub(crate) source: String,
    /// The file name (or the name given with a string), for messages and metadata.
    pub(crate) name: String,
}

impl PyExperiment {
    /// The selection request of the keyword arguments every command shares.
    pub(crate) fn request(
        order: Option<u32>,
        from_pathways: bool,
        geometry: Option<bool>,
    ) -> SelectionRequest {
        SelectionRequest {
            order,
            source: if from_pathways {
                RejectionSource::FromPathways
            } else {
                RejectionSource::Agnostic
            },
            geometry,
            ..SelectionRequest::default()
        }
    }
}

fn file_name(p: &Path) -> String {
    p.file_name().map_or_else(
        || p.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

#[pymethods]
impl PyExperiment {
    /// Read an experiment file (TOML). Errors name the file, line, column and the fix.
    #[staticmethod]
    fn from_file(path: PathBuf) -> PyResult<Self> {
        let text = read_text(&path).map_err(lib_err)?;
        let exp = parse_experiment(&text, &path).map_err(lib_err)?;
        Ok(PyExperiment {
            exp,
            source: text,
            name: file_name(&path),
        })
    }

    /// Parse experiment TOML text; `name` stands for the file in error messages and metadata.
    #[staticmethod]
    #[pyo3(signature = (text, name = "experiment.toml"))]
    fn from_toml(text: &str, name: &str) -> PyResult<Self> {
        if text.len() as u64 > MAX_FILE_BYTES {
            return Err(lib_err(format!(
                "{name}: the text is {} bytes, above the limit of {MAX_FILE_BYTES}",
                text.len()
            )));
        }
        let exp = parse_experiment(text, Path::new(name)).map_err(lib_err)?;
        Ok(PyExperiment {
            exp,
            source: text.to_string(),
            name: name.to_string(),
        })
    }

    /// Free-text title.
    #[getter]
    fn title(&self) -> String {
        self.exp.title.clone()
    }

    /// The file name (or the name given with the text).
    #[getter]
    fn name(&self) -> String {
        self.name.clone()
    }

    /// Field names in time order, the reference last if present.
    #[getter]
    fn fields(&self) -> Vec<String> {
        self.exp.field_names()
    }

    /// Names of the fields whose phase the cycle sets.
    #[getter]
    fn cycled_fields(&self) -> Vec<String> {
        self.exp
            .fields
            .iter()
            .filter(|f| f.phase == PhaseControl::Cycled)
            .map(|f| f.name.clone())
            .collect()
    }

    /// Names of the wanted signals (the outputs of a cycle), in file order.
    #[getter]
    fn signals(&self) -> Vec<String> {
        self.exp.wanted.iter().map(|w| w.name.clone()).collect()
    }

    /// Perturbative order of the wanted signal.
    #[getter]
    fn order(&self) -> u32 {
        self.exp.order
    }

    /// SHA-256 of the TOML text (as export metadata records it).
    #[getter]
    fn sha256(&self) -> String {
        sha256_hex(self.source.as_bytes())
    }

    /// The TOML text the experiment was read from.
    #[getter]
    fn source(&self) -> String {
        self.source.clone()
    }

    /// The experiment model as JSON text.
    fn to_json(&self) -> PyResult<String> {
        to_json(&self.exp)
    }

    fn __repr__(&self) -> String {
        format!(
            "<pathsieve.Experiment {:?} from {}: fields [{}], signals [{}]>",
            self.exp.title,
            self.name,
            self.exp.field_names().join(", "),
            self.signals().join(", ")
        )
    }
}
