//! Conductor models of the head: concentric spheres with an exact series,
//! and nested triangle surfaces by the boundary-element method ([`bem`]).
//!
//! [`SphereHead`] holds one to four concentric shells (innermost first) and
//! evaluates the scalp potential of a current dipole by the Legendre series of
//! Zhang (1995, Phys Med Biol 40:335), accelerated by subtracting the
//! homogeneous-sphere closed form (de Munck & Peters 1993, IEEE TBME 40:1166).
//! [`HeadSpec`] is the file form (TOML head files and the JSON `head_model`
//! attribute); it carries millimetres, the model carries metres.

pub mod bem;
mod error;
mod series;
mod spec;
mod spheres;
pub mod template_head;

pub use error::HeadError;
pub use spec::{HeadLandmarksMm, HeadModelKind, HeadSpec};
pub use spheres::{SphereHead, MAX_SHELLS, SERIES_TABLE_LEN};

pub(crate) use series::SeriesForm;
