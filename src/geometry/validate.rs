//! Mesh validity checks (indices, coordinates, degenerate triangles, manifold edges, orientation) and the mesh report.

use super::adjacency::Adjacency;
use super::error::{MeshError, DEGENERATE_RATIO};
use super::mesh::{check_indices_and_coordinates, cross, dot, norm, sub, Mesh};

/// Facts about one connected component (triangles linked through edges).
#[derive(Debug, Clone, PartialEq)]
pub struct ComponentReport {
    /// Its lowest-numbered vertex.
    pub first_vertex: usize,
    /// Its lowest-numbered triangle.
    pub first_triangle: usize,
    /// Number of vertices.
    pub n_vertices: usize,
    /// Number of unique edges.
    pub n_edges: usize,
    /// Number of triangles.
    pub n_triangles: usize,
    /// Number of boundary edges (one triangle).
    pub n_boundary_edges: usize,
    /// V − E + F of this component (2 for a closed genus-0 surface, 1 for a disc).
    pub euler_characteristic: i64,
    /// Whether every edge has two triangles.
    pub closed: bool,
    /// Surface area (m²).
    pub area_m2: f64,
    /// Enclosed volume (m³) when closed.
    pub volume_m3: Option<f64>,
}

/// Facts about a valid mesh.
#[derive(Debug, Clone, PartialEq)]
pub struct MeshReport {
    /// Number of vertices (including unreferenced ones).
    pub n_vertices: usize,
    /// Number of triangles.
    pub n_triangles: usize,
    /// Number of unique edges.
    pub n_edges: usize,
    /// Number of boundary edges.
    pub n_boundary_edges: usize,
    /// Number of vertices no triangle uses (not an error; they belong to no component).
    pub n_isolated_vertices: usize,
    /// Whether every edge has exactly two triangles.
    pub closed: bool,
    /// V − E + F over the whole mesh (every vertex counted, isolated ones too).
    pub euler_characteristic: i64,
    /// Total surface area (m²).
    pub area_m2: f64,
    /// Total enclosed volume (m³) when the whole mesh is closed.
    pub volume_m3: Option<f64>,
    /// The connected components, ordered by their lowest vertex.
    pub components: Vec<ComponentReport>,
}

impl MeshReport {
    /// Number of connected components (isolated vertices not counted).
    pub fn n_components(&self) -> usize {
        self.components.len()
    }
}

/// Twice the area of triangle `t` over its longest edge squared (see
/// [`DEGENERATE_RATIO`]).
fn shape_ratio(mesh: &Mesh, t: usize) -> f64 {
    let [a, b, c] = mesh.corners(t);
    let longest = dot(sub(b, a), sub(b, a))
        .max(dot(sub(c, b), sub(c, b)))
        .max(dot(sub(a, c), sub(a, c)));
    if longest > 0.0 {
        norm(cross(sub(b, a), sub(c, a))) / longest
    } else {
        0.0
    }
}

/// Indices of the vertices no triangle uses, in increasing order.
///
/// Triangle indices must be in range (see [`check_indices_and_coordinates`]);
/// out-of-range corners are ignored here.
pub fn isolated_vertices(mesh: &Mesh) -> Vec<usize> {
    let mut used = vec![false; mesh.n_vertices()];
    for tri in &mesh.triangles {
        for &v in tri {
            if let Some(u) = used.get_mut(v as usize) {
                *u = true;
            }
        }
    }
    (0..used.len()).filter(|&v| !used[v]).collect()
}

/// Checks `mesh` and reports its counts, components, area and volume.
///
/// The checks run in this order and the first failure is returned: empty
/// mesh, index out of range (first triangle), non-finite coordinate (first
/// vertex), degenerate triangle (first triangle, see [`DEGENERATE_RATIO`]),
/// non-manifold edge (first in sorted edge order), inconsistent orientation
/// (first in sorted edge order), inward normals on a closed component (first
/// component). Boundaries (open surfaces) and isolated vertices are allowed.
///
/// # Errors
/// A [`MeshError`] naming the offending vertex, triangle or edge.
pub fn validate(mesh: &Mesh) -> Result<MeshReport, MeshError> {
    check_indices_and_coordinates(mesh)?;
    for t in 0..mesh.n_triangles() {
        let ratio = shape_ratio(mesh, t);
        if ratio <= DEGENERATE_RATIO {
            return Err(MeshError::Degenerate { triangle: t, ratio });
        }
    }
    let adjacency = Adjacency::new(mesh)?;
    validate_with(mesh, &adjacency)
}

