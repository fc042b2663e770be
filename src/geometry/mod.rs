//! Triangle meshes, icospheres, validity checks, connectivity, geodesic distances and seed sampling.
//!
//! Coordinates are metres inside the library. Files give millimetres.

mod adjacency;
mod error;
mod geodesic;
mod mesh;
mod sampling;
mod source_space;
mod validate;

pub use adjacency::Adjacency;
pub use error::{MeshError, DEGENERATE_RATIO};
pub use geodesic::{FrontShape, GeodesicScratch, GeodesicSolver, MAX_UNFOLD_STEPS};
pub use mesh::{
    add, check_indices_and_coordinates, cross, dot, norm, normalize, scale, sub, Mesh, Vec3,
};
pub use sampling::farthest_point_seeds;
pub use source_space::SourceSpace;
pub use validate::{isolated_vertices, validate, ComponentReport, MeshReport};
pub mod template;
mod template_regions;
mod template_sulci;

pub use template::{template, unfolded_template, Template, TemplateResolution};
