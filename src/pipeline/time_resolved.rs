//! Decoders with a time axis (docs/time_resolved.md): the columns of a
//! component's time points grouped into time windows that the fit treats as
//! one block (a patch is in or out for the whole window: an ℓ2,1 mixed norm
//! over patch × window groups, in the style of the mixed-norm estimates of
//! Gramfort, Kowalski & Hämäläinen 2012, Phys Med Biol 57:1937), and the
//! region × time shares, with the time range over which each region holds
//! its share (onset, peak, offset) and their resampled spread.
//!
//! Columns are laid out component-major: column c · n_times + t.

use crate::attribution::{percentile, Attribution};

use super::resample::ResampleSummary;
use super::PipelineError;

/// The blocks of columns fitted together: for each component (or all of
/// them together with `joint`), the time points in each window of `width`
/// seconds, windows laid end to end from the first sample time (window of
/// time t: ⌊(t − t₀) / width⌋). `width` 0 puts every time point alone.
pub fn time_window_blocks(
    times: &[f64],
    width: f64,
    n_components: usize,
    joint: bool,
) -> Result<Vec<Vec<usize>>, PipelineError> {
    if !(width.is_finite() && width >= 0.0) {
        return Err(PipelineError::Inconsistent(format!(
            "time window {width} s: expected a finite width >= 0 in seconds"
        )));
    }
    let n_t = times.len();
    let t0 = times.first().copied().unwrap_or(0.0);
    let window = |t: usize| -> usize {
        if width == 0.0 {
            t
        } else {
            // A sample on a boundary (to rounding) opens the next window.
            ((times[t] - t0) / width + 1e-9).floor() as usize
        }
    };
    let mut windows: Vec<Vec<usize>> = Vec::new();
    for t in 0..n_t {
        if t == 0 || window(t) != window(t - 1) {
            windows.push(Vec::new());
        }
        if let Some(w) = windows.last_mut() {
            w.push(t);
        }
    }
    let mut blocks = Vec::new();
    for w in &windows {
        if joint {
            blocks.push(
                (0..n_components)
                    .flat_map(|c| w.iter().map(move |&t| c * n_t + t))
                    .collect(),
            );
        } else {
            for c in 0..n_components {
                blocks.push(w.iter().map(|&t| c * n_t + t).collect());
            }
        }
    }
    Ok(blocks)
}

/// Where one region holds its share of one component over time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TimeRange {
    /// Component.
    pub component: usize,
    /// Region.
    pub region: usize,
    /// First, peak and last time (s) of the run of time points around the
    /// peak where the region's share is at least half its largest share.
    pub onset: f64,
    /// Time (s) of the region's largest share (the middle of a tie).
    pub peak: f64,
    /// Last time (s) of the run.
    pub offset: f64,
    /// The largest share.
    pub peak_share: f64,
    /// Share × strength at the peak: the region's part of the fitted
    /// pattern in units of its noise level (what ranks the regions).
    pub peak_strength: f64,
    /// 2.5 and 97.5 % quantiles of onset, peak and offset over the
    /// resamples in which the region held a share (NaN without resamples).
    pub onset_interval: (f64, f64),
    /// See `onset_interval`.
    pub peak_interval: (f64, f64),
    /// See `onset_interval`.
    pub offset_interval: (f64, f64),
    /// Fraction of resamples in which the region held a share at all.
    pub held_frequency: f64,
}

/// Region × time shares of a decoder with a time axis.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeShares {
    /// Sample times (s).
    pub times: Vec<f64>,
    /// Components per time point.
    pub n_components: usize,
    /// Named regions.
    pub n_regions: usize,
    /// `share[(c · n_regions + r) · n_times + t]`.
    pub share: Vec<f64>,
    /// Interval ends, same layout (NaN without resamples).
    pub share_low: Vec<f64>,
    /// See `share_low`.
    pub share_high: Vec<f64>,
    /// The leading regions' time ranges, per component by decreasing peak
    /// strength (regions whose largest share is at least [`LEADING_SHARE`]
    /// and whose part of the fitted pattern at the peak stands above that
    /// time point's noise: [`leading_floor`]).
    pub ranges: Vec<TimeRange>,
}

