//! Decoders whose patterns or weights carry a time axis (docs/time_resolved.md):
//! `times` (seconds, strictly increasing, n_times values) beside either
//!
//! - one discriminant over channel × time features: `patterns` or `weights`
//!   n_ch × n_times, the weights with `covariance` (n_ch·n_times)² of the
//!   features flattened channel-major (feature index = channel · n_times +
//!   time index, NumPy's `epochs.reshape(n_trials, -1)` of an
//!   n_trials × n_ch × n_times array); or
//! - one decoder per time point: `patterns` or `weights` n_times × n_ch × k,
//!   the weights with one shared `covariance` (n_ch × n_ch) or one per time
//!   point (n_times × n_ch × n_ch).
//!
//! Either becomes n_ch × (k · n_times) columns, column `c · n_times + t`
//! for component c at time index t. MATLAB v7.3 files hold the arrays in
//! MATLAB's orientation (read with their axes reversed back).

use std::path::Path;

use super::decoder_extras::DecoderContent;
pub use super::decoder_extras::{TimeAxis, TimeLayout};
use super::sources_file::InputError;

/// An array as read: values row-major (NumPy's order) and shape.
pub(crate) type Array = (Vec<f64>, Vec<usize>);

fn content_error(path: &Path, message: String) -> InputError {
    InputError::Content {
        path: path.display().to_string(),
        message,
    }
}

/// A MATLAB array (column-major, shape stored reversed) in NumPy's order.
pub(crate) fn from_matlab((values, shape): Array) -> Array {
    let shape: Vec<usize> = shape.into_iter().rev().collect();
    let n = values.len();
    if shape.iter().product::<usize>() != n || shape.len() < 2 {
        return (values, shape);
    }
    // Element at NumPy index (i0, i1, ...) sits at the reversed index in the file.
    let mut out = vec![0.0; n];
    let mut index = vec![0usize; shape.len()];
    for slot in out.iter_mut() {
        let mut flat = 0;
        for (d, &i) in index.iter().enumerate().rev() {
            flat = flat * shape[d] + i;
        }
        *slot = values[flat];
        for d in (0..shape.len()).rev() {
            index[d] += 1;
            if index[d] < shape[d] {
                break;
            }
            index[d] = 0;
        }
    }
    (out, shape)
}

fn read_times(path: &Path, (values, shape): Array) -> Result<Vec<f64>, InputError> {
    let n = values.len();
    let is_vector = shape.iter().filter(|&&d| d != 1).count() <= 1;
    if !is_vector || n < 2 {
        return Err(content_error(
            path,
            format!("entry times has shape {shape:?}; expected a vector of at least 2 sample times in seconds"),
        ));
    }
    if let Some(i) = values.iter().position(|v| !v.is_finite()) {
        return Err(content_error(
            path,
            format!("entry times has a non-finite value at index {i}"),
        ));
    }
    if let Some(i) = (1..n).find(|&i| values[i] <= values[i - 1]) {
        return Err(content_error(
            path,
            format!(
                "entry times is not increasing at index {i} ({} s after {} s); expected strictly increasing sample times in seconds",
                values[i],
                values[i - 1]
            ),
        ));
    }
    Ok(values)
}

/// A damaged file can declare more elements than it holds: every array's
/// length is checked against its shape before anything indexes it.
fn whole(path: &Path, name: &str, (values, shape): Array) -> Result<Array, InputError> {
    if shape.iter().try_fold(1usize, |n, &d| n.checked_mul(d)) != Some(values.len()) {
        return Err(content_error(
            path,
            format!(
                "entry {name} declares shape {shape:?} but holds {} values",
                values.len()
            ),
        ));
    }
    Ok((values, shape))
}

