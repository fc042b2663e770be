//! The `/filter_gain` group of `result.h5`: the cortical gain of a decoder's
//! filters (`attribution::FilterGain`), written beside the attribution when
//! the decoder gives weights and the lead field is known.
//!
//! - `/filter_gain/source` (n_src × k): |w_cᵀ l_j|, the filter's output per
//!   A·m (weights acting on volts), rows in `/sources` order;
//! - `/filter_gain/source_normalised` (n_src × k): the gain divided by
//!   ‖l_j‖ (filter output per V);
//! - `/filter_gain/region_mean`, `/filter_gain/region_max`,
//!   `/filter_gain/region_normalised_mean` (n_regions × k, rows in the order
//!   of `/attribution/region_names`; NaN for a region without sources).
//!
//! Group attributes: `orientation` (`normal` or `free`: the norm over x, y,
//! z), `unit` and `definition`.

use std::path::Path;

use super::error::IoError;
use super::store::{Attr, Dataset, Store};
use crate::attribution::FilterGain;

/// Insert the `/filter_gain` group.
pub(crate) fn insert_filter_gain(s: &mut Store, g: &FilterGain) {
    let (n_src, k, n_reg) = (g.n_sources, g.k, g.n_regions);
    s.insert(
        "/filter_gain/source",
        Dataset::f64(vec![n_src, k], g.source.clone()),
    );
    s.insert(
        "/filter_gain/source_normalised",
        Dataset::f64(vec![n_src, k], g.source_normalised.clone()),
    );
    let regional = [
        ("region_mean", &g.region_mean),
        ("region_max", &g.region_max),
        ("region_normalised_mean", &g.region_normalised_mean),
    ];
    for (name, values) in regional {
        s.insert(
            &format!("/filter_gain/{name}"),
            Dataset::f64(vec![n_reg, k], values.clone()),
        );
    }
    let orientation = if g.free_orientation { "free" } else { "normal" };
    s.set_group_attr(
        "/filter_gain",
        "orientation",
        Attr::Str(orientation.to_string()),
    );
    s.set_group_attr(
        "/filter_gain",
        "unit",
        Attr::Str("filter output per A*m (source, region_*); per V (normalised)".to_string()),
    );
    s.set_group_attr(
        "/filter_gain",
        "definition",
        Attr::Str("|W^T L| per source and filter, W and L in the fit's reference".to_string()),
    );
}

/// The `/filter_gain` group of a result with `k` components, when present.
pub(crate) fn filter_gain_from_store(
    store: &Store,
    path: &Path,
    k: usize,
    n_regions: usize,
) -> Result<Option<FilterGain>, IoError> {
    if !store.contains("/filter_gain/source") {
        return Ok(None);
    }
    let (source, n_src, _) = store.f64_matrix(path, "/filter_gain/source", None, Some(k))?;
    let (source_normalised, _, _) =
        store.f64_matrix(path, "/filter_gain/source_normalised", Some(n_src), Some(k))?;
    let regional = |name: &str| {
        store
            .f64_matrix_nan(path, name, Some(n_regions), Some(k))
            .map(|(v, _, _)| v)
    };
    let region_mean = regional("/filter_gain/region_mean")?;
    let region_max = regional("/filter_gain/region_max")?;
    let region_normalised_mean = if store.contains("/filter_gain/region_normalised_mean") {
        regional("/filter_gain/region_normalised_mean")?
    } else {
        vec![f64::NAN; n_regions * k]
    };
    let free_orientation = store
        .attr_str(path, "/filter_gain", "orientation")
        .is_ok_and(|o| o == "free");
    Ok(Some(FilterGain {
        n_sources: n_src,
        k,
        n_regions,
        free_orientation,
        source,
        source_normalised,
        region_mean,
        region_max,
        region_normalised_mean,
    }))
}
