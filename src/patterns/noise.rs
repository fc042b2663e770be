//! How noisy a pattern is: from fold decoders (the grouped jackknife) or
//! from the sample count behind the covariance (a first-order expansion).
//!
//! Both give, per component, the variance of the pattern at each channel, in
//! the pattern's units squared. The fit turns them into one standard
//! deviation per channel (the mean variance over the fit's n_ch − 1 free
//! directions) for its λ rule and resamples.

use super::PatternsError;

/// The spread of fold patterns around the full pattern.
#[derive(Debug, Clone, PartialEq)]
pub struct FoldNoise {
    /// Per component, the noise variance summed over channels (jackknife).
    pub total_variance: Vec<f64>,
    /// Per fold, its aligned deviation from the folds' mean times
    /// √((F − 1)/F), n_ch × k row-major: Σ_f g_f d_f with g_f standard
    /// normal has the jackknife covariance.
    pub deviations: Vec<Vec<f64>>,
}

/// The grouped-jackknife noise of `full` (n_ch × k row-major) from the
/// fold patterns `folds` (each n_ch × k, in the same units and reference).
///
/// Each fold of a cross-validation is trained on all data but one fold, so
/// the fold decoders are the grouped jackknife's leave-one-group-out
/// replicates and the variance of the full pattern is estimated by
/// (F − 1)/F Σ_f ‖a_f − ā‖² (Efron & Tibshirani 1993, "An Introduction to
/// the Bootstrap", ch. 11, for the delete-one form; the grouped form from
/// memory). Decoders fix neither the sign nor the scale of a
/// component, so each fold pattern is first aligned to the full one by the
/// least-squares factor s_f = ⟨a_f, a⟩ / ‖a_f‖² (shares do not depend on
/// the scale; the variance then measures changes of shape).
///
/// # Errors
/// Fewer than two folds, or a fold of the wrong size.
pub fn fold_noise(
    full: &[f64],
    folds: &[Vec<f64>],
    n_ch: usize,
    k: usize,
) -> Result<FoldNoise, PatternsError> {
    let f = folds.len();
    if f < 2 {
        return Err(PatternsError::Invalid(format!(
            "folds: {f} fold(s); expected at least 2"
        )));
    }
    if full.len() != n_ch * k {
        return Err(PatternsError::Invalid(format!(
            "pattern has {} values; expected {n_ch} x {k}",
            full.len()
        )));
    }
    if let Some((i, bad)) = folds.iter().enumerate().find(|(_, a)| a.len() != n_ch * k) {
        return Err(PatternsError::Invalid(format!(
            "fold {i} has {} values; expected {n_ch} x {k}",
            bad.len()
        )));
    }
    let mut aligned: Vec<Vec<f64>> = folds.to_vec();
    for a in &mut aligned {
        for c in 0..k {
            let (mut dot, mut sq) = (0.0, 0.0);
            for i in 0..n_ch {
                dot += a[i * k + c] * full[i * k + c];
                sq += a[i * k + c] * a[i * k + c];
            }
            let s = if sq > 0.0 { dot / sq } else { 0.0 };
            for i in 0..n_ch {
                a[i * k + c] *= s;
            }
        }
    }
    let mut mean = vec![0.0; n_ch * k];
    for a in &aligned {
        for (m, v) in mean.iter_mut().zip(a) {
            *m += v / f as f64;
        }
    }
    let scale = ((f as f64 - 1.0) / f as f64).sqrt();
    let deviations: Vec<Vec<f64>> = aligned
        .iter()
        .map(|a| a.iter().zip(&mean).map(|(v, m)| scale * (v - m)).collect())
        .collect();
    let total_variance = (0..k)
        .map(|c| {
            deviations
                .iter()
                .map(|d| (0..n_ch).map(|i| d[i * k + c].powi(2)).sum::<f64>())
                .sum()
        })
        .collect();
    Ok(FoldNoise {
        total_variance,
        deviations,
    })
}