/// The edge and component checks of [`validate`] and the report, given the
/// connectivity built for `mesh` (whose indices are in range).
fn validate_with(mesh: &Mesh, adjacency: &Adjacency) -> Result<MeshReport, MeshError> {
    for (e, &edge) in adjacency.edges.iter().enumerate() {
        let halves = adjacency.half_edges_of(e);
        if halves.len() > 2 {
            return Err(MeshError::NonManifoldEdge {
                edge,
                triangle: halves[2] as usize / 3,
                count: halves.len(),
            });
        }
    }
    for e in 0..adjacency.n_edges() {
        if let &[h1, h2] = adjacency.half_edges_of(e) {
            let (from1, to1) = half_edge_ends(mesh, h1);
            let (from2, _) = half_edge_ends(mesh, h2);
            if from1 == from2 {
                return Err(MeshError::InconsistentOrientation {
                    first: h1 as usize / 3,
                    second: h2 as usize / 3,
                    from: from1,
                    to: to1,
                });
            }
        }
    }

    let (label, n_components) = vertex_components(mesh.n_vertices(), adjacency);
    let mut components: Vec<ComponentReport> = (0..n_components)
        .map(|_| ComponentReport {
            first_vertex: usize::MAX,
            first_triangle: usize::MAX,
            n_vertices: 0,
            n_edges: 0,
            n_triangles: 0,
            n_boundary_edges: 0,
            euler_characteristic: 0,
            closed: true,
            area_m2: 0.0,
            volume_m3: None,
        })
        .collect();
    for (v, &c) in label.iter().enumerate() {
        if c != u32::MAX {
            let comp = &mut components[c as usize];
            comp.first_vertex = comp.first_vertex.min(v);
            comp.n_vertices += 1;
        }
    }
    for (e, &[a, _]) in adjacency.edges.iter().enumerate() {
        let comp = &mut components[label[a as usize] as usize];
        comp.n_edges += 1;
        if adjacency.half_edges_of(e).len() == 1 {
            comp.n_boundary_edges += 1;
            comp.closed = false;
        }
    }
    // Signed volumes use the component's first vertex as origin, which keeps
    // the terms small; for a closed surface the origin does not matter.
    let mut signed_volume = vec![0.0; n_components];
    for t in 0..mesh.n_triangles() {
        let c = label[mesh.triangles[t][0] as usize] as usize;
        let comp = &mut components[c];
        comp.first_triangle = comp.first_triangle.min(t);
        comp.n_triangles += 1;
        let origin = mesh.vertices[comp.first_vertex];
        let [a, b, d] = mesh.corners(t).map(|p| sub(p, origin));
        comp.area_m2 += 0.5 * norm(cross(sub(b, a), sub(d, a)));
        signed_volume[c] += dot(a, cross(b, d)) / 6.0;
    }
    for (c, comp) in components.iter_mut().enumerate() {
        comp.euler_characteristic =
            comp.n_vertices as i64 - comp.n_edges as i64 + comp.n_triangles as i64;
        if comp.closed {
            if signed_volume[c] < 0.0 {
                return Err(MeshError::InwardNormals {
                    component: c,
                    triangle: comp.first_triangle,
                    volume_m3: signed_volume[c],
                });
            }
            comp.volume_m3 = Some(signed_volume[c]);
        }
    }

    let n_boundary_edges = components.iter().map(|c| c.n_boundary_edges).sum();
    let closed = n_boundary_edges == 0;
    let n_isolated_vertices = label.iter().filter(|&&c| c == u32::MAX).count();
    Ok(MeshReport {
        n_vertices: mesh.n_vertices(),
        n_triangles: mesh.n_triangles(),
        n_edges: adjacency.n_edges(),
        n_boundary_edges,
        n_isolated_vertices,
        closed,
        euler_characteristic: mesh.n_vertices() as i64 - adjacency.n_edges() as i64
            + mesh.n_triangles() as i64,
        area_m2: components.iter().map(|c| c.area_m2).sum(),
        volume_m3: if closed {
            Some(components.iter().filter_map(|c| c.volume_m3).sum())
        } else {
            None
        },
        components,
    })
}

/// Start and end vertex of half-edge `h = 3·t + k`.
fn half_edge_ends(mesh: &Mesh, h: u32) -> (u32, u32) {
    let tri = mesh.triangles[h as usize / 3];
    let k = h as usize % 3;
    (tri[k], tri[(k + 1) % 3])
}

/// Labels vertices by connected component (breadth-first search over edges,
/// started from each unlabelled vertex in increasing order, so components are
/// numbered by their lowest vertex). Isolated vertices get `u32::MAX`.
pub(crate) fn vertex_components(n_vertices: usize, adjacency: &Adjacency) -> (Vec<u32>, usize) {
    let mut label = vec![u32::MAX; n_vertices];
    let mut queue = Vec::new();
    let mut n = 0u32;
    for start in 0..n_vertices {
        if label[start] != u32::MAX || adjacency.neighbours_of(start).is_empty() {
            continue;
        }
        label[start] = n;
        queue.clear();
        queue.push(start as u32);
        let mut head = 0;
        while head < queue.len() {
            let v = queue[head] as usize;
            head += 1;
            for &w in adjacency.neighbours_of(v) {
                if label[w as usize] == u32::MAX {
                    label[w as usize] = n;
                    queue.push(w);
                }
            }
        }
        n += 1;
    }
    (label, n as usize)
}
