//! pathsieve: Liouville-pathway enumeration and exact phase-cycle design and checking.
