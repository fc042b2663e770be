//! The bootstrap's resampled fits, in blocks that share a dictionary.
//!
//! Resamples drawn on the same forward model are fitted together by
//! [`fit_warm_block`]: every full adjoint of a pass reads the dictionary once
//! for all of them (a matrix product instead of one bandwidth-bound product
//! per resample), all start from the fit itself, and each keeps its own
//! screening and working sets. The numbers equal the one-by-one fits'
//! except for the rounding inside that product (docs/benchmarks.md,
//! "Resampling in blocks").

use rayon::prelude::*;

use crate::solver::{fit_warm_block, BlockProblem, DenseDictionary, Groups, Lambda, ValidParams};

use super::PipelineError;

/// Pattern columns stacked in one block product at most: bounds the product
/// (n_atoms × this many values) and the problems' workspaces.
const MAX_STACKED_COLUMNS: usize = 128;

/// The columns `cols` of the row-major n × k matrix `y`, row-major n × cols.len().
pub(super) fn column_block(y: &[f64], k: usize, cols: &[usize]) -> Vec<f64> {
    let n = y.len() / k.max(1);
    let mut out = Vec::with_capacity(n * cols.len());
    for i in 0..n {
        for &c in cols {
            out.push(y[i * k + c]);
        }
    }
    out
}

/// The fixed parts of the resampled fits: the column blocks, their λ, the
/// fit they start from (row-major n_atoms × k) and the columns' scale.
pub(super) struct ResampleFits<'a> {
    pub groups: &'a Groups,
    pub k: usize,
    pub blocks: &'a [Vec<usize>],
    pub lambdas: &'a [Lambda],
    pub warm: &'a [f64],
    pub scale: Option<&'a [f64]>,
    pub params: &'a ValidParams,
}

/// What the resampled fits of one forward model gave.
pub(super) struct Fitted<T> {
    /// Per resample, what the caller kept of its coefficients.
    pub kept: Vec<T>,
    /// Block fits that stopped on their iteration or time budget.
    pub budget_stops: usize,
    /// Reads of the whole dictionary by the block products.
    pub stacked_passes: usize,
    /// Sum over block fits of the passes each would have made alone.
    pub fit_passes: f64,
    /// Number of block fits.
    pub n_fits: usize,
}

/// Divides (or, with `multiply`, multiplies) each column `cols[i]` of the
/// row-major block by its scale.
pub(super) fn apply_scale(
    block: &mut [f64],
    cols: &[usize],
    scale: Option<&[f64]>,
    multiply: bool,
) {
    let Some(sc) = scale else {
        return;
    };
    for row in block.chunks_mut(cols.len()) {
        for (v, &c) in row.iter_mut().zip(cols) {
            if multiply {
                *v *= sc[c];
            } else {
                *v /= sc[c];
            }
        }
    }
}

impl ResampleFits<'_> {
    /// Fits every pattern of `y_stars` (each row-major n_ch × k) on `model`
    /// and keeps `keep(coefficients)` of each (coefficients row-major
    /// n_atoms × k), so that only one group of fits holds its coefficients
    /// at a time.
    pub fn fit<T: Send>(
        &self,
        model: &DenseDictionary,
        y_stars: &[Vec<f64>],
        keep: impl Fn(&[f64]) -> T + Sync,
    ) -> Result<Fitted<T>, PipelineError> {
        let n_atoms = model.n_atoms();
        let k = self.k;
        let warm: Vec<Vec<f64>> = self
            .blocks
            .iter()
            .map(|cols| {
                let mut b = column_block(self.warm, k, cols);
                apply_scale(&mut b, cols, self.scale, false);
                b
            })
            .collect();
        let per_call = (MAX_STACKED_COLUMNS / k.max(1)).max(1);
        let mut out = Fitted {
            kept: Vec::with_capacity(y_stars.len()),
            budget_stops: 0,
            stacked_passes: 0,
            fit_passes: 0.0,
            n_fits: 0,
        };
        // Coefficient matrices (n_atoms × k each) reused from block to
        // block: with many columns (a decoder with a time axis) each is tens
        // of megabytes, and a fresh one per resample costs more in page
        // faults than the fill.
        let mut spare: Vec<Vec<f64>> = Vec::new();
        for chunk in y_stars.chunks(per_call) {
            let ys: Vec<Vec<f64>> = chunk
                .iter()
                .flat_map(|y| {
                    self.blocks.iter().map(move |cols| {
                        let mut b = column_block(y, k, cols);
                        apply_scale(&mut b, cols, self.scale, false);
                        b
                    })
                })
                .collect();
            let problems: Vec<BlockProblem<'_>> = ys
                .iter()
                .enumerate()
                .map(|(i, y)| {
                    let block = i % self.blocks.len();
                    BlockProblem {
                        y,
                        k: self.blocks[block].len(),
                        x0: &warm[block],
                        lambda: self.lambdas[block],
                    }
                })
                .collect();
            let fits = fit_warm_block(model, self.groups, &problems, self.params)?;
            out.stacked_passes += fits.stacked_passes;
            let mut per_resample = fits.fits.into_iter();
            let mut coefficients = Vec::with_capacity(chunk.len());
            for _ in chunk {
                let mut coef = spare.pop().unwrap_or_default();
                coef.clear();
                coef.resize(n_atoms * k, 0.0);
                for cols in self.blocks {
                    let Some((mut x, info)) = per_resample.next() else {
                        return Err(PipelineError::Inconsistent(
                            "resampled fits: a block without a result".to_string(),
                        ));
                    };
                    apply_scale(&mut x, cols, self.scale, true);
                    let kb = cols.len();
                    for j in 0..n_atoms {
                        for (bi, &c) in cols.iter().enumerate() {
                            coef[j * k + c] = x[j * kb + bi];
                        }
                    }
                    out.budget_stops += usize::from(info.stop_reason.on_budget());
                    out.fit_passes += info.dictionary_passes;
                    out.n_fits += 1;
                }
                coefficients.push(coef);
            }
            out.kept
                .extend(coefficients.par_iter().map(|c| keep(c)).collect::<Vec<T>>());
            spare.extend(coefficients);
        }
        Ok(out)
    }
}
