//! Triangle meshes, icospheres, the template cortex and geodesic distances.
//!
//! Coordinates are metres inside the library. Files give millimetres.

mod mesh;
mod source_space;

pub use mesh::{add, cross, dot, norm, normalize, scale, sub, Mesh, Vec3};
pub use source_space::SourceSpace;
