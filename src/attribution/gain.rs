//! Where a spatial filter listens: the gain of each filter over the cortex
//! (the lead field passed through the weights), its depth-normalised form,
//! region summaries, and how the gain ranks against the pattern's shares.
//!
//! For weights W (n_ch × k) and the lead field L (n_ch × n_src, both in the
//! fit's reference), the gain of filter c at source j is g_jc = |w_cᵀ l_j|,
//! or with free orientation the 2-norm over the three directions,
//! g_jc = ‖w_cᵀ L_j‖ with L_j the n_ch × 3 block of source j. Its unit is
//! the filter's output per A·m of dipole moment (when the weights act on
//! data in volts). The depth-normalised gain divides by the lead field's
//! norm at the source, ‖l_j‖ (Frobenius norm of L_j with free orientation),
//! so superficial sources are not favoured by their strong fields alone;
//! by Cauchy–Schwarz it is at most ‖w_c‖.
//!
//! A filter's gain and its activation pattern disagree on purpose: a filter
//! also weights places it uses to cancel noise (Haufe et al. 2014,
//! NeuroImage 87:96–110, the two-channel example of section 2). The
//! agreement measure is the Spearman rank correlation between the region
//! gain and the region share, and a flag when the region of highest gain is
//! not among the regions that carry most of the pattern.
//!
//! *Invariant:* no file I/O; the products run sequentially (faer with
//! `Par::Seq`), so the numbers do not depend on the thread count.

use crate::numeric::average_ranks;
use faer::linalg::matmul::matmul;
use faer::{Accum, Mat, MatRef, Par};

/// Why a gain map cannot be computed from the inputs given.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum GainError {
    /// Two inputs disagree in size.
    #[error("{what} has {found} values, expected {expected}")]
    Shape {
        /// Which input.
        what: &'static str,
        /// Its number of values.
        found: usize,
        /// The number the other inputs imply.
        expected: usize,
    },
    /// The orientation count is neither 1 (normal) nor 3 (free).
    #[error("{0} lead-field columns per source; expected 1 (along the normals) or 3 (x, y, z)")]
    Orientations(usize),
    /// A source's region index is outside the region names.
    #[error("source {source_index} has region {region}, but only {n_regions} regions are named")]
    Region {
        /// The source.
        source_index: usize,
        /// Its region index.
        region: i32,
        /// The number of region names.
        n_regions: usize,
    },
}

/// What the gain needs; matrices row-major.
pub struct GainInput<'a> {
    /// Filter weights in the fit's reference, n_ch × k.
    pub weights: &'a [f64],
    /// Number of channels.
    pub n_channels: usize,
    /// Number of filters k.
    pub n_components: usize,
    /// Lead field in the fit's reference, V/(A·m): n_ch × n_src along the
    /// normals (`orientations` 1) or n_ch × n_src × 3 (`orientations` 3).
    pub leadfield: &'a [f64],
    /// 1 (along the normals) or 3 (free orientation, x, y, z).
    pub orientations: usize,
    /// Area of each source (any unit; only ratios enter the region mean).
    pub source_areas: &'a [f64],
    /// Region of each source (index into the region names; -1 = none).
    pub source_region: &'a [i32],
    /// Number of named regions.
    pub n_regions: usize,
}

/// The gain maps of k filters. Matrices row-major, components last.
#[derive(Debug, Clone, PartialEq)]
pub struct FilterGain {
    /// Number of sources.
    pub n_sources: usize,
    /// Number of filters.
    pub k: usize,
    /// Number of regions.
    pub n_regions: usize,
    /// Whether the gain is the norm over three directions (free orientation).
    pub free_orientation: bool,
    /// Gain per source, n_src × k (filter output per A·m).
    pub source: Vec<f64>,
    /// Gain divided by the lead field's norm at the source, n_src × k
    /// (filter output per V; 0 where the lead field is zero).
    pub source_normalised: Vec<f64>,
    /// Area-weighted mean gain over each region's sources, n_regions × k
    /// (NaN for a region without sources).
    pub region_mean: Vec<f64>,
    /// Largest gain over each region's sources, n_regions × k (NaN for a
    /// region without sources).
    pub region_max: Vec<f64>,
    /// Area-weighted mean of the depth-normalised gain, n_regions × k.
    pub region_normalised_mean: Vec<f64>,
}

