//! Hard limits on problem sizes, checked before any work starts so that no request runs out
//! of memory or time halfway through.

/// Largest perturbative order the enumerator accepts (number of field interactions).
pub const MAX_ORDER: u32 = 11;
/// Largest number of fields (pulses plus LO or receiver) in one experiment.
pub const MAX_FIELDS: usize = 12;
/// Largest number of states in a level scheme.
pub const MAX_STATES: usize = 64;
/// Largest number of interactions one pulse may be asked to contribute in the signal scope.
pub const MAX_INTERACTIONS_PER_PULSE: u32 = 4;
/// Largest coherence order magnitude for NMR coherence-transfer pathways.
pub const MAX_COHERENCE: i32 = 12;
/// Largest number of signatures an agnostic set may hold before it is refused.
pub const MAX_AGNOSTIC_TERMS: u64 = 5_000_000;
/// Largest memory an agnostic set may take (estimated from its exact size before it is built).
pub const MAX_AGNOSTIC_BYTES: u64 = 256 * 1024 * 1024;
/// Largest number of pathways that are kept in memory for a listing or a drawing
/// (the summary mode streams and has no such limit).
pub const MAX_LISTED_PATHWAYS: u64 = 200_000;
/// Largest number of steps a cycle table may have.
pub const MAX_STEPS: usize = 1_000_000;
/// Largest input file size in bytes.
pub const MAX_FILE_BYTES: u64 = 64 * 1024 * 1024;
