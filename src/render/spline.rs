//! Spherical-spline interpolation of values given at scalp electrodes (Perrin,
//! Pernier, Bertrand & Echallier 1989, Electroenceph Clin Neurophysiol 72:184).
//!
//! The interpolant is V(u) = c0 + Σ_i c_i g_m(u · u_i) over unit directions u from the
//! fitted sphere centre, with the Legendre series
//! g_m(x) = 1/(4π) Σ_{n=1}^{N} (2n+1) / (n(n+1))^m P_n(x) truncated at N terms.
//! The weights solve [G + λI, 1; 1ᵀ, 0] [c; c0] = [v; 0] (faer LU with partial pivoting).

use crate::geometry::{dot, norm, normalize, scale, sub, Vec3};
use crate::montage::{fit_sphere, MontageError};
use faer::linalg::solvers::Solve;
use faer::Mat;
use std::f64::consts::PI;

/// Default spline order m (Perrin et al. 1989 use m = 4).
pub const DEFAULT_ORDER: u32 = 4;

/// Default number of Legendre terms N. For m = 4 the omitted tail is below
/// Σ_{n>50} 2n / n⁸ ≈ 2·10⁻¹¹, about 10⁻¹⁰ of g_4(1).
pub const DEFAULT_TERMS: usize = 50;

/// Intervals of the lookup table of g_m on [−1, 1] used by the fast evaluation.
/// Cubic Hermite interpolation errs by at most h⁴/384 · max|g⁗| (h = 2/4096), which for
/// m = 4, N = 50 is below 10⁻¹⁴ (measured in tests/it/render_spline.rs).
const TABLE_INTERVALS: usize = 4096;

/// Two directions closer than this angle (rad) count as the same electrode: the
/// interpolation matrix would be singular.
const COINCIDENT_ANGLE: f64 = 1e-9;

/// Relative residual of the linear solve above which the system counts as singular.
const SINGULAR_RESIDUAL: f64 = 1e-6;

/// The fewest electrodes a spline is fitted to (fewer do not determine a sphere).
pub const MIN_ELECTRODES: usize = 4;

/// What went wrong while fitting a spherical spline.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum SplineError {
    /// Positions and values differ in number.
    #[error(
        "{positions} electrode positions but {values} values, expected one value per electrode"
    )]
    LengthMismatch {
        /// Number of positions.
        positions: usize,
        /// Number of values.
        values: usize,
    },
    /// Too few electrodes.
    #[error("{found} electrodes, expected at least {required}")]
    TooFewElectrodes {
        /// Number given.
        found: usize,
        /// Number needed.
        required: usize,
    },
    /// A value is NaN or infinite.
    #[error("electrode {index}: value {value} is not finite")]
    NotFiniteValue {
        /// 0-based electrode index.
        index: usize,
        /// The value given.
        value: f64,
    },
    /// A position or direction is NaN, infinite or zero.
    #[error("electrode {index}: position {position:?} is not finite or has no direction")]
    BadPosition {
        /// 0-based electrode index.
        index: usize,
        /// The position given.
        position: Vec3,
    },
    /// Two electrodes project to the same direction.
    #[error("electrodes {first} and {second} lie in the same direction from the sphere centre")]
    CoincidentElectrodes {
        /// The earlier index.
        first: usize,
        /// The later index.
        second: usize,
    },
    /// A parameter is out of range.
    #[error("spline parameter {field} = {value}: expected {expected}")]
    InvalidParameter {
        /// The parameter's name.
        field: &'static str,
        /// Its value.
        value: f64,
        /// What was expected.
        expected: &'static str,
    },
    /// The sphere through the electrodes could not be fitted.
    #[error("sphere fit through the electrodes: {0}")]
    Sphere(#[from] MontageError),
    /// The interpolation system could not be solved accurately.
    #[error("the spline system is singular (relative residual {residual:e})")]
    Singular {
        /// ‖A x − b‖ / ‖b‖ after the solve.
        residual: f64,
    },
}

/// Parameters of the spherical spline.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SplineParams {
    /// Order m of the spline (≥ 2 so the series converges; 4 by default).
    pub order: u32,
    /// Number of Legendre terms N (≥ 1; 50 by default).
    pub terms: usize,
    /// Regularisation λ ≥ 0 added to the diagonal of G (0: exact interpolation).
    pub regularization: f64,
}

impl Default for SplineParams {
    fn default() -> Self {
        Self {
            order: DEFAULT_ORDER,
            terms: DEFAULT_TERMS,
            regularization: 0.0,
        }
    }
}

