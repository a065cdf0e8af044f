//! Export formats: this module owns turning computed results into file bytes, one small file
//! per format. Each writer returns bytes; putting them on disk is [`crate::safe_write`]'s job.
//! Phase lists: [`phase_list`] (model, units), [`phase_formats`] (CSV, JSON, NPY),
//! [`phase_import`] (reading them back), [`array_import`] (NumPy arrays as cycle tables),
//! [`step_order`] (drift-robust order), [`meta`] (provenance), [`plan`] (a cycle checked, bound
//! and ordered for export); shaper masks: [`shaper`] (the shaper file) and [`mask`].

pub mod array_import;
pub mod mask;
pub mod mask_scan;
pub mod meta;
pub mod npy;
pub mod npz;
pub mod phase_formats;
pub mod phase_import;
pub mod phase_list;
pub mod plain;
pub mod plan;
pub mod shaper;
pub mod step_order;
