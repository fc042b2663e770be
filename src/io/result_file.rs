//! The `result.h5` layout of design.md: the inputs' hashes, the patterns, the
//! fit (with its λ path and reconstruction), the attribution, and the montage
//! and source space the fit was made on (so pictures and comparisons need no
//! other file). Reading it back is in [`super::result_read`].

use std::path::Path;

use super::error::IoError;
use super::leadfield_file::{insert_montage, insert_sources};
use super::store::{Attr, Dataset, Store};
use crate::pipeline::FitOutcome;

pub use super::result_read::{
    read_result, ResultAttribution, ResultDipoles, ResultFile, ResultFit, ResultPath,
};

/// What goes into `result.h5` besides the fit outcome.
pub struct ResultRecord<'a> {
    /// Input hashes (name, hex digest), stored as root attributes `hash_<name>`.
    pub hashes: &'a [(String, String)],
    /// Channel labels of the patterns.
    pub labels: &'a [String],
    /// Patterns after referencing and before whitening, n_ch × k.
    pub patterns: &'a [f64],
    /// Number of components.
    pub k: usize,
    /// `patterns` or `weights+covariance`.
    pub patterns_source: &'a str,
    /// Component names.
    pub component_names: &'a [String],
    /// Region names (same order as `/sources/region_names`).
    pub region_names: &'a [String],
    /// The fit.
    pub outcome: &'a FitOutcome,
    /// Free-form notes stored as the root attribute `notes` (JSON).
    pub notes_json: &'a str,
    /// The fitted patterns D X in the units of `patterns` (n_ch × k).
    pub reconstruction: &'a [f64],
    /// The lead field the dictionary came from (for `/montage` and `/sources`), if known.
    pub leadfield: Option<&'a crate::forward::LeadField>,
    /// The filters' gain over the cortex (`/filter_gain`), when computed.
    pub filter_gain: Option<&'a crate::attribution::FilterGain>,
    /// Region × time shares, for a decoder with a time axis.
    pub time: Option<&'a crate::pipeline::TimeShares>,
}

/// The caution stored with every result.
pub const CAUTION: &str = "Research interpretation of a decoding model; not a medical device and not for clinical decisions (e.g. presurgical planning). Defer to licensed clinical practice and local regulations.";

/// Per-component value of the block that fitted it.
fn per_component(
    outcome: &FitOutcome,
    k: usize,
    f: impl Fn(&crate::pipeline::FittedComponent) -> f64,
) -> Vec<f64> {
    let mut out = vec![f64::NAN; k];
    for b in &outcome.blocks {
        for &c in &b.components {
            out[c] = f(b);
        }
    }
    out
}

/// `/fit/path/{ratio,explained_variance,active_patches,bic}`, each
/// n_path × k, NaN where a component's block searched fewer points (and
/// where the BIC is undefined).
fn insert_path(s: &mut Store, o: &FitOutcome, k: usize) {
    let n_path = o.blocks.iter().map(|b| b.path.len()).max().unwrap_or(0);
    if n_path == 0 {
        return;
    }
    let mut columns = [
        vec![f64::NAN; n_path * k],
        vec![f64::NAN; n_path * k],
        vec![f64::NAN; n_path * k],
        vec![f64::NAN; n_path * k],
    ];
    for b in &o.blocks {
        for (i, &(ratio, ev, active, bic)) in b.path.iter().enumerate() {
            for &c in &b.components {
                columns[0][i * k + c] = ratio;
                columns[1][i * k + c] = ev;
                columns[2][i * k + c] = active as f64;
                // An infinite BIC (a perfect fit) is stored as NaN, "undefined".
                columns[3][i * k + c] = if bic.is_finite() { bic } else { f64::NAN };
            }
        }
    }
    let names = ["ratio", "explained_variance", "active_patches", "bic"];
    for (name, values) in names.iter().zip(columns) {
        s.insert(
            &format!("/fit/path/{name}"),
            Dataset::f64(vec![n_path, k], values),
        );
    }
}

/// The root attributes `caution` and `software` of every result file.
pub(crate) fn insert_provenance(s: &mut Store) {
    s.set_group_attr("/", "caution", Attr::Str(CAUTION.to_string()));
    s.set_group_attr(
        "/",
        "software",
        Attr::Str(format!("patchwise {}", env!("CARGO_PKG_VERSION"))),
    );
}

/// Insert `/patterns/{labels,values,source,component_names}` (values n_ch × k).
pub(crate) fn insert_patterns(
    s: &mut Store,
    labels: &[String],
    values: &[f64],
    k: usize,
    source: &str,
    component_names: &[String],
) {
    s.insert("/patterns/labels", Dataset::strings(labels.to_vec()));
    s.insert(
        "/patterns/values",
        Dataset::f64(vec![labels.len(), k], values.to_vec()),
    );
    s.insert(
        "/patterns/source",
        Dataset::strings(vec![source.to_string()]),
    );
    s.insert(
        "/patterns/component_names",
        Dataset::strings(component_names.to_vec()),
    );
}

