//! The error type of the file-format layer: every variant names the file and,
//! where it applies, the dataset, field, line or array, and what was expected.

use std::path::PathBuf;

/// An error reading or writing one of the supported file formats.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum IoError {
    /// The operating system refused to open, read, write or rename a file.
    #[error("{}: {source}", path.display())]
    File {
        /// The file.
        path: PathBuf,
        /// The operating-system error.
        #[source]
        source: std::io::Error,
    },
    /// The file is not a readable HDF5 file (not HDF5, truncated or damaged),
    /// or the HDF5 library refused to write it.
    #[error("{}: not a readable HDF5 file ({message})", path.display())]
    Hdf5 {
        /// The file.
        path: PathBuf,
        /// What the HDF5 layer reported.
        message: String,
    },
    /// A dataset the caller needs is absent.
    #[error("{}: dataset {dataset} is missing", path.display())]
    MissingDataset {
        /// The file.
        path: PathBuf,
        /// The dataset path inside the file.
        dataset: String,
    },
    /// An attribute the caller needs is absent.
    #[error("{}: attribute {name:?} of {object} is missing", path.display())]
    MissingAttribute {
        /// The file.
        path: PathBuf,
        /// The group or dataset the attribute belongs to.
        object: String,
        /// The attribute name.
        name: String,
    },
    /// A dataset has the wrong shape.
    #[error("{}: dataset {dataset} has shape {found:?}, expected {expected}", path.display())]
    Shape {
        /// The file.
        path: PathBuf,
        /// The dataset path inside the file.
        dataset: String,
        /// The shape found.
        found: Vec<usize>,
        /// The expected shape, in words (e.g. `[n_atoms = 7]`).
        expected: String,
    },
    /// A dataset or attribute holds the wrong kind of values.
    #[error("{}: {object} holds {found}, expected {expected}", path.display())]
    Type {
        /// The file.
        path: PathBuf,
        /// The dataset or attribute (e.g. `/dictionary/group` or `attribute unit of /leadfield/gain`).
        object: String,
        /// What was found (e.g. `strings`).
        found: String,
        /// What was expected (e.g. `64-bit floats`).
        expected: String,
    },
    /// A value is NaN or infinite, or otherwise out of the allowed range.
    #[error("{}: {object}: {message}", path.display())]
    Value {
        /// The file.
        path: PathBuf,
        /// Where in the file (dataset and element, DataArray, vertex line).
        object: String,
        /// What is wrong and what was expected.
        message: String,
    },
    /// A text or binary format is malformed at a known place.
    #[error("{}: {location}: {message}", path.display())]
    Format {
        /// The file.
        path: PathBuf,
        /// Where (e.g. `line 12`, `DataArray 1`, `header`, `entry labels.npy`).
        location: String,
        /// What is wrong and what was expected.
        message: String,
    },
    /// The file uses a feature this reader or writer does not support.
    #[error("{}: {what} is not supported", path.display())]
    Unsupported {
        /// The file.
        path: PathBuf,
        /// The unsupported feature.
        what: String,
    },
}

impl IoError {
    /// An operating-system error on `path`.
    pub(crate) fn file(path: impl Into<PathBuf>, source: std::io::Error) -> Self {
        IoError::File {
            path: path.into(),
            source,
        }
    }

    /// A format error at `location` in `path`.
    pub(crate) fn format(
        path: impl Into<PathBuf>,
        location: impl Into<String>,
        message: impl Into<String>,
    ) -> Self {
        IoError::Format {
            path: path.into(),
            location: location.into(),
            message: message.into(),
        }
    }
}

/// Refuse to write a mesh with a non-finite coordinate, naming the first
/// such vertex (shared by the surface writers).
pub(crate) fn check_finite_vertices(
    path: &std::path::Path,
    mesh: &crate::geometry::Mesh,
) -> Result<(), IoError> {
    match mesh
        .vertices
        .iter()
        .position(|p| p.iter().any(|x| !x.is_finite()))
    {
        Some(v) => Err(IoError::Value {
            path: path.to_path_buf(),
            object: format!("vertex {v}"),
            message: "coordinates are not finite".to_string(),
        }),
        None => Ok(()),
    }
}
