//! The size checks of a result and a comparison as read: every array is
//! checked against the counts the file states (components, channels,
//! regions, subjects) once, by the reader, so a `ResultFile` or
//! `CompareFile` is whole and nothing downstream (the report pages, the
//! comparison) checks or indexes out of range.

use std::path::Path;

use super::compare_read::CompareFile;
use super::error::IoError;
use super::result_file::ResultFile;

/// One check: the dataset, its number of values, the number expected and
/// what the rest of the file implies, in words.
type Check = (&'static str, usize, usize, String);

/// The first check whose sizes differ, as an error naming the file `path`.
fn check_sizes(path: &Path, checks: Vec<Check>) -> Result<(), IoError> {
    for (field, found, expected_len, expected) in checks {
        if found != expected_len {
            return Err(IoError::Shape {
                path: path.to_path_buf(),
                dataset: field.to_string(),
                found: vec![found],
                expected: format!("{expected_len} values ({expected})"),
            });
        }
    }
    Ok(())
}

/// Check that every per-component and per-region array has the size the
/// component and region counts imply, so the page never indexes out of range.
pub(crate) fn check_result_layout(r: &ResultFile) -> Result<(), IoError> {
    let k = r.k;
    let n_ch = r.labels.len();
    let n_reg = r.attribution.region_names.len();
    let a = &r.attribution;
    let f = &r.fit;
    let mut checks: Vec<Check> = vec![
        (
            "/patterns/component_names",
            r.component_names.len(),
            k,
            format!("k = {k}"),
        ),
        (
            "/patterns/values",
            r.patterns.len(),
            n_ch * k,
            format!("n_ch x k = {n_ch} x {k}"),
        ),
        ("/fit/lambda", f.lambda.len(), k, format!("k = {k}")),
        ("/fit/lambda_max", f.lambda_max.len(), k, format!("k = {k}")),
        (
            "/fit/duality_gap",
            f.duality_gap.len(),
            k,
            format!("k = {k}"),
        ),
        ("/fit/iterations", f.iterations.len(), k, format!("k = {k}")),
        (
            "/fit/explained_variance",
            f.explained_variance.len(),
            k,
            format!("k = {k}"),
        ),
        (
            "/fit/residual",
            f.residual.len(),
            n_ch * k,
            format!("n_ch x k = {n_ch} x {k}"),
        ),
        (
            "/fit/coefficients",
            f.coefficients.len(),
            f.n_atoms * k,
            format!("n_atoms x k = {} x {k}", f.n_atoms),
        ),
        (
            "/attribution/share",
            a.share.len(),
            n_reg * k,
            format!("n_regions x k = {n_reg} x {k}"),
        ),
        (
            "/attribution/peak_mm",
            a.peak_mm.len(),
            k,
            format!("k = {k} rows"),
        ),
        (
            "/attribution/peak_region",
            a.peak_region.len(),
            k,
            format!("k = {k}"),
        ),
        (
            "/attribution/unassigned_share",
            a.unassigned_share.len(),
            k,
            format!("k = {k}"),
        ),
    ];
    let region_arrays = [
        ("/attribution/share_low", &a.share_low),
        ("/attribution/share_high", &a.share_high),
        ("/attribution/selection_frequency", &a.selection_frequency),
        ("/attribution/lead_frequency", &a.lead_frequency),
    ];
    for (field, values) in region_arrays {
        if let Some(v) = values {
            checks.push((
                field,
                v.len(),
                n_reg * k,
                format!("n_regions x k = {n_reg} x {k}"),
            ));
        }
    }
    if let Some(v) = &a.noise_sd {
        checks.push(("/attribution/noise_sd", v.len(), k, format!("k = {k}")));
    }
    if let Some(v) = &f.reconstruction {
        checks.push((
            "/fit/reconstruction",
            v.len(),
            n_ch * k,
            format!("n_ch x k = {n_ch} x {k}"),
        ));
    }
    if let Some(p) = &f.path {
        let n = p.n_points * k;
        let expected = format!("n_path x k = {} x {k}", p.n_points);
        checks.push(("/fit/path/ratio", p.ratio.len(), n, expected.clone()));
        checks.push((
            "/fit/path/explained_variance",
            p.explained_variance.len(),
            n,
            expected.clone(),
        ));
        checks.push((
            "/fit/path/active_patches",
            p.active_patches.len(),
            n,
            expected.clone(),
        ));
        checks.push(("/fit/path/bic", p.bic.len(), n, expected));
    }
    if let Some(e) = &r.electrode_positions {
        checks.push((
            "/montage/positions_mm",
            e.len(),
            n_ch,
            format!("n_ch = {n_ch} rows"),
        ));
    }
    if let Some(s) = &r.sources {
        let n_src = s.len();
        if !a.source_map.is_empty() {
            checks.push((
                "/attribution/source_map",
                a.source_map.len(),
                n_src * k,
                format!("n_src x k = {n_src} x {k}"),
            ));
        }
        checks.push((
            "/sources/region",
            s.region.len(),
            n_src,
            format!("n_src = {n_src}"),
        ));
    }
    check_sizes(&r.path, checks)
}

/// Check every array against the subject and region counts, so the page
/// never indexes out of range.
pub(crate) fn check_compare_layout(f: &CompareFile) -> Result<(), IoError> {
    let n_s = f.subjects.len();
    let n_r = f.region_names.len();
    let mut checks: Vec<Check> = Vec::new();
    let per_region = format!("n_regions = {n_r}");
    for c in &f.components {
        let fields: [(&'static str, &Vec<f64>); 8] = [
            ("/group/consistency", &c.consistency),
            (
                "/group/mean_selection_frequency",
                &c.mean_selection_frequency,
            ),
            ("/group/mean_share", &c.mean_share),
            ("/group/mean_low", &c.mean_low),
            ("/group/mean_high", &c.mean_high),
            ("/group/t", &c.t),
            ("/group/p_raw", &c.p_raw),
            ("/group/p_corrected", &c.p_corrected),
        ];
        for (field, v) in fields {
            checks.push((field, v.len(), n_r, per_region.clone()));
        }
        let square = format!("n_subjects x n_subjects = {n_s} x {n_s}");
        checks.push((
            "/group/share",
            c.share.len(),
            n_s * n_r,
            format!("n_subjects x n_regions = {n_s} x {n_r}"),
        ));
        checks.push((
            "/similarity/cosine",
            c.cosine.len(),
            n_s * n_s,
            square.clone(),
        ));
        checks.push((
            "/similarity/transport_mm",
            c.transport_mm.len(),
            n_s * n_s,
            square,
        ));
    }
    if let Some(p) = &f.paired {
        let n_p = p.subjects.len();
        for c in &p.components {
            checks.push((
                "/paired/difference",
                c.difference.len(),
                n_p * n_r,
                format!("n_pairs x n_regions = {n_p} x {n_r}"),
            ));
            for (field, v) in [
                ("/paired/mean_difference", &c.mean_difference),
                ("/paired/mean_low", &c.mean_low),
                ("/paired/mean_high", &c.mean_high),
                ("/paired/p_raw", &c.p_raw),
                ("/paired/p_corrected", &c.p_corrected),
            ] {
                checks.push((field, v.len(), n_r, per_region.clone()));
            }
        }
    }
    check_sizes(&f.path, checks)
}
