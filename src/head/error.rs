//! The error type of the head models.

use thiserror::Error;

use super::bem::BemError;

/// What can go wrong when building a head model or evaluating its potential.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum HeadError {
    /// The number of shells is outside 1..=4.
    #[error("a sphere head needs 1 to 4 shells, got {count}")]
    ShellCount {
        /// Shells given.
        count: usize,
    },
    /// Radii and conductivities differ in length.
    #[error("{radii} radii but {conductivities} conductivities: give one conductivity per shell")]
    LengthMismatch {
        /// Number of radii.
        radii: usize,
        /// Number of conductivities.
        conductivities: usize,
    },
    /// A radius is not a positive finite number.
    #[error("radius {index} is {value} m: expected a positive finite number")]
    RadiusNotPositive {
        /// Shell index (0 = innermost).
        index: usize,
        /// The value given (m).
        value: f64,
    },
    /// A radius is not larger than the one inside it.
    #[error("radius {index} ({value} m) must be larger than radius {previous_index} ({previous} m): radii go innermost first, strictly increasing")]
    RadiusNotIncreasing {
        /// Shell index (0 = innermost).
        index: usize,
        /// The value given (m).
        value: f64,
        /// Index of the shell inside it.
        previous_index: usize,
        /// Radius of the shell inside it (m).
        previous: f64,
    },
    /// A conductivity is not a positive finite number.
    #[error("conductivity {index} is {value} S/m: expected a positive finite number")]
    ConductivityNotPositive {
        /// Shell index (0 = innermost).
        index: usize,
        /// The value given (S/m).
        value: f64,
    },
    /// A head file's radius lies outside the sizes of a head.
    #[error("radius {index} is {value_mm} mm: expected {min_mm} to {max_mm} mm (radii_mm are millimetres; the default scalp is 94 mm)")]
    RadiusImplausible {
        /// Shell index (0 = innermost).
        index: usize,
        /// The value given (mm).
        value_mm: f64,
        /// Smallest radius accepted (mm).
        min_mm: f64,
        /// Largest radius accepted (mm).
        max_mm: f64,
    },
    /// A centre coordinate is not finite.
    #[error("centre coordinate {axis} is {value}: expected a finite number")]
    CenterNotFinite {
        /// 0 = x, 1 = y, 2 = z.
        axis: usize,
        /// The value given.
        value: f64,
    },
    /// A head file could not be parsed.
    #[error("{source_name}: {message}")]
    Parse {
        /// The file or string the text came from.
        source_name: String,
        /// What the parser said (with line and column where it knows them).
        message: String,
    },
    /// A head file parsed but its values are invalid.
    #[error("{source_name}: {inner}")]
    InvalidSpec {
        /// The file or string the text came from.
        source_name: String,
        /// What is wrong with the values.
        inner: Box<HeadError>,
    },
    /// The dipole is not strictly inside the innermost sphere.
    #[error("source at {distance} m from the centre is not inside the inner sphere (radius {inner_radius} m)")]
    SourceOutside {
        /// Distance of the source from the centre (m).
        distance: f64,
        /// Radius of the innermost sphere (m).
        inner_radius: f64,
    },
    /// A point given to the model is not finite.
    #[error("{what} has a non-finite coordinate")]
    NotFinite {
        /// Which point ("source", "electrode" or "moment").
        what: &'static str,
    },
    /// An electrode sits at the centre and cannot be projected onto the scalp.
    #[error("electrode at the sphere centre cannot be projected radially onto the scalp")]
    ElectrodeAtCenter,
    /// The series would need more terms than the precomputed table holds.
    #[error("the series needs more than {limit} terms for a source at eccentricity {eccentricity} of the outer radius")]
    SeriesTooLong {
        /// The table length.
        limit: usize,
        /// |source - centre| / outer radius.
        eccentricity: f64,
    },
    /// A series order was asked for that is not >= 1.
    #[error("series order {order} is not valid: orders start at 1")]
    OrderOutOfRange {
        /// The order asked for.
        order: usize,
    },
    /// A head file gives a field its model does not use.
    #[error("{field} is not a field of model = \"{model}\"")]
    FieldNotForModel {
        /// The field.
        field: &'static str,
        /// The model of the file.
        model: &'static str,
    },
    /// A landmark of a head file is not three finite numbers.
    #[error("landmarks_mm.{landmark} is {value:?}: expected three finite numbers (mm)")]
    LandmarkNotFinite {
        /// nasion, lpa or rpa.
        landmark: &'static str,
        /// The value given.
        value: [f64; 3],
    },
    /// A boundary-element head file's counts or values are wrong.
    #[error("{0}")]
    Bem(BemError),
    /// A sphere head was asked of a boundary-element head file.
    #[error("this head is a boundary-element head (model = \"bem\"), not concentric spheres")]
    NotSpheres,
}
