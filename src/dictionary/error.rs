//! The typed error of the dictionary stage.

use thiserror::Error;

/// What can go wrong while building a patch dictionary or recomputing its atoms.
///
/// Every variant names the parameter, seed, vertex or array at fault and what
/// was expected.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum DictionaryError {
    /// The caller asked the computation to stop.
    #[error("stopped by the caller")]
    Cancelled,
    /// `radii_m` is empty.
    #[error("dictionary parameter `radii_m` is empty: give at least one patch radius in metres")]
    NoRadii,
    /// A radius is not a finite positive number.
    #[error(
        "dictionary parameter `radii_m[{index}]` = {value}: expected a finite radius > 0 and at most 1 m (1000 mm, the largest head radius) (metres)"
    )]
    BadRadius {
        /// Position in `radii_m`.
        index: usize,
        /// The value given.
        value: f64,
    },
    /// The radii are not strictly increasing.
    #[error(
        "dictionary parameter `radii_m[{index}]` = {value} m is not larger than the previous radius {previous} m: \
         expected strictly increasing radii (sorted, no duplicates)"
    )]
    RadiiNotIncreasing {
        /// Position in `radii_m`.
        index: usize,
        /// The radius before it.
        previous: f64,
        /// The value given.
        value: f64,
    },
    /// `drop_relative_norm` is outside `[0, 1)`.
    #[error("dictionary parameter `drop_relative_norm` = {0}: expected a finite number in [0, 1)")]
    BadDropThreshold(f64),
    /// The channel count is zero.
    #[error("the lead field has 0 channels: expected at least one")]
    NoChannels,
    /// The source mesh has no vertices.
    #[error("the source mesh has no vertices: expected at least one source")]
    NoSources,
    /// A triangle of the source mesh refers to a vertex that does not exist.
    #[error("source mesh triangle {triangle} refers to vertex {vertex}, but the mesh has {n_vertices} vertices")]
    BadTriangle {
        /// Triangle index.
        triangle: usize,
        /// The offending vertex index.
        vertex: u32,
        /// Number of vertices in the mesh.
        n_vertices: usize,
    },
    /// A lead-field array does not have the expected length.
    #[error(
        "lead field `{name}` has {found} values: expected {expected} \
         ({n_channels} channels x {n_sources} sources{per_source})"
    )]
    GainShape {
        /// Which array (`gain` or `gain_xyz`).
        name: &'static str,
        /// Expected length.
        expected: usize,
        /// Length given.
        found: usize,
        /// Channel count.
        n_channels: usize,
        /// Source count.
        n_sources: usize,
        /// `" x 3"` for the free-orientation gain, empty otherwise.
        per_source: &'static str,
    },
    /// A lead-field entry is NaN or infinite.
    #[error("lead field `{name}` has a non-finite value at channel {channel}, column {column}")]
    NonFiniteGain {
        /// Which array (`gain` or `gain_xyz`).
        name: &'static str,
        /// Channel (row).
        channel: usize,
        /// Column (source, or source·3 + component for `gain_xyz`).
        column: usize,
    },
    /// Free orientation was asked for without a free-orientation gain.
    #[error("free-orientation atoms need the lead field `gain_xyz` (n_ch x n_src x 3), which was not given")]
    MissingFreeGain,
    /// The seed list is empty.
    #[error("no patch seeds given: expected at least one source index")]
    NoSeeds,
    /// A seed is not a source index.
    #[error("seed {position} is source {seed}, but the mesh has {n_sources} sources")]
    SeedOutOfRange {
        /// Position in the seed list.
        position: usize,
        /// The seed given.
        seed: usize,
        /// Number of sources.
        n_sources: usize,
    },
    /// A seed appears twice.
    #[error("source {seed} appears twice in the seed list (positions {first} and {second}): expected unique seeds")]
    DuplicateSeed {
        /// The repeated source index.
        seed: usize,
        /// Its first position.
        first: usize,
        /// Its second position.
        second: usize,
    },
    /// The distance oracle returned a vertex that is not a source.
    #[error("distance oracle for seed {seed} returned vertex {vertex}, but the mesh has {n_sources} sources")]
    OracleVertexOutOfRange {
        /// The seed queried.
        seed: usize,
        /// The vertex returned.
        vertex: u32,
        /// Number of sources.
        n_sources: usize,
    },
    /// The distance oracle returned a distance that is NaN, infinite or negative.
    #[error("distance oracle for seed {seed} returned distance {distance} m for vertex {vertex}: expected a finite value >= 0")]
    OracleBadDistance {
        /// The seed queried.
        seed: usize,
        /// The vertex concerned.
        vertex: u32,
        /// The distance returned.
        distance: f64,
    },
    /// The distance oracle returned a vertex twice.
    #[error("distance oracle for seed {seed} returned vertex {vertex} twice: expected each vertex at most once")]
    OracleDuplicateVertex {
        /// The seed queried.
        seed: usize,
        /// The repeated vertex.
        vertex: u32,
    },
    /// The distance oracle did not return the seed itself at distance 0.
    #[error("distance oracle for seed {seed} did not return the seed itself at distance 0")]
    OracleMissingSeed {
        /// The seed queried.
        seed: usize,
    },
    /// Every atom had a norm of (about) zero, so nothing is left to fit.
    #[error(
        "all {n_dropped} atoms have a norm of about zero (lead field all zero, or all common-mode under the average reference)"
    )]
    NoAtoms {
        /// How many atoms were dropped.
        n_dropped: usize,
    },
    /// A channel index is out of range.
    #[error("channel subset entry {position} is channel {channel}, but the lead field has {n_channels} channels")]
    ChannelOutOfRange {
        /// Position in the channel list.
        position: usize,
        /// The channel given.
        channel: usize,
        /// Number of channels.
        n_channels: usize,
    },
    /// A channel appears twice in a channel subset.
    #[error(
        "channel {channel} appears twice in the channel subset (positions {first} and {second})"
    )]
    DuplicateChannel {
        /// The repeated channel.
        channel: usize,
        /// Its first position.
        first: usize,
        /// Its second position.
        second: usize,
    },
    /// A row-major matrix's length is not a multiple of its row count.
    #[error("matrix of {len} values cannot have {n_rows} rows of equal length")]
    RaggedMatrix {
        /// Number of values.
        len: usize,
        /// Number of rows claimed.
        n_rows: usize,
    },
    /// A profile matrix given to [`crate::dictionary::atoms_for_channels`] is not usable.
    #[error("profile matrix: {0}")]
    BadProfile(String),
}