/// The fold decoders of a decoder with a time axis (`content`, read by
/// [`time_resolved`]), or `None` when the file has no `folds`: `folds` holds
/// n_folds (at least 2) decoders laid out like the main `patterns` or
/// `weights` (n_folds × n_ch × n_times, or n_folds × n_times × n_ch × k),
/// of the same kind (patterns or weights); weight folds take their
/// covariances from `fold_covariances` (n_folds × the main covariance's
/// shape, or n_folds × n_ch × n_ch for decoders per time point: one shared
/// per fold), else the main covariance. Each fold becomes the same columns
/// as the main decoder.
pub(crate) fn time_folds(
    path: &Path,
    n_ch: usize,
    content: &DecoderContent,
    axis: &TimeAxis,
    fetch: &dyn Fn(&str) -> Result<Option<Array>, InputError>,
) -> Result<Option<Vec<DecoderContent>>, InputError> {
    let fetch = |name: &str| -> Result<Option<Array>, InputError> {
        fetch(name)?.map(|a| whole(path, name, a)).transpose()
    };
    let Some((values, shape)) = fetch("folds")? else {
        if fetch("fold_covariances")?.is_some() {
            return Err(content_error(
                path,
                "has fold_covariances but no folds; expected folds beside them".to_string(),
            ));
        }
        return Ok(None);
    };
    let n_t = axis.times.len();
    let k = axis.n_components;
    let one: Vec<usize> = match axis.layout {
        TimeLayout::SpaceTime => vec![n_ch, n_t],
        TimeLayout::PerTime => vec![n_t, n_ch, k],
    };
    let is_patterns = matches!(content, DecoderContent::Patterns(_));
    let kind = if is_patterns { "patterns" } else { "weights" };
    let n_folds = shape.first().copied().unwrap_or(0);
    if n_folds < 2 || shape[1..] != one[..] {
        return Err(content_error(
            path,
            format!(
                "entry folds has shape {shape:?}; expected n_folds x {} (at least 2 folds, each laid out like {kind})",
                one.iter().map(usize::to_string).collect::<Vec<_>>().join(" x ")
            ),
        ));
    }
    let per: usize = one.iter().product();
    let fold = |f: usize| values[f * per..(f + 1) * per].to_vec();
    let covariances = fetch("fold_covariances")?;
    if is_patterns && covariances.is_some() {
        return Err(content_error(
            path,
            "has fold_covariances but its folds are patterns; fold covariances go with weight folds"
                .to_string(),
        ));
    }
    // Each fold's covariance: (values, shared) for a decoder per time point.
    let fold_covariance = |f: usize| -> Result<Option<(Vec<f64>, bool)>, InputError> {
        let Some((cv, cshape)) = &covariances else {
            return Ok(None);
        };
        let main: Vec<usize> = match content {
            DecoderContent::SpaceTimeWeights { .. } => vec![n_ch * n_t, n_ch * n_t],
            DecoderContent::PerTimeWeights { shared: true, .. } => vec![n_ch, n_ch],
            _ => vec![n_t, n_ch, n_ch],
        };
        let shared_per_fold =
            matches!(content, DecoderContent::PerTimeWeights { .. }) && cshape.len() == 3;
        let ok = cshape.first() == Some(&n_folds)
            && (cshape[1..] == main[..] || (shared_per_fold && cshape[1..] == [n_ch, n_ch]));
        if !ok {
            return Err(content_error(
                path,
                format!(
                    "entry fold_covariances has shape {cshape:?}; expected {n_folds} x {} (one covariance per fold, laid out like covariance)",
                    main.iter().map(usize::to_string).collect::<Vec<_>>().join(" x ")
                ),
            ));
        }
        let m: usize = cshape[1..].iter().product();
        Ok(Some((cv[f * m..(f + 1) * m].to_vec(), cshape.len() == 3)))
    };
    let mut folds = Vec::with_capacity(n_folds);
    for f in 0..n_folds {
        folds.push(match content {
            DecoderContent::Patterns(_) => DecoderContent::Patterns(match axis.layout {
                TimeLayout::SpaceTime => fold(f),
                TimeLayout::PerTime => per_time_to_columns(&fold(f), n_t, n_ch, k),
            }),
            DecoderContent::SpaceTimeWeights { covariance, .. } => {
                DecoderContent::SpaceTimeWeights {
                    weights: fold(f),
                    covariance: fold_covariance(f)?.map_or_else(|| covariance.clone(), |c| c.0),
                }
            }
            DecoderContent::PerTimeWeights {
                covariances: main,
                shared: main_shared,
                ..
            } => {
                let (covariances, shared) =
                    fold_covariance(f)?.unwrap_or_else(|| (main.clone(), *main_shared));
                DecoderContent::PerTimeWeights {
                    weights: fold(f),
                    covariances,
                    n_times: n_t,
                    shared,
                }
            }
            DecoderContent::Weights { .. } => {
                return Err(content_error(
                    path,
                    "has times but weights without a time axis".to_string(),
                ))
            }
        });
    }
    Ok(Some(folds))
}

/// n_times × n_ch × k (row-major) as n_ch × (k · n_times), column c · n_times + t.
pub fn per_time_to_columns(values: &[f64], n_t: usize, n_ch: usize, k: usize) -> Vec<f64> {
    let mut out = vec![0.0; values.len()];
    for t in 0..n_t {
        for ch in 0..n_ch {
            for c in 0..k {
                out[ch * (k * n_t) + c * n_t + t] = values[(t * n_ch + ch) * k + c];
            }
        }
    }
    out
}

