//! The demo's time-resolved decoder: an invented cue-locked experiment of
//! the same simulated subject, decoded by one linear discriminant per time
//! point (a sliding decoder).
//!
//! The story, made up for the demo: a cue flashes in the left visual field
//! at 0 ms and the subject then prepares a right-hand movement. Two
//! generators differ between the classes, each with a Hann time course: a
//! patch in the right occipital region (the visual response, peak 120 ms)
//! and one in the left precentral region (movement preparation, peak
//! 320 ms). At each time point the decoder's weights are those of a linear
//! discriminant, w_t = Σ⁻¹ d_t, with d_t the class-mean difference as
//! estimated from a finite number of trials (the true difference plus
//! sampling noise drawn from the data covariance) and Σ the demo's
//! estimated covariance, shared by all time points.

use faer::linalg::solvers::Solve;
use faer::{Mat, Side};

use super::{generator_pattern, DemoError, GeneratorTruth, SimulationSpace};
use crate::numeric::SplitMix64;

/// Time points of the decoder: 0 to 400 ms every 20 ms (s).
pub const TIME_STEP_S: f64 = 0.02;
/// Number of time points.
pub const N_TIMES: usize = 21;
/// Trials per class behind each time point's class means.
const TRIALS_PER_CLASS: usize = 200;
/// Peak of each generator's class difference, in units of the demo's
/// unit-variance generators.
const EVOKED_AMPLITUDE: f64 = 1.0;
/// Half-width of the Hann time courses (s): nonzero for 160 ms.
const HALF_WIDTH_S: f64 = 0.08;
/// Seed of the class-mean sampling noise.
const MEAN_SEED: u64 = 20_261_205;

/// The generators: (label, region, peak time in s).
const TIMED_GENERATORS: [(&str, &str, f64); 2] = [
    ("visual response to the cue", "right-occipital", 0.12),
    ("right-hand movement preparation", "left-precentral", 0.32),
];

/// One generator of the time-resolved decoder and when it is active.
#[derive(Debug, Clone, PartialEq)]
pub struct TimedGenerator {
    /// Where it is (component 0 of the decoder).
    pub truth: GeneratorTruth,
    /// Its peak time (s).
    pub peak_s: f64,
    /// The first and last time of its nonzero time course (s).
    pub active_s: (f64, f64),
}

/// The sliding decoder and what generated it.
#[derive(Debug, Clone)]
pub struct TimeScenario {
    /// The decoder's name (its one component).
    pub component_name: String,
    /// Time points (s), increasing.
    pub times: Vec<f64>,
    /// Weights, n_times × n_ch × 1 row-major (arbitrary units).
    pub weights: Vec<f64>,
    /// The shared data covariance, n_ch × n_ch row-major (V²).
    pub covariance: Vec<f64>,
    /// The generators.
    pub generators: Vec<TimedGenerator>,
}

/// The Hann time course of a generator peaking at `peak` (1 at the peak,
/// 0 beyond ± [`HALF_WIDTH_S`]).
fn hann(t: f64, peak: f64) -> f64 {
    let x = ((t - peak) / HALF_WIDTH_S).clamp(-1.0, 1.0);
    0.5 * (1.0 + (std::f64::consts::PI * x).cos())
}

/// Build the sliding decoder on `space` (as [`super::build`]), with
/// `covariance` the demo decoder's estimated covariance (n_ch × n_ch
/// row-major), shared by every time point.
pub fn build_time_resolved(
    space: &SimulationSpace<'_>,
    covariance: &[f64],
) -> Result<TimeScenario, DemoError> {
    let n = space.n_channels;
    if covariance.len() != n * n {
        return Err(DemoError::Shape(format!(
            "covariance has {} values, expected {n} x {n}",
            covariance.len()
        )));
    }
    let mut patterns = Vec::new();
    let mut generators = Vec::new();
    for &(label, name, peak_s) in &TIMED_GENERATORS {
        let (pattern, truth) = generator_pattern(space, name)?;
        patterns.push(pattern);
        generators.push(TimedGenerator {
            truth: GeneratorTruth { label, ..truth },
            peak_s,
            active_s: (peak_s - HALF_WIDTH_S, peak_s + HALF_WIDTH_S),
        });
    }
    // Σ + ε I with ε tiny against the sensor noise, as for the demo's own
    // filters (the average reference makes Σ singular).
    let trace = (0..n).map(|i| covariance[i * n + i]).sum::<f64>() / n as f64;
    let sigma = Mat::<f64>::from_fn(n, n, |i, j| {
        covariance[i * n + j] + if i == j { 1e-6 * trace } else { 0.0 }
    });
    let llt = sigma.llt(Side::Lower).map_err(|_| DemoError::Covariance)?;
    let l = llt.L().to_owned();
    // The class-mean difference of two means of `TRIALS_PER_CLASS` trials
    // each has covariance (2 / TRIALS_PER_CLASS) Σ.
    let noise_sd = (2.0 / TRIALS_PER_CLASS as f64).sqrt();
    let mut rng = SplitMix64::new(MEAN_SEED, 0);
    let times: Vec<f64> = (0..N_TIMES).map(|t| t as f64 * TIME_STEP_S).collect();
    let mut weights = vec![0.0; N_TIMES * n];
    let mut z = vec![0.0; n];
    for (t, &time) in times.iter().enumerate() {
        z.iter_mut().for_each(|v| *v = rng.normal());
        let d = Mat::<f64>::from_fn(n, 1, |i, _| {
            let evoked: f64 = generators
                .iter()
                .zip(&patterns)
                .map(|(g, p)| EVOKED_AMPLITUDE * hann(time, g.peak_s) * p[i])
                .sum();
            let noise: f64 = (0..=i).map(|j| l[(i, j)] * z[j]).sum();
            evoked + noise_sd * noise
        });
        let w = llt.solve(&d);
        for i in 0..n {
            weights[t * n + i] = w[(i, 0)];
        }
    }
    Ok(TimeScenario {
        component_name: "cue-locked decoder".to_string(),
        times,
        weights,
        covariance: covariance.to_vec(),
        generators,
    })
}
