//! Closed-form integrals over flat triangles: the solid angle, the double
//! layer of a linearly varying density, the nearest point of a triangle and
//! the winding number of a closed surface.
//!
//! # The solid angle
//! The solid angle Ω that triangle (x₁, x₂, x₃) subtends at r, with
//! yᵢ = xᵢ − r, is (van Oosterom & Strackee 1983, IEEE Trans Biomed Eng
//! 30:125; the formula as we recall it, checked here by the tests: the
//! solid angles of a closed surface sum to 4π inside and 0 outside)
//!
//! tan(Ω/2) = y₁·(y₂×y₃) / (|y₁||y₂||y₃| + (y₁·y₂)|y₃| + (y₁·y₃)|y₂| + (y₂·y₃)|y₁|),
//!
//! taken with `atan2` so that |Ω| may reach 2π. Ω = ∫ (r′−r)·n/|r′−r|³ dS′
//! with n the normal of the counter-clockwise triangle: positive when r lies
//! on the side the normal points away from (inside a closed outward surface).
//!
//! # The linear double layer
//! For the hat function φⱼ of corner j (1 at xⱼ, 0 at the other corners,
//! linear in between) we need Iⱼ = ∫_T φⱼ(r′) (r′−r)·n/|r′−r|³ dS′, the
//! weights of linear collocation (de Munck 1992, IEEE Trans Biomed Eng
//! 39:986, gives these in closed form). We derive them here as follows. On
//! the plane (r′−r)·n = d is constant; write φⱼ(r′) = φⱼ(p) + gⱼ·(r′−p) with
//! p = r + d n the foot of r on the plane and gⱼ the in-plane gradient. With
//! ρ = r′ − p, ρ/|r′−r|³ = −∇ρ(1/|r′−r|), so Gauss's theorem in the plane
//! gives
//!
//! Iⱼ = φⱼ(p) Ω − d Σₑ (gⱼ·mₑ) γₑ,   γₑ = ∫ₑ dl/|r′−r|,
//!
//! with mₑ the outward in-plane normal of edge e. γₑ is elementary:
//! ln((|y_b| + s_b)/(|y_a| + s_a)) for the edge a→b with s = y·u (u the
//! unit edge direction), written without cancellation when s < 0 by
//! |y| + s = h²/(|y| − s), h the distance of r from the edge's line.
//! Σⱼ Iⱼ = Ω since the hat functions sum to one.

use crate::geometry::{cross, dot, norm, scale, sub, Mesh, Vec3};

/// The solid angle triangle `tri` subtends at `r` (van Oosterom &
/// Strackee 1983); see the module docs for the sign.
pub fn solid_angle(r: Vec3, tri: &[Vec3; 3]) -> f64 {
    let y1 = sub(tri[0], r);
    let y2 = sub(tri[1], r);
    let y3 = sub(tri[2], r);
    let (l1, l2, l3) = (norm(y1), norm(y2), norm(y3));
    let triple = dot(y1, cross(y2, y3));
    let denominator = l1 * l2 * l3 + dot(y1, y2) * l3 + dot(y1, y3) * l2 + dot(y2, y3) * l1;
    2.0 * triple.atan2(denominator)
}

/// ln(|y| + s) for a point at distance `length` = |y| from the observation
/// point, at abscissa `s` along the edge, `h2` the squared distance of the
/// observation point from the edge's line.
fn log_plus(s: f64, length: f64, h2: f64) -> f64 {
    if s >= 0.0 {
        (length + s).ln()
    } else {
        (h2 / (length - s)).ln()
    }
}

