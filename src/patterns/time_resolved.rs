//! Activation patterns of decoders with a time axis (docs/time_resolved.md):
//! the Haufe transform (Haufe et al. 2014, NeuroImage 87:96, eq. 6) applied
//! once to a discriminant over channel × time features, or at each time
//! point to a decoder per time point. Both return n_ch × (k · n_times)
//! row-major, column c · n_times + t.

use super::haufe::activation_patterns;
use super::PatternsError;

/// Patterns of one discriminant over channel × time features: `weights`
/// n_ch × n_times row-major (feature index channel · n_times + time) and the
/// features' covariance (n_ch·n_times)². The pattern a = Σ w / (wᵀ Σ w) of
/// the flattened features, reshaped to n_ch × n_times (the same row-major
/// values): one scale for all time points, so the time course keeps its shape.
pub fn space_time_patterns(
    weights: &[f64],
    covariance: &[f64],
    n_ch: usize,
    n_times: usize,
) -> Result<Vec<f64>, PatternsError> {
    Ok(activation_patterns(weights, covariance, n_ch * n_times, 1)?.0)
}

/// Patterns of one decoder per time point: `weights` n_times × n_ch × k,
/// `covariances` n_ch × n_ch (`shared`) or n_times × n_ch × n_ch. Each time
/// point is transformed alone, A_t = Σ_t W_t (W_tᵀ Σ_t W_t)⁻¹; a failure
/// names the time index.
pub fn per_time_patterns(
    weights: &[f64],
    covariances: &[f64],
    n_ch: usize,
    k: usize,
    n_times: usize,
    shared: bool,
) -> Result<Vec<f64>, PatternsError> {
    let (wsize, csize) = (n_ch * k, n_ch * n_ch);
    let expected_cov = if shared { csize } else { n_times * csize };
    if weights.len() != n_times * wsize || covariances.len() != expected_cov {
        return Err(PatternsError::Shape {
            matrix: "weights per time point",
            rows: n_times,
            cols: wsize,
            expected: n_times * wsize,
            found: weights.len(),
        });
    }
    let mut per_time = Vec::with_capacity(n_times * wsize);
    for t in 0..n_times {
        let cov = if shared {
            covariances
        } else {
            &covariances[t * csize..(t + 1) * csize]
        };
        let (a, _) = activation_patterns(&weights[t * wsize..(t + 1) * wsize], cov, n_ch, k)
            .map_err(|e| PatternsError::AtTime {
                index: t,
                source: Box::new(e),
            })?;
        per_time.extend(a);
    }
    let mut out = vec![0.0; per_time.len()];
    for t in 0..n_times {
        for ch in 0..n_ch {
            for c in 0..k {
                out[ch * (k * n_times) + c * n_times + t] = per_time[(t * n_ch + ch) * k + c];
            }
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Two channels, signal on channel 0 only and a distractor on both: the
    // filter (1, −1) has the pattern (1, 0) (Haufe et al. 2014, NeuroImage
    // 87:96, the two-channel example of section 2). Given as two time points
    // with one shared covariance, both columns must give it.
    #[test]
    fn every_time_point_gets_the_haufe_pattern() {
        // x = s (1, 0) + d (1, 1), var s = 1, var d = 1: Σ = [[2, 1], [1, 1]].
        let cov = [2.0, 1.0, 1.0, 1.0];
        let w = [1.0, -1.0, 2.0, -2.0];
        let a = per_time_patterns(&w, &cov, 2, 1, 2, true).expect("patterns");
        // Time 1's filter is twice time 0's: the same pattern (Wᵀ A = I).
        let expected = [1.0, 0.5, 0.0, 0.0];
        for (x, e) in a.iter().zip(expected) {
            assert!((x - e).abs() < 1e-12, "{a:?}");
        }
    }

    // A discriminant over 2 channels × 2 times whose features are
    // uncorrelated with unit variance: the pattern is w / (wᵀ w), same layout.
    #[test]
    fn space_time_pattern_keeps_the_feature_order() {
        let mut cov = vec![0.0; 16];
        for i in 0..4 {
            cov[i * 4 + i] = 1.0;
        }
        let w = [1.0, 0.0, 0.0, 1.0];
        let a = space_time_patterns(&w, &cov, 2, 2).expect("patterns");
        assert_eq!(a, vec![0.5, 0.0, 0.0, 0.5]);
    }
}
