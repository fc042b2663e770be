//! Summaries of resampled region shares: intervals and selection frequency.

/// A region's share interval and how often the region was selected.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RegionInterval {
    /// Lower end of the interval.
    pub low: f64,
    /// Upper end of the interval.
    pub high: f64,
    /// Fraction of resamples in which the region's share exceeded the
    /// selection threshold.
    pub selection_frequency: f64,
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
