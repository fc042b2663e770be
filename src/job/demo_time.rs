//! The demo's second decoder: the invented scenario's sliding decoder
//! ([`crate::demo::TimeScenario`]), attributed with the `attribute`
//! defaults for a decoder with a time axis, and each generator checked
//! against the time range the attribution gives its region.

use std::path::{Path, PathBuf};

use super::attribute::{attribute_decoder, Attribution, GivenDecoder};
use super::error::{JobError, JobResult};
use super::observer::JobObserver;
use super::outputs::region_names;
use super::params::AttributeParams;
use crate::demo::TimeScenario;
use crate::io::cache::bytes_hash;
use crate::io::decoder_file::decoder_from_store;
use crate::io::{Dataset, Store};

/// How far (s) a region's peak may lie from its generator's peak for the
/// demo to call the generator found in time: 50 ms, the time-resolved
/// checks' tolerance (docs/time_resolved.md).
pub const PEAK_TOLERANCE_S: f64 = 0.05;

/// At most this many resamples for the sliding decoder (whatever the
/// demo's `--resamples`): each resample refits every time window, so 10
/// keep the demo a quick first look (about 0.5 s of CPU per resample on the
/// 20k template; docs/time_resolved.md). `attribute` on the saved decoder
/// gives the full intervals.
pub const TIME_RESAMPLES: usize = 10;

/// One generator of the sliding decoder against the attribution.
#[derive(Debug, Clone)]
pub struct TimeCheck {
    /// What the generator stands for.
    pub label: String,
    /// Its region.
    pub region: String,
    /// Its true peak and active span (s).
    pub true_peak_s: f64,
    /// First and last time of its nonzero time course (s).
    pub true_active_s: (f64, f64),
    /// The attribution's time range of that region, if it leads at some
    /// time: (onset, peak, offset) in s.
    pub found_range_s: Option<(f64, f64, f64)>,
    /// Whether that range's peak lies within [`PEAK_TOLERANCE_S`] of the
    /// true peak.
    pub found: bool,
}

/// What the demo's time-resolved part made.
pub struct TimeDemoRun {
    /// The attribution, as `attribute` would give it for the decoder file.
    pub attribution: Attribution,
    /// The decoder as an HDF5 file (to save beside the results).
    pub decoder_bytes: Vec<u8>,
    /// The job's parameters.
    pub params: AttributeParams,
    /// Each generator against the attribution's time ranges.
    pub checks: Vec<TimeCheck>,
}

/// Attribute the sliding decoder `scenario` (channels `labels`) with the
/// parameters of the demo's first job (`base`: montage, sources; its
/// resamples capped at [`TIME_RESAMPLES`]); `decoder_path` names the
/// decoder, it is not read.
pub fn demo_time_resolved(
    scenario: &TimeScenario,
    labels: &[String],
    base: &AttributeParams,
    decoder_path: &Path,
    cache: &Path,
    observer: &dyn JobObserver,
) -> Result<TimeDemoRun, JobError> {
    let n = labels.len();
    let n_t = scenario.times.len();
    let mut store = Store::new();
    store.insert("/channels", Dataset::strings(labels.to_vec()));
    store.insert(
        "/weights",
        Dataset::f64(vec![n_t, n, 1], scenario.weights.clone()),
    );
    store.insert(
        "/covariance",
        Dataset::f64(vec![n, n], scenario.covariance.clone()),
    );
    store.insert("/times", Dataset::f64(vec![n_t], scenario.times.clone()));
    store.insert(
        "/component_names",
        Dataset::strings(vec![scenario.component_name.clone()]),
    );
    let decoder_bytes = store
        .to_hdf5_bytes(decoder_path)
        .compute("writing the demo's time-resolved decoder")?;
    let given = GivenDecoder {
        decoder: decoder_from_store(&store, decoder_path)
            .compute("the demo's time-resolved decoder")?,
        path: PathBuf::from(decoder_path),
        content_hash: bytes_hash(&decoder_bytes),
    };
    let mut params = base.clone();
    params.inputs.decoder = Some(PathBuf::from(decoder_path));
    params.fit.resamples = params.fit.resamples.min(TIME_RESAMPLES);
    let attribution = attribute_decoder(
        &params,
        given,
        cache,
        Some(vec![scenario.component_name.clone()]),
        observer,
    )?;
    let names = region_names(&attribution);
    let ranges = attribution
        .time
        .as_ref()
        .map_or(&[][..], |t| t.ranges.as_slice());
    let checks = scenario
        .generators
        .iter()
        .map(|g| {
            let range = ranges
                .iter()
                .filter(|r| names.get(r.region) == Some(&g.truth.region))
                .min_by(|a, b| {
                    (a.peak - g.peak_s)
                        .abs()
                        .total_cmp(&(b.peak - g.peak_s).abs())
                })
                .map(|r| (r.onset, r.peak, r.offset));
            TimeCheck {
                label: g.truth.label.to_string(),
                region: g.truth.region.clone(),
                true_peak_s: g.peak_s,
                true_active_s: g.active_s,
                found: range.is_some_and(|(_, p, _)| (p - g.peak_s).abs() <= PEAK_TOLERANCE_S),
                found_range_s: range,
            }
        })
        .collect();
    Ok(TimeDemoRun {
        attribution,
        decoder_bytes,
        params,
        checks,
    })
}
