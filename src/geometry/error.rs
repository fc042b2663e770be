//! What is wrong with a mesh: the error of the geometry module.

use thiserror::Error;

/// A triangle is degenerate when twice its area divided by the square of its
/// longest edge (its height over the longest edge, relative to that edge) is
/// at most this value. An equilateral triangle has √3/2; a repeated corner 0.
/// Rounding in the cross product of coordinates near 0.1 m and edges near
/// 0.1 mm stays below 1e-12, so the tolerance does not flag sound meshes.
pub const DEGENERATE_RATIO: f64 = 1e-10;

/// What is wrong with a mesh: each variant names the first offending vertex,
/// triangle or edge (in increasing index order) and what was expected.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum MeshError {
    /// No vertices or no triangles.
    #[error("the mesh is empty ({vertices} vertices, {triangles} triangles); expected at least one triangle")]
    Empty {
        /// Number of vertices.
        vertices: usize,
        /// Number of triangles.
        triangles: usize,
    },
    /// More vertices or triangles than `u32` indices can address.
    #[error("the mesh is too large ({vertices} vertices, {triangles} triangles); expected fewer than 2^32 vertices and 2^32/3 triangles")]
    TooLarge {
        /// Number of vertices.
        vertices: usize,
        /// Number of triangles.
        triangles: usize,
    },
    /// A triangle corner refers to a vertex that does not exist.
    #[error("triangle {triangle}, corner {corner}: vertex index {vertex} is out of range; expected less than {n_vertices}")]
    IndexOutOfRange {
        /// The triangle.
        triangle: usize,
        /// Which corner (0, 1 or 2).
        corner: usize,
        /// The offending index.
        vertex: u32,
        /// Number of vertices in the mesh.
        n_vertices: usize,
    },
    /// A vertex coordinate is NaN or infinite.
    #[error("vertex {vertex}: coordinate {axis} is {value}; expected a finite number (m)")]
    NonFinite {
        /// The vertex.
        vertex: usize,
        /// Which coordinate (0 = x, 1 = y, 2 = z).
        axis: usize,
        /// The offending value.
        value: f64,
    },
    /// A triangle has (nearly) zero area.
    #[error("triangle {triangle} is degenerate: 2·area / longest edge² = {ratio:e}; expected more than {DEGENERATE_RATIO:e}")]
    Degenerate {
        /// The triangle.
        triangle: usize,
        /// Twice its area over its longest edge squared.
        ratio: f64,
    },
    /// An edge is shared by more than two triangles.
    #[error("edge {edge:?} is shared by {count} triangles (triangle {triangle} is the third); expected at most two")]
    NonManifoldEdge {
        /// The edge as `[smaller, larger]` vertex index.
        edge: [u32; 2],
        /// The third triangle (in increasing index order) on the edge.
        triangle: usize,
        /// How many triangles share the edge.
        count: usize,
    },
    /// Two neighbouring triangles traverse their shared edge in the same
    /// direction, so one of them is flipped.
    #[error("triangles {first} and {second} both traverse edge {from} -> {to}; expected opposite directions (consistent orientation)")]
    InconsistentOrientation {
        /// The lower-numbered triangle.
        first: usize,
        /// The higher-numbered triangle.
        second: usize,
        /// Start vertex of the edge as both traverse it.
        from: u32,
        /// End vertex of the edge as both traverse it.
        to: u32,
    },
    /// A closed component has a negative signed volume: its normals point inward.
    #[error("closed component {component} (containing triangle {triangle}) has signed volume {volume_m3:e} m³; expected positive (outward normals, counter-clockwise seen from outside)")]
    InwardNormals {
        /// The component (numbered by their lowest vertex).
        component: usize,
        /// Its lowest-numbered triangle.
        triangle: usize,
        /// The signed volume (m³).
        volume_m3: f64,
    },
    /// A seed spacing that is not a finite positive length.
    #[error("seed spacing {spacing_m} m; expected a finite positive length")]
    InvalidSpacing {
        /// The offending spacing (m).
        spacing_m: f64,
    },
}
