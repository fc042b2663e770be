//! Column scaling of a row-major matrix.

/// Scale column `j` of the row-major n × m `atoms` to unit 2-norm and fold
/// the scale into `norm` (the atom's removed scale); a zero column stays zero.
pub fn rescale_to_unit_norm(atoms: &mut [f64], n: usize, m: usize, j: usize, norm: &mut f64) {
    let s = (0..n).map(|i| atoms[i * m + j].powi(2)).sum::<f64>().sqrt();
    if s > 0.0 {
        for i in 0..n {
            atoms[i * m + j] /= s;
        }
    }
    *norm *= s;
}

/// [`rescale_to_unit_norm`] of every column at once, `norms[j]` for column
/// `j`: the same sums in the same order (each column's squares added from
/// row 0 down), so the same bits, but read row by row, which streams through
/// memory instead of striding across it once per column.
pub fn rescale_all_to_unit_norm(atoms: &mut [f64], m: usize, norms: &mut [f64]) {
    let mut squares = vec![0.0f64; m];
    for row in atoms.chunks_exact(m) {
        for (s, v) in squares.iter_mut().zip(row) {
            *s += v.powi(2);
        }
    }
    let scales: Vec<f64> = squares.iter().map(|s| s.sqrt()).collect();
    for row in atoms.chunks_exact_mut(m) {
        for (v, &s) in row.iter_mut().zip(&scales) {
            if s > 0.0 {
                *v /= s;
            }
        }
    }
    for (norm, s) in norms.iter_mut().zip(scales) {
        *norm *= s;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::SplitMix64;

    // The row-by-row sweep is an exact rewrite of the column-by-column one
    // (same operations in the same order), so the two agree bit for bit,
    // zero columns included (arithmetic identity, common practice, no source).
    #[test]
    fn rescaling_all_columns_equals_rescaling_each() {
        let (n, m) = (7, 13);
        let mut rng = SplitMix64::new(3, 0);
        let mut a: Vec<f64> = (0..n * m).map(|_| rng.normal()).collect();
        for i in 0..n {
            a[i * m + 4] = 0.0;
        }
        let mut one_by_one = a.clone();
        let mut norms_one: Vec<f64> = (0..m).map(|j| 1.0 + j as f64).collect();
        for (j, norm) in norms_one.iter_mut().enumerate() {
            rescale_to_unit_norm(&mut one_by_one, n, m, j, norm);
        }
        let mut norms_all: Vec<f64> = (0..m).map(|j| 1.0 + j as f64).collect();
        rescale_all_to_unit_norm(&mut a, m, &mut norms_all);
        assert_eq!(a, one_by_one);
        assert_eq!(norms_all, norms_one);
        assert_eq!(norms_all[4], 0.0);
    }
}
