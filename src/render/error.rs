//! The typed error of the picture makers (images, colour maps, cortex views).

use thiserror::Error;

/// What can go wrong while drawing a picture or encoding it.
///
/// Every variant names the field, vertex or triangle at fault and what was
/// expected.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum RenderError {
    /// An image side is zero.
    #[error("image size {width} x {height} pixels: expected both sides >= 1")]
    ZeroSize {
        /// Width asked for.
        width: u32,
        /// Height asked for.
        height: u32,
    },
    /// An image is larger than the renderer accepts.
    #[error("image size {width} x {height} pixels: expected each side <= {max}")]
    TooLarge {
        /// Width asked for.
        width: u32,
        /// Height asked for.
        height: u32,
        /// The largest side accepted.
        max: u32,
    },
    /// The pixel buffer does not hold width x height x 4 bytes.
    #[error("image buffer `rgba` holds {got} bytes: expected {expected} (width x height x 4)")]
    BufferLength {
        /// Bytes expected.
        expected: usize,
        /// Bytes present.
        got: usize,
    },
    /// The PNG encoder failed.
    #[error("PNG encoding failed: {0}")]
    Png(String),
    /// The mesh has no vertices or no triangles.
    #[error("the mesh to draw has {n_vertices} vertices and {n_triangles} triangles: expected at least one of each")]
    EmptyMesh {
        /// Vertex count.
        n_vertices: usize,
        /// Triangle count.
        n_triangles: usize,
    },
    /// A triangle refers to a vertex that does not exist.
    #[error("mesh triangle {triangle} refers to vertex {vertex}, but the mesh has {n_vertices} vertices")]
    BadTriangle {
        /// Triangle index.
        triangle: usize,
        /// The vertex index given.
        vertex: u32,
        /// Vertex count.
        n_vertices: usize,
    },
    /// A vertex position is not finite.
    #[error("mesh vertex {vertex} has a non-finite coordinate: expected finite positions")]
    BadVertex {
        /// Vertex index.
        vertex: usize,
    },
    /// A per-vertex array has the wrong length.
    #[error("`{field}` has {got} entries: expected one per mesh vertex ({expected})")]
    LengthMismatch {
        /// Which array (`values`, `regions`, `hemisphere`).
        field: &'static str,
        /// Vertex count.
        expected: usize,
        /// Entries given.
        got: usize,
    },
    /// A value to be coloured is NaN or infinite.
    #[error("`values[{vertex}]` = {value}: expected a finite number")]
    NonFiniteValue {
        /// Vertex index.
        vertex: usize,
        /// The value given.
        value: f64,
    },
    /// A colour limit or threshold is not usable.
    #[error("colour option `{field}` = {value}: expected {expected}")]
    BadColourOption {
        /// The option's name.
        field: &'static str,
        /// The value given.
        value: f64,
        /// What is accepted.
        expected: &'static str,
    },
    /// A hemisphere view was asked for but the hemisphere has no triangles.
    #[error("view `{view}` shows no triangles: the {hemisphere} hemisphere is empty")]
    EmptyHemisphere {
        /// The view's name.
        view: &'static str,
        /// Which hemisphere.
        hemisphere: &'static str,
    },
    /// A contact sheet was asked for with no pictures.
    #[error("contact sheet: expected at least one image, got none")]
    NoImages,
}