/// Largest share over time at which a region counts as leading (20 %;
/// our choice, no source).
pub const LEADING_SHARE: f64 = 0.2;

/// The smallest peak strength (share × strength at the peak, in units of
/// that time point's own noise level σ) at which a region leads: √n_free,
/// the expected norm of white noise of level σ over the `n_free` free
/// directions of the fit's space (channels, less one for the average
/// reference). A region whose part of the fitted pattern is smaller than
/// the noise it sits in cannot be told from a fit to that noise, whatever
/// the other regions of the component do; a real but weaker generator is
/// kept as long as it stands above its own time point's noise
/// (docs/time_resolved.md, "Leading regions"; the threshold is our choice,
/// no source).
pub fn leading_floor(n_free: usize) -> f64 {
    (n_free.max(1) as f64).sqrt()
}

/// The run of time points around the region's peak where its share is at
/// least half its largest share: (onset index, peak index, offset index,
/// largest share). The peak is the time of the largest `share × strength`
/// (`strength` per time point: how far the fitted pattern stands above its
/// noise), so a share held at 100 % over a plateau peaks where the pattern
/// is strongest; `None` when the share never rises above 0.
fn held_run(share: &[f64], strength: &[f64]) -> Option<(usize, usize, usize, f64)> {
    let best = share.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if best.is_nan() || best <= 0.0 {
        return None;
    }
    let half = 0.5 * best;
    let mut peak = None;
    for t in 0..share.len() {
        let better = peak.is_none_or(|p: usize| share[t] * strength[t] > share[p] * strength[p]);
        if share[t] >= half && better {
            peak = Some(t);
        }
    }
    let peak = peak?;
    let mut onset = peak;
    while onset > 0 && share[onset - 1] >= half {
        onset -= 1;
    }
    let mut offset = peak;
    while offset + 1 < share.len() && share[offset + 1] >= half {
        offset += 1;
    }
    Some((onset, peak, offset, best))
}

/// Per column, the norm of the fitted pattern `reconstruction` (n_ch × k,
/// row-major) divided by the column's noise level (`scale`; 1 when none):
/// how far the fit stands above its noise at each time point.
pub fn column_strength(reconstruction: &[f64], k: usize, scale: Option<&[f64]>) -> Vec<f64> {
    let mut norm = vec![0.0; k];
    for row in reconstruction.chunks(k.max(1)) {
        for (n, v) in norm.iter_mut().zip(row) {
            *n += v * v;
        }
    }
    norm.iter()
        .enumerate()
        .map(|(c, n)| n.sqrt() / scale.and_then(|s| s.get(c)).copied().unwrap_or(1.0))
        .collect()
}

fn best_strength(share: &[f64], strength: &[f64], peak: usize) -> f64 {
    share[peak] * strength[peak]
}

fn quantiles(v: &[f64]) -> (f64, f64) {
    if v.is_empty() {
        (f64::NAN, f64::NAN)
    } else {
        (percentile(v, 0.025), percentile(v, 0.975))
    }
}