impl SplineParams {
    fn validate(&self) -> Result<(), SplineError> {
        if !(2..=16).contains(&self.order) {
            return Err(SplineError::InvalidParameter {
                field: "order",
                value: f64::from(self.order),
                expected: "an integer from 2 to 16",
            });
        }
        if !(1..=10_000).contains(&self.terms) {
            return Err(SplineError::InvalidParameter {
                field: "terms",
                value: self.terms as f64,
                expected: "an integer from 1 to 10000",
            });
        }
        if !(self.regularization.is_finite() && self.regularization >= 0.0) {
            return Err(SplineError::InvalidParameter {
                field: "regularization",
                value: self.regularization,
                expected: "a finite number >= 0",
            });
        }
        Ok(())
    }
}

/// The series coefficients a_n = (2n+1) / (4π (n(n+1))^m) for n = 0..=N (a_0 = 0).
fn coefficients(order: u32, terms: usize) -> Vec<f64> {
    let mut a = vec![0.0; terms + 1];
    for (n, an) in a.iter_mut().enumerate().skip(1) {
        let nf = n as f64;
        *an = (2.0 * nf + 1.0) / ((nf * (nf + 1.0)).powi(order as i32) * 4.0 * PI);
    }
    a
}

/// Σ a_n P_n(x) and Σ a_n P′_n(x), with P_n from the three-term recurrence
/// (n+1) P_{n+1} = (2n+1) x P_n − n P_{n−1} and P′_{n+1} = P′_{n−1} + (2n+1) P_n.
fn series(a: &[f64], x: f64) -> (f64, f64) {
    let (mut p_prev, mut p) = (1.0, x);
    let (mut d_prev, mut d) = (0.0, 1.0);
    let mut value = 0.0;
    let mut slope = 0.0;
    for (n, &an) in a.iter().enumerate().skip(1) {
        value += an * p;
        slope += an * d;
        let nf = n as f64;
        let p_next = ((2.0 * nf + 1.0) * x * p - nf * p_prev) / (nf + 1.0);
        let d_next = d_prev + (2.0 * nf + 1.0) * p;
        p_prev = p;
        p = p_next;
        d_prev = d;
        d = d_next;
    }
    (value, slope)
}

/// The spline kernel g_m(x) = 1/(4π) Σ_{n=1}^{terms} (2n+1)/(n(n+1))^m P_n(x)
/// (Perrin et al. 1989, eq. for g_m), by the Legendre three-term recurrence.
/// `x` is clamped to [−1, 1].
pub fn legendre_kernel(x: f64, order: u32, terms: usize) -> f64 {
    series(&coefficients(order, terms), x.clamp(-1.0, 1.0)).0
}

/// g_m and its derivative on a uniform grid over [−1, 1], interpolated by cubic Hermite.
/// Value and slope of a node sit side by side so one lookup touches one cache line.
#[derive(Debug, Clone, PartialEq)]
struct KernelTable {
    nodes: Vec<[f64; 2]>,
}

impl KernelTable {
    fn new(a: &[f64]) -> Self {
        let h = 2.0 / TABLE_INTERVALS as f64;
        let nodes = (0..=TABLE_INTERVALS)
            .map(|k| {
                let (value, slope) = series(a, -1.0 + k as f64 * h);
                // Slopes are stored per interval (× h) as the Hermite basis uses them.
                [value, slope * h]
            })
            .collect();
        Self { nodes }
    }

    #[inline]
    fn eval(&self, x: f64) -> f64 {
        let s = (x.clamp(-1.0, 1.0) + 1.0) * (TABLE_INTERVALS as f64 / 2.0);
        let k = (s as usize).min(TABLE_INTERVALS - 1);
        let t = s - k as f64;
        let ([y0, d0], [y1, d1]) = (self.nodes[k], self.nodes[k + 1]);
        // Hermite form: y0 + t (d0 + t (c2 + t c3)).
        let c2 = 3.0 * (y1 - y0) - 2.0 * d0 - d1;
        let c3 = 2.0 * (y0 - y1) + d0 + d1;
        y0 + t * (d0 + t * (c2 + t * c3))
    }
}

/// A fitted spherical spline: weights c_i at unit electrode directions u_i, constant c0.
#[derive(Debug, Clone, PartialEq)]
pub struct SphericalSpline {
    /// Centre of the sphere the electrodes were projected about (m).
    center: Vec3,
    /// Radius of that sphere (m); 1 when fitted to directions.
    radius: f64,
    /// Unit electrode directions from the centre.
    directions: Vec<Vec3>,
    /// Weights c_i.
    weights: Vec<f64>,
    /// Constant c0.
    constant: f64,
    /// Series coefficients a_n.
    coefficients: Vec<f64>,
    /// Lookup table for fast evaluation.
    table: KernelTable,
}