/// Per component, the variance at each channel (n_ch × k row-major) of the
/// pattern a = Σ w / (wᵀ Σ w) when Σ is estimated from `n_samples`
/// independent Gaussian samples.
///
/// To first order the pattern's shape varies with Σ̂ w, and for Gaussian
/// data Var((Σ̂ w)_i) = (Σ_ii wᵀΣw + (Σw)_i²) / N (Isserlis 1918,
/// Biometrika 12:134, for the fourth moments); the variation of the scalar
/// wᵀΣ̂w only rescales the pattern, which no share depends on. Each
/// component is taken alone (exact when the components' outputs are
/// uncorrelated, as for CSP or ICA).
///
/// # Errors
/// A sample count of at most 1, or arrays of the wrong size.
pub fn sample_count_variance(
    weights: &[f64],
    covariance: &[f64],
    n_ch: usize,
    k: usize,
    n_samples: f64,
) -> Result<Vec<f64>, PatternsError> {
    if !(n_samples.is_finite() && n_samples > 1.0) {
        return Err(PatternsError::Invalid(format!(
            "n_samples = {n_samples}; expected more than 1"
        )));
    }
    if weights.len() != n_ch * k || covariance.len() != n_ch * n_ch {
        return Err(PatternsError::Invalid(format!(
            "weights have {} values and the covariance {}; expected {n_ch} x {k} and {n_ch} x {n_ch}",
            weights.len(),
            covariance.len()
        )));
    }
    let mut out = vec![0.0; n_ch * k];
    for c in 0..k {
        let sw: Vec<f64> = (0..n_ch)
            .map(|i| {
                (0..n_ch)
                    .map(|j| covariance[i * n_ch + j] * weights[j * k + c])
                    .sum()
            })
            .collect();
        let s2: f64 = (0..n_ch).map(|i| weights[i * k + c] * sw[i]).sum();
        if s2 <= 0.0 {
            continue;
        }
        for i in 0..n_ch {
            let var_sw = (covariance[i * n_ch + i] * s2 + sw[i] * sw[i]) / n_samples;
            out[i * k + c] = var_sw / (s2 * s2);
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    // Worked by hand: three folds of one component on two channels,
    // a_f = (1, 0), (1, 0.3), (1, -0.3) against the full pattern (1, 0).
    // Alignment factors s_f = 1/1, 1/1.09, 1/1.09; the jackknife variance
    // is (2/3) Σ_f ‖s_f a_f − mean‖².
    #[test]
    fn fold_noise_matches_the_jackknife_by_hand() {
        let folds = vec![vec![1.0, 0.0], vec![1.0, 0.3], vec![1.0, -0.3]];
        let noise = fold_noise(&[1.0, 0.0], &folds, 2, 1).unwrap();
        let s: f64 = 1.0 / 1.09;
        let a = [[1.0, 0.0], [s, 0.3 * s], [s, -0.3 * s]];
        let mean: [f64; 2] = [(1.0 + 2.0 * s) / 3.0, 0.0];
        let expected: f64 = (2.0 / 3.0)
            * a.iter()
                .map(|v| (v[0] - mean[0]).powi(2) + (v[1] - mean[1]).powi(2))
                .sum::<f64>();
        assert!((noise.total_variance[0] - expected).abs() < 1e-15);
        // Sign flips of whole folds change nothing.
        let flipped = vec![vec![-1.0, 0.0], vec![1.0, 0.3], vec![-1.0, 0.3]];
        let noise2 = fold_noise(&[1.0, 0.0], &flipped, 2, 1).unwrap();
        assert!((noise2.total_variance[0] - expected).abs() < 1e-15);
        assert!(fold_noise(&[1.0, 0.0], &folds[..1], 2, 1).is_err());
    }

    // Σ = diag(2, 1), w = (1, 0): Σw = (2, 0), wᵀΣw = 2, so
    // Var(a_1) = (2·2 + 4)/(N·4) and Var(a_2) = (1·2 + 0)/(N·4).
    #[test]
    fn sample_count_variance_matches_the_fourth_moment_by_hand() {
        let v = sample_count_variance(&[1.0, 0.0], &[2.0, 0.0, 0.0, 1.0], 2, 1, 100.0).unwrap();
        assert!((v[0] - 8.0 / 400.0).abs() < 1e-15);
        assert!((v[1] - 2.0 / 400.0).abs() < 1e-15);
        assert!(sample_count_variance(&[1.0, 0.0], &[2.0, 0.0, 0.0, 1.0], 2, 1, 1.0).is_err());
    }
}
