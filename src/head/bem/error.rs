//! The error type of the boundary-element head.

use thiserror::Error;

use crate::geometry::MeshError;

/// What can go wrong when checking the surfaces of a boundary-element head,
/// building its system or evaluating its lead field. Surface messages name
/// the surface (its file name when the caller gave one).
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum BemError {
    /// Fewer than one or more than four surfaces.
    #[error("a boundary-element head needs 1 to {max} nested surfaces, got {count}")]
    SurfaceCount {
        /// Surfaces given.
        count: usize,
        /// Most surfaces accepted.
        max: usize,
    },
    /// Conductivities and surfaces differ in number.
    #[error("{surfaces} surfaces but {conductivities} conductivities: give one conductivity (S/m) per compartment, innermost first")]
    ConductivityCount {
        /// Surfaces given.
        surfaces: usize,
        /// Conductivities given.
        conductivities: usize,
    },
    /// A conductivity is zero, negative or not finite.
    #[error("conductivity {index} (inside surface {surface}) is {value} S/m: expected a positive finite number")]
    ConductivityNotPositive {
        /// Compartment index (0 = innermost).
        index: usize,
        /// The surface that bounds the compartment.
        surface: String,
        /// The value given (S/m).
        value: f64,
    },
    /// A surface failed the mesh checks.
    #[error("surface {surface}: {inner}")]
    Mesh {
        /// The surface.
        surface: String,
        /// What the mesh check found.
        inner: MeshError,
    },
    /// A surface has a boundary: it encloses no volume.
    #[error("surface {surface} is open: {boundary_edges} edges belong to one triangle only (edge {first_edge:?} is the first); expected a closed surface")]
    Open {
        /// The surface.
        surface: String,
        /// Number of boundary edges.
        boundary_edges: usize,
        /// Vertices of the first boundary edge.
        first_edge: [u32; 2],
    },
    /// A surface is made of more than one closed piece.
    #[error("surface {surface} has {components} separate pieces: expected one closed surface")]
    Pieces {
        /// The surface.
        surface: String,
        /// Number of connected components.
        components: usize,
    },
    /// A surface is not inside the next one, or the two intersect.
    #[error("surface {inner} is not inside surface {outer}: vertex {vertex} of {inner} is {where_} {outer} (minimum gap between them {gap_mm:.2} mm); surfaces must be nested without touching, innermost first")]
    NotNested {
        /// The surface that should be inside.
        inner: String,
        /// The surface that should enclose it.
        outer: String,
        /// The first offending vertex of `inner`.
        vertex: usize,
        /// "outside", "on" or "where it crosses".
        where_: &'static str,
        /// Smallest distance between the two surfaces' vertices and triangles (mm).
        gap_mm: f64,
    },
    /// An electrode is too far from the scalp surface.
    #[error("electrode {label} is {distance_mm:.1} mm from the scalp surface {surface}: expected at most {limit_mm} mm (electrodes in another frame or unit?)")]
    ElectrodeFar {
        /// The electrode's label.
        label: String,
        /// The scalp surface.
        surface: String,
        /// Distance to the nearest point of the scalp (mm).
        distance_mm: f64,
        /// The largest distance accepted (mm).
        limit_mm: f64,
    },
    /// A coordinate is NaN or infinite.
    #[error("{what} {index} has a non-finite coordinate")]
    NotFinite {
        /// "electrode" or "source".
        what: &'static str,
        /// Its 0-based index.
        index: usize,
    },
    /// A source is not inside the innermost surface.
    #[error("source {index} at ({x_mm:.1}, {y_mm:.1}, {z_mm:.1}) mm is not inside the innermost surface {surface}: sources must lie inside it")]
    SourceOutside {
        /// 0-based source index.
        index: usize,
        /// The innermost surface.
        surface: String,
        /// Its position (mm).
        x_mm: f64,
        /// Its position (mm).
        y_mm: f64,
        /// Its position (mm).
        z_mm: f64,
    },
    /// The linear system could not be solved (a singular matrix).
    #[error("the boundary-element system is singular (pivot {pivot} is {value:e}); the surfaces are probably too close or badly shaped")]
    Singular {
        /// The row of the zero pivot.
        pivot: usize,
        /// Its value.
        value: f64,
    },
    /// The dense system would not fit in the memory budget.
    #[error("the boundary-element system has {vertices} vertices in all and needs about {needed_mb} MB; the budget is {budget_mb} MB: decimate the surfaces (about 2 500 vertices each is plenty)")]
    TooLarge {
        /// Vertices of all surfaces.
        vertices: usize,
        /// Memory needed (MB).
        needed_mb: u64,
        /// Memory allowed (MB).
        budget_mb: u64,
    },
    /// The caller asked the computation to stop.
    #[error("stopped by the caller")]
    Cancelled,
}
