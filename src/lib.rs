//! pathsieve: Liouville-pathway enumeration and exact phase-cycle design and checking.
#![deny(missing_docs)]

pub mod design;
