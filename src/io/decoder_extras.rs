//! What a decoder file may hold beside its patterns or weights: component
//! names, the sample count behind the covariance, and fold decoders.
//!
//! Layout (design.md, second round): `component_names` (k strings);
//! `n_samples` (one number > 1: the trials or samples the covariance was
//! estimated from); `folds` (n_folds × n_ch × k: one decoder per
//! cross-validation fold, patterns when the file has `patterns`, weights
//! when it has `weights`); `fold_covariances` (n_folds × n_ch × n_ch, the
//! covariance of each fold's training data; without it, weight folds use the
//! one `covariance`). MATLAB v7.3 files hold the same arrays in MATLAB's
//! orientation (the 3-D arrays are read with their axes reversed back).

use std::collections::BTreeMap;
use std::path::Path;

use super::npy::{NpyArray, NpyData};
use super::sources_file::InputError;
use super::store::Store;

/// What a decoder file holds besides its channels.
#[derive(Debug, Clone, PartialEq)]
pub enum DecoderContent {
    /// Activation patterns, n_ch × k row-major.
    Patterns(Vec<f64>),
    /// Filters or classifier weights with the data covariance.
    Weights {
        /// n_ch × k row-major.
        weights: Vec<f64>,
        /// n_ch × n_ch row-major.
        covariance: Vec<f64>,
    },
    /// One discriminant over channel × time features (a decoder file with
    /// `times`; [`super::decoder_times`]).
    SpaceTimeWeights {
        /// n_ch × n_times row-major: feature index channel · n_times + time.
        weights: Vec<f64>,
        /// (n_ch·n_times) × (n_ch·n_times) row-major, the features' covariance.
        covariance: Vec<f64>,
    },
    /// One decoder per time point (a decoder file with `times`).
    PerTimeWeights {
        /// n_times × n_ch × k row-major.
        weights: Vec<f64>,
        /// n_ch × n_ch (`shared`) or n_times × n_ch × n_ch, row-major.
        covariances: Vec<f64>,
        /// Number of time points.
        n_times: usize,
        /// One covariance for every time point.
        shared: bool,
    },
}

/// How the time axis of a decoder was laid out in its file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TimeLayout {
    /// One discriminant over channel × time features (n_ch × n_times).
    SpaceTime,
    /// One decoder per time point (n_times × n_ch × k).
    PerTime,
}

/// The time axis of a time-resolved decoder.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeAxis {
    /// Sample times (s), strictly increasing.
    pub times: Vec<f64>,
    /// Components per time point (1 for [`TimeLayout::SpaceTime`]).
    pub n_components: usize,
    /// The file's layout.
    pub layout: TimeLayout,
}

/// The optional parts of a decoder file.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct DecoderExtras {
    /// One name per component.
    pub component_names: Option<Vec<String>>,
    /// Trials or samples behind the covariance (> 1).
    pub n_samples: Option<f64>,
    /// One decoder per fold, of the same kind as the main one.
    pub folds: Option<Vec<DecoderContent>>,
    /// The time axis, when the patterns or weights carry one; then the
    /// decoder's columns are (component, time) pairs, column c · n_times + t.
    pub time: Option<TimeAxis>,
}

fn content_error(path: &Path, message: String) -> InputError {
    InputError::Content {
        path: path.display().to_string(),
        message,
    }
}

/// A 3-D array as (values row-major, [a, b, c]).
type Array3 = (Vec<f64>, [usize; 3]);

fn as_array3(
    path: &Path,
    what: &str,
    values: Vec<f64>,
    shape: &[usize],
) -> Result<Array3, InputError> {
    match shape {
        [a, b, c] => Ok((values, [*a, *b, *c])),
        // One fold component as n_folds × n_ch.
        s => Err(content_error(
            path,
            format!("entry {what} has shape {s:?}; expected a 3-D array (folds x channels x ...)"),
        )),
    }
}

