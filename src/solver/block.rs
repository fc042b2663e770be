//! Many group-LASSO problems on one dictionary, solved in lockstep.
//!
//! Each problem runs the outer loop of [`super::outer`] (certificate, Gap
//! Safe screening, working set, FISTA on it) exactly as a single fit does,
//! but the full-problem adjoint Dᵀ R of every pass is computed for all
//! problems still running at once: Dᵀ [R_1 … R_b], one matrix product that
//! reads the dictionary once instead of b bandwidth-bound products. λ_max of
//! every problem comes from one such product too. Each problem's own
//! arithmetic is unchanged except for the order of the sums inside that
//! product (faer's matrix product instead of the fixed-order dot product),
//! so results agree with one-by-one fits to the last bits of the
//! correlations, and with them within the solvers' tolerance.
//!
//! Used by the resampling stage, whose resamples share a dictionary and
//! start from the same fit.

use rayon::prelude::*;

use super::error::{check_len, SolverError};
use super::groups::Groups;
use super::observer::NoObserver;
use super::operator::{DenseDictionary, StackedOut};
use super::outer::Outer;
use super::params::{Info, Lambda, ValidParams};
use super::problem::{Prepared, Targets};

/// One problem of a block.
#[derive(Debug, Clone, Copy)]
pub struct BlockProblem<'a> {
    /// Patterns, row-major `n_ch x k`.
    pub y: &'a [f64],
    /// Number of pattern columns fitted jointly.
    pub k: usize,
    /// Warm start, row-major `n_atoms x k`.
    pub x0: &'a [f64],
    /// The penalty (a ratio is relative to this problem's λ_max).
    pub lambda: Lambda,
}

/// The solutions of a block.
#[derive(Debug, Clone, PartialEq)]
pub struct BlockFits {
    /// Per problem, in the order given: coefficients (row-major
    /// `n_atoms x k`) and what the solver did. `Info::dictionary_passes`
    /// counts the problem's own reads as a single fit would, including its
    /// share of the stacked products as full reads.
    pub fits: Vec<(Vec<f64>, Info)>,
    /// Reads of the whole dictionary by the stacked products (λ_max and
    /// one per lockstep pass), the block's actual passes besides the
    /// problems' working-set solves.
    pub stacked_passes: usize,
}

/// One problem's state in the lockstep.
struct Slot {
    x: Vec<f64>,
    outer: Option<Outer>,
    info: Option<Info>,
}

