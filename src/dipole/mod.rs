//! Equivalent-dipole fits of scalp patterns: a second attribution beside the patch fit.
//!
//! For each average-referenced pattern y (n_ch) and a trial position r, the
//! moment q is the linear least-squares solution of y ≈ G(r) q, with G the
//! n_ch × 3 (or n_ch × 6 for a symmetric pair) average-referenced gain of the
//! concentric-sphere head ([`crate::head::SphereHead`], its accelerated
//! series). The misfit ‖y − G(r) q(r)‖² is then a function of the position
//! alone (variable projection: Golub & Pereyra 1973, SIAM J Numer Anal
//! 10:413, from memory). It is minimised by a scan of a cubic grid inside the
//! innermost sphere, followed by Levenberg–Marquardt refinement (Marquardt
//! 1963, J Soc Ind Appl Math 11:431, from memory) of the best few grid points,
//! with the Jacobian of Kaufman (1975, BIT 15:49, from memory):
//! J = −(I − P_G) (∂G/∂r_i) q, by central differences of the gain.
//!
//! Constraint: every dipole lies in the ball |r − c| ≤ r_inner − margin
//! (c the head centre, margin 2 mm by default); a step leaving it is
//! projected back onto it. A symmetric pair puts its dipoles at (x, y, z)
//! and its mirror image in the plane x = c_x, with |x − c_x| ≥ the pair's
//! minimal offset (5 mm by default, so the two are at least 10 mm apart).
//!
//! Confidence region: with the moment profiled out, the Gauss–Newton
//! Hessian of the misfit in the three position parameters is JᵀJ, and the
//! position covariance is σ² (JᵀJ)⁻¹, σ the noise standard deviation per
//! channel (given, or estimated from the residual with n_ch − 1 − p degrees
//! of freedom, p = 6 for one dipole and 9 for a pair; the average reference
//! removes one). The 95 % region is the ellipsoid δᵀ C⁻¹ δ ≤ χ²₃(0.95) =
//! 7.8147. See docs/dipole.md.

mod error;
mod fit;
mod linalg;

pub use error::DipoleError;
pub use fit::{fit_dipoles, DipoleFitter};

use crate::geometry::Vec3;

/// The 0.95 quantile of the chi-square distribution with 3 degrees of
/// freedom (7.8147 in Abramowitz & Stegun 1964, Handbook of Mathematical
/// Functions, Table 26.8, from memory; scipy.stats.chi2.ppf(0.95, 3) =
/// 7.814727903251179).
pub const CHI2_3DOF_95: f64 = 7.814727903251179;

/// Options of the dipole fit. Lengths in metres.
#[derive(Debug, Clone, PartialEq)]
pub struct DipoleOptions {
    /// Fit a symmetric pair (positions mirrored in x, two free moments)
    /// instead of one dipole.
    pub pairs: bool,
    /// Spacing of the cubic search grid (m).
    pub grid_spacing: f64,
    /// Dipoles stay at least this far inside the innermost sphere (m).
    pub margin: f64,
    /// How many of the best, mutually separated grid points are refined.
    pub n_starts: usize,
    /// Smallest |x − c_x| of a symmetric pair (m).
    pub pair_min_offset: f64,
    /// Noise standard deviation per channel, in the units of the patterns;
    /// `None` estimates it from the residual.
    pub noise_sd: Option<f64>,
}

impl Default for DipoleOptions {
    fn default() -> Self {
        DipoleOptions {
            pairs: false,
            grid_spacing: 0.007,
            margin: 0.002,
            n_starts: 4,
            pair_min_offset: 0.005,
            noise_sd: None,
        }
    }
}

/// One fitted dipole.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Dipole {
    /// Position in head coordinates (m).
    pub position: Vec3,
    /// Moment (A·m when the patterns are in V).
    pub moment: Vec3,
}

/// The fit of one pattern.
#[derive(Debug, Clone, PartialEq)]
pub struct DipoleFit {
    /// One dipole, or the two of a symmetric pair (the one at x ≥ c_x first).
    pub dipoles: Vec<Dipole>,
    /// ‖y − ŷ‖² / ‖y‖² of the average-referenced pattern.
    pub residual_variance: f64,
    /// Covariance of the first dipole's position (m², row-major 3 × 3).
    pub covariance: [[f64; 3]; 3],
    /// Semi-axes of the 95 % confidence ellipsoid (m), largest first.
    pub ci95_semi_axes: [f64; 3],
    /// Radius of the 95 % region: the largest semi-axis (m), so a ball of it
    /// contains the ellipsoid.
    pub ci95_radius: f64,
    /// The noise standard deviation used for the covariance.
    pub noise_sd: f64,
    /// Whether `noise_sd` was estimated from the residual.
    pub noise_sd_estimated: bool,
    /// Whether the optimum lies on the constraint (then the region is only indicative).
    pub at_boundary: bool,
    /// Levenberg–Marquardt iterations of the winning start.
    pub iterations: usize,
}

impl DipoleFit {
    /// Covariance of dipole `index`'s position (m²): the fitted one, or for
    /// the mirrored dipole of a pair the same with the x row and column negated.
    pub fn position_covariance(&self, index: usize) -> [[f64; 3]; 3] {
        let mut c = self.covariance;
        if index == 1 {
            for (r, row) in c.iter_mut().enumerate() {
                for (col, v) in row.iter_mut().enumerate() {
                    if (r == 0) != (col == 0) {
                        *v = -*v;
                    }
                }
            }
        }
        c
    }
}

/// The source nearest to `point` (brute force, first index on ties) and
/// its distance (m); `None` when there are no sources.
pub fn nearest_source(positions: &[Vec3], point: Vec3) -> Option<(usize, f64)> {
    let mut best: Option<(usize, f64)> = None;
    for (i, p) in positions.iter().enumerate() {
        let d2 = (0..3).map(|a| (p[a] - point[a]).powi(2)).sum::<f64>();
        if best.is_none_or(|(_, b)| d2 < b) {
            best = Some((i, d2));
        }
    }
    best.map(|(i, d2)| (i, d2.sqrt()))
}

/// Residual variance (fraction) under which a fit is said to be well
/// explained by its dipole model: the default of `dipole --residual-cut`
/// (15 %, a common convention, not a test; common practice, from memory).
pub const RESIDUAL_CUT: f64 = 0.15;
