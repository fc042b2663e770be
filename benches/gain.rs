//! Benchmark of the filter gain (`attribution::filter_gain`): 64 channels,
//! 4 filters, the 20k template's sources (20 484) with their areas and
//! regions, along the normals and with free orientation (3 × 20 484
//! columns). The lead field is seeded random (the timing does not depend on
//! its values), made outside the timed code.
//! Run: `cargo bench --bench gain`.

use std::sync::LazyLock;

use patchwise::attribution::{filter_gain, gain_agreement, FilterGain, GainInput};
use patchwise::geometry::{template, SourceSpace, TemplateResolution};

const N_CH: usize = 64;
const K: usize = 4;

struct Setup {
    sources: SourceSpace,
    weights: Vec<f64>,
    normal: Vec<f64>,
    free: Vec<f64>,
}

/// Seeded xorshift64 (Marsaglia 2003) uniform values in [−1, 1).
fn random(len: usize, seed: u64) -> Vec<f64> {
    let mut state = seed;
    (0..len)
        .map(|_| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state >> 11) as f64 / (1u64 << 52) as f64 - 1.0
        })
        .collect()
}

static SETUP: LazyLock<Setup> = LazyLock::new(|| {
    let sources = SourceSpace::from_template(&template(TemplateResolution::Standard));
    let n_src = sources.len();
    Setup {
        weights: random(N_CH * K, 0x9E37_79B9_7F4A_7C15),
        normal: random(N_CH * n_src, 0x2545_F491_4F6C_DD1D),
        free: random(N_CH * n_src * 3, 0x1234_5678_9ABC_DEF1),
        sources,
    }
});

fn gain(s: &Setup, leadfield: &[f64], orientations: usize) -> FilterGain {
    filter_gain(&GainInput {
        weights: &s.weights,
        n_channels: N_CH,
        n_components: K,
        leadfield,
        orientations,
        source_areas: &s.sources.areas,
        source_region: &s.sources.region,
        n_regions: s.sources.region_names.len(),
    })
    .expect("shapes agree")
}

fn main() {
    LazyLock::force(&SETUP);
    divan::main();
}

/// Gain maps, region summaries and the agreement of 4 filters, 64 channels,
/// 20 484 sources along the normals.
#[divan::bench(sample_count = 20)]
fn gain_64ch_4k_20k_normal() -> usize {
    let s = &*SETUP;
    let g = gain(s, &s.normal, 1);
    let share = vec![0.1; g.n_regions];
    (0..K)
        .map(|c| {
            let a = gain_agreement(&FilterGain::column(&g.region_mean, K, c), &share);
            a.top_gain_regions.len()
        })
        .sum()
}

/// The same with free orientation (64 × 61 452 lead field).
#[divan::bench(sample_count = 20)]
fn gain_64ch_4k_20k_free() -> usize {
    let s = &*SETUP;
    gain(s, &s.free, 3).source.len()
}
