//! Radial projection of electrodes onto a scalp sphere, and the least-squares sphere
//! through a set of electrode positions.

use super::{Montage, MontageError, ProjectionWarning, PROJECTION_WARNING_M};
use crate::geometry::{add, dot, norm, scale, sub, Vec3};
use crate::numeric::symmetric_eigen;

/// Gauss–Newton iterations after the algebraic fit (each is a 4 × 4 solve; the algebraic
/// start is already close, so a few suffice).
const GAUSS_NEWTON_STEPS: usize = 10;

/// Relative eigenvalue below which the 4 × 4 normal matrix counts as singular.
const RANK_TOLERANCE: f64 = 1e-12;

impl Montage {
    /// Every electrode moved along the ray from `center` through it onto the sphere of
    /// `radius` (m) about `center`. Electrodes that move more than
    /// [`PROJECTION_WARNING_M`] (10 mm) are reported as warnings.
    ///
    /// Errors: radius not positive and finite, centre not finite, an electrode exactly at
    /// the centre (no direction to project along).
    pub fn project_to_sphere(
        &self,
        center: Vec3,
        radius: f64,
    ) -> Result<(Montage, Vec<ProjectionWarning>), MontageError> {
        if !(radius.is_finite() && radius > 0.0) {
            return Err(MontageError::InvalidRadius { radius });
        }
        if center.iter().any(|c| !c.is_finite()) {
            return Err(MontageError::InvalidCenter { center });
        }
        let mut positions = Vec::with_capacity(self.len());
        let mut warnings = Vec::new();
        for (index, (label, &p)) in self.labels.iter().zip(&self.positions).enumerate() {
            let d = sub(p, center);
            let length = norm(d);
            if !(length > 0.0 && length.is_finite()) {
                return Err(MontageError::AtCenter {
                    label: label.clone(),
                    index,
                });
            }
            let projected = add(center, scale(d, radius / length));
            let moved = (length - radius).abs();
            if moved > PROJECTION_WARNING_M {
                warnings.push(ProjectionWarning {
                    index,
                    label: label.clone(),
                    distance_m: moved,
                });
            }
            positions.push(projected);
        }
        Ok((
            Montage {
                labels: self.labels.clone(),
                positions,
            },
            warnings,
        ))
    }
}

/// Least-squares sphere through `points` (m): returns (centre, radius).
///
/// First the algebraic fit: |p|² = 2 p·c + (r² − |c|²) is linear in (c, r² − |c|²) and
/// is solved by linear least squares (normal equations, faer eigendecomposition, on
/// coordinates centred on the mean and scaled to unit RMS spread for conditioning). It
/// minimises Σ (|p − c|² − r²)², which over-weights far points; so up to
/// ten Gauss–Newton steps then minimise the geometric error Σ (|p − c| − r)², each step
/// accepted only if it lowers that sum.
///
/// Errors: fewer than 4 points, a non-finite point, or points (nearly) on one plane.
pub fn fit_sphere(points: &[Vec3]) -> Result<(Vec3, f64), MontageError> {
    let n = points.len();
    if n < 4 {
        return Err(MontageError::TooFewPoints { found: n });
    }
    if let Some(index) = points.iter().position(|p| p.iter().any(|c| !c.is_finite())) {
        return Err(MontageError::NotFinitePoint {
            index,
            point: points[index],
        });
    }
    let mean = scale(
        points.iter().fold([0.0; 3], |a, &p| add(a, p)),
        1.0 / n as f64,
    );
    let spread = (points
        .iter()
        .map(|&p| dot(sub(p, mean), sub(p, mean)))
        .sum::<f64>()
        / n as f64)
        .sqrt();
    if spread.is_nan() || spread <= 0.0 {
        return Err(MontageError::Degenerate { found: n });
    }
    let q: Vec<Vec3> = points
        .iter()
        .map(|&p| scale(sub(p, mean), 1.0 / spread))
        .collect();

    // Algebraic fit on the scaled points: unknowns (cx, cy, cz, k), k = r² − |c|².
    let mut normal = [0.0; 16];
    let mut rhs = [0.0; 4];
    for p in &q {
        let row = [2.0 * p[0], 2.0 * p[1], 2.0 * p[2], 1.0];
        let target = dot(*p, *p);
        accumulate(&mut normal, &mut rhs, &row, target);
    }
    let z = solve4(&normal, &rhs).ok_or(MontageError::Degenerate { found: n })?;
    let mut c = [z[0], z[1], z[2]];
    let r2 = z[3] + dot(c, c);
    if r2.is_nan() || r2 <= 0.0 {
        return Err(MontageError::Degenerate { found: n });
    }
    let mut r = r2.sqrt();

    // Gauss–Newton on the geometric residuals e_i = |q_i − c| − r.
    let mut cost = geometric_cost(&q, c, r);
    for _ in 0..GAUSS_NEWTON_STEPS {
        let mut jtj = [0.0; 16];
        let mut jte = [0.0; 4];
        for p in &q {
            let d = sub(*p, c);
            let length = norm(d);
            if length == 0.0 {
                continue;
            }
            let row = [-d[0] / length, -d[1] / length, -d[2] / length, -1.0];
            accumulate(&mut jtj, &mut jte, &row, -(length - r));
        }
        let Some(step) = solve4(&jtj, &jte) else {
            break;
        };
        let c_new = add(c, [step[0], step[1], step[2]]);
        let r_new = r + step[3];
        let cost_new = geometric_cost(&q, c_new, r_new);
        if !(r_new > 0.0 && cost_new < cost) {
            break;
        }
        let small = step.iter().map(|s| s * s).sum::<f64>().sqrt() < 1e-14 * (1.0 + r);
        c = c_new;
        r = r_new;
        cost = cost_new;
        if small {
            break;
        }
    }
    Ok((add(mean, scale(c, spread)), r * spread))
}

/// Add `row rowᵀ` to `normal` and `row · target` to `rhs`.
fn accumulate(normal: &mut [f64; 16], rhs: &mut [f64; 4], row: &[f64; 4], target: f64) {
    for a in 0..4 {
        for b in 0..4 {
            normal[a * 4 + b] += row[a] * row[b];
        }
        rhs[a] += row[a] * target;
    }
}

/// Solve the symmetric positive definite 4 × 4 system, or `None` if it is (nearly) singular.
fn solve4(normal: &[f64; 16], rhs: &[f64; 4]) -> Option<[f64; 4]> {
    let (values, vectors) = symmetric_eigen(normal, 4)?;
    let max = values[3];
    if values[0].is_nan() || values[0] <= RANK_TOLERANCE * max {
        return None;
    }
    let mut x = [0.0; 4];
    for m in 0..4 {
        let coefficient = (0..4).map(|a| vectors[(a, m)] * rhs[a]).sum::<f64>() / values[m];
        for (a, xa) in x.iter_mut().enumerate() {
            *xa += coefficient * vectors[(a, m)];
        }
    }
    Some(x)
}

/// Σ (|q − c| − r)².
fn geometric_cost(q: &[Vec3], c: Vec3, r: f64) -> f64 {
    q.iter().map(|&p| (norm(sub(p, c)) - r).powi(2)).sum()
}
