//! The public fit: one joint problem, or each pattern column alone in parallel.

use rayon::prelude::*;

use super::error::SolverError;
use super::groups::Groups;
use super::kernels::norm_sq;
use super::observer::{NoObserver, Observer};
use super::operator::DenseDictionary;
use super::outer::solve;
use super::params::{Info, ValidParams};
use super::problem::{columns_to_row_major, lambda_max, Prepared, Targets};

/// The penalised solution and what it leaves unexplained.
#[derive(Debug, Clone, PartialEq)]
pub struct Fit {
    /// Number of atoms.
    pub n_atoms: usize,
    /// Number of channels.
    pub n_channels: usize,
    /// Number of pattern columns.
    pub k: usize,
    /// X, row-major `n_atoms x k` (the layout of `/fit/coefficients`).
    pub coefficients: Vec<f64>,
    /// R = Y − DX, row-major `n_ch x k` (the layout of `/fit/residual`).
    pub residual: Vec<f64>,
    /// Per column, 1 − ‖R_c‖²/‖Y_c‖² (0 for an all-zero column).
    pub explained_variance: Vec<f64>,
}

impl Fit {
    /// The residual and explained variance of `coefficients` (row-major
    /// `n_atoms x k`) for patterns `y` (row-major `n_ch x k`).
    pub(crate) fn evaluate(
        dict: &DenseDictionary,
        y: &[f64],
        k: usize,
        coefficients: Vec<f64>,
    ) -> Result<Self, SolverError> {
        let targets = Targets::from_row_major(dict.n_channels(), k, y)?;
        Ok(Self::from_coefficients(dict, &targets, coefficients))
    }

    /// Builds the residual and explained variance of `coefficients`.
    pub(crate) fn from_coefficients(
        dict: &DenseDictionary,
        y: &Targets,
        coefficients: Vec<f64>,
    ) -> Self {
        let n = dict.n_channels();
        let mut resid = vec![0.0; n * y.k];
        dict.apply_into(&coefficients, y.k, &mut resid);
        for (r, &yv) in resid.iter_mut().zip(&y.cols) {
            *r = yv - *r;
        }
        let explained_variance = resid
            .chunks_exact(n)
            .zip(y.cols.chunks_exact(n))
            .map(|(r, yc)| {
                let ys = norm_sq(yc);
                if ys > 0.0 {
                    1.0 - norm_sq(r) / ys
                } else {
                    0.0
                }
            })
            .collect();
        Self {
            n_atoms: dict.n_atoms(),
            n_channels: n,
            k: y.k,
            coefficients,
            residual: columns_to_row_major(&resid, n, y.k),
            explained_variance,
        }
    }
}

/// Fits the `k` columns of `y` jointly (they share one support):
///
/// minimise over X (n_atoms x k): ½‖Y − DX‖_F² + λ Σ_g ‖X_g‖_F.
///
/// `y` is row-major `n_ch x k` (the layout of `/patterns/values`). Stops when
/// the duality gap of the full problem, relative to ½‖Y‖_F², is at most
/// `params.tol`; λ ≥ λ_max returns exactly zero at once with gap 0.
///
/// # Errors
/// Shape and finiteness errors of `y`, a group assignment that does not match
/// the dictionary, and [`SolverError::NotConverged`] after `max_iter`.
pub fn fit(
    dict: &DenseDictionary,
    groups: &Groups,
    y: &[f64],
    k: usize,
    params: &ValidParams,
    observer: &mut dyn Observer,
) -> Result<(Fit, Info), SolverError> {
    let prep = Prepared::new(dict, groups)?;
    let targets = Targets::from_row_major(dict.n_channels(), k, y)?;
    fit_prepared(&prep, &targets, params, observer)
}