/// Reverses the axes of a row-major 3-D array (MATLAB's column-major order).
fn reverse_axes(values: &[f64], [a, b, c]: [usize; 3]) -> Array3 {
    let mut out = vec![0.0; values.len()];
    for i in 0..a {
        for j in 0..b {
            for l in 0..c {
                out[(l * b + j) * a + i] = values[(i * b + j) * c + l];
            }
        }
    }
    (out, [c, b, a])
}

fn check_fold_shape(
    path: &Path,
    what: &str,
    shape: [usize; 3],
    n_ch: usize,
    cols: usize,
    cols_name: &str,
) -> Result<(), InputError> {
    if shape[0] < 2 || shape[1] != n_ch || shape[2] != cols {
        return Err(content_error(
            path,
            format!(
                "entry {what} has shape {shape:?}; expected n_folds x {n_ch} x {cols} (at least 2 folds x channels x {cols_name})"
            ),
        ));
    }
    Ok(())
}

/// Builds the extras from arrays already read, checking every shape.
/// `weights_covariance` is the main covariance when the decoder has weights.
#[allow(clippy::too_many_arguments)]
fn assemble(
    path: &Path,
    n_ch: usize,
    k: usize,
    weights_covariance: Option<&[f64]>,
    names: Option<Vec<String>>,
    n_samples: Option<f64>,
    folds: Option<Array3>,
    fold_covariances: Option<Array3>,
) -> Result<DecoderExtras, InputError> {
    if let Some(names) = &names {
        if names.len() != k {
            return Err(content_error(
                path,
                format!(
                    "entry component_names has {} names; expected one per component ({k})",
                    names.len()
                ),
            ));
        }
    }
    if let Some(n) = n_samples {
        if !(n.is_finite() && n > 1.0) {
            return Err(content_error(
                path,
                format!("entry n_samples is {n}; expected the number of trials or samples behind the covariance, more than 1"),
            ));
        }
    }
    let folds = match folds {
        None => {
            if fold_covariances.is_some() {
                return Err(content_error(
                    path,
                    "has fold_covariances but no folds; expected folds (n_folds x channels x components) beside them".to_string(),
                ));
            }
            None
        }
        Some((values, shape)) => {
            check_fold_shape(path, "folds", shape, n_ch, k, "components")?;
            let per = n_ch * k;
            let chunks = values.chunks_exact(per).map(<[f64]>::to_vec);
            Some(match weights_covariance {
                None => {
                    if fold_covariances.is_some() {
                        return Err(content_error(
                            path,
                            "has fold_covariances but its folds are patterns; fold covariances go with weight folds".to_string(),
                        ));
                    }
                    chunks.map(DecoderContent::Patterns).collect()
                }
                Some(cov) => match fold_covariances {
                    None => chunks
                        .map(|weights| DecoderContent::Weights {
                            weights,
                            covariance: cov.to_vec(),
                        })
                        .collect(),
                    Some((cv, cshape)) => {
                        check_fold_shape(path, "fold_covariances", cshape, n_ch, n_ch, "channels")?;
                        if cshape[0] != shape[0] {
                            return Err(content_error(
                                path,
                                format!(
                                    "entry fold_covariances has {} folds but folds has {}; expected one covariance per fold",
                                    cshape[0], shape[0]
                                ),
                            ));
                        }
                        chunks
                            .zip(cv.chunks_exact(n_ch * n_ch))
                            .map(|(weights, c)| DecoderContent::Weights {
                                weights,
                                covariance: c.to_vec(),
                            })
                            .collect()
                    }
                },
            })
        }
    };
    Ok(DecoderExtras {
        component_names: names,
        n_samples,
        folds,
        time: None,
    })
}

fn npz_numbers(path: &Path, what: &str, a: &NpyArray) -> Result<Vec<f64>, InputError> {
    let values = a.to_f64().ok_or_else(|| {
        content_error(
            path,
            format!("entry {what} holds strings; expected numbers"),
        )
    })?;
    if let Some(i) = values.iter().position(|v| !v.is_finite()) {
        return Err(content_error(
            path,
            format!("entry {what} has a non-finite value at flat index {i}"),
        ));
    }
    Ok(values)
}

