//! Summaries of resampled region shares: intervals and selection frequency.

/// A region's share interval and how often the region was selected.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RegionInterval {
    /// Lower end of the interval.
    pub low: f64,
    /// Upper end of the interval.
    pub high: f64,
    /// Median of the resampled shares.
    pub median: f64,
    /// The resampled shares' 2.5 % quantile (the percentile interval's
    /// lower end, from which `high` is reflected).
    pub resampled_low: f64,
    /// The resampled shares' 97.5 % quantile.
    pub resampled_high: f64,
    /// Fraction of resamples in which the region's share exceeded the
    /// selection threshold.
    pub selection_frequency: f64,
    /// Fraction of resamples in which the region had the largest share of
    /// its component (the bootstrap support of "this region leads", in the
    /// sense of Felsenstein 1985, Evolution 39:783, for tree clades; from
    /// memory). A resample whose shares are all zero or below has no leader.
    pub lead_frequency: f64,
}

/// Per region, the fraction of resamples in which it has the largest share
/// (`shares[r][b]`: region r in resample b). A resample leads with its
/// largest positive share (the lowest region index among exact ties); one
/// with no positive share has no leader, so the fractions sum to at most 1.
pub fn lead_frequencies(shares: &[Vec<f64>]) -> Vec<f64> {
    let n_regions = shares.len();
    let n_resamples = shares.first().map_or(0, Vec::len);
    let mut count = vec![0usize; n_regions];
    for b in 0..n_resamples {
        let mut best: Option<(usize, f64)> = None;
        for (r, per_resample) in shares.iter().enumerate() {
            let v = per_resample[b];
            if v > 0.0 && best.is_none_or(|(_, w)| v > w) {
                best = Some((r, v));
            }
        }
        if let Some((r, _)) = best {
            count[r] += 1;
        }
    }
    count
        .iter()
        .map(|&n| n as f64 / n_resamples.max(1) as f64)
        .collect()
}

/// The regions with a positive lead frequency (or fraction), most often
/// first, ties in index order.
pub fn leaders(lead: &[f64]) -> Vec<usize> {
    let mut order: Vec<usize> = (0..lead.len()).filter(|&r| lead[r] > 0.0).collect();
    order.sort_by(|&a, &b| lead[b].total_cmp(&lead[a]).then(a.cmp(&b)));
    order
}

/// The `q`-quantile (0 ≤ q ≤ 1) of `values` by linear interpolation between
/// order statistics (NumPy's default "linear" method); NaN for no values.
pub fn percentile(values: &[f64], q: f64) -> f64 {
    if values.is_empty() {
        return f64::NAN;
    }
    let mut sorted = values.to_vec();
    sorted.sort_by(f64::total_cmp);
    let pos = q.clamp(0.0, 1.0) * (sorted.len() - 1) as f64;
    let lo = pos.floor() as usize;
    let hi = pos.ceil() as usize;
    let frac = pos - lo as f64;
    sorted[lo] + (sorted[hi] - sorted[lo]) * frac
}

#[cfg(test)]
mod tests {
    use super::*;

    // A worked example by hand: resample 0 is led by region 0, resample 1
    // by region 1, resample 2 has no positive share, and resample 3 ties
    // regions 1 and 2 exactly (the lower index leads).
    #[test]
    fn lead_frequencies_count_the_leader_of_each_resample() {
        let shares = vec![
            vec![0.5, 0.3, 0.0, 0.1],
            vec![0.2, 0.6, 0.0, 0.4],
            vec![0.0, 0.0, -0.1, 0.4],
        ];
        assert_eq!(lead_frequencies(&shares), vec![0.25, 0.5, 0.0]);
        assert!(lead_frequencies(&[]).is_empty());
        assert_eq!(lead_frequencies(&[vec![]]), vec![0.0]);
    }
}
