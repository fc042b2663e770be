//! Triangle meshes, icospheres, the template cortex and geodesic distances.
//!
//! Coordinates are metres inside the library. Files give millimetres.

mod mesh;

pub use mesh::{add, cross, dot, norm, normalize, scale, sub, Mesh, Vec3};