impl FilterGain {
    /// Column `c` of an n × k row-major matrix of this gain.
    pub fn column(values: &[f64], k: usize, c: usize) -> Vec<f64> {
        values.iter().skip(c).step_by(k.max(1)).copied().collect()
    }

    /// Regions of component `c` by decreasing mean gain (regions without
    /// sources last; ties by index).
    pub fn regions_by_gain(&self, c: usize) -> Vec<usize> {
        order_decreasing(&Self::column(&self.region_mean, self.k, c))
    }
}

/// Indices of `values` by decreasing value; NaN last, ties by index.
pub fn order_decreasing(values: &[f64]) -> Vec<usize> {
    let mut order: Vec<usize> = (0..values.len()).collect();
    order.sort_by(|&a, &b| {
        let (x, y) = (values[a], values[b]);
        match (x.is_nan(), y.is_nan()) {
            (true, true) => a.cmp(&b),
            (true, false) => std::cmp::Ordering::Greater,
            (false, true) => std::cmp::Ordering::Less,
            (false, false) => y.total_cmp(&x).then(a.cmp(&b)),
        }
    });
    order
}

fn check(what: &'static str, found: usize, expected: usize) -> Result<(), GainError> {
    if found == expected {
        Ok(())
    } else {
        Err(GainError::Shape {
            what,
            found,
            expected,
        })
    }
}

/// The gain maps of the filters in `input` (see the module docs).
pub fn filter_gain(input: &GainInput<'_>) -> Result<FilterGain, GainError> {
    let (n, k, o) = (input.n_channels, input.n_components, input.orientations);
    if o != 1 && o != 3 {
        return Err(GainError::Orientations(o));
    }
    let n_src = input.source_areas.len();
    check("the weights", input.weights.len(), n * k)?;
    check("the lead field", input.leadfield.len(), n * n_src * o)?;
    check("the source regions", input.source_region.len(), n_src)?;
    for (j, &r) in input.source_region.iter().enumerate() {
        if r >= 0 && r as usize >= input.n_regions {
            return Err(GainError::Region {
                source_index: j,
                region: r,
                n_regions: input.n_regions,
            });
        }
    }
    let cols = n_src * o;
    // Wᵀ L as one product, k × n_ch times n_ch × (o n_src), sequential so the
    // sums run in one order whatever the thread count.
    let weights = MatRef::from_row_major_slice(input.weights, n, k);
    let leadfield = MatRef::from_row_major_slice(input.leadfield, n, cols);
    let mut product = Mat::<f64>::zeros(k, cols);
    matmul(
        product.as_mut(),
        Accum::Replace,
        weights.transpose(),
        leadfield,
        1.0,
        Par::Seq,
    );
    let mut column_sq = vec![0.0; cols];
    for row in input.leadfield.chunks_exact(cols.max(1)) {
        for (s, &v) in column_sq.iter_mut().zip(row) {
            *s += v * v;
        }
    }
    let mut source = vec![0.0; n_src * k];
    let mut source_normalised = vec![0.0; n_src * k];
    for j in 0..n_src {
        let norm = column_sq[j * o..(j + 1) * o].iter().sum::<f64>().sqrt();
        for c in 0..k {
            let g = (0..o)
                .map(|d| product[(c, j * o + d)].powi(2))
                .sum::<f64>()
                .sqrt();
            source[j * k + c] = g;
            source_normalised[j * k + c] = if norm > 0.0 { g / norm } else { 0.0 };
        }
    }
    let (region_mean, region_max) = region_summaries(&source, k, input);
    let (region_normalised_mean, _) = region_summaries(&source_normalised, k, input);
    Ok(FilterGain {
        n_sources: n_src,
        k,
        n_regions: input.n_regions,
        free_orientation: o == 3,
        source,
        source_normalised,
        region_mean,
        region_max,
        region_normalised_mean,
    })
}

