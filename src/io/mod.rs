//! File formats: the HDF5 store of design.md, GIFTI, PLY/OFF, NumPy, CSV/TSV.
//!
//! All other modules are free of file I/O; this module converts between files
//! (millimetres where a field says `_mm`) and the library's SI types.

pub mod atomic;
pub mod atoms_file;
pub mod bem_file;
pub mod cache;
pub mod cache_entries;
pub mod compare_file;
pub mod compare_read;
pub mod coordsystem;
pub mod decoder_extras;
pub mod decoder_file;
pub mod decoder_times;
pub mod dictionary_file;
pub mod dipole_file;
pub mod electrodes;
pub mod error;
pub mod filter_gain_file;
pub mod gifti;
pub mod hdf5_backend;
pub mod input;
pub mod kernel_file;
pub(crate) mod layout_checks;
pub mod leadfield_file;
pub mod mapping_file;
pub mod npy;
pub mod off;
pub mod ply;
pub mod result_file;
pub mod result_read;
pub mod result_time;
pub mod sources_file;
pub mod staging;
pub mod store;
pub mod store_access;
pub mod table;
pub mod template_files;

pub use error::IoError;
pub use store::{Array, Attr, Dataset, Store};