fn fit_prepared(
    prep: &Prepared,
    targets: &Targets,
    params: &ValidParams,
    observer: &mut dyn Observer,
) -> Result<(Fit, Info), SolverError> {
    let lmax = lambda_max(prep, targets);
    let lambda = params.lambda.resolve(lmax);
    let mut x = vec![0.0; prep.dict.n_atoms() * targets.k];
    let mut info = solve(prep, targets, lambda, lmax, params, &mut x, observer)?;
    info.dictionary_passes += 1.0; // λ_max
    Ok((Fit::from_coefficients(prep.dict, targets, x), info))
}

/// As [`fit`], starting from `x0` (row-major `n_atoms x k`) instead of
/// zero: a warm start, e.g. from the solution of a nearby problem. The
/// result is certified by the same duality gap.
///
/// # Errors
/// As [`fit`], plus a shape error when `x0` has the wrong length.
pub fn fit_warm(
    dict: &DenseDictionary,
    groups: &Groups,
    y: &[f64],
    k: usize,
    x0: &[f64],
    params: &ValidParams,
    observer: &mut dyn Observer,
) -> Result<(Fit, Info), SolverError> {
    let prep = Prepared::new(dict, groups)?;
    let targets = Targets::from_row_major(dict.n_channels(), k, y)?;
    super::error::check_len(
        "warm start (n_atoms x k, row-major)",
        || format!("{} x {k}", dict.n_atoms()),
        dict.n_atoms() * k,
        x0.len(),
    )?;
    let lmax = lambda_max(&prep, &targets);
    let lambda = params.lambda.resolve(lmax);
    let mut x = x0.to_vec();
    let mut info = solve(&prep, &targets, lambda, lmax, params, &mut x, observer)?;
    info.dictionary_passes += 1.0; // λ_max
    Ok((Fit::from_coefficients(prep.dict, &targets, x), info))
}

/// Fits every column of `y` (row-major `n_ch x k`) as its own problem, in
/// parallel over columns; λ (if a ratio) is relative to each column's own
/// λ_max. The result is the same whatever the number of threads: each column
/// is an independent computation. The observer hears, in column order after
/// all fits, one `observe_iter` per column (`column`, `iterations`, `gap`,
/// `n_active_groups`).
///
/// # Errors
/// The first failing column's error (in column order), wrapped in
/// [`SolverError::Column`].
pub fn fit_separately(
    dict: &DenseDictionary,
    groups: &Groups,
    y: &[f64],
    k: usize,
    params: &ValidParams,
    observer: &mut dyn Observer,
) -> Result<(Fit, Vec<Info>), SolverError> {
    let prep = Prepared::new(dict, groups)?;
    let all = Targets::from_row_major(dict.n_channels(), k, y)?;
    let n = dict.n_channels();
    observer.observe_init(
        "fit_separately",
        &[("k", k as f64), ("n_atoms", dict.n_atoms() as f64)],
    );
    let results: Vec<Result<(Fit, Info), SolverError>> = (0..k)
        .into_par_iter()
        .map(|c| {
            let column = &all.cols[c * n..(c + 1) * n];
            let targets = Targets::from_row_major(n, 1, column)?;
            fit_prepared(&prep, &targets, params, &mut NoObserver)
        })
        .collect();
    let mut coefficients = vec![0.0; dict.n_atoms() * k];
    let mut infos = Vec::with_capacity(k);
    for (c, result) in results.into_iter().enumerate() {
        let (single, info) = result.map_err(|e| SolverError::Column {
            column: c,
            source: Box::new(e),
        })?;
        for (j, &v) in single.coefficients.iter().enumerate() {
            coefficients[j * k + c] = v;
        }
        observer.observe_iter(&[
            ("column", c as f64),
            ("iterations", info.iterations as f64),
            ("gap", info.duality_gap),
            ("n_active_groups", info.n_active_groups as f64),
        ]);
        infos.push(info);
    }
    observer.observe_final(&[("k", k as f64)]);
    Ok((Fit::from_coefficients(dict, &all, coefficients), infos))
}