impl SphericalSpline {
    /// Fit to values at electrode positions (m, head coordinates): the least-squares
    /// sphere through the positions is fitted ([`fit_sphere`]) and every electrode is
    /// replaced by its direction from that sphere's centre.
    ///
    /// Errors: lengths differ, fewer than [`MIN_ELECTRODES`] electrodes, a non-finite
    /// value or position, the sphere fit fails, two electrodes in one direction, bad
    /// parameters or a singular system.
    pub fn fit(
        positions: &[Vec3],
        values: &[f64],
        params: &SplineParams,
    ) -> Result<Self, SplineError> {
        check_lengths(positions.len(), values.len())?;
        check_positions(positions)?;
        let (center, radius) = fit_sphere(positions)?;
        let directions: Vec<Vec3> = positions
            .iter()
            .map(|&p| normalize(sub(p, center)))
            .collect();
        let mut spline = Self::fit_directions(&directions, values, params)?;
        spline.center = center;
        spline.radius = radius;
        Ok(spline)
    }

    /// Fit to values at electrode positions (m) about a known sphere `center` (m), for
    /// montages that cover too little of the head to fit a sphere through. The radius
    /// reported is the mean distance of the electrodes from the centre.
    ///
    /// Errors as for [`SphericalSpline::fit`]; an electrode at the centre is a
    /// [`SplineError::BadPosition`].
    pub fn fit_about(
        positions: &[Vec3],
        values: &[f64],
        center: Vec3,
        params: &SplineParams,
    ) -> Result<Self, SplineError> {
        check_lengths(positions.len(), values.len())?;
        check_positions(positions)?;
        if let Some(&value) = center.iter().find(|c| !c.is_finite()) {
            return Err(SplineError::InvalidParameter {
                field: "center",
                value,
                expected: "finite coordinates (m)",
            });
        }
        let offsets: Vec<Vec3> = positions.iter().map(|&p| sub(p, center)).collect();
        let mut spline = Self::fit_directions(&offsets, values, params)?;
        spline.center = center;
        spline.radius = offsets.iter().map(|&d| norm(d)).sum::<f64>() / offsets.len() as f64;
        Ok(spline)
    }

    /// Fit to values at unit directions (the given vectors are normalised; the sphere
    /// centre is the origin and its radius 1).
    ///
    /// Errors as for [`SphericalSpline::fit`], without the sphere fit.
    pub fn fit_directions(
        directions: &[Vec3],
        values: &[f64],
        params: &SplineParams,
    ) -> Result<Self, SplineError> {
        params.validate()?;
        check_lengths(directions.len(), values.len())?;
        check_positions(directions)?;
        if let Some(index) = values.iter().position(|v| !v.is_finite()) {
            return Err(SplineError::NotFiniteValue {
                index,
                value: values[index],
            });
        }
        let directions: Vec<Vec3> = directions.iter().map(|&d| normalize(d)).collect();
        check_coincident(&directions)?;

        let n = directions.len();
        let a = coefficients(params.order, params.terms);
        let system = Mat::<f64>::from_fn(n + 1, n + 1, |i, j| match (i < n, j < n) {
            (true, true) => {
                let g = series(&a, dot(directions[i], directions[j]).clamp(-1.0, 1.0)).0;
                if i == j {
                    g + params.regularization
                } else {
                    g
                }
            }
            (false, false) => 0.0,
            _ => 1.0,
        });
        let rhs = Mat::<f64>::from_fn(n + 1, 1, |i, _| if i < n { values[i] } else { 0.0 });
        let solution = system.partial_piv_lu().solve(&rhs);
        let residual = {
            let r = &system * &solution - &rhs;
            let scale_b = rhs.norm_l2().max(f64::MIN_POSITIVE);
            r.norm_l2() / scale_b
        };
        // A zero right-hand side gives residual 0 / tiny; NaN from a breakdown fails here.
        if residual.is_nan()
            || residual > SINGULAR_RESIDUAL
            || (0..=n).any(|i| !solution[(i, 0)].is_finite())
        {
            return Err(SplineError::Singular { residual });
        }
        Ok(Self {
            center: [0.0; 3],
            radius: 1.0,
            directions,
            weights: (0..n).map(|i| solution[(i, 0)]).collect(),
            constant: solution[(n, 0)],
            table: KernelTable::new(&a),
            coefficients: a,
        })
    }

    /// Centre of the sphere the electrodes were projected about (m).
    pub fn center(&self) -> Vec3 {
        self.center
    }

    /// Radius of that sphere (m; 1 for [`SphericalSpline::fit_directions`]).
    pub fn radius(&self) -> f64 {
        self.radius
    }

