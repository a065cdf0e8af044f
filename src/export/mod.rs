//! Export formats: this module owns turning computed results into file bytes, one small file
//! per format. Each writer returns bytes; putting them on disk is [`crate::safe_write`]'s job.

pub mod mask;
pub mod npy;
