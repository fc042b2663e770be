//! Metrics of the recovery benchmark.

/// Area under the ROC curve of `scores` for the positives `truth`
/// (Mann–Whitney U statistic divided by n₊·n₋; ties count one half;
/// Hanley & McNeil 1982, Radiology 143:29). NaN without both classes.
pub fn roc_auc(scores: &[f64], truth: &[bool]) -> f64 {
    let ranks = crate::numeric::average_ranks(scores);
    let n_pos = truth.iter().filter(|&&t| t).count() as f64;
    let n_neg = truth.len() as f64 - n_pos;
    if n_pos == 0.0 || n_neg == 0.0 {
        return f64::NAN;
    }
    let rank_sum: f64 = ranks
        .iter()
        .zip(truth)
        .filter(|(_, &t)| t)
        .map(|(r, _)| r)
        .sum();
    (rank_sum - n_pos * (n_pos + 1.0) / 2.0) / (n_pos * n_neg)
}

/// The region holding the largest total of `weights` (index), if any.
pub fn region_top1(weights: &[f64], region: &[i32], n_regions: usize) -> Option<usize> {
    let mut totals = vec![0.0; n_regions];
    for (&w, &r) in weights.iter().zip(region) {
        if r >= 0 {
            totals[r as usize] += w;
        }
    }
    let mut best = None;
    let mut best_value = 0.0;
    for (r, &t) in totals.iter().enumerate() {
        if t > best_value {
            best_value = t;
            best = Some(r);
        }
    }
    best
}

/// The median of the finite values (mean of the two middle ones for an even
/// count); NaN when there is none.
pub fn median(values: &[f64]) -> f64 {
    let mut v: Vec<f64> = values.iter().copied().filter(|x| x.is_finite()).collect();
    v.sort_by(f64::total_cmp);
    let n = v.len();
    match n {
        0 => f64::NAN,
        _ if n % 2 == 1 => v[n / 2],
        _ => 0.5 * (v[n / 2 - 1] + v[n / 2]),
    }
}

#[cfg(test)]
mod tests {
    // Hand-worked: odd count, even count, NaN left out, nothing left.
    #[test]
    fn median_of_finite_values() {
        assert_eq!(super::median(&[3.0, 1.0, 2.0]), 2.0);
        assert_eq!(super::median(&[4.0, 1.0, 3.0, 2.0]), 2.5);
        assert_eq!(super::median(&[f64::NAN, 5.0]), 5.0);
        assert!(super::median(&[f64::NAN]).is_nan());
    }
}