/// The decoder content, its column count and time axis, from the arrays of
/// a file with `times`. `fetch(name)` gives an entry in NumPy's order, or
/// `None` when the file lacks it; `kind` is `patterns` or `weights`.
pub(crate) fn time_resolved(
    path: &Path,
    n_ch: usize,
    times: Array,
    fetch: &dyn Fn(&str) -> Result<Option<Array>, InputError>,
) -> Result<(usize, DecoderContent, TimeAxis), InputError> {
    let whole = |name: &str, a: Array| whole(path, name, a);
    let fetch = |name: &str| -> Result<Option<Array>, InputError> {
        fetch(name)?.map(|a| whole(name, a)).transpose()
    };
    let times = read_times(path, whole("times", times)?)?;
    let n_t = times.len();
    let axis = |n_components, layout| TimeAxis {
        times: times.clone(),
        n_components,
        layout,
    };
    let (kind, (values, shape)) = match (fetch("patterns")?, fetch("weights")?) {
        (Some(p), _) => ("patterns", p),
        (None, Some(w)) => ("weights", w),
        (None, None) => {
            return Err(content_error(
                path,
                "has times but neither patterns nor weights".to_string(),
            ))
        }
    };
    let layout_hint = format!(
        "expected {n_ch} x {n_t} (channels x times: one discriminant over channel x time features) or {n_t} x {n_ch} x k (times x channels x components: one decoder per time point)"
    );
    match shape.as_slice() {
        [r, c] if *r == n_ch && *c == n_t => {
            if kind == "patterns" {
                return Ok((
                    n_t,
                    DecoderContent::Patterns(values),
                    axis(1, TimeLayout::SpaceTime),
                ));
            }
            let m = n_ch * n_t;
            let Some((covariance, cshape)) = fetch("covariance")? else {
                return Err(content_error(path, "has weights over channel x time features but no covariance; expected covariance of the flattened features".to_string()));
            };
            if cshape != [m, m] {
                return Err(content_error(
                    path,
                    format!("entry covariance has shape {cshape:?}; expected {m} x {m}: the covariance of the {n_ch} x {n_t} channel x time features, flattened channel-major (feature index = channel * n_times + time index)"),
                ));
            }
            Ok((
                n_t,
                DecoderContent::SpaceTimeWeights {
                    weights: values,
                    covariance,
                },
                axis(1, TimeLayout::SpaceTime),
            ))
        }
        [t, r, k] if *t == n_t && *r == n_ch && *k >= 1 => {
            let k = *k;
            let columns = per_time_to_columns(&values, n_t, n_ch, k);
            if kind == "patterns" {
                return Ok((
                    k * n_t,
                    DecoderContent::Patterns(columns),
                    axis(k, TimeLayout::PerTime),
                ));
            }
            let Some((covariance, cshape)) = fetch("covariance")? else {
                return Err(content_error(path, "has weights per time point but no covariance; expected covariance n_ch x n_ch (shared) or n_times x n_ch x n_ch".to_string()));
            };
            let shared = match cshape.as_slice() {
                [a, b] if *a == n_ch && *b == n_ch => true,
                [t, a, b] if *t == n_t && *a == n_ch && *b == n_ch => false,
                s => {
                    return Err(content_error(
                        path,
                        format!("entry covariance has shape {s:?}; expected {n_ch} x {n_ch} (one shared) or {n_t} x {n_ch} x {n_ch} (one per time point)"),
                    ))
                }
            };
            Ok((
                k * n_t,
                DecoderContent::PerTimeWeights {
                    weights: values,
                    covariances: covariance,
                    n_times: n_t,
                    shared,
                },
                axis(k, TimeLayout::PerTime),
            ))
        }
        s => Err(content_error(
            path,
            format!("entry {kind} has shape {s:?} but times has {n_t} values; {layout_hint}"),
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The MATLAB order of a 2 × 3 × 4 array (axes reversed, column-major)
    // comes back to NumPy's: element (i, j, l) of the NumPy array is the
    // element (l, j, i) of the stored one.
    #[test]
    fn matlab_arrays_come_back_in_numpy_order() {
        let numpy: Vec<f64> = (0..24).map(f64::from).collect();
        let mut stored = vec![0.0; 24];
        for i in 0..2 {
            for j in 0..3 {
                for l in 0..4 {
                    stored[(l * 3 + j) * 2 + i] = numpy[(i * 3 + j) * 4 + l];
                }
            }
        }
        let (back, shape) = from_matlab((stored, vec![4, 3, 2]));
        assert_eq!(shape, vec![2, 3, 4]);
        assert_eq!(back, numpy);
    }

    #[test]
    fn per_time_columns_are_component_major() {
        // 2 times, 1 channel, 2 components: values (t, c) = 10 t + c.
        let v = [0.0, 1.0, 10.0, 11.0];
        assert_eq!(per_time_to_columns(&v, 2, 1, 2), vec![0.0, 10.0, 1.0, 11.0]);
    }
}
