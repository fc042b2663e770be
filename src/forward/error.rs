//! The error type of lead-field assembly.

use thiserror::Error;

use crate::head::bem::BemError;
use crate::head::HeadError;

/// What can go wrong when assembling a lead field.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum ForwardError {
    /// The caller asked the computation to stop.
    #[error("stopped by the caller")]
    Cancelled,
    /// Fewer than three electrodes: no meaningful average reference or fit.
    #[error("a lead field needs at least 3 electrodes, got {count}")]
    TooFewElectrodes {
        /// Electrodes given.
        count: usize,
    },
    /// No sources were given.
    #[error("a lead field needs at least one source")]
    NoSources,
    /// Sources and normals differ in number.
    #[error("{sources} sources but {normals} normals: give one normal per source")]
    NormalCount {
        /// Sources given.
        sources: usize,
        /// Normals given.
        normals: usize,
    },
    /// A coordinate is NaN or infinite.
    #[error("{what} {index} has a non-finite coordinate")]
    NotFinite {
        /// "electrode", "source" or "normal".
        what: &'static str,
        /// Its 0-based index.
        index: usize,
    },
    /// A normal is not of unit length.
    #[error("normal {index} has length {length}: expected 1 (tolerance 1e-6)")]
    NormalNotUnit {
        /// 0-based source index.
        index: usize,
        /// Its length.
        length: f64,
    },
    /// A source is not strictly inside the innermost sphere.
    #[error("source {index} is {distance_mm} mm from the head centre, not inside the inner sphere (radius {inner_radius_mm} mm)")]
    SourceOutside {
        /// 0-based source index.
        index: usize,
        /// Its distance from the centre (mm).
        distance_mm: f64,
        /// Radius of the innermost sphere (mm).
        inner_radius_mm: f64,
    },
    /// An electrode sits at the head centre and cannot be projected.
    #[error("electrode {index} is at the head centre and cannot be projected onto the scalp")]
    ElectrodeAtCenter {
        /// 0-based electrode index.
        index: usize,
    },
    /// The head model refused a source (index given).
    #[error("source {index}: {inner}")]
    Head {
        /// 0-based source index.
        index: usize,
        /// What the head model said.
        inner: HeadError,
    },
    /// The boundary-element head refused an input.
    #[error("{0}")]
    Bem(BemError),
}
