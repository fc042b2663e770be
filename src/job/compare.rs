//! `compare`, the cohort job, as one library call: attributions of many
//! subjects on one template cortex (group shares, consistency, sign-flip
//! group test, map similarity, optionally a paired comparison of two
//! decoders). The command line and the batch's `[compare]` table call
//! [`compare`]; the files are written by `job::compare_outputs`.

use std::path::{Path, PathBuf};

use super::cache_folder::trim_after_job;
use super::compare_inputs::{
    pairs, read_one, subject_names, subject_result, template_space, to_template,
};
use super::compare_params::{normalise, CompareParams};
use super::error::{JobError, JobResult};
use super::observer::JobObserver;
use crate::cohort::{
    self, compare_paired, region_transport_costs, PairedComparison, SmoothingKernel, SubjectResult,
};
use crate::geometry::{GeodesicSolver, SourceSpace};
use crate::io::cache::{entry_path, ContentHash};
use crate::io::cache_entries::read_held_entry;
use crate::io::compare_file::CompareRecord;
use crate::io::kernel_file::{read_kernel, write_kernel};

fn bad(message: String) -> JobError {
    JobError::input(message)
}

/// Everything the outputs need.
pub struct Comparison {
    /// The group statistics (of the A results in a paired comparison).
    pub group: cohort::Comparison,
    /// The paired comparison, with the labels A and B.
    pub paired: Option<(PairedComparison, String, String)>,
    /// (result.h5 path, SHA-256) of each subject of the group statistics.
    pub inputs: Vec<(String, String)>,
    /// How each of those subjects reached the template, in words.
    pub mapping: Vec<String>,
    /// In a paired comparison: (result.h5 path, SHA-256) of each subject's
    /// B result (`inputs` holds the A ones); empty otherwise.
    pub inputs_b: Vec<(String, String)>,
    /// In a paired comparison: how each B result reached the template.
    pub mapping_b: Vec<String>,
    /// How many result folders were read (twice the subjects when paired).
    pub n_results: usize,
    /// The smoothing kernel's Gaussian width σ (m).
    pub smoothing_sigma_m: f64,
    /// The smoothing kernel's cut-off (m).
    pub smoothing_cutoff_m: f64,
    /// Number of template vertices.
    pub n_template: usize,
    /// The parameters of the statistics.
    pub params: cohort::CompareParams,
}

impl Comparison {
    /// What was compared, counted for the terminal: "comparison of 10
    /// subjects, 20 results" when paired (each subject has an A and a B
    /// result), else "comparison of 10 results".
    pub fn counted(&self) -> String {
        let n = self.group.subjects.len();
        if self.paired.is_none() {
            return format!("comparison of {n} results");
        }
        let used = 2 * n;
        let mut text = format!("comparison of {n} subjects, {used} results");
        if self.n_results > used {
            text.push_str(&format!(
                " ({} result folder(s) without a partner left out)",
                self.n_results - used
            ));
        }
        text
    }

    /// The record compare.h5 and summary.json are written from.
    pub fn record(&self) -> CompareRecord<'_> {
        CompareRecord {
            comparison: &self.group,
            paired: self.paired.as_ref().map(|p| &p.0),
            inputs: &self.inputs,
            mapping: &self.mapping,
            inputs_b: &self.inputs_b,
            mapping_b: &self.mapping_b,
            smoothing_sigma_m: self.smoothing_sigma_m,
            smoothing_cutoff_m: self.smoothing_cutoff_m,
            n_template: self.n_template,
            params: &self.params,
        }
    }
}

/// The smoothing kernel of the template from the cache (keyed by the mesh's
/// vertices and triangles, σ and the cut-off), built and cached when missing
/// or unreadable. A cache that cannot be written costs a note, not the run.
fn cached_kernel(
    params: &CompareParams,
    sources: &SourceSpace,
    solver: &GeodesicSolver,
    cache: &Path,
    observer: &dyn JobObserver,
) -> Result<SmoothingKernel, JobError> {
    let sigma_m = params.smoothing_mm * 1e-3;
    let mut h = ContentHash::new("smoothing-kernel-v1");
    let flat: Vec<f64> = sources.positions.iter().flatten().copied().collect();
    let tri: Vec<u64> = sources
        .triangles
        .iter()
        .flatten()
        .map(|&v| u64::from(v))
        .collect();
    h.f64s(&flat)
        .u64s(&tri)
        .f64s(&[sigma_m, params.smoothing_cutoff]);
    let path = entry_path(cache, "kernel", &h.hex());
    if let Some(Ok(k)) = read_held_entry(&path, |p| read_kernel(p, sources.len())) {
        observer.note(&format!("using cached smoothing kernel {}", path.display()));
        return Ok(k);
    }
    let kernel = SmoothingKernel::new(solver, sigma_m, params.smoothing_cutoff)
        .input("the smoothing kernel")?;
    let written = std::fs::create_dir_all(cache)
        .map_err(|e| e.to_string())
        .and_then(|()| write_kernel(&path, &kernel).map_err(|e| e.to_string()));
    if let Err(e) = written {
        observer.note(&format!(
            "could not cache the smoothing kernel in {}: {e}",
            cache.display()
        ));
    }
    Ok(kernel)
}

