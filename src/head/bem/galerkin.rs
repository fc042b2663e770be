//! Galerkin-tested rows: the equation of a vertex tested with its hat
//! function instead of taken at the vertex, for the surfaces outside the
//! innermost one.
//!
//! # Why
//! With a poorly conducting skull the double layers of the outer skull
//! (weight σ_skull − σ_scalp) and of the scalp (σ_scalp) nearly cancel a
//! few millimetres apart, and the O(h²) error of collocating them comes out
//! multiplied by about σ_scalp/σ_skull: a magnitude bias of 2.7 % at 642
//! vertices per surface and 0.7 % at 2 562 (docs/head_model.md). Testing
//! those rows with the hat functions removes it (measured there); Stenroos
//! & Sarvas (2012, Phys Med Biol 57:3517; from memory) report linear
//! Galerkin more accurate than collocation in the same setting.
//!
//! # The row
//! Row i of surface l becomes ⟨φᵢ, ·⟩/mᵢ with mᵢ = ⟨φᵢ, 1⟩ (a third of the
//! areas around vertex i), so that it keeps the scale of a collocation row:
//! cₗ Σⱼ Mᵢⱼ/mᵢ Vⱼ − Σₖ αₖ/(4π) Σⱼ ⟨φᵢ, Ωⱼ⟩/mᵢ Vⱼ, with the mass matrix
//! Mᵢⱼ = ⟨φᵢ, φⱼ⟩ exact (A/6 on the diagonal and A/12 off it for each
//! triangle of area A; common practice, no source).
//!
//! ⟨φᵢ, Ωⱼ⟩ over a source triangle near the vertex (centroid within
//! [`NEAR_SIZES`] times the larger of the support's radius and the
//! triangle's size): the observation side by the 7-point rule of degree 5
//! of Dunavant (1985, Int J Numer Methods Eng 21:1129; points and weights
//! from memory, checked by a test against the moments of a triangle), the
//! source side by the closed-form weights of
//! [`super::integrals::linear_double_layer`]. Farther: 3 points per
//! triangle on both sides (the interior rule of degree 2, common practice,
//! no source) with the point kernel (r′−r)·n/|r′−r|³. The split was chosen
//! by measurement (docs/head_model.md): it stays within 0.2 % in MAG of
//! the near rule on every pair, at about the cost of collocation.
//!
//! The row-sum identity holds at every point of a face of a closed
//! polyhedron (Σ over the own surface of Ω is 2π there), so it holds for
//! the tested row; the own weight of the vertex is set from it as in
//! collocation, which also absorbs the log-singular part of the self term
//! that the rule integrates poorly. Over the other surfaces the sums (4π
//! inside, 0 outside) hold up to the far rule's error (checked by a test).

use super::integrals::linear_double_layer;
use super::BemGeometry;
use crate::geometry::{cross, dot, norm, sub, Mesh, Vec3};

/// The 7-point rule of degree 5 on a triangle (Dunavant 1985): barycentric
/// points and weights summing to 1 (from memory; checked by a test).
const DUNAVANT_7: [([f64; 3], f64); 7] = {
    const A1: f64 = 0.059_715_871_789_770;
    const B1: f64 = 0.470_142_064_105_115;
    const W1: f64 = 0.132_394_152_788_506;
    const A2: f64 = 0.797_426_985_353_087;
    const B2: f64 = 0.101_286_507_323_456;
    const W2: f64 = 0.125_939_180_544_827;
    const C: f64 = 1.0 / 3.0;
    [
        ([C, C, C], 0.225),
        ([A1, B1, B1], W1),
        ([B1, A1, B1], W1),
        ([B1, B1, A1], W1),
        ([A2, B2, B2], W2),
        ([B2, A2, B2], W2),
        ([B2, B2, A2], W2),
    ]
};

/// The interior 3-point rule of degree 2 (common practice, no source).
const INTERIOR_3: [([f64; 3], f64); 3] = [
    ([2.0 / 3.0, 1.0 / 6.0, 1.0 / 6.0], 1.0 / 3.0),
    ([1.0 / 6.0, 2.0 / 3.0, 1.0 / 6.0], 1.0 / 3.0),
    ([1.0 / 6.0, 1.0 / 6.0, 2.0 / 3.0], 1.0 / 3.0),
];

/// A source triangle is near when its centroid lies within this many
/// times the larger of the support's radius and the triangle's size (the
/// edge of an equilateral triangle of the same circumradius). Measured:
/// with 2, MAG stays within 0.2 % of the near rule on every pair, at 642
/// and 2 562 vertices (docs/head_model.md).
const NEAR_SIZES: f64 = 2.0;

