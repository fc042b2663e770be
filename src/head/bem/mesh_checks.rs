//! The surfaces of a boundary-element head, checked: each closed, one piece,
//! manifold and outward (reoriented with a note when it is not), the
//! surfaces nested without touching (the smallest gap reported), one
//! positive conductivity per compartment.

use rayon::prelude::*;

use super::integrals::{nearest_on_mesh, winding_number};
use super::BemError;
use crate::geometry::{validate, Adjacency, Mesh, MeshError};

/// Most surfaces a boundary-element head may have.
pub const MAX_SURFACES: usize = 4;

/// Two surfaces closer than this (m) count as touching.
const TOUCHING_M: f64 = 1e-6;

/// Nested closed surfaces (innermost first, metres, outward triangles) and
/// the conductivity (S/m) inside each, checked.
#[derive(Debug, Clone, PartialEq)]
pub struct BemGeometry {
    surfaces: Vec<Mesh>,
    names: Vec<String>,
    conductivities: Vec<f64>,
    gaps: Vec<f64>,
}

/// What the checks changed or measured, for notes.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct GeometryNotes {
    /// One line per surface whose triangles were turned.
    pub reoriented: Vec<String>,
    /// The smallest gap (m) between each surface and the next one out.
    pub gaps_m: Vec<f64>,
}

impl BemGeometry {
    /// Checks `surfaces` (innermost first, metres; `names` for messages, one
    /// per surface) and `conductivities` (S/m, compartment k inside surface
    /// k and outside surface k−1).
    ///
    /// Surfaces whose triangles are inward, or not all turned the same way,
    /// are reoriented (a note says so). Errors: 0 or more than
    /// [`MAX_SURFACES`] surfaces, a count mismatch, a conductivity that is not
    /// positive and finite, a mesh that fails [`crate::geometry::validate`]
    /// (degenerate triangle, non-manifold edge, …), an open surface, one in
    /// several pieces, a surface not strictly inside the next one.
    pub fn new(
        surfaces: Vec<Mesh>,
        names: Vec<String>,
        conductivities: Vec<f64>,
    ) -> Result<(Self, GeometryNotes), BemError> {
        if surfaces.is_empty() || surfaces.len() > MAX_SURFACES {
            return Err(BemError::SurfaceCount {
                count: surfaces.len(),
                max: MAX_SURFACES,
            });
        }
        if conductivities.len() != surfaces.len() {
            return Err(BemError::ConductivityCount {
                surfaces: surfaces.len(),
                conductivities: conductivities.len(),
            });
        }
        let names: Vec<String> = (0..surfaces.len())
            .map(|k| {
                names
                    .get(k)
                    .cloned()
                    .unwrap_or_else(|| format!("{} (0 = innermost)", k))
            })
            .collect();
        for (index, &value) in conductivities.iter().enumerate() {
            if !(value.is_finite() && value > 0.0) {
                return Err(BemError::ConductivityNotPositive {
                    index,
                    surface: names[index].clone(),
                    value,
                });
            }
        }
        let mut notes = GeometryNotes::default();
        let mut checked = Vec::with_capacity(surfaces.len());
        for (mesh, name) in surfaces.into_iter().zip(&names) {
            let (mesh, note) = checked_surface(mesh, name)?;
            if let Some(n) = note {
                notes.reoriented.push(n);
            }
            checked.push(mesh);
        }
        for k in 0..checked.len().saturating_sub(1) {
            let gap = check_nested(&checked[k], &checked[k + 1], &names[k], &names[k + 1])?;
            notes.gaps_m.push(gap);
        }
        Ok((
            Self {
                surfaces: checked,
                names,
                conductivities,
                gaps: notes.gaps_m.clone(),
            },
            notes,
        ))
    }

    /// The surfaces, innermost first (m, outward).
    pub fn surfaces(&self) -> &[Mesh] {
        &self.surfaces
    }

    /// The surfaces' names, innermost first.
    pub fn names(&self) -> &[String] {
        &self.names
    }

    /// Conductivity (S/m) inside each surface (and outside the one before).
    pub fn conductivities(&self) -> &[f64] {
        &self.conductivities
    }

    /// The smallest gap (m) between each surface and the next one out.
    pub fn gaps(&self) -> &[f64] {
        &self.gaps
    }

    /// Vertices of all surfaces.
    pub fn n_vertices(&self) -> usize {
        self.surfaces.iter().map(Mesh::n_vertices).sum()
    }
}

