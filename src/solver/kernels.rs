//! Small dense kernels (dot products, axpy) with a fixed summation order.
//!
//! The order of every floating-point sum here depends only on the length of
//! the inputs, never on threads, so results are reproducible bit for bit.

/// Number of independent partial sums in [`dot`]; lets the compiler vectorise
/// while keeping one fixed summation order.
pub(crate) const LANES: usize = 8;

/// Dot product with eight interleaved partial sums combined in a fixed tree.
#[inline]
pub(crate) fn dot(a: &[f64], b: &[f64]) -> f64 {
    debug_assert_eq!(a.len(), b.len());
    let mut acc = [0.0f64; LANES];
    let ca = a.chunks_exact(LANES);
    let cb = b.chunks_exact(LANES);
    let (ra, rb) = (ca.remainder(), cb.remainder());
    for (x, y) in ca.zip(cb) {
        for l in 0..LANES {
            acc[l] += x[l] * y[l];
        }
    }
    let mut tail = 0.0;
    for (x, y) in ra.iter().zip(rb) {
        tail += x * y;
    }
    ((acc[0] + acc[4]) + (acc[1] + acc[5])) + ((acc[2] + acc[6]) + (acc[3] + acc[7])) + tail
}

/// Squared Euclidean norm, same summation order as [`dot`].
///
/// One value (a row of a single-column fit, summed once per atom in every
/// certificate) skips the lanes: [`dot`] gives (+0 + x·x) + (+0 + … + +0)
/// there, which is x·x bit for bit because a square is never −0.
#[inline]
pub(crate) fn norm_sq(a: &[f64]) -> f64 {
    if let [x] = a {
        return x * x;
    }
    dot(a, a)
}

/// `y += alpha * x`.
#[inline]
pub(crate) fn axpy(alpha: f64, x: &[f64], y: &mut [f64]) {
    debug_assert_eq!(x.len(), y.len());
    for (yi, xi) in y.iter_mut().zip(x) {
        *yi += alpha * xi;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The one-value shortcut of `norm_sq` equals `dot` bit for bit, for
    // signed zeros, subnormals, overflow and ordinary values alike
    // (floating-point identity, common practice, no source).
    #[test]
    fn norm_of_one_value_equals_the_lane_sum() {
        for x in [
            0.0,
            -0.0,
            1e-310,
            -3.5,
            0.1,
            1e200,
            f64::MAX,
            -f64::MIN_POSITIVE,
        ] {
            assert_eq!(norm_sq(&[x]).to_bits(), dot(&[x], &[x]).to_bits(), "{x}");
        }
    }
}
