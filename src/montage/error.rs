//! The error type of the `montage` area and the warning of the scalp projection.

use crate::geometry::Vec3;

/// What went wrong while building, selecting from, projecting or fitting a montage.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum MontageError {
    /// No electrodes.
    #[error("montage has no electrodes, expected at least 1")]
    Empty,
    /// Labels and positions differ in number.
    #[error(
        "montage has {labels} labels but {positions} positions, expected one position per label"
    )]
    LengthMismatch {
        /// Number of labels.
        labels: usize,
        /// Number of positions.
        positions: usize,
    },
    /// A label is empty or only white space.
    #[error("electrode {index}: empty label, expected a name such as Cz")]
    EmptyLabel {
        /// 0-based electrode index.
        index: usize,
    },
    /// A coordinate is NaN or infinite.
    #[error("electrode {label} (index {index}): position {position:?} is not finite")]
    NotFinite {
        /// The label.
        label: String,
        /// 0-based electrode index.
        index: usize,
        /// The position given (m).
        position: Vec3,
    },
    /// Two labels name the same electrode (ignoring case and the temporal aliases).
    #[error(
        "duplicate electrode: {second} (index {second_index}) is the same as {first} (index \
         {first_index}), ignoring case and the aliases T3=T7, T4=T8, T5=P7, T6=P8"
    )]
    DuplicateLabel {
        /// The earlier label.
        first: String,
        /// Its index.
        first_index: usize,
        /// The later label.
        second: String,
        /// Its index.
        second_index: usize,
    },
    /// An electrodes file gives some of the three landmarks but not all.
    #[error("the electrodes file gives some landmarks but not {}; expected rows named nasion, LPA and RPA (all three, to align the electrodes to the head) or none", missing.join(", "))]
    MissingLandmarks {
        /// The landmarks not given.
        missing: Vec<String>,
    },
    /// Three landmarks too close together or in a line to define a frame.
    #[error("the landmarks of {side} are closer than 1 cm or in a line; expected the nasion in front of the line through the preauricular points")]
    DegenerateLandmarks {
        /// Whose landmarks.
        side: String,
    },
    /// A construction line of a standard layout left the scalp surface
    /// (the surface is not closed around the head's centre).
    #[error("placing the standard layout on the scalp: {what} does not meet the scalp surface; expected a closed scalp around the head's centre")]
    OffScalp {
        /// Which line or point.
        what: String,
    },
    /// The requested standard layout does not exist.
    #[error("unknown standard montage {name:?}; known: {}", known.join(", "))]
    UnknownStandard {
        /// The name asked for.
        name: String,
        /// The names that exist.
        known: Vec<&'static str>,
    },
    /// A radius is not a positive finite number.
    #[error("radius {radius} m: expected a positive finite number")]
    InvalidRadius {
        /// The radius given (m).
        radius: f64,
    },
    /// A sphere centre has a NaN or infinite coordinate.
    #[error("sphere centre {center:?}: expected finite coordinates")]
    InvalidCenter {
        /// The centre given (m).
        center: Vec3,
    },
    /// Some requested labels are not in the montage, or are requested twice.
    #[error("channel selection: {}", selection_problems(unknown, duplicates))]
    Selection {
        /// Labels not found, as given.
        unknown: Vec<String>,
        /// Labels asked for more than once (the later occurrences, as given).
        duplicates: Vec<String>,
    },
    /// An electrode sits at the sphere centre, so it has no radial direction.
    #[error("electrode {label} (index {index}) is at the sphere centre; it cannot be projected radially")]
    AtCenter {
        /// The label.
        label: String,
        /// 0-based index.
        index: usize,
    },
    /// Too few points to fit a sphere.
    #[error("sphere fit: {found} points, expected at least 4 not all on one plane")]
    TooFewPoints {
        /// Number of points given.
        found: usize,
    },
    /// A point to fit has a NaN or infinite coordinate.
    #[error("sphere fit: point {index} is {point:?}, expected finite coordinates")]
    NotFinitePoint {
        /// 0-based point index.
        index: usize,
        /// The point.
        point: Vec3,
    },
    /// The points lie (numerically) on a plane or a line, so no sphere is determined.
    #[error("sphere fit: the {found} points are (nearly) coplanar, expected points spread over a cap of a sphere")]
    Degenerate {
        /// Number of points given.
        found: usize,
    },
}

/// Distance beyond which [`project_to_sphere`](super::Montage::project_to_sphere) warns
/// that an electrode moved: 10 mm (common practice, no source: about half the spacing of
/// a 10-10 cap).
pub const PROJECTION_WARNING_M: f64 = 0.010;

/// An electrode that moved more than [`PROJECTION_WARNING_M`] when projected onto the
/// scalp sphere.
#[derive(Debug, Clone, PartialEq)]
pub struct ProjectionWarning {
    /// 0-based electrode index.
    pub index: usize,
    /// The electrode label.
    pub label: String,
    /// How far it moved (m).
    pub distance_m: f64,
}

impl std::fmt::Display for ProjectionWarning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "electrode {} (index {}) moved {:.1} mm onto the scalp sphere (more than {:.0} mm)",
            self.label,
            self.index,
            self.distance_m * 1e3,
            PROJECTION_WARNING_M * 1e3
        )
    }
}

/// The parts of a failed channel selection that are not empty, e.g. "2 labels not in the
/// montage [EOG1, M1]; remove those channels from the input or give a montage that has them".
fn selection_problems(unknown: &[String], duplicates: &[String]) -> String {
    let mut parts = Vec::new();
    if !unknown.is_empty() {
        parts.push(format!(
            "{} not in the montage [{}]",
            labels_counted(unknown.len()),
            unknown.join(", ")
        ));
    }
    if !duplicates.is_empty() {
        parts.push(format!(
            "{} asked for twice [{}]",
            labels_counted(duplicates.len()),
            duplicates.join(", ")
        ));
    }
    let mut message = parts.join(", ");
    if !unknown.is_empty() {
        message.push_str("; remove those channels from the input or give a montage that has them");
    }
    message
}

fn labels_counted(n: usize) -> String {
    if n == 1 {
        "1 label".to_string()
    } else {
        format!("{n} labels")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Issue 22: a selection error lists only what went wrong.
    #[test]
    fn selection_errors_name_only_the_problems_found() {
        let unknown = MontageError::Selection {
            unknown: vec!["EOG1".to_string(), "M1".to_string()],
            duplicates: Vec::new(),
        }
        .to_string();
        assert_eq!(
            unknown,
            "channel selection: 2 labels not in the montage [EOG1, M1]; remove those channels \
             from the input or give a montage that has them"
        );
        let twice = MontageError::Selection {
            unknown: Vec::new(),
            duplicates: vec!["Cz".to_string()],
        }
        .to_string();
        assert_eq!(twice, "channel selection: 1 label asked for twice [Cz]");
    }
}
