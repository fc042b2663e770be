//! Electrode labels and positions: standard 10-20 / 10-10 / 10-05 layouts
//! computed on a sphere, label matching, scalp projection, sphere fit.

use crate::geometry::Vec3;

/// A set of named electrodes. Positions in metres, head coordinates
/// (+x right ear, +y nose, +z up).
#[derive(Debug, Clone, PartialEq)]
pub struct Montage {
    /// Electrode labels, as given (matching is case-insensitive).
    pub labels: Vec<String>,
    /// Electrode positions (m).
    pub positions: Vec<Vec3>,
}
