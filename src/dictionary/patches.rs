//! Patch profiles: per seed and radius, the source amplitudes (area-weighted
//! moment density) of a geodesic disc, from a caller-supplied distance oracle.

use rayon::prelude::*;

use super::{DictionaryError, Profile};

/// A geodesic distance oracle: `oracle(seed, radius_m)` returns every vertex
/// whose geodesic distance from `seed` is at most `radius_m`, with that distance
/// in metres, the seed itself included at distance 0, each vertex once, in any
/// order. Entries farther than the radius are ignored.
pub type DistanceOracle<'a> = dyn Fn(usize, f64) -> Vec<(u32, f64)> + Sync + 'a;

/// The seed's own distance may differ from 0 by this fraction of the query
/// radius (a numerical geodesic solver rarely returns an exact 0).
const SEED_DISTANCE_TOLERANCE: f64 = 1e-6;

/// One patch: the sources it covers (ascending) and their amplitudes.
#[derive(Debug, Clone)]
pub(crate) struct PatchColumn {
    /// Source indices, strictly increasing.
    pub indices: Vec<usize>,
    /// Source amplitude (m², i.e. A·m per A·m/m² of peak moment density):
    /// profile density × vertex area.
    pub weights: Vec<f64>,
    /// Sum of the areas of the covered vertices (m²), whatever the profile.
    pub area_m2: f64,
}

/// Builds the patches of every seed (outer) and radius (inner, increasing),
/// in parallel over seeds. The oracle is queried once per seed, with the
/// largest radius; the smaller patches are the subsets within their radius, so
/// the oracle must honour any radius it is given.
///
/// `progress(1)` is called after each seed (an increment, as every stage's
/// progress is); calls may come from worker threads.
pub(crate) fn build_patches(
    vertex_areas: &[f64],
    seeds: &[usize],
    radii_m: &[f64],
    profile: Profile,
    distances: &DistanceOracle<'_>,
    progress: &dyn crate::numeric::Progress,
) -> Result<Vec<Vec<PatchColumn>>, DictionaryError> {
    let r_max = radii_m.iter().copied().fold(0.0, f64::max);
    let per_seed: Vec<Result<Vec<PatchColumn>, DictionaryError>> = seeds
        .par_iter()
        .map(|&seed| {
            if progress.cancelled() {
                return Err(DictionaryError::Cancelled);
            }
            let neighbours = checked_neighbours(seed, r_max, vertex_areas.len(), distances)?;
            let columns = radii_m
                .iter()
                .map(|&radius| patch_column(&neighbours, vertex_areas, radius, profile))
                .collect();
            progress.advance(1);
            Ok(columns)
        })
        .collect();
    // Report the first failing seed in seed order, whatever the thread count.
    per_seed.into_iter().collect()
}

/// Queries the oracle and checks its answer: vertices in range, distances
/// finite and non-negative, no vertex twice, the seed present at distance 0.
/// Returns `(vertex, distance)` sorted by vertex, restricted to the radius.
fn checked_neighbours(
    seed: usize,
    radius: f64,
    n_sources: usize,
    distances: &DistanceOracle<'_>,
) -> Result<Vec<(usize, f64)>, DictionaryError> {
    let raw = distances(seed, radius);
    let mut neighbours = Vec::with_capacity(raw.len());
    for (vertex, distance) in raw {
        if vertex as usize >= n_sources {
            return Err(DictionaryError::OracleVertexOutOfRange {
                seed,
                vertex,
                n_sources,
            });
        }
        if !(distance.is_finite() && distance >= 0.0) {
            return Err(DictionaryError::OracleBadDistance {
                seed,
                vertex,
                distance,
            });
        }
        if distance <= radius {
            neighbours.push((vertex as usize, distance));
        }
    }
    neighbours.sort_unstable_by_key(|&(vertex, _)| vertex);
    if let Some(pair) = neighbours.windows(2).find(|w| w[0].0 == w[1].0) {
        return Err(DictionaryError::OracleDuplicateVertex {
            seed,
            vertex: pair[0].0 as u32,
        });
    }
    let seed_ok = neighbours
        .binary_search_by_key(&seed, |&(vertex, _)| vertex)
        .is_ok_and(|at| neighbours[at].1 <= SEED_DISTANCE_TOLERANCE * radius);
    if !seed_ok {
        return Err(DictionaryError::OracleMissingSeed { seed });
    }
    Ok(neighbours)
}

/// The patch of one radius: density(d) × vertex area for every vertex within
/// the radius; vertices of zero amplitude (zero area) are left out.
fn patch_column(
    neighbours: &[(usize, f64)],
    vertex_areas: &[f64],
    radius: f64,
    profile: Profile,
) -> PatchColumn {
    let within = neighbours.iter().filter(|&&(_, d)| d <= radius).count();
    let mut column = PatchColumn {
        indices: Vec::with_capacity(within),
        weights: Vec::with_capacity(within),
        area_m2: 0.0,
    };
    for &(vertex, distance) in neighbours {
        if distance > radius {
            continue;
        }
        let area = vertex_areas[vertex];
        column.area_m2 += area;
        let weight = profile.density(distance, radius) * area;
        if weight != 0.0 {
            column.indices.push(vertex);
            column.weights.push(weight);
        }
    }
    column
}
