//! Pipeline stage `dictionary`: multi-scale cortical patches (seed, geodesic
//! radius, profile), atoms = lead field × patch, groups, unit-norm scaling.
//!
//! A patch is a geodesic disc of cortex around a seed source with a Gaussian
//! or flat moment-density profile, weighted by vertex area; its atom is the
//! scalp topography it produces. Patch bases of this kind follow Limpiti, Van
//! Veen & Wakai 2006 (IEEE TBME 53:1740); grouping their orientation variants
//! under a mixed ℓ1,2 penalty follows Haufe et al. 2011 (NeuroImage 54:851).
//!
//! The geodesic distances and the lead field come from other stages as plain
//! inputs (a distance oracle closure, row-major gain slices), so building
//! depends on neither. The artefact, [`PatchDictionary`], holds the
//! [`crate::forward::LeadField`] model it came from and carries the
//! operations that bring it into a fit's space (`restrict_to`,
//! `rereference`, `whiten`). This module does no file I/O; `dictionary.h5`
//! is read and written in `io`.

mod atoms;
mod build;
mod error;
mod model;
mod params;
mod patches;

pub use atoms::atoms_for_channels;
pub use build::{
    build_dictionary, select_channels, Dictionary, DictionaryInfo, DroppedAtom,
    POINT_SOURCE_AREA_M2,
};
pub use error::DictionaryError;
pub use model::{PatchDictionary, RestrictError};
pub use params::{
    AtomComponent, AtomOrientation, DictionaryParams, Profile, Seeds, DEFAULT_DROP_RELATIVE_NORM,
    DEFAULT_RADII_M,
};
pub use patches::DistanceOracle;
