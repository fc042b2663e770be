//! Triangle meshes, icospheres, the template cortex and geodesic distances.
//!
//! Coordinates are metres inside the library. Files give millimetres.

mod mesh;

pub use mesh::{Mesh, Vec3};
pub mod template;
mod template_regions;
mod template_sulci;

pub use template::{template, unfolded_template, Template, TemplateResolution};
