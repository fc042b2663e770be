//! Entropic optimal transport (Sinkhorn distances, Cuturi 2013, NIPS 26)
//! between region masses of source maps, with geodesic costs between region
//! centroids.

use rayon::prelude::*;

use crate::geometry::{norm, sub, GeodesicSolver, Vec3};

use super::error::CohortError;

/// Ground costs between regions: geodesic distances (m) between region
/// centroid vertices.
#[derive(Debug, Clone, PartialEq)]
pub struct TransportCosts {
    /// Centroid vertex of each region (usize::MAX for an empty region).
    pub centroid: Vec<usize>,
    /// n_regions × n_regions costs (m), row-major, symmetric.
    pub cost_m: Vec<f64>,
    /// Number of region pairs with no geodesic path (another connected
    /// component, e.g. the other hemisphere); they cost the straight-line
    /// distance.
    pub euclidean_pairs: usize,
}

/// Geodesic costs between region centroids.
///
/// The centroid of a region is its vertex nearest to the area-weighted mean
/// position of the region's vertices. Fast-marching distances are not
/// exactly symmetric, so d(i, j) and d(j, i) are averaged. Regions on
/// different connected components (the two hemispheres of the template)
/// are joined by the straight line through the head: a stated choice, not
/// an anatomical distance.
pub fn region_transport_costs(
    positions: &[Vec3],
    areas: &[f64],
    region: &[i32],
    n_regions: usize,
    solver: &GeodesicSolver,
) -> Result<TransportCosts, CohortError> {
    for (field, len) in [("areas", areas.len()), ("region", region.len())] {
        if len != positions.len() {
            return Err(CohortError::Shape {
                subject: "template".to_string(),
                field: field.to_string(),
                found: len,
                expected: positions.len(),
            });
        }
    }
    let mut weight = vec![0.0; n_regions];
    let mut mean = vec![[0.0; 3]; n_regions];
    for (v, &r) in region.iter().enumerate() {
        if r >= 0 && (r as usize) < n_regions {
            let r = r as usize;
            weight[r] += areas[v];
            for d in 0..3 {
                mean[r][d] += areas[v] * positions[v][d];
            }
        }
    }
    let mut centroid = vec![usize::MAX; n_regions];
    let mut best = vec![f64::INFINITY; n_regions];
    for (v, &r) in region.iter().enumerate() {
        if r >= 0 && (r as usize) < n_regions && weight[r as usize] > 0.0 {
            let r = r as usize;
            let m = mean[r].map(|x| x / weight[r]);
            let d = norm(sub(positions[v], m));
            if d < best[r] {
                best[r] = d;
                centroid[r] = v;
            }
        }
    }
    let rows: Vec<Vec<f64>> = centroid
        .par_iter()
        .map(|&c| {
            let mut row = vec![f64::NAN; n_regions];
            if c == usize::MAX {
                return row;
            }
            let dist = solver.distances_within(c, f64::INFINITY);
            let mut at = std::collections::HashMap::with_capacity(dist.len());
            for (u, d) in dist {
                at.insert(u as usize, d);
            }
            for (j, &cj) in centroid.iter().enumerate() {
                if cj != usize::MAX {
                    row[j] = at.get(&cj).copied().unwrap_or(f64::NAN);
                }
            }
            row
        })
        .collect();
    let mut cost_m = vec![0.0; n_regions * n_regions];
    let mut euclidean_pairs = 0;
    for i in 0..n_regions {
        for j in 0..n_regions {
            let (ci, cj) = (centroid[i], centroid[j]);
            let c = if i == j || ci == usize::MAX || cj == usize::MAX {
                0.0
            } else if rows[i][j].is_finite() && rows[j][i].is_finite() {
                0.5 * (rows[i][j] + rows[j][i])
            } else {
                if i < j {
                    euclidean_pairs += 1;
                }
                norm(sub(positions[ci], positions[cj]))
            };
            cost_m[i * n_regions + j] = c;
        }
    }
    Ok(TransportCosts {
        centroid,
        cost_m,
        euclidean_pairs,
    })
}

/// Parameters of the Sinkhorn iteration.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SinkhornParams {
    /// Entropic regularisation ε, in the units of the cost.
    pub epsilon: f64,
    /// Iteration limit.
    pub max_iterations: usize,
    /// Stop when the L1 error of the plan's column marginal is below this.
    pub tolerance: f64,
}

impl Default for SinkhornParams {
    fn default() -> Self {
        SinkhornParams {
            epsilon: 1e-3,
            max_iterations: 500,
            tolerance: 1e-6,
        }
    }
}

/// Sinkhorn's result: the transport cost ⟨P, C⟩ of the entropic plan P.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SinkhornResult {
    /// ⟨P, C⟩ (the "Sinkhorn distance" of Cuturi 2013, without the entropy).
    pub cost: f64,
    /// Iterations run.
    pub iterations: usize,
    /// L1 error of the column marginal at the end.
    pub marginal_error: f64,
}

