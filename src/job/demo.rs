//! `demo`, the embedded default end to end as one library call: simulate
//! the invented scenario of [`crate::demo`], attribute its decoder with the
//! `attribute` defaults on the 10-10 montage and the template cortex, and
//! check the answer against the generators the simulation placed.

use std::path::{Path, PathBuf};

use super::attribute::{attribute_decoder, Attribution, GivenDecoder};
use super::demo_time::{demo_time_resolved, TimeDemoRun};
use super::error::{JobError, JobResult};
use super::observer::JobObserver;
use super::outputs::{region_names, region_rows};
use super::params::AttributeParams;
use super::specs::{MontageSpec, SourcesSpec};
use crate::demo::{simulate, SIMULATION_SKULL};
use crate::geometry::{norm, sub, TemplateResolution};
use crate::io::cache::bytes_hash;
use crate::io::decoder_file::decoder_from_store;
use crate::io::{Dataset, Store};

/// The scenario in words, for the first lines a user reads.
pub fn scenario_lines(res: TemplateResolution) -> Vec<String> {
    vec![
        format!(
            "patchwise demo — an invented scenario, simulated on the {} cortex:",
            res.name()
        ),
        "  a two-class imagined-movement decoder (right hand, left hand) and an eye-artefact-like"
            .to_string(),
        "  component; 64 channels of the 10-10 system; data simulated with a skull conductivity of"
            .to_string(),
        format!("  {SIMULATION_SKULL} S/m, fitted with the default head's 0.02 S/m."),
        "  Then a sliding decoder of the same subject (one discriminant per time point, 0-400 ms):"
            .to_string(),
        "  a cue in the left visual field, then a right-hand movement is prepared.".to_string(),
    ]
}

/// One component against the generators the simulation placed for it.
#[derive(Debug, Clone)]
pub struct GeneratorCheck {
    /// The component's name.
    pub component: String,
    /// The regions its generators sit in.
    pub generated_in: Vec<String>,
    /// The leading region of the attribution.
    pub leader: String,
    /// Whether the leading region (the largest share, the first row of the
    /// component's table) holds one of the generators: the demo's verdict,
    /// judged by the attribution the user reads.
    pub found: bool,
    /// The region of the source map's peak (the source with the largest
    /// |source| of the map), which need not be the leading region: a
    /// broad, weak patch can hold the largest share while a small, strong
    /// one holds the largest single source.
    pub peak_region: Option<String>,
    /// Distance (mm) from the source map's peak to the nearest generator
    /// seed; shown beside the verdict, never deciding it.
    pub peak_distance_mm: Option<f64>,
}

/// What the demo's verdict columns mean, printed under them.
pub const VERDICT_LEGEND: &str = "FOUND: the component's leading region (largest share, the first row of its table) holds one of its generators; peak: the source with the largest |source| of the map, which can lie outside the leading region";

/// What the demo made.
pub struct DemoRun {
    /// The attribution, as `attribute` would give it.
    pub attribution: Attribution,
    /// The decoder as an HDF5 file (to save beside the results).
    pub decoder_bytes: Vec<u8>,
    /// The job's parameters (the `attribute` defaults on the demo's inputs).
    pub params: AttributeParams,
    /// Each component against its known generators.
    pub checks: Vec<GeneratorCheck>,
    /// The time-resolved decoder's attribution and checks.
    pub time: TimeDemoRun,
}

impl DemoRun {
    /// Whether every component of the spatial decoder leads with one of its
    /// generators' regions.
    pub fn found_all(&self) -> bool {
        self.checks.iter().all(|c| c.found)
    }

    /// How many generators of the time-resolved decoder lead near their
    /// peak, of how many.
    pub fn found_in_time(&self) -> (usize, usize) {
        let found = self.time.checks.iter().filter(|c| c.found).count();
        (found, self.time.checks.len())
    }
}

/// Simulate the scenario on `res` and attribute its decoders with
/// `resamples` resamples. `decoder_paths` name the spatial and the
/// time-resolved decoder (the files the caller saves
/// [`DemoRun::decoder_bytes`] and [`TimeDemoRun::decoder_bytes`] as); they
/// are not read.
pub fn demo(
    res: TemplateResolution,
    resamples: usize,
    decoder_paths: [&Path; 2],
    cache: &Path,
    observer: &dyn JobObserver,
) -> Result<DemoRun, JobError> {
    let [decoder_path, time_decoder_path] = decoder_paths;
    let simulated = simulate(res).compute("simulating the demo scenario")?;
    let (scenario, labels) = (&simulated.scenario, simulated.labels.clone());
    let k = scenario.component_names.len();
    let n = labels.len();
    let mut store = Store::new();
    store.insert("/channels", Dataset::strings(labels));
    store.insert(
        "/weights",
        Dataset::f64(vec![n, k], scenario.weights.clone()),
    );
    store.insert(
        "/covariance",
        Dataset::f64(vec![n, n], scenario.covariance.clone()),
    );
    store.insert(
        "/n_samples",
        Dataset::f64(vec![], vec![scenario.n_samples as f64]),
    );
    store.insert(
        "/component_names",
        Dataset::strings(scenario.component_names.clone()),
    );
    let decoder_bytes = store
        .to_hdf5_bytes(decoder_path)
        .compute("writing the demo decoder")?;
    let given = GivenDecoder {
        decoder: decoder_from_store(&store, decoder_path).compute("the demo decoder")?,
        path: PathBuf::from(decoder_path),
        content_hash: bytes_hash(&decoder_bytes),
    };
    let mut params = AttributeParams::default();
    params.inputs.decoder = Some(PathBuf::from(decoder_path));
    params.forward.montage = MontageSpec::Standard("10-10".to_string());
    params.forward.sources = SourcesSpec::Template(res);
    params.fit.resamples = resamples;
    let attribution = attribute_decoder(
        &params,
        given,
        cache,
        Some(scenario.component_names.clone()),
        observer,
    )?;
    let rows = region_rows(&attribution);
    let names = region_names(&attribution);
    let checks = (0..k)
        .map(|c| {
            let truth: Vec<_> = scenario
                .generators
                .iter()
                .filter(|g| g.component == c)
                .collect();
            let leader = rows
                .get(c)
                .and_then(|r| r.first())
                .map(|r| r.region.clone())
                .unwrap_or_default();
            let comp = &attribution.outcome.attribution.components[c];
            let peak = comp.peak_position;
            let peak_region = usize::try_from(comp.peak_region)
                .ok()
                .and_then(|r| names.get(r).cloned());
            GeneratorCheck {
                component: scenario.component_names[c].clone(),
                generated_in: truth.iter().map(|g| g.region.clone()).collect(),
                found: truth.iter().any(|g| g.region == leader),
                leader,
                peak_region,
                peak_distance_mm: peak.map(|p| {
                    truth
                        .iter()
                        .map(|g| norm(sub(p, g.position)) * 1e3)
                        .fold(f64::INFINITY, f64::min)
                }),
            }
        })
        .collect();
    let time = demo_time_resolved(
        &simulated.time,
        &simulated.labels,
        &params,
        time_decoder_path,
        cache,
        observer,
    )?;
    Ok(DemoRun {
        attribution,
        decoder_bytes,
        params,
        checks,
        time,
    })
}
