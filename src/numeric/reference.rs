//! The common average reference: subtract from each column its mean over the
//! channels (rows), so each column sums to zero.

/// Re-reference the `n_rows × k` row-major matrix `values` in place to the
/// common average: subtract from every column its mean over the rows
/// (H A with H = I − 11ᵀ/n). The mean is summed in row order, so the result
/// does not depend on the thread count.
///
/// The rows are the first `values.len() / k` whole rows; a trailing partial
/// row (a length that is not a multiple of `k`) is left as it is, and so is
/// everything when `k` is 0 or there is no whole row. A column is one
/// channel vector when `k` is 1.
pub fn average_reference_columns(values: &mut [f64], k: usize) {
    if k == 0 {
        return;
    }
    let n_rows = values.len() / k;
    if n_rows == 0 {
        return;
    }
    for j in 0..k {
        let mean = values[j..].iter().step_by(k).take(n_rows).sum::<f64>() / n_rows as f64;
        values[j..]
            .iter_mut()
            .step_by(k)
            .take(n_rows)
            .for_each(|v| *v -= mean);
    }
}

/// The covariance of average-referenced data: H C H with H = I − 11ᵀ/n the
/// centring matrix, for the `n × n` row-major covariance `cov`. Entry (i, j)
/// is C_ij − r_i − r_j + a with r the row means and a their mean (C is taken
/// as symmetric, so column means are row means).
///
/// Requires `cov.len() == n * n`; a shorter or longer slice gives an empty
/// result.
pub fn centre_covariance(cov: &[f64], n: usize) -> Vec<f64> {
    if n == 0 || cov.len() != n * n {
        return Vec::new();
    }
    let row_mean: Vec<f64> = (0..n)
        .map(|i| (0..n).map(|j| cov[i * n + j]).sum::<f64>() / n as f64)
        .collect();
    let all_mean = row_mean.iter().sum::<f64>() / n as f64;
    let mut centred = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..n {
            centred[i * n + j] = cov[i * n + j] - row_mean[i] - row_mean[j] + all_mean;
        }
    }
    centred
}

#[cfg(test)]
mod tests {
    use super::*;

    // Common practice, no source: the average reference makes every column
    // sum to zero and leaves differences between channels unchanged.
    #[test]
    fn columns_sum_to_zero_and_differences_stay() {
        let a = [1.0, 10.0, 2.0, 20.0, 6.0, -3.0];
        let mut r = a;
        average_reference_columns(&mut r, 2);
        assert_eq!(r, [-2.0, 1.0, -1.0, 11.0, 3.0, -12.0]);
        for j in 0..2 {
            assert_eq!(r[j] + r[2 + j] + r[4 + j], 0.0);
            assert_eq!(r[j] - r[2 + j], a[j] - a[2 + j]);
        }
    }

    #[test]
    fn degenerate_shapes_change_nothing() {
        let mut v = [1.0, 2.0, 3.0];
        average_reference_columns(&mut v, 0);
        assert_eq!(v, [1.0, 2.0, 3.0]);
        average_reference_columns(&mut v, 4);
        assert_eq!(v, [1.0, 2.0, 3.0]);
        // k = 2: one whole row (referenced to itself, so zero) and a
        // partial row that is left alone.
        average_reference_columns(&mut v, 2);
        assert_eq!(v, [0.0, 0.0, 3.0]);
        assert!(centre_covariance(&[1.0, 2.0], 2).is_empty());
    }

    // Common practice, no source: H C H equals H (C H) computed as two
    // products with the explicit centring matrix H = I − 11ᵀ/n; its rows and
    // columns sum to zero.
    #[test]
    fn centred_covariance_matches_explicit_products() {
        let n = 3;
        let c = [4.0, 1.0, 0.5, 1.0, 3.0, -0.2, 0.5, -0.2, 2.0];
        let h: Vec<f64> = (0..n * n)
            .map(|p| f64::from(u8::from(p / n == p % n)) - 1.0 / n as f64)
            .collect();
        let prod = |a: &[f64], b: &[f64]| -> Vec<f64> {
            (0..n * n)
                .map(|p| (0..n).map(|t| a[p / n * n + t] * b[t * n + p % n]).sum())
                .collect()
        };
        let expected = prod(&h, &prod(&c, &h));
        let got = centre_covariance(&c, n);
        for (g, e) in got.iter().zip(&expected) {
            assert!((g - e).abs() < 1e-14, "{g} vs {e}");
        }
        for i in 0..n {
            let row: f64 = (0..n).map(|j| got[i * n + j]).sum();
            assert!(row.abs() < 1e-14);
        }
    }
}