/// What the rows need of each triangle of every surface, computed once.
pub(super) struct SourceTriangles {
    /// Per surface, per triangle: centroid, size, twice-area normal and
    /// the points of [`INTERIOR_3`].
    surfaces: Vec<Vec<SourceTriangle>>,
    /// Per surface, the triangles around each vertex.
    around: Vec<Vec<Vec<u32>>>,
}

struct SourceTriangle {
    centroid: Vec3,
    size: f64,
    cross: Vec3,
    points: [Vec3; 3],
}

/// The point of barycentric coordinates `b` on `corners`.
fn at(b: &[f64; 3], corners: &[Vec3; 3]) -> Vec3 {
    [0, 1, 2].map(|a| b[0] * corners[0][a] + b[1] * corners[1][a] + b[2] * corners[2][a])
}

impl SourceTriangles {
    pub(super) fn new(geometry: &BemGeometry) -> Self {
        let per_mesh = |mesh: &Mesh| -> Vec<SourceTriangle> {
            (0..mesh.n_triangles())
                .map(|t| {
                    let corners = mesh.corners(t);
                    let centroid = at(&[1.0 / 3.0; 3], &corners);
                    let circumradius = corners
                        .iter()
                        .map(|&c| norm(sub(c, centroid)))
                        .fold(0.0, f64::max);
                    SourceTriangle {
                        centroid,
                        size: 3f64.sqrt() * circumradius,
                        cross: cross(sub(corners[1], corners[0]), sub(corners[2], corners[0])),
                        points: INTERIOR_3.map(|(b, _)| at(&b, &corners)),
                    }
                })
                .collect()
        };
        let around = |mesh: &Mesh| {
            let mut around = vec![Vec::new(); mesh.n_vertices()];
            for (t, tri) in mesh.triangles.iter().enumerate() {
                for &v in tri {
                    around[v as usize].push(t as u32);
                }
            }
            around
        };
        Self {
            surfaces: geometry.surfaces().iter().map(per_mesh).collect(),
            around: geometry.surfaces().iter().map(around).collect(),
        }
    }
}

impl SourceTriangles {
    /// Whether vertex `local` of surface `l` lies on a triangle (a vertex
    /// that none uses has no hat function to test with; its row stays a
    /// collocation row).
    pub(super) fn supports(&self, l: usize, local: usize) -> bool {
        !self.around[l][local].is_empty()
    }
}

/// The tested Ω row of vertex `local` of surface `l` over all surfaces
/// (global order, `offsets` as in the system), divided by mᵢ, with its
/// own-surface weight set so that the own surface sums to 2π; and the
/// tested mass row Mᵢⱼ/mᵢ as (local j, value) pairs of the own surface.
pub(super) fn tested_row(
    geometry: &BemGeometry,
    sources: &SourceTriangles,
    offsets: &[usize],
    l: usize,
    local: usize,
    omega: &mut [f64],
) -> Vec<(usize, f64)> {
    omega.fill(0.0);
    let own = &geometry.surfaces()[l];
    let vertex = own.vertices[local];
    let around = &sources.around[l][local];
    // Quadrature points (position, rule weight × area × φᵢ) of the support.
    let mut near_points: Vec<(Vec3, f64)> = Vec::with_capacity(7 * around.len());
    let mut far_points: Vec<(Vec3, f64)> = Vec::with_capacity(3 * around.len());
    let mut m_i = 0.0;
    let mut radius: f64 = 0.0;
    let mut mass: Vec<(usize, f64)> = Vec::with_capacity(around.len() + 1);
    for &t in around {
        let t = t as usize;
        let tri = own.triangles[t];
        let corners = own.corners(t);
        let area = 0.5 * norm(sources.surfaces[l][t].cross);
        m_i += area / 3.0;
        let me = tri.iter().position(|&v| v as usize == local).unwrap_or(0);
        for (c, &v) in tri.iter().enumerate() {
            let value = if c == me { area / 6.0 } else { area / 12.0 };
            match mass.iter_mut().find(|(j, _)| *j == v as usize) {
                Some(entry) => entry.1 += value,
                None => mass.push((v as usize, value)),
            }
            radius = radius.max(norm(sub(corners[c], vertex)));
        }
        for (b, w) in DUNAVANT_7 {
            near_points.push((at(&b, &corners), w * area * b[me]));
        }
        for (b, w) in INTERIOR_3 {
            far_points.push((at(&b, &corners), w * area * b[me]));
        }
    }
    for (k, surface) in geometry.surfaces().iter().enumerate() {
        let base = offsets[k];
        for (tri, source) in surface.triangles.iter().zip(&sources.surfaces[k]) {
            let d = sub(source.centroid, vertex);
            let reach = NEAR_SIZES * radius.max(source.size);
            let mut acc = [0.0; 3];
            if dot(d, d) <= reach * reach {
                let corners = tri.map(|v| surface.vertices[v as usize]);
                for &(p, weight) in &near_points {
                    let x = linear_double_layer(p, &corners);
                    for c in 0..3 {
                        acc[c] += weight * x[c];
                    }
                }
            } else {
                for (q, (b, w)) in source.points.iter().zip(INTERIOR_3) {
                    let mut kernel = 0.0;
                    for &(p, weight) in &far_points {
                        let r = sub(*q, p);
                        let r2 = dot(r, r);
                        kernel += weight * dot(r, source.cross) / (r2 * r2.sqrt());
                    }
                    // ∫ φ_c f dS ≈ A Σ w b_c f, |cross| = 2A.
                    for c in 0..3 {
                        acc[c] += 0.5 * w * b[c] * kernel;
                    }
                }
            }
            for (c, &v) in tri.iter().enumerate() {
                omega[base + v as usize] += acc[c] / m_i;
            }
        }
    }
    let own_row = &mut omega[offsets[l]..offsets[l + 1]];
    let others: f64 = own_row.iter().sum::<f64>() - own_row[local];
    own_row[local] = 2.0 * std::f64::consts::PI - others;
    for entry in &mut mass {
        entry.1 /= m_i;
    }
    mass
}

