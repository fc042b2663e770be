//! The triangle mesh type, icospheres, areas and normals, and the first
//! checks every mesh user runs (indices in range, finite coordinates).

use std::collections::HashMap;

use super::error::MeshError;

/// A point or vector in head coordinates (metres).
pub type Vec3 = [f64; 3];

/// A triangulated surface. Vertices in metres, triangles as 0-based vertex
/// indices in counter-clockwise order seen from outside (right-hand rule gives
/// the outward normal).
#[derive(Debug, Clone, PartialEq)]
pub struct Mesh {
    /// Vertex positions (m).
    pub vertices: Vec<Vec3>,
    /// Triangles as 0-based vertex indices.
    pub triangles: Vec<[u32; 3]>,
}

/// `a - b`.
pub fn sub(a: Vec3, b: Vec3) -> Vec3 {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

/// `a + b`.
pub fn add(a: Vec3, b: Vec3) -> Vec3 {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

/// `s * a`.
pub fn scale(a: Vec3, s: f64) -> Vec3 {
    [a[0] * s, a[1] * s, a[2] * s]
}

/// Dot product.
pub fn dot(a: Vec3, b: Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// Cross product.
pub fn cross(a: Vec3, b: Vec3) -> Vec3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// Euclidean norm.
pub fn norm(a: Vec3) -> f64 {
    dot(a, a).sqrt()
}

/// `a / |a|`, or zero when `a` is zero.
pub fn normalize(a: Vec3) -> Vec3 {
    let n = norm(a);
    if n > 0.0 {
        scale(a, 1.0 / n)
    } else {
        [0.0; 3]
    }
}

impl Mesh {
    /// Number of vertices.
    pub fn n_vertices(&self) -> usize {
        self.vertices.len()
    }

    /// Number of triangles.
    pub fn n_triangles(&self) -> usize {
        self.triangles.len()
    }

    /// The three corner positions of triangle `t`.
    ///
    /// Indices must be in range (see the validity checks).
    pub fn corners(&self, t: usize) -> [Vec3; 3] {
        let [a, b, c] = self.triangles[t];
        [
            self.vertices[a as usize],
            self.vertices[b as usize],
            self.vertices[c as usize],
        ]
    }

    /// Area-weighted (unnormalised, twice the area) normal of triangle `t`.
    pub fn triangle_cross(&self, t: usize) -> Vec3 {
        let [a, b, c] = self.corners(t);
        cross(sub(b, a), sub(c, a))
    }

    /// Triangle areas (m²).
    pub fn triangle_areas(&self) -> Vec<f64> {
        (0..self.n_triangles())
            .map(|t| 0.5 * norm(self.triangle_cross(t)))
            .collect()
    }

    /// Vertex areas (m²): a third of the areas of the adjacent triangles.
    pub fn vertex_areas(&self) -> Vec<f64> {
        let mut areas = vec![0.0; self.n_vertices()];
        for (t, tri) in self.triangles.iter().enumerate() {
            let a = 0.5 * norm(self.triangle_cross(t)) / 3.0;
            for &v in tri {
                areas[v as usize] += a;
            }
        }
        areas
    }

    /// Area-weighted vertex normals (unit length; zero for isolated vertices).
    pub fn vertex_normals(&self) -> Vec<Vec3> {
        let mut normals = vec![[0.0; 3]; self.n_vertices()];
        for (t, tri) in self.triangles.iter().enumerate() {
            let n = self.triangle_cross(t);
            for &v in tri {
                normals[v as usize] = add(normals[v as usize], n);
            }
        }
        normals.into_iter().map(normalize).collect()
    }

    /// Total surface area (m²).
    pub fn area(&self) -> f64 {
        self.triangle_areas().iter().sum()
    }

    /// Enclosed volume (m³) by the divergence theorem; positive for a closed
    /// surface with outward orientation.
    pub fn volume(&self) -> f64 {
        (0..self.n_triangles())
            .map(|t| {
                let [a, b, c] = self.corners(t);
                dot(a, cross(b, c)) / 6.0
            })
            .sum()
    }

    /// A geodesic icosphere of the given subdivision level (level 0 is the
    /// icosahedron; level L has 10·4^L + 2 vertices), radius in metres,
    /// centred at the origin, outward orientation.
    pub fn icosphere(level: u32, radius: f64) -> Mesh {
        let (mut vertices, mut triangles) = icosahedron();
        for _ in 0..level {
            let mut midpoints: HashMap<(u32, u32), u32> = HashMap::new();
            let mut next = Vec::with_capacity(triangles.len() * 4);
            let mut midpoint = |a: u32, b: u32, vertices: &mut Vec<Vec3>| -> u32 {
                let key = (a.min(b), a.max(b));
                *midpoints.entry(key).or_insert_with(|| {
                    let m = normalize(add(vertices[a as usize], vertices[b as usize]));
                    vertices.push(m);
                    (vertices.len() - 1) as u32
                })
            };
            for &[a, b, c] in &triangles {
                let ab = midpoint(a, b, &mut vertices);
                let bc = midpoint(b, c, &mut vertices);
                let ca = midpoint(c, a, &mut vertices);
                next.push([a, ab, ca]);
                next.push([b, bc, ab]);
                next.push([c, ca, bc]);
                next.push([ab, bc, ca]);
            }
            triangles = next;
        }
        for v in &mut vertices {
            *v = scale(*v, radius);
        }
        Mesh {
            vertices,
            triangles,
        }
    }
}

impl Mesh {
    /// A geodesic sphere of any frequency `n ≥ 1`: each icosahedron face cut
    /// into n² triangles by a triangular grid, every grid point pushed out to
    /// the sphere. 10·n² + 2 vertices (n = 2^L gives the vertex count of
    /// [`Mesh::icosphere`] at level L, with a slightly different spacing),
    /// radius in metres, centred at the origin, outward orientation.
    pub fn geodesic_sphere(frequency: u32, radius: f64) -> Mesh {
        let n = frequency.max(1);
        let (corners, faces) = icosahedron();
        // A grid point is keyed by its corners with non-zero integer weights
        // (sorted by corner), so points on shared edges and corners are made once.
        let mut index: HashMap<[(u32, u32); 3], u32> = HashMap::new();
        let mut vertices: Vec<Vec3> = Vec::with_capacity(10 * (n * n) as usize + 2);
        let mut triangles = Vec::with_capacity(20 * (n * n) as usize);
        for &[a, b, c] in &faces {
            let mut id = |i: u32, j: u32| -> u32 {
                let mut key = [(a, n - i - j), (b, i), (c, j)].map(|(corner, w)| {
                    if w == 0 {
                        (u32::MAX, 0)
                    } else {
                        (corner, w)
                    }
                });
                key.sort_unstable();
                *index.entry(key).or_insert_with(|| {
                    let mut p = [0.0; 3];
                    for &(corner, w) in &key {
                        if w > 0 {
                            p = add(p, scale(corners[corner as usize], f64::from(w)));
                        }
                    }
                    vertices.push(scale(normalize(p), radius));
                    (vertices.len() - 1) as u32
                })
            };
            for i in 0..n {
                for j in 0..n - i {
                    // (i, j) → (i+1, j) → (i, j+1) turns as a → b → c does.
                    triangles.push([id(i, j), id(i + 1, j), id(i, j + 1)]);
                    if i + j + 1 < n {
                        triangles.push([id(i + 1, j), id(i + 1, j + 1), id(i, j + 1)]);
                    }
                }
            }
        }
        Mesh {
            vertices,
            triangles,
        }
    }
}

/// The unit icosahedron (12 vertices, 20 outward triangles), the start of
/// both sphere meshes.
fn icosahedron() -> (Vec<Vec3>, Vec<[u32; 3]>) {
    let t = (1.0 + 5f64.sqrt()) / 2.0;
    let vertices: Vec<Vec3> = [
        [-1.0, t, 0.0],
        [1.0, t, 0.0],
        [-1.0, -t, 0.0],
        [1.0, -t, 0.0],
        [0.0, -1.0, t],
        [0.0, 1.0, t],
        [0.0, -1.0, -t],
        [0.0, 1.0, -t],
        [t, 0.0, -1.0],
        [t, 0.0, 1.0],
        [-t, 0.0, -1.0],
        [-t, 0.0, 1.0],
    ]
    .iter()
    .map(|&v| normalize(v))
    .collect();
    let triangles: Vec<[u32; 3]> = vec![
        [0, 11, 5],
        [0, 5, 1],
        [0, 1, 7],
        [0, 7, 10],
        [0, 10, 11],
        [1, 5, 9],
        [5, 11, 4],
        [11, 10, 2],
        [10, 7, 6],
        [7, 1, 8],
        [3, 9, 4],
        [3, 4, 2],
        [3, 2, 6],
        [3, 6, 8],
        [3, 8, 9],
        [4, 9, 5],
        [2, 4, 11],
        [6, 2, 10],
        [8, 6, 7],
        [9, 8, 1],
    ];
    (vertices, triangles)
}

/// Checks that `mesh` is non-empty, that indices are in range and that all
/// coordinates are finite.
///
/// # Errors
/// [`MeshError::Empty`], [`MeshError::IndexOutOfRange`], [`MeshError::NonFinite`].
pub fn check_indices_and_coordinates(mesh: &Mesh) -> Result<(), MeshError> {
    if mesh.vertices.is_empty() || mesh.triangles.is_empty() {
        return Err(MeshError::Empty {
            vertices: mesh.n_vertices(),
            triangles: mesh.n_triangles(),
        });
    }
    check_indices(mesh)?;
    for (vertex, p) in mesh.vertices.iter().enumerate() {
        if let Some(axis) = p.iter().position(|x| !x.is_finite()) {
            return Err(MeshError::NonFinite {
                vertex,
                axis,
                value: p[axis],
            });
        }
    }
    Ok(())
}

/// Checks that every triangle corner refers to an existing vertex.
pub(crate) fn check_indices(mesh: &Mesh) -> Result<(), MeshError> {
    let n = mesh.n_vertices();
    for (triangle, tri) in mesh.triangles.iter().enumerate() {
        if let Some(corner) = tri.iter().position(|&v| v as usize >= n) {
            return Err(MeshError::IndexOutOfRange {
                triangle,
                corner,
                vertex: tri[corner],
                n_vertices: n,
            });
        }
    }
    Ok(())
}
