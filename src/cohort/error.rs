//! The error type of the cohort comparison.

/// Why a cohort comparison could not run; every variant names the subject
/// (its folder or name) and what was expected.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum CohortError {
    /// Fewer subjects than the comparison needs.
    #[error("a comparison needs at least {needed} results, got {found}")]
    TooFewSubjects {
        /// How many are needed.
        needed: usize,
        /// How many were given.
        found: usize,
    },
    /// A subject's number of components differs from the first subject's.
    #[error("{subject}: {found} components, but {reference} has {expected}")]
    Components {
        /// The subject.
        subject: String,
        /// Its component count.
        found: usize,
        /// The first subject.
        reference: String,
        /// The first subject's component count.
        expected: usize,
    },
    /// A subject's regions differ from the first subject's.
    #[error("{subject}: region set differs from {reference}'s ({detail})")]
    Regions {
        /// The subject.
        subject: String,
        /// The first subject.
        reference: String,
        /// The first difference.
        detail: String,
    },
    /// An array has the wrong length.
    #[error("{subject}: {field} has {found} values, expected {expected}")]
    Shape {
        /// The subject (or `template`).
        subject: String,
        /// The array.
        field: String,
        /// Its length.
        found: usize,
        /// The expected length.
        expected: usize,
    },
    /// A value is NaN or infinite where a number is needed.
    #[error("{subject}: {field} holds a non-finite value at index {index}")]
    NotFinite {
        /// The subject.
        subject: String,
        /// The array.
        field: String,
        /// The first offending index.
        index: usize,
    },
    /// A vertex map points outside the template.
    #[error("{subject}: vertex {vertex} maps to template vertex {target}, but the template has {n_template} vertices")]
    MapTarget {
        /// The subject (or the map file).
        subject: String,
        /// The subject vertex.
        vertex: usize,
        /// The template vertex it maps to.
        target: i64,
        /// The template's vertex count.
        n_template: usize,
    },
    /// A parameter is out of range.
    #[error("parameter {name}: {message}")]
    Parameter {
        /// The parameter.
        name: &'static str,
        /// What was expected.
        message: String,
    },
    /// The paired comparison found no complete pair.
    #[error("paired comparison: {0}")]
    Pairs(String),
}
