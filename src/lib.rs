//! pathsieve: enumerate the Liouville pathways of a multidimensional-spectroscopy experiment,
//! design the smallest phase cycle that keeps the wanted signals, and check any cycle table
//! exactly.
//!
//! The library holds all logic; the `pathsieve` binary only parses arguments and renders.
//!
//! ```
//! use pathsieve::experiment_file::parse_experiment;
//! use pathsieve::pathways::{count_pathways, Scope};
//! let text = r#"
//! order = 3
//! [detection]
//! mode = "emission"
//! [[field]]
//! name = "1"
//! [[field]]
//! name = "2"
//! [[field]]
//! name = "3"
//! [[field]]
//! name = "LO"
//! kind = "lo"
//! [levels]
//! states = [{ name = "g", manifold = 0 }, { name = "e", manifold = 1 }]
//! "#;
//! let exp = parse_experiment(text, "two-level.toml".as_ref()).unwrap();
//! // Two-level system, three time-ordered pulses: 2 rephasing + 2 non-rephasing pathways.
//! assert_eq!(count_pathways(&exp, Scope::Signal).unwrap(), 4);
//! ```
#![deny(missing_docs)]

pub mod agnostic;
pub mod caveats;
pub mod check;
pub mod combine;
pub mod cycle;
pub mod design;
pub mod error;
pub mod exact;
pub mod experiment_file;
pub mod export;
pub mod input_text;
pub mod limits;
pub mod model;
pub mod numfmt;
pub mod pathways;
pub mod render;
pub mod safe_write;
pub mod selection;
pub mod signature;
pub mod simulate;
