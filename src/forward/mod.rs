//! Lead-field assembly: the scalp potential of unit dipoles at every source,
//! along the cortex normals or in x, y, z, optionally re-referenced; and the
//! lead field as an artefact ([`LeadField`]: channels, sources, gain, head).

mod error;
mod leadfield;
mod model;

pub use error::ForwardError;
pub use leadfield::{bem_lead_field, lead_field, Gain, Orientation, Reference};
pub use model::LeadField;