/// The extras of an `.npz` decoder (`folds` and `fold_covariances` only
/// with `read_folds`).
pub(crate) fn extras_from_npz(
    path: &Path,
    arrays: &BTreeMap<String, NpyArray>,
    n_ch: usize,
    k: usize,
    weights_covariance: Option<&[f64]>,
    read_folds: bool,
) -> Result<DecoderExtras, InputError> {
    let get = |name: &str| {
        arrays
            .get(name)
            .or_else(|| arrays.get(&format!("{name}.npy")))
    };
    let names = match get("component_names").map(|a| &a.data) {
        None => None,
        Some(NpyData::Str(s)) => Some(s.clone()),
        Some(_) => {
            return Err(content_error(
                path,
                "entry component_names holds numbers; expected one name (string) per component"
                    .to_string(),
            ))
        }
    };
    let n_samples = match get("n_samples") {
        None => None,
        Some(a) => match npz_numbers(path, "n_samples", a)?.as_slice() {
            [n] => Some(*n),
            v => {
                return Err(content_error(
                    path,
                    format!(
                        "entry n_samples has {} values; expected one number",
                        v.len()
                    ),
                ))
            }
        },
    };
    let array3 = |name: &str| -> Result<Option<Array3>, InputError> {
        match get(name) {
            None => Ok(None),
            Some(a) => as_array3(path, name, npz_numbers(path, name, a)?, &a.shape).map(Some),
        }
    };
    // A decoder with a time axis reads its folds with its own layout
    // (`decoder_times::time_folds`).
    let (folds, fold_covariances) = if read_folds {
        (array3("folds")?, array3("fold_covariances")?)
    } else {
        (None, None)
    };
    assemble(
        path,
        n_ch,
        k,
        weights_covariance,
        names,
        n_samples,
        folds,
        fold_covariances,
    )
}

/// The extras of an HDF5 or MATLAB v7.3 decoder (names with or without a
/// leading slash; `folds` and `fold_covariances` only with `read_folds`).
pub(crate) fn extras_from_store(
    path: &Path,
    store: &Store,
    n_ch: usize,
    k: usize,
    weights_covariance: Option<&[f64]>,
    read_folds: bool,
) -> Result<DecoderExtras, InputError> {
    let name = |n: &str| {
        if store.contains(n) {
            Some(n.to_string())
        } else if store.contains(&format!("/{n}")) {
            Some(format!("/{n}"))
        } else {
            None
        }
    };
    let names = match name("component_names") {
        Some(n) => Some(store.strings(path, &n, None)?),
        None => None,
    };
    let n_samples = match name("n_samples") {
        Some(n) => Some(store.f64_scalar(path, &n)?),
        None => None,
    };
    let array3 = |n: &str| -> Result<Option<Array3>, InputError> {
        let Some(full) = name(n) else {
            return Ok(None);
        };
        let (values, shape) = store.f64_array(path, &full)?;
        let a = as_array3(path, n, values, &shape)?;
        let matlab = store.dataset(path, &full)?.is_matlab();
        Ok(Some(if matlab { reverse_axes(&a.0, a.1) } else { a }))
    };
    // A decoder with a time axis reads its folds with its own layout
    // (`decoder_times::time_folds`).
    let (folds, fold_covariances) = if read_folds {
        (array3("folds")?, array3("fold_covariances")?)
    } else {
        (None, None)
    };
    assemble(
        path,
        n_ch,
        k,
        weights_covariance,
        names,
        n_samples,
        folds,
        fold_covariances,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    // Reversing the axes of a 2 × 3 × 4 array twice gives it back, and the
    // element (i, j, l) lands at (l, j, i).
    #[test]
    fn reversed_axes_move_each_element() {
        let v: Vec<f64> = (0..24).map(f64::from).collect();
        let (r, s) = reverse_axes(&v, [2, 3, 4]);
        assert_eq!(s, [4, 3, 2]);
        assert_eq!(r[(3 * 3 + 1) * 2 + 1], v[(3 + 1) * 4 + 3]);
        assert_eq!(reverse_axes(&r, s).0, v);
    }
}
