//! Ranks with ties averaged, for the rank statistics (Spearman's
//! correlation, the Mann–Whitney area under the ROC curve).

/// Ranks from 1 of `values` in increasing order, ties given their average
/// rank (NaN sorts last by `total_cmp`).
pub fn average_ranks(values: &[f64]) -> Vec<f64> {
    let mut order: Vec<usize> = (0..values.len()).collect();
    order.sort_by(|&a, &b| values[a].total_cmp(&values[b]).then(a.cmp(&b)));
    let mut ranks = vec![0.0; values.len()];
    let mut i = 0;
    while i < order.len() {
        let mut j = i;
        while j + 1 < order.len() && values[order[j + 1]] == values[order[i]] {
            j += 1;
        }
        let rank = (i + j) as f64 / 2.0 + 1.0;
        for &o in &order[i..=j] {
            ranks[o] = rank;
        }
        i = j + 1;
    }
    ranks
}