/// Area-weighted mean and maximum of `values` (n_src × k) over each
/// region's sources; NaN for a region without sources (or of zero area, for
/// the mean).
fn region_summaries(values: &[f64], k: usize, input: &GainInput<'_>) -> (Vec<f64>, Vec<f64>) {
    let r = input.n_regions;
    let mut weighted = vec![0.0; r * k];
    let mut area = vec![0.0; r];
    let mut max = vec![f64::NAN; r * k];
    for (j, &reg) in input.source_region.iter().enumerate() {
        if reg < 0 {
            continue;
        }
        let reg = reg as usize;
        let a = input.source_areas[j];
        area[reg] += a;
        for c in 0..k {
            let v = values[j * k + c];
            weighted[reg * k + c] += a * v;
            let m = &mut max[reg * k + c];
            if m.is_nan() || v > *m {
                *m = v;
            }
        }
    }
    let mean = (0..r * k)
        .map(|i| {
            let a = area[i / k.max(1)];
            if a > 0.0 {
                weighted[i] / a
            } else {
                f64::NAN
            }
        })
        .collect();
    (mean, max)
}

/// How a filter's region gain ranks against its pattern's region shares.
#[derive(Debug, Clone, PartialEq)]
pub struct GainAgreement {
    /// Spearman rank correlation between region gain and region share over
    /// the regions where both are finite; `None` when fewer than three such
    /// regions or either side is constant (a zero filter, say).
    pub rank_correlation: Option<f64>,
    /// Regions by decreasing mean gain, the first [`TOP_REGIONS`].
    pub top_gain_regions: Vec<usize>,
    /// The regions that carry most of the pattern: the (up to)
    /// [`TOP_REGIONS`] of largest positive share.
    pub top_share_regions: Vec<usize>,
    /// Whether the region of highest gain is outside `top_share_regions`.
    pub listens_elsewhere: bool,
    /// The regions of `top_gain_regions` outside `top_share_regions`, when
    /// the flag is set ("the filter also listens to …").
    pub also_listens_to: Vec<usize>,
}

/// How many regions count as "highest gain" and "most of the pattern".
pub const TOP_REGIONS: usize = 3;

/// Compare one filter's region gain with its pattern's region shares (same
/// region order). The flag fires when the filter has some gain, the pattern
/// some region of positive share, and the filter's region of highest gain
/// is not among the [`TOP_REGIONS`] of largest positive share (a rule of
/// our own, no source). The gain compared is the caller's choice; the jobs
/// use the raw area-weighted mean (what a source of given moment gives at
/// the filter's output), so superficial regions are favoured.
pub fn gain_agreement(region_gain: &[f64], region_share: &[f64]) -> GainAgreement {
    let rank_correlation = spearman(region_gain, region_share);
    let by_gain = order_decreasing(region_gain);
    let top_gain_regions: Vec<usize> = by_gain
        .into_iter()
        .filter(|&r| region_gain[r].is_finite() && region_gain[r] > 0.0)
        .take(TOP_REGIONS)
        .collect();
    let top_share_regions: Vec<usize> = order_decreasing(region_share)
        .into_iter()
        .filter(|&r| region_share[r].is_finite() && region_share[r] > 0.0)
        .take(TOP_REGIONS)
        .collect();
    // Without any region of positive share (nothing fitted) there is no
    // pattern to compare with, and no flag.
    let listens_elsewhere = !top_share_regions.is_empty()
        && top_gain_regions
            .first()
            .is_some_and(|r| !top_share_regions.contains(r));
    let also_listens_to = if listens_elsewhere {
        top_gain_regions
            .iter()
            .copied()
            .filter(|r| !top_share_regions.contains(r))
            .collect()
    } else {
        Vec::new()
    };
    GainAgreement {
        rank_correlation,
        top_gain_regions,
        top_share_regions,
        listens_elsewhere,
        also_listens_to,
    }
}

