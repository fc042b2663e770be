//! Mesh connectivity: unique edges, edge → half-edges, vertex → neighbours and vertex → triangles, all as compressed (CSR-style) arrays.

use rayon::slice::ParallelSliceMut;

use super::error::MeshError;
use super::mesh::{check_indices, Mesh};

/// Connectivity of a triangle mesh in compressed sparse row layout.
///
/// A half-edge `h = 3·t + k` is the directed edge of triangle `t` from its
/// corner `k` to its corner `(k + 1) % 3`. Unique (undirected) edges are
/// sorted by their (smaller, larger) vertex pair, so the layout is the same
/// on every run and every thread count.
#[derive(Debug, Clone, PartialEq)]
pub struct Adjacency {
    /// Unique undirected edges as `[smaller, larger]` vertex indices, sorted.
    pub edges: Vec<[u32; 2]>,
    /// `edge_half_edges[edge_offsets[e]..edge_offsets[e + 1]]` are the
    /// half-edges (`3·t + k`) lying on edge `e`, in increasing order. One entry
    /// means a boundary edge, two an interior edge, more a non-manifold edge.
    pub edge_offsets: Vec<u32>,
    /// Half-edges per unique edge (see [`Adjacency::edge_offsets`]).
    pub edge_half_edges: Vec<u32>,
    /// `neighbours[neighbour_offsets[v]..neighbour_offsets[v + 1]]` are the
    /// vertices sharing an edge with `v`, in increasing order.
    pub neighbour_offsets: Vec<u32>,
    /// Vertex neighbours (see [`Adjacency::neighbour_offsets`]).
    pub neighbours: Vec<u32>,
    /// `vertex_triangles[triangle_offsets[v]..triangle_offsets[v + 1]]` are
    /// the triangles having `v` as a corner, in increasing order.
    pub triangle_offsets: Vec<u32>,
    /// Triangles per vertex (see [`Adjacency::triangle_offsets`]).
    pub vertex_triangles: Vec<u32>,
}

impl Adjacency {
    /// Builds the connectivity of `mesh`.
    ///
    /// # Errors
    /// [`MeshError::IndexOutOfRange`] names the first triangle corner that
    /// refers to a missing vertex; [`MeshError::TooLarge`] if the mesh has
    /// 2³² / 3 triangles or more (indices are stored as `u32`).
    pub fn new(mesh: &Mesh) -> Result<Adjacency, MeshError> {
        check_indices(mesh)?;
        let n_vertices = mesh.n_vertices();
        let n_half = 3 * mesh.n_triangles();
        if n_half >= u32::MAX as usize || n_vertices >= u32::MAX as usize {
            return Err(MeshError::TooLarge {
                vertices: n_vertices,
                triangles: mesh.n_triangles(),
            });
        }

        // Sort half-edges by their undirected key; the half-edge id breaks
        // ties, so the order is unique and independent of the sort's threads.
        let mut keyed: Vec<(u64, u32)> = Vec::with_capacity(n_half);
        for (t, tri) in mesh.triangles.iter().enumerate() {
            for k in 0..3 {
                let (a, b) = (tri[k], tri[(k + 1) % 3]);
                let key = (u64::from(a.min(b)) << 32) | u64::from(a.max(b));
                keyed.push((key, (3 * t + k) as u32));
            }
        }
        keyed.par_sort_unstable();

        let mut edges = Vec::with_capacity(n_half / 2 + 1);
        let mut edge_offsets = Vec::with_capacity(n_half / 2 + 2);
        let mut edge_half_edges = Vec::with_capacity(n_half);
        let mut previous = None;
        for &(key, h) in &keyed {
            if previous != Some(key) {
                edge_offsets.push(edge_half_edges.len() as u32);
                edges.push([(key >> 32) as u32, key as u32]);
                previous = Some(key);
            }
            edge_half_edges.push(h);
        }
        edge_offsets.push(edge_half_edges.len() as u32);

        // Neighbours: filling in sorted edge order yields sorted lists, because
        // edges (u, v) with u < v come before all edges (v, w).
        let mut degree = vec![0u32; n_vertices + 1];
        for &[a, b] in &edges {
            degree[a as usize + 1] += 1;
            degree[b as usize + 1] += 1;
        }
        let neighbour_offsets = prefix_sums(degree);
        let mut fill: Vec<u32> = neighbour_offsets[..n_vertices].to_vec();
        let mut neighbours = vec![0u32; 2 * edges.len()];
        for &[a, b] in &edges {
            neighbours[fill[a as usize] as usize] = b;
            fill[a as usize] += 1;
            neighbours[fill[b as usize] as usize] = a;
            fill[b as usize] += 1;
        }

        let mut count = vec![0u32; n_vertices + 1];
        for tri in &mesh.triangles {
            for &v in tri {
                count[v as usize + 1] += 1;
            }
        }
        let triangle_offsets = prefix_sums(count);
        let mut fill: Vec<u32> = triangle_offsets[..n_vertices].to_vec();
        let mut vertex_triangles = vec![0u32; n_half];
        for (t, tri) in mesh.triangles.iter().enumerate() {
            for &v in tri {
                vertex_triangles[fill[v as usize] as usize] = t as u32;
                fill[v as usize] += 1;
            }
        }

        Ok(Adjacency {
            edges,
            edge_offsets,
            edge_half_edges,
            neighbour_offsets,
            neighbours,
            triangle_offsets,
            vertex_triangles,
        })
    }

    /// Number of unique edges.
    pub fn n_edges(&self) -> usize {
        self.edges.len()
    }

    /// The half-edges (`3·t + k`) lying on edge `e`.
    pub fn half_edges_of(&self, e: usize) -> &[u32] {
        &self.edge_half_edges[self.edge_offsets[e] as usize..self.edge_offsets[e + 1] as usize]
    }

    /// The vertices sharing an edge with `v`, in increasing order.
    pub fn neighbours_of(&self, v: usize) -> &[u32] {
        &self.neighbours[self.neighbour_offsets[v] as usize..self.neighbour_offsets[v + 1] as usize]
    }

    /// The triangles having `v` as a corner, in increasing order.
    pub fn triangles_of(&self, v: usize) -> &[u32] {
        &self.vertex_triangles
            [self.triangle_offsets[v] as usize..self.triangle_offsets[v + 1] as usize]
    }

    /// The index of the edge joining `a` and `b`, if there is one (binary
    /// search in the sorted edge list).
    pub fn find_edge(&self, a: u32, b: u32) -> Option<usize> {
        let key = [a.min(b), a.max(b)];
        self.edges.binary_search(&key).ok()
    }

    /// Number of boundary edges (edges with exactly one triangle).
    pub fn n_boundary_edges(&self) -> usize {
        (0..self.n_edges())
            .filter(|&e| self.edge_offsets[e + 1] - self.edge_offsets[e] == 1)
            .count()
    }
}

/// Turns counts shifted by one (`counts[v + 1]` = count of `v`) into offsets.
fn prefix_sums(mut counts: Vec<u32>) -> Vec<u32> {
    for i in 1..counts.len() {
        counts[i] += counts[i - 1];
    }
    counts
}