/// The region × time shares of `attribution` (columns c · n_times + t),
/// their intervals from `resample`, and the leading regions' time ranges;
/// `strength` per column (the fitted pattern's norm over its noise level,
/// [`column_strength`]) places each region's peak, and a region leads when
/// its part of the pattern there reaches [`leading_floor`]`(n_free)`.
pub fn time_shares(
    attribution: &Attribution,
    resample: Option<&ResampleSummary>,
    strength: &[f64],
    times: &[f64],
    (n_components, n_regions): (usize, usize),
    n_free: usize,
) -> Result<TimeShares, PipelineError> {
    let n_t = times.len();
    if attribution.components.len() != n_components * n_t || strength.len() != n_components * n_t {
        return Err(PipelineError::Inconsistent(format!(
            "{} fitted columns, expected {n_components} components x {n_t} times",
            attribution.components.len()
        )));
    }
    let size = n_components * n_regions * n_t;
    let mut share = vec![0.0; size];
    let mut share_low = vec![f64::NAN; size];
    let mut share_high = vec![f64::NAN; size];
    for c in 0..n_components {
        for t in 0..n_t {
            let col = c * n_t + t;
            for r in 0..n_regions {
                let at = (c * n_regions + r) * n_t + t;
                share[at] = attribution.components[col]
                    .region_share
                    .get(r)
                    .copied()
                    .unwrap_or(0.0);
                if let Some(i) = resample.and_then(|s| s.intervals.get(col)?.get(r)) {
                    share_low[at] = i.low;
                    share_high[at] = i.high;
                }
            }
        }
    }
    let mut ranges = Vec::new();
    for c in 0..n_components {
        let mut found = Vec::new();
        for r in 0..n_regions {
            let curve = &share[(c * n_regions + r) * n_t..(c * n_regions + r + 1) * n_t];
            let strength_c = &strength[c * n_t..(c + 1) * n_t];
            let Some((on, peak, off, best)) = held_run(curve, strength_c) else {
                continue;
            };
            if best < LEADING_SHARE {
                continue;
            }
            // The same rule on every resample's curve.
            let (mut ons, mut peaks, mut offs) = (Vec::new(), Vec::new(), Vec::new());
            let mut n_b = 0;
            if let Some(s) = resample {
                let per_time: Vec<&Vec<f64>> = (0..n_t)
                    .filter_map(|t| s.resampled_shares.get(c * n_t + t)?.get(r))
                    .collect();
                n_b = per_time.first().map_or(0, |v| v.len());
                if per_time.len() == n_t {
                    for b in 0..n_b {
                        let curve_b: Vec<f64> = per_time
                            .iter()
                            .map(|v| v.get(b).copied().unwrap_or(0.0))
                            .collect();
                        if let Some((o, p, f, _)) = held_run(&curve_b, strength_c) {
                            ons.push(times[o]);
                            peaks.push(times[p]);
                            offs.push(times[f]);
                        }
                    }
                }
            }
            found.push(TimeRange {
                component: c,
                region: r,
                onset: times[on],
                peak: times[peak],
                offset: times[off],
                peak_share: best,
                peak_strength: best_strength(curve, strength_c, peak),
                onset_interval: quantiles(&ons),
                peak_interval: quantiles(&peaks),
                offset_interval: quantiles(&offs),
                held_frequency: if n_b > 0 {
                    ons.len() as f64 / n_b as f64
                } else {
                    f64::NAN
                },
            });
        }
        found.sort_by(|a, b| {
            b.peak_strength
                .total_cmp(&a.peak_strength)
                .then(a.region.cmp(&b.region))
        });
        let floor = leading_floor(n_free);
        ranges.extend(found.into_iter().filter(|g| g.peak_strength >= floor));
    }
    Ok(TimeShares {
        times: times.to_vec(),
        n_components,
        n_regions,
        share,
        share_low,
        share_high,
        ranges,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn windows_cover_each_column_once() {
        let times: Vec<f64> = (0..10).map(|i| i as f64 * 0.01).collect();
        let b = time_window_blocks(&times, 0.03, 2, false).expect("blocks");
        // 4 windows (3, 3, 3, 1 samples) for each of 2 components.
        assert_eq!(b.len(), 8);
        assert_eq!(b[0], vec![0, 1, 2]);
        assert_eq!(b[1], vec![10, 11, 12]);
        let mut all: Vec<usize> = b.into_iter().flatten().collect();
        all.sort_unstable();
        assert_eq!(all, (0..20).collect::<Vec<_>>());
        assert_eq!(
            time_window_blocks(&times, 0.0, 1, false)
                .expect("alone")
                .len(),
            10
        );
        assert!(time_window_blocks(&times, f64::NAN, 1, false).is_err());
    }

    #[test]
    fn the_run_is_where_the_share_is_at_least_half_its_peak() {
        let curve = [0.0, 0.1, 0.6, 0.9, 1.0, 1.0, 1.0, 0.4, 0.0, 0.8];
        let mut strength = [1.0; 10];
        strength[5] = 2.0;
        // Run 2..=6 around the strongest point 5; the late 0.8 is apart.
        assert_eq!(held_run(&curve, &strength), Some((2, 5, 6, 1.0)));
        assert_eq!(held_run(&[0.0, 0.0], &[1.0, 1.0]), None);
    }
}
