//! Lead-field assembly: the scalp potential of unit dipoles at every source,
//! along the cortex normals or in x, y, z, optionally re-referenced.

mod error;
mod leadfield;

pub use error::ForwardError;
pub use leadfield::{lead_field, LeadField, Orientation, Reference};
