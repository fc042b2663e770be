//! The demonstration scenario: an invented two-class imagined-movement
//! decoder plus an eye-artefact-like component, simulated on the template
//! cortex with known generating patches, and a time-resolved decoder of the
//! same subject ([`TimeScenario`]).
//!
//! Everything here is made up for the demo and used only there. Three
//! generators are placed on the template: a patch in the left precentral
//! region (imagined right-hand movement), one in the right precentral region
//! (imagined left-hand movement), and a bilateral pair of frontal-pole
//! patches sharing one time course (an eye-artefact-like source). Their scalp
//! patterns come from a *simulation* lead field, which the caller computes
//! with a head model that differs from the one the fit assumes, so the demo
//! is not an inverse crime. The model's population covariance Σ holds the
//! generators, a weak background of independent sources over the whole
//! cortex, and white sensor noise. The decoder's spatial filters are the
//! unit-gain linearly constrained filters W = Σ⁻¹ A (Aᵀ Σ⁻¹ A)⁻¹, each
//! column then rescaled by an arbitrary factor as a trained decoder would
//! be. The covariance saved with the decoder is estimated, as a researcher's
//! would be, from a finite number of simulated samples (`n_samples`, saved
//! too); so the Haufe transform recovers A up to those factors and up to
//! the sampling noise that the λ rule then accounts for.

mod simulate;
mod time_course;

pub use simulate::{simulate, Simulated, SimulationError, SIMULATION_SKULL};
pub use time_course::{TimeScenario, TimedGenerator, N_TIMES, TIME_STEP_S};

use crate::geometry::{Mesh, Vec3};
use crate::numeric::SplitMix64;
use faer::linalg::solvers::Solve;
use faer::{Mat, Side};

/// The demo's 64 channels: a common 64-electrode selection of the 10-10
/// system (common practice, no source).
pub const CHANNELS_64: [&str; 64] = [
    "Fp1", "Fpz", "Fp2", "AF7", "AF3", "AFz", "AF4", "AF8", "F7", "F5", "F3", "F1", "Fz", "F2",
    "F4", "F6", "F8", "FT7", "FC5", "FC3", "FC1", "FCz", "FC2", "FC4", "FC6", "FT8", "T7", "C5",
    "C3", "C1", "Cz", "C2", "C4", "C6", "T8", "TP7", "CP5", "CP3", "CP1", "CPz", "CP2", "CP4",
    "CP6", "TP8", "P7", "P5", "P3", "P1", "Pz", "P2", "P4", "P6", "P8", "PO7", "PO3", "POz", "PO4",
    "PO8", "O1", "Oz", "O2", "Iz", "T9", "T10",
];

/// Errors building the demo scenario.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum DemoError {
    /// The template has no region of this name.
    #[error("the template has no region named {0:?}")]
    MissingRegion(String),
    /// A simulated covariance was not positive definite.
    #[error("the simulated covariance is not positive definite")]
    Covariance,
    /// Inputs disagree in size.
    #[error("{0}")]
    Shape(String),
}

/// One known generator of the scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct GeneratorTruth {
    /// The decoder component it drives (0-based).
    pub component: usize,
    /// What it stands for in the story.
    pub label: &'static str,
    /// The template region its seed lies in.
    pub region: String,
    /// Seed vertex on the template.
    pub seed: usize,
    /// Seed position (m).
    pub position: Vec3,
    /// Geodesic radius of the patch (m).
    pub radius_m: f64,
}

/// The simulated decoder and what generated it.
#[derive(Debug, Clone)]
pub struct Scenario {
    /// Component names, one per decoder column.
    pub component_names: Vec<String>,
    /// Spatial filters, n_ch × k row-major (arbitrary units).
    pub weights: Vec<f64>,
    /// Data covariance, n_ch × n_ch row-major (V²).
    pub covariance: Vec<f64>,
    /// The generators' true scalp patterns, n_ch × k row-major (V).
    pub true_patterns: Vec<f64>,
    /// The generators.
    pub generators: Vec<GeneratorTruth>,
    /// Independent samples the covariance was estimated from (the decoder
    /// file's `n_samples`, which sets the pattern noise of the λ rule).
    pub n_samples: usize,
}

/// Fixed numbers of the invented scenario, in SI units.
struct Settings {
    /// Moment density of an active patch, A·m per m² (0.5 nA·m/mm², inside
    /// the 0.16–0.77 nA·m/mm² range of Murakami & Okada 2015, NeuroImage
    /// 111:49, verify).
    density: f64,
    /// Background moment density standard deviation per source, A·m/m².
    background_density: f64,
    /// Sensor noise standard deviation, V.
    sensor_noise: f64,
    /// Patch radius, m.
    radius: f64,
    /// Independent samples behind the decoder's covariance: 100 trials with
    /// about 20 independent samples each (the convention of the trained-
    /// decoder benchmark, docs/validation.md).
    n_samples: usize,
}

