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
/// Largest magnitude of one signature entry read from a file (wanted signatures, a cycle's
/// `from_signature`). Far above any term an experiment within [`MAX_ORDER`] can produce
/// (`|b_j| <= MAX_ORDER`), and small enough that sums, differences and products of entries
/// over [`MAX_FIELDS`] fields never come near `i64` overflow.
pub const MAX_SIGNATURE_ENTRY: i64 = 1000;
/// Largest number of `[[signal]]` tables in an experiment and of outputs (weight columns,
/// `[[output]]` tables) in a cycle file.
pub const MAX_OUTPUTS: usize = 64;
/// Largest number of TOML values (cells, weights, keys) a TOML cycle file may hold: the TOML
/// parser keeps every value in memory (about 130 bytes each), so the count is bounded by a
/// cheap scan before parsing. Larger tables belong in the CSV form, which streams.
pub const MAX_TOML_VALUES: usize = 2_000_000;
/// Largest phase grid (steps per turn) a cycle file may declare per field.
pub const MAX_GRID: u32 = 100_000;
/// Largest number of cells a cycle table may hold in memory: steps x (phase columns + outputs),
/// counting weights derived from a signature too (at most a few hundred bytes each, so a
/// table within the limit stays well under a gigabyte). CSV rows are counted while streaming.
pub const MAX_CYCLE_CELLS: usize = 4_000_000;
