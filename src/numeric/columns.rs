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