/// The whole job: check the parameters, read the result folders, carry
/// each source map to the template, pair the folders when asked, smooth
/// (kernel cached under `cache`), and compute the statistics. Warnings go
/// to `observer` as notes starting with `warning: `.
pub fn compare(
    results: &[PathBuf],
    params: &CompareParams,
    cache: &Path,
    observer: &dyn JobObserver,
) -> Result<Comparison, JobError> {
    let checked = params.validate(results)?;
    for w in &checked.warnings {
        observer.note(&format!("warning: {w}"));
    }
    let maps = &checked.maps;
    let mut read = Vec::with_capacity(results.len());
    for dir in results {
        read.push(read_one(dir)?);
    }
    let template = template_space(checked.template, results, &read, maps)?;
    let mut subjects = Vec::with_capacity(read.len());
    let mut mapping = Vec::with_capacity(read.len());
    let mut inputs = Vec::with_capacity(read.len());
    let names = subject_names(results);
    for ((dir, (r, hash)), name) in results.iter().zip(&read).zip(names) {
        let (map, how) = to_template(dir, r, &template, maps.get(&normalise(dir)))?;
        if r.attribution.region_names.is_empty() {
            return Err(bad(format!(
                "{}: the result has no region table (its dictionary had no source regions); compare needs region shares",
                dir.display()
            )));
        }
        if r.attribution.region_names != template.sources.region_names {
            return Err(bad(format!(
                "{}: its regions ({}) differ from the template's ({}); compare needs one region set",
                dir.display(),
                r.attribution.region_names.len(),
                template.sources.region_names.len()
            )));
        }
        subjects.push(subject_result(name, r, map));
        mapping.push(how);
        inputs.push((dir.join("result.h5").display().to_string(), hash.clone()));
    }
    let stats = &checked.stats;
    let (group, paired, mapping, inputs, mapping_b, inputs_b) = match &checked.pair {
        Some((a, b)) => {
            let p = pairs(results, a, b)?;
            if p.len() < 2 {
                return Err(bad(format!(
                    "--pair {a} {b}: {} complete subject(s); at least 2 are needed",
                    p.len()
                )));
            }
            let names: Vec<String> = p.iter().map(|x| x.0.clone()).collect();
            let sa: Vec<SubjectResult> = p.iter().map(|x| subjects[x.1].clone()).collect();
            let sb: Vec<SubjectResult> = p.iter().map(|x| subjects[x.2].clone()).collect();
            let paired = compare_paired(&names, &sa, &sb, stats).input("paired comparison")?;
            let side = |i: fn(&(String, usize, usize)) -> usize| {
                let m: Vec<String> = p.iter().map(|x| mapping[i(x)].clone()).collect();
                let r: Vec<(String, String)> = p.iter().map(|x| inputs[i(x)].clone()).collect();
                (m, r)
            };
            let (mapping_a, inputs_a) = side(|x| x.1);
            let (mapping_b, inputs_b) = side(|x| x.2);
            (
                sa,
                Some((paired, a.clone(), b.clone())),
                mapping_a,
                inputs_a,
                mapping_b,
                inputs_b,
            )
        }
        None => (subjects, None, mapping, inputs, Vec::new(), Vec::new()),
    };
    // Too few subjects (or pairs) and no p can fall below alpha.
    if let Some(w) = cohort::too_few_subjects_warning(group.len(), stats.alpha) {
        observer.note(&format!("warning: {w}"));
    }
    let mesh = template.sources.mesh();
    let solver = GeodesicSolver::new(&mesh).input("the template mesh")?;
    let kernel = cached_kernel(params, &template.sources, &solver, cache, observer);
    trim_after_job(cache, observer);
    let kernel = kernel?;
    let costs = if params.no_transport {
        None
    } else {
        Some(
            region_transport_costs(
                &template.sources.positions,
                &template.sources.areas,
                &template.sources.region,
                template.sources.region_names.len(),
                &solver,
            )
            .compute("transport costs")?,
        )
    };
    let comparison = cohort::compare(
        &group,
        &kernel,
        &template.sources.region,
        costs.as_ref(),
        stats,
    )
    .input("comparing the results")?;
    for w in comparison
        .warnings
        .iter()
        .chain(paired.iter().flat_map(|p| &p.0.warnings))
    {
        observer.note(&format!("warning: {w}"));
    }
    Ok(Comparison {
        group: comparison,
        paired,
        inputs,
        mapping,
        inputs_b,
        mapping_b,
        n_results: results.len(),
        smoothing_sigma_m: kernel.sigma_m,
        smoothing_cutoff_m: kernel.cutoff_m,
        n_template: template.sources.len(),
        params: stats.clone(),
    })
}
