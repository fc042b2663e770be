//! How λ is chosen: a fixed ratio or value, or an information criterion
//! along the regularisation path.
//!
//! The default is the Bayesian information criterion along a warm-started
//! path of 15 log-spaced ratios from 1 down to 0.02 of λ_max:
//! BIC(λ) = n ln(RSS/n) + df ln n, with n the number of fitted values
//! (channels × components fitted together) and df the number of nonzero
//! coefficients (Schwarz 1978, Ann Stat 6:461; using the active-set size as
//! the degrees of freedom of a lasso fit follows Zou, Hastie & Tibshirani
//! 2007, Ann Stat 35:2173, for the plain lasso — for groups it is an
//! approximation). docs/validation.md compares it with fixed ratios on the
//! recovery benchmark.

/// The rule that sets λ.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum LambdaRule {
    /// λ = q σ from the noise in the pattern (the default; `noise_rule`).
    #[default]
    Noise,
    /// Minimum BIC along the path.
    Bic,
    /// Minimum generalised cross-validation score along the path.
    Gcv,
    /// Minimum AIC along the path.
    Aic,
    /// λ = ratio · λ_max, 0 < ratio ≤ 1.
    Ratio(f64),
    /// λ itself (in the units of the whitened patterns).
    Absolute(f64),
}

impl LambdaRule {
    /// True for the rules that search the path.
    pub fn searches_path(&self) -> bool {
        matches!(
            self,
            LambdaRule::Noise | LambdaRule::Bic | LambdaRule::Gcv | LambdaRule::Aic
        )
    }

    /// The rule's name as users write it (`--lambda-rule`), or the fixed value.
    pub fn name(&self) -> String {
        match self {
            LambdaRule::Noise => "noise".to_string(),
            LambdaRule::Bic => "bic".to_string(),
            LambdaRule::Gcv => "gcv".to_string(),
            LambdaRule::Aic => "aic".to_string(),
            LambdaRule::Ratio(r) => format!("ratio {r}"),
            LambdaRule::Absolute(l) => format!("absolute {l}"),
        }
    }

    /// The score this rule minimises along the path (infinite where
    /// undefined), or `None` for the fixed rules.
    pub fn score(&self, rss: f64, n: usize, df: usize) -> Option<f64> {
        match self {
            LambdaRule::Bic => Some(bic(rss, n, df)),
            LambdaRule::Gcv => Some(gcv(rss, n, df)),
            LambdaRule::Aic => Some(aic(rss, n, df)),
            LambdaRule::Noise | LambdaRule::Ratio(_) | LambdaRule::Absolute(_) => None,
        }
    }
}

/// Generalised cross-validation, GCV = (RSS/n) / (1 − df/n)² (Golub, Heath
/// & Wahba 1979, Technometrics 21:215), infinite when df ≥ n.
pub fn gcv(rss: f64, n: usize, df: usize) -> f64 {
    let n = n.max(1) as f64;
    let d = 1.0 - df as f64 / n;
    if d <= 0.0 {
        return f64::INFINITY;
    }
    (rss / n) / (d * d)
}

/// Akaike's information criterion in its least-squares form,
/// AIC = n ln(RSS/n) + 2 df (Akaike 1974, IEEE Trans Autom Control 19:716).
pub fn aic(rss: f64, n: usize, df: usize) -> f64 {
    let n = n.max(1) as f64;
    n * (rss.max(f64::MIN_POSITIVE) / n).ln() + 2.0 * df as f64
}

/// Number of path points searched by [`LambdaRule::Bic`].
pub const BIC_PATH_POINTS: usize = 15;
/// Smallest ratio searched by [`LambdaRule::Bic`].
pub const BIC_MIN_RATIO: f64 = 0.02;

/// The BIC of a fit with residual sum of squares `rss` over `n` values and
/// `df` degrees of freedom.
pub fn bic(rss: f64, n: usize, df: usize) -> f64 {
    let n = n.max(1) as f64;
    n * (rss.max(f64::MIN_POSITIVE) / n).ln() + df as f64 * n.ln()
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    /// Hand-worked values of the three criteria for RSS = 2, n = 4, df = 1:
    /// BIC = 4 ln(0.5) + ln 4 (Schwarz 1978), AIC = 4 ln(0.5) + 2 (Akaike
    /// 1974), GCV = 0.5 / 0.75² (Golub, Heath & Wahba 1979, their V(λ); form from memory);
    /// tolerance 1e-15 relative (rounding).
    #[test]
    fn criteria_match_their_formulas() {
        let l = 4.0 * 0.5f64.ln();
        assert!((bic(2.0, 4, 1) - (l + 4.0f64.ln())).abs() < 1e-15 * l.abs());
        assert!((aic(2.0, 4, 1) - (l + 2.0)).abs() < 1e-15 * l.abs());
        assert!((gcv(2.0, 4, 1) - 0.5 / 0.5625).abs() < 1e-15);
        assert!(gcv(2.0, 4, 4).is_infinite());
        assert_eq!(LambdaRule::Ratio(0.1).score(1.0, 2, 1), None);
        assert!(LambdaRule::Gcv.searches_path() && !LambdaRule::Absolute(1.0).searches_path());
    }
}
