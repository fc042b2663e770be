//! patchwise: which cortical regions does a linear EEG decoder rely on?
//!
//! The library turns decoder weights into activation patterns (Haufe et al. 2014,
//! NeuroImage 87:96), projects them through a concentric-sphere forward model,
//! and explains them as a sparse group-LASSO combination of multi-scale cortical
//! patches. Every pipeline stage is a module with a pure function; file formats
//! live in [`io`] only. Units are SI inside (m, S/m, A·m, V); files carry
//! millimetres where a field name ends in `_mm`.
//!
//! This is a research tool. It interprets research models and is not a medical
//! device: do not use it for clinical decisions such as presurgical planning.
#![warn(missing_docs)]
#![deny(clippy::unwrap_used)]

pub mod attribution;
pub mod baseline;
pub mod batch;
pub mod cohort;
pub mod demo;
pub mod dictionary;
pub mod dipole;
pub mod forward;
pub mod geometry;
pub mod head;
pub mod io;
pub mod job;
pub mod limits;
pub mod montage;
pub mod numeric;
pub mod patterns;
pub mod pipeline;
pub mod render;
pub mod solver;
pub mod validation;
