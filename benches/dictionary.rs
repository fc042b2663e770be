//! Benchmark of the dictionary builder: 20 484 sources (two level-5
//! icospheres of radius 70 mm, 200 mm apart), 64 channels, radii 5/10/20 mm,
//! Gaussian profile, normal orientation: 61 452 atoms.
//!
//! The lead field is seeded random and the distance oracle Euclidean, with
//! every seed's neighbours precomputed outside the timed code, so the timings
//! cover this module's own work (oracle answers checked and copied, profiles,
//! product, reference, normalisation); the geodesic solver is timed elsewhere.
//! Run: `cargo bench --bench dictionary`.

use std::collections::HashMap;
use std::sync::LazyLock;

use patchwise::dictionary::{
    atoms_for_channels, build_dictionary, Dictionary, DictionaryParams, Seeds,
};
use patchwise::geometry::Mesh;

const N_CH: usize = 64;
const SPHERE_RADIUS_M: f64 = 0.07;

struct Setup {
    mesh: Mesh,
    gain: Vec<f64>,
    neighbours: Vec<Vec<(u32, f64)>>,
    params: DictionaryParams,
}

/// Two level-5 icospheres side by side (x = ±100 mm).
fn sphere_pair() -> Mesh {
    let one = Mesh::icosphere(5, SPHERE_RADIUS_M);
    let n = one.vertices.len() as u32;
    let mut mesh = Mesh {
        vertices: Vec::new(),
        triangles: Vec::new(),
    };
    for (k, dx) in [-0.1, 0.1].into_iter().enumerate() {
        let offset = k as u32 * n;
        mesh.vertices
            .extend(one.vertices.iter().map(|v| [v[0] + dx, v[1], v[2]]));
        mesh.triangles
            .extend(one.triangles.iter().map(|t| t.map(|i| i + offset)));
    }
    mesh
}

/// Seeded xorshift64 (Marsaglia 2003) uniform values in [−1, 1).
fn random_gain(len: usize) -> Vec<f64> {
    let mut state = 0x9E37_79B9_7F4A_7C15u64;
    (0..len)
        .map(|_| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state >> 11) as f64 / (1u64 << 52) as f64 - 1.0
        })
        .collect()
}

/// Every vertex within `radius` (Euclidean) of each vertex, via a uniform grid.
fn euclidean_neighbours(mesh: &Mesh, radius: f64) -> Vec<Vec<(u32, f64)>> {
    let cell = |p: [f64; 3]| p.map(|x| (x / radius).floor() as i64);
    let mut grid: HashMap<[i64; 3], Vec<u32>> = HashMap::new();
    for (k, &v) in mesh.vertices.iter().enumerate() {
        grid.entry(cell(v)).or_default().push(k as u32);
    }
    mesh.vertices
        .iter()
        .map(|&s| {
            let c = cell(s);
            let mut out = Vec::new();
            for dx in -1..=1 {
                for dy in -1..=1 {
                    for dz in -1..=1 {
                        let Some(list) = grid.get(&[c[0] + dx, c[1] + dy, c[2] + dz]) else {
                            continue;
                        };
                        for &k in list {
                            let v = mesh.vertices[k as usize];
                            let d = ((v[0] - s[0]).powi(2)
                                + (v[1] - s[1]).powi(2)
                                + (v[2] - s[2]).powi(2))
                            .sqrt();
                            if d <= radius {
                                out.push((k, d));
                            }
                        }
                    }
                }
            }
            out
        })
        .collect()
}

static SETUP: LazyLock<Setup> = LazyLock::new(|| {
    let mesh = sphere_pair();
    let params = DictionaryParams::default();
    let r_max = *params.radii_m.last().unwrap_or(&0.02);
    Setup {
        gain: random_gain(N_CH * mesh.vertices.len()),
        neighbours: euclidean_neighbours(&mesh, r_max),
        mesh,
        params,
    }
});

fn build(setup: &Setup) -> Dictionary {
    let oracle = |seed: usize, radius: f64| -> Vec<(u32, f64)> {
        setup.neighbours[seed]
            .iter()
            .copied()
            .filter(|&(_, d)| d <= radius)
            .collect()
    };
    match build_dictionary(
        &setup.mesh,
        &setup.gain,
        None,
        N_CH,
        &Seeds::All,
        &oracle,
        &setup.params,
        &|_| {},
    ) {
        Ok((d, _)) => d,
        Err(e) => panic!("benchmark dictionary failed: {e}"),
    }
}

static BUILT: LazyLock<Dictionary> = LazyLock::new(|| build(&SETUP));

fn main() {
    let d = &*BUILT;
    eprintln!(
        "dictionary benchmark: {} sources, {} channels, {} atoms, {} profile entries, {} rayon threads",
        d.profile.rows(),
        d.n_channels,
        d.n_atoms,
        d.profile.nnz(),
        rayon::current_num_threads()
    );
    divan::main();
}

/// The whole builder (oracle lookups, profiles, product, reference, norms).
#[divan::bench(sample_count = 5, sample_size = 1)]
fn build_20k_sources_64_channels_3_radii() -> Dictionary {
    build(&SETUP)
}

/// The product + reference + normalisation alone, from the built profile.
#[divan::bench(sample_count = 5, sample_size = 1)]
fn atoms_from_profile_20k_sources_64_channels() -> (Vec<f64>, Vec<f64>) {
    let d = &*BUILT;
    match atoms_for_channels(
        &d.profile,
        &d.component,
        &SETUP.gain,
        None,
        N_CH,
        true,
        1e-9,
    ) {
        Ok(out) => out,
        Err(e) => panic!("benchmark atoms failed: {e}"),
    }
}
