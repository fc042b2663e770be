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
    /// Minimum BIC along the path (the default).
    #[default]
    Bic,
    /// λ = ratio · λ_max, 0 < ratio ≤ 1.
    Ratio(f64),
    /// λ itself (in the units of the whitened patterns).
    Absolute(f64),
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