/// Seed of the demo's simulated samples.
const SAMPLE_SEED: u64 = 20_260_611;

const SETTINGS: Settings = Settings {
    density: 0.5e-9 / 1e-6,
    background_density: 0.02e-9 / 1e-6,
    sensor_noise: 1.0e-6,
    radius: 0.010,
    n_samples: 2000,
};

/// The generator list: (component, label, region).
const GENERATORS: [(usize, &str, &str); 4] = [
    (0, "imagined right-hand movement", "left-precentral"),
    (1, "imagined left-hand movement", "right-precentral"),
    (2, "eye-artefact-like source", "left-frontal-pole"),
    (2, "eye-artefact-like source", "right-frontal-pole"),
];

fn region_seed(
    mesh: &Mesh,
    region: &[i32],
    names: &[String],
    name: &str,
) -> Result<usize, DemoError> {
    let r = names
        .iter()
        .position(|n| n == name)
        .ok_or_else(|| DemoError::MissingRegion(name.to_string()))? as i32;
    let members: Vec<usize> = (0..region.len()).filter(|&v| region[v] == r).collect();
    if members.is_empty() {
        return Err(DemoError::MissingRegion(name.to_string()));
    }
    let mut centroid = [0.0; 3];
    for &v in &members {
        for (c, p) in centroid.iter_mut().zip(mesh.vertices[v]) {
            *c += p / members.len() as f64;
        }
    }
    // The region vertex nearest to the centroid: a central, typical seed.
    let dist = |v: usize| {
        let p = mesh.vertices[v];
        (0..3).map(|d| (p[d] - centroid[d]).powi(2)).sum::<f64>()
    };
    let mut best = members[0];
    for &v in &members {
        if dist(v) < dist(best) {
            best = v;
        }
    }
    Ok(best)
}

/// What the scenario is simulated on: a source mesh with regions, the
/// simulation lead field `gain_sim` (n_ch × n_src row-major, V/(A·m),
/// average reference, along the normals) and a distance oracle returning
/// the vertices within a radius of a seed with their geodesic distances (m).
pub struct SimulationSpace<'a> {
    /// The source mesh (m).
    pub mesh: &'a Mesh,
    /// Region index per vertex (-1: none).
    pub region: &'a [i32],
    /// Region names.
    pub region_names: &'a [String],
    /// The simulation lead field.
    pub gain_sim: &'a [f64],
    /// Channels of the lead field.
    pub n_channels: usize,
    /// The distance oracle.
    pub distances: &'a (dyn Fn(usize, f64) -> Vec<(u32, f64)> + Sync),
}

/// The scalp pattern (n_ch, V per unit of the generator's time course) of
/// one generator patch at the central vertex of `region_name`: a Gaussian
/// profile in geodesic distance (σ = radius / 2, as the dictionary's
/// default profile) of the scenario's moment density; with its truth
/// (component 0 and an empty label, for the caller to set).
fn generator_pattern(
    space: &SimulationSpace<'_>,
    region_name: &str,
) -> Result<(Vec<f64>, GeneratorTruth), DemoError> {
    let SimulationSpace {
        mesh,
        region,
        region_names,
        gain_sim,
        n_channels,
        distances,
    } = *space;
    let n_src = mesh.n_vertices();
    let areas = mesh.vertex_areas();
    let seed = region_seed(mesh, region, region_names, region_name)?;
    let sigma = SETTINGS.radius / 2.0;
    let mut pattern = vec![0.0; n_channels];
    for (v, d) in distances(seed, SETTINGS.radius) {
        let v = v as usize;
        let amplitude = SETTINGS.density * areas[v] * (-0.5 * (d / sigma).powi(2)).exp();
        for (i, p) in pattern.iter_mut().enumerate() {
            *p += gain_sim[i * n_src + v] * amplitude;
        }
    }
    let truth = GeneratorTruth {
        component: 0,
        label: "",
        region: region_name.to_string(),
        seed,
        position: mesh.vertices[seed],
        radius_m: SETTINGS.radius,
    };
    Ok((pattern, truth))
}

