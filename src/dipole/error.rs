//! The error type of the equivalent-dipole fit.

use thiserror::Error;

use crate::head::HeadError;

/// What can go wrong when fitting equivalent dipoles.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum DipoleError {
    /// Too few electrodes for the unknowns and the residual degrees of freedom.
    #[error("a {model} fit needs at least {needed} electrodes (unknowns + average reference + 1 residual degree of freedom), got {count}")]
    TooFewElectrodes {
        /// Electrodes given.
        count: usize,
        /// Electrodes needed.
        needed: usize,
        /// `single-dipole` or `symmetric-pair`.
        model: &'static str,
    },
    /// An electrode coordinate is not finite or the electrode sits at the head centre.
    #[error("electrode {index}: {reason}")]
    Electrode {
        /// Electrode index.
        index: usize,
        /// What is wrong.
        reason: String,
    },
    /// The patterns matrix has the wrong number of values.
    #[error("patterns hold {found} values, expected {n_channels} channels x {k} components")]
    Shape {
        /// Values found.
        found: usize,
        /// Channels.
        n_channels: usize,
        /// Components.
        k: usize,
    },
    /// A pattern value is NaN or infinite.
    #[error("component {component}, channel {channel}: value is not finite")]
    NotFinite {
        /// Component index.
        component: usize,
        /// Channel index.
        channel: usize,
    },
    /// A pattern is zero or constant over the channels, so nothing is left after average referencing.
    #[error("component {component} is zero or constant over the channels after average referencing; there is no field to fit a dipole to")]
    FlatPattern {
        /// Component index.
        component: usize,
    },
    /// An option is out of range.
    #[error("option {name} = {value}: expected {expected}")]
    Option {
        /// Option name.
        name: &'static str,
        /// Value given.
        value: f64,
        /// What is allowed.
        expected: &'static str,
    },
    /// The search grid holds no point (spacing too large for the head).
    #[error("the search grid is empty: spacing {spacing_mm} mm inside a radius of {radius_mm} mm")]
    EmptyGrid {
        /// Grid spacing (mm).
        spacing_mm: f64,
        /// Search radius (mm).
        radius_mm: f64,
    },
    /// The head model refused a position.
    #[error("head model at ({x_mm:.2}, {y_mm:.2}, {z_mm:.2}) mm: {inner}")]
    Head {
        /// x (mm).
        x_mm: f64,
        /// y (mm).
        y_mm: f64,
        /// z (mm).
        z_mm: f64,
        /// The head model's error.
        #[source]
        inner: HeadError,
    },
    /// No grid point gave a full-rank gain for this component (should not happen for a valid head).
    #[error("component {component}: no admissible start position (every gain matrix was rank deficient)")]
    NoStart {
        /// Component index.
        component: usize,
    },
}