/// Entropic optimal transport between the histograms `a` and `b`
/// (non-negative, each normalised to sum 1 here) with cost matrix `cost`
/// (len(a) × len(b), row-major): Sinkhorn's alternating scaling of
/// K = exp(−C/ε) (Cuturi 2013, NIPS 26, Algorithm 1). Bins with no mass are
/// dropped first. When C/ε would underflow exp (max C/ε > 300) the iteration
/// runs in the log domain (log-sum-exp updates of the dual potentials), so
/// small ε stays stable. NaN when a histogram has no mass.
pub fn sinkhorn(
    a: &[f64],
    b: &[f64],
    cost: &[f64],
    params: &SinkhornParams,
) -> Result<SinkhornResult, CohortError> {
    if cost.len() != a.len() * b.len() {
        return Err(CohortError::Shape {
            subject: "transport".to_string(),
            field: "cost".to_string(),
            found: cost.len(),
            expected: a.len() * b.len(),
        });
    }
    if !(params.epsilon.is_finite() && params.epsilon > 0.0) {
        return Err(CohortError::Parameter {
            name: "transport epsilon",
            message: format!("must be positive, got {}", params.epsilon),
        });
    }
    let support = |h: &[f64]| -> (Vec<usize>, Vec<f64>) {
        let total: f64 = h.iter().filter(|x| **x > 0.0).sum();
        let idx: Vec<usize> = (0..h.len()).filter(|&i| h[i] > 0.0).collect();
        let w = idx.iter().map(|&i| h[i] / total).collect();
        (idx, w)
    };
    let (ia, wa) = support(a);
    let (ib, wb) = support(b);
    if ia.is_empty() || ib.is_empty() {
        return Ok(SinkhornResult {
            cost: f64::NAN,
            iterations: 0,
            marginal_error: f64::NAN,
        });
    }
    let (n, m) = (ia.len(), ib.len());
    let nb = b.len();
    let c: Vec<f64> = ia
        .iter()
        .flat_map(|&i| ib.iter().map(move |&j| cost[i * nb + j]))
        .collect();
    let max_ratio = c.iter().fold(0.0f64, |acc, &x| acc.max(x)) / params.epsilon;
    let eps = params.epsilon;
    if max_ratio <= 300.0 {
        let k: Vec<f64> = c.iter().map(|&x| (-x / eps).exp()).collect();
        let mut u = vec![1.0; n];
        let mut v = vec![1.0; m];
        let mut iterations = 0;
        let mut error = f64::INFINITY;
        while iterations < params.max_iterations {
            iterations += 1;
            for i in 0..n {
                let kv: f64 = (0..m).map(|j| k[i * m + j] * v[j]).sum();
                u[i] = wa[i] / kv;
            }
            let mut col = vec![0.0; m];
            for i in 0..n {
                for j in 0..m {
                    col[j] += k[i * m + j] * u[i];
                }
            }
            error = (0..m).map(|j| (v[j] * col[j] - wb[j]).abs()).sum();
            for j in 0..m {
                v[j] = wb[j] / col[j];
            }
            if error < params.tolerance {
                break;
            }
        }
        let mut total = 0.0;
        for i in 0..n {
            for j in 0..m {
                total += u[i] * k[i * m + j] * v[j] * c[i * m + j];
            }
        }
        Ok(SinkhornResult {
            cost: total,
            iterations,
            marginal_error: error,
        })
    } else {
        // Log domain: f_i = ε log a_i − ε LSE_j((g_j − C_ij)/ε), likewise g.
        let la: Vec<f64> = wa.iter().map(|x| x.ln()).collect();
        let lb: Vec<f64> = wb.iter().map(|x| x.ln()).collect();
        let mut f = vec![0.0; n];
        let mut g = vec![0.0; m];
        let lse = |vals: &mut dyn Iterator<Item = f64>| -> f64 {
            let v: Vec<f64> = vals.collect();
            let mx = v.iter().fold(f64::NEG_INFINITY, |a, &b| a.max(b));
            mx + v.iter().map(|x| (x - mx).exp()).sum::<f64>().ln()
        };
        let mut iterations = 0;
        let mut error = f64::INFINITY;
        while iterations < params.max_iterations {
            iterations += 1;
            for i in 0..n {
                f[i] = eps * la[i] - eps * lse(&mut (0..m).map(|j| (g[j] - c[i * m + j]) / eps));
            }
            error = (0..m)
                .map(|j| {
                    let col: f64 = (0..n)
                        .map(|i| ((f[i] + g[j] - c[i * m + j]) / eps).exp())
                        .sum();
                    (col - wb[j]).abs()
                })
                .sum();
            for j in 0..m {
                g[j] = eps * lb[j] - eps * lse(&mut (0..n).map(|i| (f[i] - c[i * m + j]) / eps));
            }
            if error < params.tolerance {
                break;
            }
        }
        let mut total = 0.0;
        for i in 0..n {
            for j in 0..m {
                total += ((f[i] + g[j] - c[i * m + j]) / eps).exp() * c[i * m + j];
            }
        }
        Ok(SinkhornResult {
            cost: total,
            iterations,
            marginal_error: error,
        })
    }
}

/// Normalised mass of |map| per region (vertices outside every region are
/// left out); all zeros when the map has no mass in any region.
pub(crate) fn region_mass(map: &[f64], region: &[i32], n_regions: usize) -> Vec<f64> {
    let mut mass = vec![0.0; n_regions];
    for (v, &r) in region.iter().enumerate() {
        if r >= 0 && (r as usize) < n_regions {
            mass[r as usize] += map[v].abs();
        }
    }
    let total: f64 = mass.iter().sum();
    if total > 0.0 {
        mass.iter_mut().for_each(|m| *m /= total);
    }
    mass
}

/// Check that a value list is finite, naming the first bad index.
pub(crate) fn first_non_finite(values: &[f64]) -> Option<usize> {
    values.iter().position(|x| !x.is_finite())
}