/// Build the scenario on `space`.
pub fn build(space: &SimulationSpace<'_>) -> Result<Scenario, DemoError> {
    let SimulationSpace {
        mesh,
        region,
        gain_sim,
        n_channels,
        ..
    } = *space;
    let n_src = mesh.n_vertices();
    if gain_sim.len() != n_channels * n_src || region.len() != n_src {
        return Err(DemoError::Shape(format!(
            "simulation lead field has {} values, expected {} channels x {} sources",
            gain_sim.len(),
            n_channels,
            n_src
        )));
    }
    let areas = mesh.vertex_areas();
    let k = 3;
    let mut patterns = vec![0.0; n_channels * k];
    let mut generators = Vec::new();
    for &(component, label, region_name) in &GENERATORS {
        let (pattern, truth) = generator_pattern(space, region_name)?;
        for (i, p) in pattern.iter().enumerate() {
            patterns[i * k + component] += p;
        }
        generators.push(GeneratorTruth {
            component,
            label,
            ..truth
        });
    }
    // Population covariance: unit-variance generators, independent
    // background sources everywhere, white sensor noise.
    let mut cov = Mat::<f64>::zeros(n_channels, n_channels);
    for i in 0..n_channels {
        for j in 0..n_channels {
            let mut s = 0.0;
            for c in 0..k {
                s += patterns[i * k + c] * patterns[j * k + c];
            }
            cov[(i, j)] = s;
        }
        cov[(i, i)] += SETTINGS.sensor_noise.powi(2);
    }
    for v in 0..n_src {
        let var = (SETTINGS.background_density * areas[v]).powi(2);
        for i in 0..n_channels {
            let gi = gain_sim[i * n_src + v] * var;
            if gi == 0.0 {
                continue;
            }
            for j in 0..n_channels {
                cov[(i, j)] += gi * gain_sim[j * n_src + v];
            }
        }
    }
    // The average reference makes the covariance singular (the constant
    // vector is in its null space); a trained decoder sees the same data, so
    // we solve on the regularised covariance Σ + ε I with ε tiny against the
    // sensor noise, which leaves the filters in the referenced subspace.
    let mut cov_reg = cov.clone();
    let eps = 1e-6 * SETTINGS.sensor_noise.powi(2);
    for i in 0..n_channels {
        cov_reg[(i, i)] += eps;
    }
    let llt = cov_reg
        .llt(Side::Lower)
        .map_err(|_| DemoError::Covariance)?;
    let a = Mat::<f64>::from_fn(n_channels, k, |i, c| patterns[i * k + c]);
    let sinv_a = llt.solve(&a);
    let gram = a.transpose() * &sinv_a;
    let gram_llt = gram.llt(Side::Lower).map_err(|_| DemoError::Covariance)?;
    let w = sinv_a * gram_llt.solve(Mat::<f64>::identity(k, k));
    // Arbitrary per-column scales, as a trained decoder would have.
    let scales = [3.0e5, -1.7e5, 0.8e5];
    let mut weights = vec![0.0; n_channels * k];
    for i in 0..n_channels {
        for c in 0..k {
            weights[i * k + c] = w[(i, c)] * scales[c];
        }
    }
    let covariance = sample_covariance(&llt.L().to_owned(), SETTINGS.n_samples);
    Ok(Scenario {
        component_names: vec![
            "right-hand imagery".to_string(),
            "left-hand imagery".to_string(),
            "eye-artefact-like".to_string(),
        ],
        weights,
        covariance,
        true_patterns: patterns,
        generators,
        n_samples: SETTINGS.n_samples,
    })
}

/// The covariance a researcher would estimate from `n` independent samples
/// x = L z (z standard normal, seeded, so the demo is the same on every
/// run): the mean-removed sample covariance with the 1/(n − 1) factor (as
/// NumPy's `np.cov`), n_ch × n_ch row-major, exactly symmetric.
fn sample_covariance(l: &Mat<f64>, n: usize) -> Vec<f64> {
    let n_ch = l.nrows();
    let mut rng = SplitMix64::new(SAMPLE_SEED, 0);
    let mut x = Mat::<f64>::zeros(n_ch, n);
    let mut z = vec![0.0; n_ch];
    for s in 0..n {
        z.iter_mut().for_each(|v| *v = rng.normal());
        for i in 0..n_ch {
            x[(i, s)] = (0..=i).map(|j| l[(i, j)] * z[j]).sum();
        }
    }
    for i in 0..n_ch {
        let mean = (0..n).map(|s| x[(i, s)]).sum::<f64>() / n as f64;
        for s in 0..n {
            x[(i, s)] -= mean;
        }
    }
    let gram = &x * x.transpose();
    let mut out = vec![0.0; n_ch * n_ch];
    for i in 0..n_ch {
        for j in 0..n_ch {
            out[i * n_ch + j] = 0.5 * (gram[(i, j)] + gram[(j, i)]) / (n - 1) as f64;
        }
    }
    out
}