    /// The unit electrode directions the spline was fitted at.
    pub fn directions(&self) -> &[Vec3] {
        &self.directions
    }

    /// The weights c_i, one per electrode.
    pub fn weights(&self) -> &[f64] {
        &self.weights
    }

    /// The constant c0.
    pub fn constant(&self) -> f64 {
        self.constant
    }

    /// V(u) with the full Legendre series for the unit direction `u` (not normalised
    /// here: pass a unit vector).
    pub fn evaluate(&self, u: Vec3) -> f64 {
        let mut v = self.constant;
        for (d, c) in self.directions.iter().zip(&self.weights) {
            v += c * series(&self.coefficients, dot(u, *d).clamp(-1.0, 1.0)).0;
        }
        v
    }

    /// V(u) with g_m from a cubic Hermite table (4097 nodes, agreeing with the series to
    /// rounding) instead of the N-term series: the cost per electrode no longer grows
    /// with N. Used for rasters. Pass a unit vector.
    #[inline]
    pub fn evaluate_fast(&self, u: Vec3) -> f64 {
        let mut v = self.constant;
        for (d, c) in self.directions.iter().zip(&self.weights) {
            v += c * self.table.eval(d[0] * u[0] + d[1] * u[1] + d[2] * u[2]);
        }
        v
    }

    /// V at the direction of `point` (m) from the sphere centre (full series);
    /// `None` if the point is at the centre or not finite.
    pub fn evaluate_at_point(&self, point: Vec3) -> Option<f64> {
        let d = sub(point, self.center);
        let length = norm(d);
        if !(length.is_finite() && length > 0.0) {
            return None;
        }
        Some(self.evaluate(scale(d, 1.0 / length)))
    }
}

fn check_lengths(positions: usize, values: usize) -> Result<(), SplineError> {
    if positions != values {
        return Err(SplineError::LengthMismatch { positions, values });
    }
    if positions < MIN_ELECTRODES {
        return Err(SplineError::TooFewElectrodes {
            found: positions,
            required: MIN_ELECTRODES,
        });
    }
    Ok(())
}

fn check_positions(positions: &[Vec3]) -> Result<(), SplineError> {
    for (index, &p) in positions.iter().enumerate() {
        let length = norm(p);
        if !(length.is_finite() && length > 0.0) {
            return Err(SplineError::BadPosition { index, position: p });
        }
    }
    Ok(())
}

fn check_coincident(directions: &[Vec3]) -> Result<(), SplineError> {
    for (first, &a) in directions.iter().enumerate() {
        for (offset, &b) in directions[first + 1..].iter().enumerate() {
            // |a − b| is the chord, which equals the angle to first order.
            if norm(sub(a, b)) < COINCIDENT_ANGLE {
                return Err(SplineError::CoincidentElectrodes {
                    first,
                    second: first + 1 + offset,
                });
            }
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn kernel_low_orders_match_closed_legendre_forms() {
        // P_1 = x, P_2 = (3x² − 1)/2 (Abramowitz & Stegun 1964, table 22.9); with N = 2
        // and m = 2 the kernel is (3/4 x + 5/36 (3x² − 1)/2) / (4π). Tolerance 1e-15.
        for &x in &[-1.0, -0.3, 0.0, 0.4, 1.0] {
            let expected = (0.75 * x + 5.0 / 36.0 * (3.0 * x * x - 1.0) / 2.0) / (4.0 * PI);
            assert!((legendre_kernel(x, 2, 2) - expected).abs() < 1e-15);
        }
    }

    #[test]
    fn table_derivative_matches_finite_difference() {
        // Central difference, step 1e-6: truncation error ~1e-12 · g‴ (common practice, no source).
        let a = coefficients(4, 50);
        for &x in &[-0.9, -0.2, 0.5, 0.95] {
            let fd = (series(&a, x + 1e-6).0 - series(&a, x - 1e-6).0) / 2e-6;
            assert!((series(&a, x).1 - fd).abs() < 1e-8);
        }
    }

    #[test]
    fn table_matches_series_to_rounding() {
        // Cubic Hermite error h⁴/384 · max|g⁗| (de Boor 1978, A Practical Guide to
        // Splines) is below rounding here; tolerance 1e-14 of g_4(1) on 10⁵ off-node points.
        let a = coefficients(4, 50);
        let table = KernelTable::new(&a);
        let peak = series(&a, 1.0).0;
        for k in 0..100_000 {
            let x = -1.0 + 2.0 * (k as f64 + 0.37) / 100_000.0;
            assert!(
                (table.eval(x) - series(&a, x).0).abs() < 1e-14 * peak,
                "x = {x}"
            );
        }
    }
}