/// One surface checked and turned outward; the note says what was turned.
fn checked_surface(mut mesh: Mesh, name: &str) -> Result<(Mesh, Option<String>), BemError> {
    let as_error = |inner: MeshError| BemError::Mesh {
        surface: name.to_string(),
        inner,
    };
    crate::geometry::check_indices_and_coordinates(&mesh).map_err(as_error)?;
    let adjacency = Adjacency::new(&mesh).map_err(as_error)?;
    if let Some(e) = (0..adjacency.n_edges()).find(|&e| adjacency.half_edges_of(e).len() == 1) {
        return Err(BemError::Open {
            surface: name.to_string(),
            boundary_edges: adjacency.n_boundary_edges(),
            first_edge: adjacency.edges[e],
        });
    }
    let flipped = orient_consistently(&mesh, &adjacency);
    let mut turned = 0;
    for (tri, &flip) in mesh.triangles.iter_mut().zip(&flipped) {
        if flip {
            tri.swap(1, 2);
            turned += 1;
        }
    }
    let mut note = None;
    if mesh.volume() < 0.0 {
        for tri in &mut mesh.triangles {
            tri.swap(1, 2);
        }
        turned = mesh.n_triangles() - turned;
    }
    if turned > 0 {
        note = Some(format!(
            "note: surface {name}: {turned} of {} triangles were turned so that all face outward",
            mesh.n_triangles()
        ));
    }
    let report = validate(&mesh).map_err(as_error)?;
    if report.n_components() != 1 {
        return Err(BemError::Pieces {
            surface: name.to_string(),
            components: report.n_components(),
        });
    }
    Ok((mesh, note))
}

/// Which triangles to turn so that every edge is traversed once each way,
/// by a breadth-first walk from triangle 0 of each piece (common practice,
/// no source). Edges shared by more than two triangles are skipped here;
/// the mesh check reports them. A surface that cannot be oriented (a
/// Möbius band) keeps a conflict, which the mesh check then reports.
fn orient_consistently(mesh: &Mesh, adjacency: &Adjacency) -> Vec<bool> {
    let n = mesh.n_triangles();
    let mut flip = vec![false; n];
    let mut seen = vec![false; n];
    // The directed ends of half-edge h after the flips chosen so far.
    let ends = |h: usize, flip: &[bool]| {
        let tri = mesh.triangles[h / 3];
        let k = h % 3;
        let (a, b) = (tri[k], tri[(k + 1) % 3]);
        if flip[h / 3] {
            (b, a)
        } else {
            (a, b)
        }
    };
    // Half-edges of each triangle's edges: find the edge index per half-edge.
    let mut edge_of = vec![0usize; 3 * n];
    for e in 0..adjacency.n_edges() {
        for &h in adjacency.half_edges_of(e) {
            edge_of[h as usize] = e;
        }
    }
    let mut queue = std::collections::VecDeque::new();
    for start in 0..n {
        if seen[start] {
            continue;
        }
        seen[start] = true;
        queue.push_back(start);
        while let Some(t) = queue.pop_front() {
            for k in 0..3 {
                let h = 3 * t + k;
                let halves = adjacency.half_edges_of(edge_of[h]);
                if halves.len() != 2 {
                    continue;
                }
                let other = if halves[0] as usize == h {
                    halves[1] as usize
                } else {
                    halves[0] as usize
                };
                let u = other / 3;
                if seen[u] {
                    continue;
                }
                seen[u] = true;
                // Consistent when the neighbour runs the shared edge the
                // other way.
                if ends(h, &flip).0 == ends(other, &flip).0 {
                    flip[u] = !flip[u];
                }
                queue.push_back(u);
            }
        }
    }
    flip
}

/// Checks that `inner` lies strictly inside `outer` and returns the smallest
/// gap (m): every vertex of `inner` inside `outer`, every vertex of `outer`
/// outside `inner`, and no vertex of either within [`TOUCHING_M`] of the
/// other surface.
fn check_nested(
    inner: &Mesh,
    outer: &Mesh,
    inner_name: &str,
    outer_name: &str,
) -> Result<f64, BemError> {
    // Per vertex: (distance to the other surface, on the wrong side?).
    let inner_side: Vec<(f64, bool)> = inner
        .vertices
        .par_iter()
        .map(|&v| (nearest_on_mesh(outer, v).2, winding_number(outer, v) < 0.5))
        .collect();
    let outer_side: Vec<(f64, bool)> = outer
        .vertices
        .par_iter()
        .map(|&v| (nearest_on_mesh(inner, v).2, winding_number(inner, v) > 0.5))
        .collect();
    let gap = inner_side
        .iter()
        .chain(&outer_side)
        .map(|(d, _)| *d)
        .fold(f64::INFINITY, f64::min);
    let refuse = |vertex: usize, where_: &'static str| BemError::NotNested {
        inner: inner_name.to_string(),
        outer: outer_name.to_string(),
        vertex,
        where_,
        gap_mm: gap * 1e3,
    };
    if let Some(v) = inner_side.iter().position(|(_, wrong)| *wrong) {
        return Err(refuse(v, "outside"));
    }
    if let Some(v) = inner_side.iter().position(|(d, _)| *d < TOUCHING_M) {
        return Err(refuse(v, "on"));
    }
    if outer_side
        .iter()
        .any(|(d, wrong)| *wrong || *d < TOUCHING_M)
    {
        // A vertex of the outer surface inside the inner one: they cross.
        // Name the inner vertex closest to the outer surface.
        let v = inner_side
            .iter()
            .enumerate()
            .min_by(|a, b| a.1 .0.total_cmp(&b.1 .0))
            .map_or(0, |(i, _)| i);
        return Err(refuse(v, "near where it crosses"));
    }
    Ok(gap)
}
