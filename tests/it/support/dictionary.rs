//! Shared helpers for the dictionary tests: a seeded random lead field,
//! distance oracles and an independent naive atom computation.

use patchwise::dictionary::{AtomComponent, Dictionary};
use patchwise::geometry::Mesh;

/// Radius of the test spheres (m).
pub const SPHERE_RADIUS_M: f64 = 0.07;

/// A tiny xorshift64 generator (Marsaglia 2003, J Stat Softw 8(14), the
/// 13/7/17 shift triple), enough for seeded synthetic data.
pub struct XorShift(u64);

impl XorShift {
    /// A generator from a non-zero seed.
    pub fn new(seed: u64) -> Self {
        XorShift(seed.max(1))
    }

    /// A uniform value in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }

    /// A standard normal value (Box & Muller 1958, Ann Math Stat 29:610).
    pub fn normal(&mut self) -> f64 {
        let u1 = 1.0 - self.uniform();
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
}

/// A row-major `rows × cols` matrix of standard normal values.
pub fn random_matrix(rows: usize, cols: usize, seed: u64) -> Vec<f64> {
    let mut rng = XorShift::new(seed);
    (0..rows * cols).map(|_| rng.normal()).collect()
}

/// Euclidean distance between two points.
pub fn euclidean(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// Great-circle distance on a centred sphere: R·atan2(|u × v|, u·v).
pub fn great_circle(a: [f64; 3], b: [f64; 3], radius: f64) -> f64 {
    let c = [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ];
    let cross = (c[0] * c[0] + c[1] * c[1] + c[2] * c[2]).sqrt();
    let dot = a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
    radius * cross.atan2(dot)
}

/// A brute-force oracle: every vertex within `radius` by `metric`.
pub fn oracle<'a>(
    mesh: &'a Mesh,
    metric: impl Fn([f64; 3], [f64; 3]) -> f64 + Sync + 'a,
) -> impl Fn(usize, f64) -> Vec<(u32, f64)> + Sync + 'a {
    move |seed, radius| {
        let s = mesh.vertices[seed];
        mesh.vertices
            .iter()
            .enumerate()
            .filter_map(|(k, &v)| {
                let d = if k == seed { 0.0 } else { metric(s, v) };
                (d <= radius).then_some((k as u32, d))
            })
            .collect()
    }
}

/// Vertex areas computed here, independently of the library: a third of the
/// area of each adjacent triangle (barycentric lumping, common practice, no
/// source).
pub fn lumped_vertex_areas(mesh: &Mesh) -> Vec<f64> {
    let mut areas = vec![0.0; mesh.vertices.len()];
    for tri in &mesh.triangles {
        let [a, b, c] = tri.map(|v| mesh.vertices[v as usize]);
        let u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
        let w = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
        let cross = [
            u[1] * w[2] - u[2] * w[1],
            u[2] * w[0] - u[0] * w[2],
            u[0] * w[1] - u[1] * w[0],
        ];
        let area = 0.5 * euclidean(cross, [0.0; 3]);
        for v in tri {
            areas[*v as usize] += area / 3.0;
        }
    }
    areas
}

/// Which patch profile the naive reference uses.
#[derive(Clone, Copy)]
pub enum NaiveProfile {
    /// exp(−d²/(2σ²)), σ = radius/2, zero beyond the radius.
    Gaussian,
    /// 1 within the radius.
    Flat,
}

/// The naive dense profile column of a patch: density × vertex area for every
/// vertex within `radius` (m) of `seed` by `metric`.
pub fn naive_profile(
    mesh: &Mesh,
    seed: usize,
    radius: f64,
    profile: NaiveProfile,
    metric: impl Fn([f64; 3], [f64; 3]) -> f64,
) -> Vec<f64> {
    let areas = lumped_vertex_areas(mesh);
    let s = mesh.vertices[seed];
    mesh.vertices
        .iter()
        .enumerate()
        .map(|(k, &v)| {
            let d = if k == seed { 0.0 } else { metric(s, v) };
            if d > radius {
                return 0.0;
            }
            let sigma = radius / 2.0;
            let density = match profile {
                NaiveProfile::Flat => 1.0,
                NaiveProfile::Gaussian => (-d * d / (2.0 * sigma * sigma)).exp(),
            };
            density * areas[k]
        })
        .collect()
}

/// The naive unnormalised atom: for each channel, Σ_k gain[ch, k] · w_k by a
/// plain loop (gain row-major n_ch × n_cols; column k·stride + offset), then
/// minus its channel mean if `average_reference`.
pub fn naive_atom(
    gain: &[f64],
    n_ch: usize,
    weights: &[f64],
    stride: usize,
    offset: usize,
    average_reference: bool,
) -> Vec<f64> {
    let n_cols = gain.len() / n_ch;
    let mut atom = vec![0.0; n_ch];
    for (ch, value) in atom.iter_mut().enumerate() {
        for (k, &w) in weights.iter().enumerate() {
            *value += gain[ch * n_cols + k * stride + offset] * w;
        }
    }
    if average_reference {
        let mean = atom.iter().sum::<f64>() / n_ch as f64;
        atom.iter_mut().for_each(|v| *v -= mean);
    }
    atom
}

/// Column `j` of the row-major atoms.
pub fn column(d: &Dictionary, j: usize) -> Vec<f64> {
    (0..d.n_channels)
        .map(|i| d.atoms[i * d.n_atoms + j])
        .collect()
}

/// 2-norm.
pub fn norm2(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

/// The (stride, offset) of an atom's columns in its gain.
pub fn gain_layout(c: AtomComponent) -> (usize, usize) {
    match c.xyz_index() {
        None => (1, 0),
        Some(i) => (3, i),
    }
}

/// Column `j` of a CSC profile as a dense vector of length n_src.
pub fn dense_profile_column(d: &Dictionary, j: usize) -> Vec<f64> {
    let mut out = vec![0.0; d.profile.rows()];
    let col = d.profile.outer_view(j).unwrap();
    for (k, &w) in col.iter() {
        out[k] = w;
    }
    out
}

/// A progress observer that ignores its calls.
pub fn no_progress(_: usize) {}
