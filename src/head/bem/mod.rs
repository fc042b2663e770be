//! A boundary-element head: nested closed triangle surfaces (one to four,
//! innermost first) with a constant conductivity inside each.
//!
//! Linear elements with the analytic double layer of flat triangles (de
//! Munck 1992, IEEE Trans Biomed Eng 39:986; solid angles by van Oosterom &
//! Strackee 1983, IEEE Trans Biomed Eng 30:125): collocation at the
//! vertices of the innermost surface, rows tested with the hat functions
//! (Galerkin) on the others, the singular system deflated, and the isolated-problem approach of
//! Hämäläinen & Sarvas (1989, IEEE Trans Biomed Eng 36:165) for the poorly
//! conducting skull. [`BemGeometry`] checks the surfaces, [`BemSystem`]
//! builds and factorises the system once per head, [`BemTransfer`] holds
//! one montage's transfer matrix, from which each source costs one product.
//! Metres and S/m inside.

mod error;
mod galerkin;
mod integrals;
mod mesh_checks;
mod system;
mod transfer;

pub use error::BemError;
pub use integrals::{linear_double_layer, nearest_on_mesh, solid_angle, winding_number};
pub use mesh_checks::{BemGeometry, GeometryNotes, MAX_SURFACES};
pub use system::{BemSystem, BemSystemParts};
pub use transfer::{
    check_sources_inside, project_to_scalp, BemTransfer, ScalpPoint, MAX_ELECTRODE_DISTANCE_M,
};