/// The weights Iⱼ (j = corners of `tri`) of the double layer of a linear
/// density over `tri` at `r`; their sum is the solid angle. Zero when `r`
/// lies in the triangle's plane (the double layer of a flat piece vanishes
/// there).
pub fn linear_double_layer(r: Vec3, tri: &[Vec3; 3]) -> [f64; 3] {
    let normal2 = cross(sub(tri[1], tri[0]), sub(tri[2], tri[0]));
    let twice_area = norm(normal2);
    if twice_area <= 0.0 {
        return [0.0; 3];
    }
    let n = scale(normal2, 1.0 / twice_area);
    let d = dot(sub(tri[0], r), n);
    let size = norm(sub(tri[1], tri[0])).max(norm(sub(tri[2], tri[0])));
    if d.abs() <= 1e-13 * size {
        return [0.0; 3];
    }
    let omega = solid_angle(r, tri);
    let p = [r[0] + d * n[0], r[1] + d * n[1], r[2] + d * n[2]];
    // γ and the outward normal of each edge a→b (a = corner e, b = e+1).
    let mut gamma = [0.0; 3];
    let mut m = [[0.0; 3]; 3];
    for e in 0..3 {
        let a = tri[e];
        let b = tri[(e + 1) % 3];
        let edge = sub(b, a);
        let length = norm(edge);
        let u = scale(edge, 1.0 / length);
        let ya = sub(a, r);
        let yb = sub(b, r);
        let h2 = dot(cross(ya, u), cross(ya, u));
        gamma[e] = log_plus(dot(yb, u), norm(yb), h2) - log_plus(dot(ya, u), norm(ya), h2);
        m[e] = cross(u, n);
    }
    let mut weights = [0.0; 3];
    for (j, w) in weights.iter_mut().enumerate() {
        let next = tri[(j + 1) % 3];
        let after = tri[(j + 2) % 3];
        // Barycentric coordinate of p and the in-plane gradient of φⱼ.
        let phi_p = dot(cross(sub(next, p), sub(after, p)), n) / twice_area;
        let g = scale(cross(n, sub(after, next)), 1.0 / twice_area);
        let edge_sum: f64 = (0..3).map(|e| dot(g, m[e]) * gamma[e]).sum();
        *w = phi_p * omega - d * edge_sum;
    }
    weights
}

/// The point of triangle `tri` nearest to `p`, and its barycentric
/// weights (common practice, no source: project onto the plane, and when
/// the foot falls outside, onto the nearest edge).
pub fn nearest_on_triangle(p: Vec3, tri: &[Vec3; 3]) -> (Vec3, [f64; 3]) {
    let [a, b, c] = *tri;
    let ab = sub(b, a);
    let ac = sub(c, a);
    let ap = sub(p, a);
    let n = cross(ab, ac);
    let nn = dot(n, n);
    if nn > 0.0 {
        // Barycentric weights of the foot on the plane.
        let wb = dot(cross(ap, ac), n) / nn;
        let wc = dot(cross(ab, ap), n) / nn;
        let wa = 1.0 - wb - wc;
        if wa >= 0.0 && wb >= 0.0 && wc >= 0.0 {
            let q = [
                wa * a[0] + wb * b[0] + wc * c[0],
                wa * a[1] + wb * b[1] + wc * c[1],
                wa * a[2] + wb * b[2] + wc * c[2],
            ];
            return (q, [wa, wb, wc]);
        }
    }
    // The nearest point lies on an edge (or a corner).
    let mut best = (f64::INFINITY, a, [1.0, 0.0, 0.0]);
    for e in 0..3 {
        let (i, j) = (e, (e + 1) % 3);
        let edge = sub(tri[j], tri[i]);
        let len2 = dot(edge, edge);
        let t = if len2 > 0.0 {
            (dot(sub(p, tri[i]), edge) / len2).clamp(0.0, 1.0)
        } else {
            0.0
        };
        let q = [
            tri[i][0] + t * edge[0],
            tri[i][1] + t * edge[1],
            tri[i][2] + t * edge[2],
        ];
        let dist = norm(sub(p, q));
        if dist < best.0 {
            let mut w = [0.0; 3];
            w[i] = 1.0 - t;
            w[j] = t;
            best = (dist, q, w);
        }
    }
    (best.1, best.2)
}

/// The nearest point of `mesh` to `p`: (triangle, barycentric weights,
/// distance in m). Brute force over the triangles; the mesh must have one.
pub fn nearest_on_mesh(mesh: &Mesh, p: Vec3) -> (usize, [f64; 3], f64) {
    let mut best = (0, [1.0, 0.0, 0.0], f64::INFINITY);
    for t in 0..mesh.n_triangles() {
        let tri = mesh.corners(t);
        let (q, w) = nearest_on_triangle(p, &tri);
        let dist = norm(sub(p, q));
        if dist < best.2 {
            best = (t, w, dist);
        }
    }
    best
}

/// The total solid angle of closed `mesh` seen from `p` over 4π: 1 inside an
/// outward surface, 0 outside (the winding number; common practice, no
/// source).
pub fn winding_number(mesh: &Mesh, p: Vec3) -> f64 {
    let total: f64 = (0..mesh.n_triangles())
        .map(|t| solid_angle(p, &mesh.corners(t)))
        .sum();
    total / (4.0 * std::f64::consts::PI)
}