/// Fits every problem of `problems` on `dict` (each as [`super::fit_warm`]
/// with the problem's λ and `params` otherwise), in lockstep so that every
/// full adjoint serves all problems still running.
///
/// # Errors
/// Shape and finiteness errors of any problem, groups that do not match the
/// dictionary, an invalid λ, and [`SolverError::NotConverged`] (of the first
/// problem, in order, that fails) when `params` do not stop on budget.
pub fn fit_warm_block(
    dict: &DenseDictionary,
    groups: &Groups,
    problems: &[BlockProblem<'_>],
    params: &ValidParams,
) -> Result<BlockFits, SolverError> {
    let prep = Prepared::new(dict, groups)?;
    let n = dict.n_channels();
    let n_atoms = dict.n_atoms();
    let mut targets = Vec::with_capacity(problems.len());
    for p in problems {
        targets.push(Targets::from_row_major(n, p.k, p.y)?);
        check_len(
            "warm start (n_atoms x k, row-major)",
            || format!("{n_atoms} x {}", p.k),
            n_atoms * p.k,
            p.x0.len(),
        )?;
        p.lambda.validate()?;
    }
    // λ_max of every problem from one product.
    let stacked: Vec<f64> = targets
        .iter()
        .flat_map(|t| t.cols.iter().copied())
        .collect();
    let total: usize = targets.iter().map(|t| t.k).sum();
    let mut corr: Vec<Vec<f64>> = targets.iter().map(|t| vec![0.0; n_atoms * t.k]).collect();
    let mut outs = Vec::with_capacity(targets.len());
    let mut offset = 0;
    for (block, t) in corr.iter_mut().zip(&targets) {
        outs.push(StackedOut {
            block,
            k: t.k,
            offset,
            keep: None,
        });
        offset += t.k;
    }
    dict.adjoint_stacked_into(&stacked, total, outs);
    let mut stacked_passes = 1;
    let lambda_max: Vec<f64> = corr
        .par_iter()
        .zip(&targets)
        .map(|(block, t)| {
            let mut norms = vec![0.0; groups.n_groups()];
            prep.group_frobenius(block, t.k, &mut norms);
            norms.iter().copied().fold(0.0, f64::max)
        })
        .collect();
    drop(corr);
    let mut slots: Vec<Slot> = problems
        .iter()
        .zip(&targets)
        .zip(&lambda_max)
        .map(|((p, t), &lmax)| {
            let mut x = p.x0.to_vec();
            let lambda = p.lambda.resolve(lmax);
            let (outer, info) =
                match Outer::start(&prep, t, lambda, lmax, params, &mut x, &mut NoObserver) {
                    Ok(o) => (Some(o), None),
                    Err(mut info) => {
                        info.dictionary_passes = 1.0;
                        (None, Some(info))
                    }
                };
            Slot { x, outer, info }
        })
        .collect();
    let mut failure: Option<(usize, SolverError)> = None;
    loop {
        let live: Vec<usize> = (0..slots.len())
            .filter(|&i| slots[i].outer.is_some())
            .collect();
        if live.is_empty() || failure.is_some() {
            break;
        }
        // Residuals of the live problems, then one stacked adjoint.
        slots
            .par_iter_mut()
            .zip(&targets)
            .filter(|(s, _)| s.outer.is_some())
            .for_each(|(s, t)| {
                if let Some(o) = s.outer.as_mut() {
                    o.atom_reads += o.certificate_reads(&s.x, t.k);
                    let _ = o
                        .cert
                        .set_residual(dict, &t.cols, t.k, &s.x, Some(&o.kept_atoms));
                }
            });
        let mut total = 0;
        let mut stacked = Vec::new();
        for &i in &live {
            total += targets[i].k;
            if let Some(o) = &slots[i].outer {
                stacked.extend_from_slice(&o.cert.residual);
            }
        }
        // One stacked adjoint, written straight into every live problem's
        // correlation (its screened atoms' rows set to zero).
        let mut outs = Vec::with_capacity(live.len());
        let mut offset = 0;
        for (s, t) in slots.iter_mut().zip(&targets) {
            if let Some(o) = s.outer.as_mut() {
                outs.push(StackedOut {
                    block: &mut o.cert.correlation,
                    k: t.k,
                    offset,
                    keep: Some(&o.atom_kept),
                });
                offset += t.k;
            }
        }
        dict.adjoint_stacked_into(&stacked, total, outs);
        stacked_passes += 1;
        let results: Vec<(usize, Result<(), SolverError>)> = slots
            .par_iter_mut()
            .zip(&targets)
            .enumerate()
            .filter(|(_, (s, _))| s.outer.is_some())
            .map(|(i, (s, t))| {
                let Some(o) = s.outer.as_mut() else {
                    return (i, Ok(()));
                };
                o.cert.reduce(
                    groups.n_groups(),
                    |g| groups.atoms(g),
                    Some(&o.unscreened_groups),
                    &t.cols,
                    t.half_sq,
                    t.k,
                    o.lambda,
                    &s.x,
                );
                match o.advance(&prep, t, params, &mut s.x, &mut NoObserver) {
                    Ok(Some(info)) => {
                        s.info = Some(info);
                        s.outer = None;
                        (i, Ok(()))
                    }
                    Ok(None) => (i, Ok(())),
                    Err(e) => {
                        s.outer = None;
                        (i, Err(e))
                    }
                }
            })
            .collect();
        if let Some((i, Err(e))) = results.into_iter().find(|(_, r)| r.is_err()) {
            failure = Some((i, e));
        }
    }
    if let Some((_, e)) = failure {
        return Err(e);
    }
    let mut fits = Vec::with_capacity(slots.len());
    for s in slots {
        let Some(mut info) = s.info else {
            return Err(SolverError::EmptyDimension {
                what: "block problem without a result",
            });
        };
        if info.iterations > 0 || info.outer_iterations > 0 {
            info.dictionary_passes += 1.0; // λ_max
        }
        fits.push((s.x, info));
    }
    Ok(BlockFits {
        fits,
        stacked_passes,
    })
}
