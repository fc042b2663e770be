//! Errors of the chained pipeline: the stage errors, plus channel matching.

/// An error of the chained pipeline.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum PipelineError {
    /// Lead-field assembly failed.
    #[error("lead field: {0}")]
    Forward(#[from] crate::forward::ForwardError),
    /// Montage handling failed.
    #[error("montage: {0}")]
    Montage(#[from] crate::montage::MontageError),
    /// The source mesh is unusable for geodesic distances.
    #[error("source mesh: {0}")]
    Mesh(#[from] crate::geometry::MeshError),
    /// Dictionary construction failed.
    #[error("dictionary: {0}")]
    Dictionary(#[from] crate::dictionary::DictionaryError),
    /// The fit failed.
    #[error("fit: {0}")]
    Solver(#[from] crate::solver::SolverError),
    /// Pattern computation or whitening failed.
    #[error("patterns: {0}")]
    Patterns(#[from] crate::patterns::PatternsError),
    /// Attribution failed.
    #[error("attribution: {0}")]
    Attribution(#[from] crate::attribution::AttributionError),
    /// Inputs that disagree.
    #[error("{0}")]
    Inconsistent(String),
    /// The caller asked the computation to stop.
    #[error("stopped by the caller")]
    Cancelled,
}