/// Write `result.h5` atomically.
pub fn write_result(path: &Path, r: &ResultRecord<'_>) -> Result<(), IoError> {
    let o = r.outcome;
    let k = r.k;
    let n_ch = r.labels.len();
    let n_atoms = o.fit.n_atoms;
    let mut s = Store::new();
    for (name, hash) in r.hashes {
        s.set_group_attr("/", &format!("hash_{name}"), Attr::Str(hash.clone()));
    }
    insert_provenance(&mut s);
    s.set_group_attr("/", "notes", Attr::Str(r.notes_json.to_string()));
    // Why each component needs care, "" when it does not (pipeline::quality).
    s.insert(
        "/fit/flags",
        Dataset::strings(
            (0..k)
                .map(|c| crate::pipeline::component_flags(r.outcome, c).join("; "))
                .collect(),
        ),
    );
    insert_patterns(
        &mut s,
        r.labels,
        r.patterns,
        k,
        r.patterns_source,
        r.component_names,
    );
    s.insert(
        "/fit/coefficients",
        Dataset::f64(vec![n_atoms, k], o.fit.coefficients.clone()),
    );
    if let Some(refit) = &o.refit {
        s.insert(
            "/fit/coefficients_refit",
            Dataset::f64(vec![n_atoms, k], refit.coefficients.clone()),
        );
    }
    s.insert(
        "/fit/lambda",
        Dataset::f64(vec![k], per_component(o, k, |b| b.lambda)),
    );
    s.insert(
        "/fit/lambda_max",
        Dataset::f64(vec![k], per_component(o, k, |b| b.lambda_max)),
    );
    s.insert(
        "/fit/duality_gap",
        Dataset::f64(vec![k], per_component(o, k, |b| b.duality_gap)),
    );
    s.insert(
        "/fit/iterations",
        Dataset::i64(
            vec![k],
            per_component(o, k, |b| b.iterations as f64)
                .iter()
                .map(|&v| v as i64)
                .collect(),
        ),
    );
    s.insert(
        "/fit/reconstruction",
        Dataset::f64(vec![n_ch, k], r.reconstruction.to_vec()),
    );
    insert_path(&mut s, o, k);
    if let Some(lf) = r.leadfield {
        insert_montage(&mut s, &lf.labels, &lf.electrode_positions);
        insert_sources(&mut s, &lf.sources);
    }
    s.insert(
        "/fit/explained_variance",
        Dataset::f64(vec![k], o.fit.explained_variance.clone()),
    );
    s.insert(
        "/fit/residual",
        Dataset::f64(vec![n_ch, k], o.fit.residual.clone()),
    );
    let n_regions = r.region_names.len();
    let comps = &o.attribution.components;
    let n_src = comps.first().map_or(0, |c| c.source_map.len());
    let mut share = vec![0.0; n_regions * k];
    let mut source_map = vec![0.0; n_src * k];
    let mut peak = vec![f64::NAN; k * 3];
    let mut peak_region = vec![-1i64; k];
    for (c, a) in comps.iter().enumerate() {
        for reg in 0..n_regions {
            share[reg * k + c] = a.region_share[reg];
        }
        for v in 0..n_src {
            source_map[v * k + c] = a.source_map[v];
        }
        if let Some(p) = a.peak_position {
            for d in 0..3 {
                peak[c * 3 + d] = p[d] * 1e3;
            }
        }
        peak_region[c] = a.peak_region as i64;
    }
    s.insert(
        "/attribution/region_names",
        Dataset::strings(r.region_names.to_vec()),
    );
    s.insert(
        "/attribution/share",
        Dataset::f64(vec![n_regions, k], share),
    );
    s.insert(
        "/attribution/source_map",
        Dataset::f64(vec![n_src, k], source_map),
    );
    s.insert("/attribution/peak_mm", Dataset::f64(vec![k, 3], peak));
    s.insert(
        "/attribution/peak_region",
        Dataset::i64(vec![k], peak_region),
    );
    s.insert(
        "/attribution/unassigned_share",
        Dataset::f64(vec![k], comps.iter().map(|c| c.unassigned_share).collect()),
    );
    if let Some(rs) = &o.resample {
        let mut low = vec![0.0; n_regions * k];
        let mut high = vec![0.0; n_regions * k];
        let mut freq = vec![0.0; n_regions * k];
        let mut lead = vec![0.0; n_regions * k];
        for c in 0..k {
            for reg in 0..n_regions {
                let iv = rs.intervals[c][reg];
                low[reg * k + c] = iv.low;
                high[reg * k + c] = iv.high;
                freq[reg * k + c] = iv.selection_frequency;
                lead[reg * k + c] = iv.lead_frequency;
            }
        }
        s.insert(
            "/attribution/share_low",
            Dataset::f64(vec![n_regions, k], low),
        );
        s.insert(
            "/attribution/share_high",
            Dataset::f64(vec![n_regions, k], high),
        );
        s.insert(
            "/attribution/selection_frequency",
            Dataset::f64(vec![n_regions, k], freq),
        );
        s.insert(
            "/attribution/lead_frequency",
            Dataset::f64(vec![n_regions, k], lead),
        );
        s.insert(
            "/attribution/noise_sd",
            Dataset::f64(vec![k], rs.noise_sd.clone()),
        );
        s.insert(
            "/attribution/leader_probability",
            Dataset::f64(vec![k], rs.leader_probability.clone()),
        );
    }
    if let Some(g) = r.filter_gain {
        super::filter_gain_file::insert_filter_gain(&mut s, g);
    }
    if let Some(t) = r.time {
        super::result_time::insert_time(&mut s, t);
    }
    s.write_atomic(path)
}