#[cfg(test)]
mod tests {
    use super::{tested_row, SourceTriangles, DUNAVANT_7};
    use crate::geometry::Mesh;
    use crate::head::bem::BemGeometry;

    /// ∫_T λ₁^a λ₂^b λ₃^c dA = 2A a! b! c!/(a+b+c+2)! (the moments of a
    /// triangle in barycentric coordinates; common practice, no source):
    /// the rule is exact to degree 5, to 1e-14 (and not to degree 6, so the
    /// check can fail).
    #[test]
    fn dunavant_rule_is_exact_to_degree_five() {
        let fact = |n: u32| (1..=n).map(f64::from).product::<f64>();
        let error = |a: u32, b: u32, c: u32| {
            // With A = 1/2 the rule is Σ w/2 f.
            let exact = fact(a) * fact(b) * fact(c) / fact(a + b + c + 2);
            let rule: f64 = DUNAVANT_7
                .iter()
                .map(|(l, w)| {
                    0.5 * w * l[0].powi(a as i32) * l[1].powi(b as i32) * l[2].powi(c as i32)
                })
                .sum();
            (rule - exact).abs()
        };
        for a in 0..=5u32 {
            for b in 0..=(5 - a) {
                for c in 0..=(5 - a - b) {
                    assert!(error(a, b, c) < 1e-14, "degree ({a},{b},{c})");
                }
            }
        }
        assert!(error(6, 0, 0) > 1e-6);
    }

    /// The tested rows keep the identities of a closed surface (Gauss's
    /// theorem: the solid angle of a closed outward surface is 4π inside,
    /// 2π on it and 0 outside) and the mass row sums to 1 (Σⱼ φⱼ = 1):
    /// exactly on the own surface (by construction), within 1e-3 of 4π
    /// elsewhere (the far rule's error; measured under 1e-4 × 4π), three shells of
    /// 162 vertices.
    #[test]
    fn tested_rows_keep_the_closed_surface_sums() -> Result<(), crate::head::bem::BemError> {
        let surfaces: Vec<Mesh> = [0.083, 0.088, 0.094]
            .iter()
            .map(|&r| Mesh::icosphere(2, r))
            .collect();
        let names = vec!["a".into(), "b".into(), "c".into()];
        let (geometry, _) = BemGeometry::new(surfaces, names, vec![0.47, 0.02, 0.41])?;
        let sources = SourceTriangles::new(&geometry);
        let offsets = [0, 162, 324, 486];
        let mut omega = vec![0.0; 486];
        let four_pi = 4.0 * std::f64::consts::PI;
        for (l, local) in [(1, 0), (1, 77), (2, 5), (2, 161)] {
            let mass = tested_row(&geometry, &sources, &offsets, l, local, &mut omega);
            assert!((mass.iter().map(|m| m.1).sum::<f64>() - 1.0).abs() < 1e-12);
            for k in 0..3 {
                let sum: f64 = omega[offsets[k]..offsets[k + 1]].iter().sum();
                let expected = match k.cmp(&l) {
                    std::cmp::Ordering::Less => 0.0,
                    std::cmp::Ordering::Equal => 0.5 * four_pi,
                    std::cmp::Ordering::Greater => four_pi,
                };
                let tol = if k == l { 1e-12 } else { 1e-3 * four_pi };
                assert!(
                    (sum - expected).abs() < tol,
                    "row ({l},{local}) surface {k}: {sum}"
                );
            }
        }
        Ok(())
    }
}
