//! The region × time part of `result.h5` for a decoder with a time axis
//! (docs/result_files.md, docs/time_resolved.md): `/attribution/times`
//! (n_times, seconds), `/attribution/share_time`, `share_time_low`,
//! `share_time_high` (n_components × n_regions × n_times, unitless; the
//! interval ends NaN without resampling), and `/attribution/time_range/*`,
//! one row per leading region of a component (times in seconds).

use std::path::Path;

use super::error::IoError;
use super::store::{Dataset, Store};
use crate::pipeline::{TimeRange, TimeShares};

const RANGE: &str = "/attribution/time_range";

/// The `time_range` columns holding seconds (or a fraction), in order.
const RANGE_COLUMNS: [&str; 12] = [
    "peak_strength",
    "onset_s",
    "peak_s",
    "offset_s",
    "peak_share",
    "onset_low_s",
    "onset_high_s",
    "peak_low_s",
    "peak_high_s",
    "offset_low_s",
    "offset_high_s",
    "held_frequency",
];

fn range_values(r: &TimeRange) -> [f64; 12] {
    [
        r.peak_strength,
        r.onset,
        r.peak,
        r.offset,
        r.peak_share,
        r.onset_interval.0,
        r.onset_interval.1,
        r.peak_interval.0,
        r.peak_interval.1,
        r.offset_interval.0,
        r.offset_interval.1,
        r.held_frequency,
    ]
}

/// Insert the region × time datasets.
pub fn insert_time(s: &mut Store, t: &TimeShares) {
    let shape = vec![t.n_components, t.n_regions, t.times.len()];
    s.insert(
        "/attribution/times",
        Dataset::f64(vec![t.times.len()], t.times.clone()),
    );
    s.insert(
        "/attribution/share_time",
        Dataset::f64(shape.clone(), t.share.clone()),
    );
    s.insert(
        "/attribution/share_time_low",
        Dataset::f64(shape.clone(), t.share_low.clone()),
    );
    s.insert(
        "/attribution/share_time_high",
        Dataset::f64(shape, t.share_high.clone()),
    );
    let n = t.ranges.len();
    s.insert(
        &format!("{RANGE}/component"),
        Dataset::i64(
            vec![n],
            t.ranges.iter().map(|r| r.component as i64).collect(),
        ),
    );
    s.insert(
        &format!("{RANGE}/region"),
        Dataset::i64(vec![n], t.ranges.iter().map(|r| r.region as i64).collect()),
    );
    for (i, name) in RANGE_COLUMNS.iter().enumerate() {
        s.insert(
            &format!("{RANGE}/{name}"),
            Dataset::f64(
                vec![n],
                t.ranges.iter().map(|r| range_values(r)[i]).collect(),
            ),
        );
    }
}

/// Read the region × time datasets back, `None` when the result has no time
/// axis; sizes are checked against `n_regions` and each other.
pub fn read_time(
    store: &Store,
    path: &Path,
    n_regions: usize,
    k: usize,
) -> Result<Option<TimeShares>, IoError> {
    if !store.contains("/attribution/times") {
        return Ok(None);
    }
    let times = store.f64s(path, "/attribution/times", None)?;
    let n_t = times.len().max(1);
    if !k.is_multiple_of(n_t) {
        return Err(IoError::Value {
            path: path.to_path_buf(),
            object: "/attribution/times".to_string(),
            message: format!(
                "{} times for {k} components; expected the components to be (component, time) pairs",
                times.len()
            ),
        });
    }
    let n_components = k / n_t;
    let shape = [n_components, n_regions, times.len()];
    let share = store.f64_array_nan(path, "/attribution/share_time", &shape)?;
    let share_low = store.f64_array_nan(path, "/attribution/share_time_low", &shape)?;
    let share_high = store.f64_array_nan(path, "/attribution/share_time_high", &shape)?;
    let component = store.i64s(path, &format!("{RANGE}/component"), None)?;
    let n = component.len();
    let region = store.i64s(path, &format!("{RANGE}/region"), Some(n))?;
    let mut columns = Vec::with_capacity(RANGE_COLUMNS.len());
    for name in RANGE_COLUMNS {
        columns.push(store.f64s_nan(path, &format!("{RANGE}/{name}"), Some(n))?);
    }
    let mut ranges = Vec::with_capacity(n);
    for i in 0..n {
        let (c, r) = (component[i], region[i]);
        if c < 0 || c as usize >= n_components || r < 0 || r as usize >= n_regions {
            return Err(IoError::Value {
                path: path.to_path_buf(),
                object: format!("{RANGE} row {i}"),
                message: format!(
                    "component {c}, region {r}: expected below {n_components} components and {n_regions} regions"
                ),
            });
        }
        let v = |j: usize| columns[j + 1][i];
        ranges.push(TimeRange {
            component: c as usize,
            region: r as usize,
            onset: v(0),
            peak: v(1),
            offset: v(2),
            peak_share: v(3),
            peak_strength: columns[0][i],
            onset_interval: (v(4), v(5)),
            peak_interval: (v(6), v(7)),
            offset_interval: (v(8), v(9)),
            held_frequency: v(10),
        });
    }
    Ok(Some(TimeShares {
        times,
        n_components,
        n_regions,
        share,
        share_low,
        share_high,
        ranges,
    }))
}