/// Spearman's rank correlation of `a` and `b` over the indices where both
/// are finite: Pearson's correlation of the average ranks (Spearman 1904,
/// Am J Psychol 15:72, citation from memory; ties by average ranks, common
/// practice, no source). `None` with
/// fewer than three pairs or a constant side.
pub fn spearman(a: &[f64], b: &[f64]) -> Option<f64> {
    let (x, y): (Vec<f64>, Vec<f64>) = a
        .iter()
        .zip(b)
        .filter(|(x, y)| x.is_finite() && y.is_finite())
        .map(|(&x, &y)| (x, y))
        .unzip();
    if x.len() < 3 {
        return None;
    }
    let (rx, ry) = (average_ranks(&x), average_ranks(&y));
    let m = (x.len() as f64 + 1.0) / 2.0;
    let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
    for (u, v) in rx.iter().zip(&ry) {
        sxy += (u - m) * (v - m);
        sxx += (u - m) * (u - m);
        syy += (v - m) * (v - m);
    }
    (sxx > 0.0 && syy > 0.0).then(|| sxy / (sxx * syy).sqrt())
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    fn input<'a>(
        weights: &'a [f64],
        leadfield: &'a [f64],
        n: usize,
        k: usize,
        o: usize,
        areas: &'a [f64],
        region: &'a [i32],
    ) -> GainInput<'a> {
        GainInput {
            weights,
            n_channels: n,
            n_components: k,
            leadfield,
            orientations: o,
            source_areas: areas,
            source_region: region,
            n_regions: 2,
        }
    }

    #[test]
    fn gain_is_the_absolute_filter_output_and_regions_are_area_weighted() {
        // Two channels, three sources; filter (1, -1) (hand-computed values).
        let l = [1.0, 2.0, 0.5, 3.0, 2.0, -0.5];
        let g = filter_gain(&input(
            &[1.0, -1.0],
            &l,
            2,
            1,
            1,
            &[1.0, 3.0, 1.0],
            &[0, 0, 1],
        ))
        .unwrap();
        assert_eq!(g.source, vec![2.0, 0.0, 1.0]);
        assert_eq!(g.region_mean, vec![0.5, 1.0]);
        assert_eq!(g.region_max, vec![2.0, 1.0]);
        assert!((g.source_normalised[0] - 2.0 / 10f64.sqrt()).abs() < 1e-15);
    }

    #[test]
    fn free_orientation_takes_the_norm_over_three_directions() {
        // One channel pair, one source with x, y, z columns.
        let l = [3.0, 0.0, 4.0, 0.0, 0.0, 0.0];
        let g = filter_gain(&input(&[1.0, 0.0], &l, 2, 1, 3, &[1.0], &[-1])).unwrap();
        assert_eq!(g.source, vec![5.0]);
        assert!(g.region_mean.iter().all(|v| v.is_nan()));
    }

    #[test]
    fn bad_shapes_are_errors() {
        let e = filter_gain(&input(&[1.0], &[1.0, 2.0], 2, 1, 1, &[1.0], &[0]));
        assert!(matches!(e, Err(GainError::Shape { .. })));
        let e = filter_gain(&input(&[1.0, 1.0], &[1.0, 2.0], 2, 1, 2, &[1.0], &[0]));
        assert_eq!(e, Err(GainError::Orientations(2)));
        let e = filter_gain(&input(&[1.0, 1.0], &[1.0, 2.0], 2, 1, 1, &[1.0], &[5]));
        assert!(matches!(e, Err(GainError::Region { .. })));
    }

    #[test]
    fn spearman_matches_hand_computed_values_with_ties() {
        // Ranks (1, 2, 3, 4) against (1, 2.5, 2.5, 4): correlation by hand
        // 4.5 / sqrt(5 * 4.5) = 0.948683...
        let r = spearman(&[1.0, 2.0, 3.0, 4.0], &[0.1, 0.5, 0.5, 0.9]).unwrap();
        assert!((r - 4.5 / (5.0f64 * 4.5).sqrt()).abs() < 1e-15);
        assert_eq!(spearman(&[1.0, 2.0, 3.0], &[3.0, 2.0, 1.0]), Some(-1.0));
        assert_eq!(spearman(&[0.0, 0.0, 0.0], &[1.0, 2.0, 3.0]), None);
    }

    #[test]
    fn flag_fires_when_the_top_gain_region_carries_little_of_the_pattern() {
        let share = [0.5, 0.3, 0.1, 0.0, 0.1];
        let a = gain_agreement(&[1.0, 0.9, 0.8, 2.0, 0.1], &share);
        assert!(a.listens_elsewhere);
        assert_eq!(a.also_listens_to, vec![3]);
        let b = gain_agreement(&[2.0, 0.9, 0.8, 1.0, 0.1], &share);
        assert!(!b.listens_elsewhere);
        let zero = gain_agreement(&[0.0; 5], &share);
        assert!(!zero.listens_elsewhere && zero.rank_correlation.is_none());
        let unfitted = gain_agreement(&[1.0, 0.9, 0.8, 2.0, 0.1], &[0.0; 5]);
        assert!(!unfitted.listens_elsewhere);
    }
}
