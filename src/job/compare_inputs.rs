//! The inputs of `compare`: result folders read and checked, each source
//! map carried to the template, the subjects named, and the A and B folders
//! of a paired comparison matched by their names.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use super::compare_params::{normalise, MapSpec};
use super::error::{JobError, JobResult};
use crate::cohort::mapping::{nearest_on_sphere, VertexMap};
use crate::cohort::SubjectResult;
use crate::geometry::{SourceSpace, TemplateResolution};
use crate::io::cache::file_sha256;
use crate::io::gifti::read_gifti_surface;
use crate::io::mapping_file::read_vertex_map;
use crate::io::result_file::{read_result, ResultFile};

fn bad(message: String) -> JobError {
    JobError::input(message)
}

/// The template the results are compared on.
pub struct TemplateSpace {
    /// Its name (the built-in's, or the result folder it came from).
    pub name: String,
    /// Its source space, with regions.
    pub sources: SourceSpace,
}

/// The template: the named built-in, else the source space of the first
/// result without a --map.
pub fn template_space(
    named: Option<TemplateResolution>,
    results: &[PathBuf],
    read: &[(ResultFile, String)],
    maps: &BTreeMap<PathBuf, MapSpec>,
) -> Result<TemplateSpace, JobError> {
    if let Some(res) = named {
        return Ok(TemplateSpace {
            name: res.name().to_string(),
            sources: crate::geometry::SourceSpace::from_template(&crate::geometry::template(res)),
        });
    }
    let i = (0..results.len())
        .find(|&i| !maps.contains_key(&normalise(&results[i])))
        .ok_or_else(|| {
            bad("every result has a --map; name the template with --template".to_string())
        })?;
    let sources = read[i].0.sources.clone().ok_or_else(|| {
        bad(format!(
            "{}: result.h5 holds no /sources; name the template with --template",
            results[i].display()
        ))
    })?;
    Ok(TemplateSpace {
        name: results[i].display().to_string(),
        sources,
    })
}

fn folder_name(dir: &Path) -> String {
    dir.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| dir.display().to_string())
}

/// The name of the folder that holds `dir` (after resolving `dir`).
fn parent_folder_name(dir: &Path) -> Option<String> {
    let dir = std::fs::canonicalize(dir).ok()?;
    dir.parent()?
        .file_name()
        .map(|p| p.to_string_lossy().into_owned())
}

/// The name each result folder goes by in the tables: its folder name, or
/// `<parent>/<folder>` for folders whose names repeat (as in
/// `sub-01/A sub-02/A`).
pub fn subject_names(results: &[PathBuf]) -> Vec<String> {
    let names: Vec<String> = results.iter().map(|d| folder_name(d)).collect();
    names
        .iter()
        .zip(results)
        .map(|(n, dir)| {
            if names.iter().filter(|m| *m == n).count() < 2 {
                return n.clone();
            }
            match parent_folder_name(dir) {
                Some(p) => format!("{p}/{n}"),
                None => n.clone(),
            }
        })
        .collect()
}

/// Read `dir`/result.h5 and its SHA-256.
pub fn read_one(dir: &Path) -> Result<(ResultFile, String), JobError> {
    let path = dir.join("result.h5");
    if !path.is_file() {
        return Err(bad(format!(
            "{}: no result.h5 in this folder (expected the output folder of `patchwise attribute` or `demo`)",
            dir.display()
        )));
    }
    let r = read_result(&path).input(format!("reading {}", path.display()))?;
    let hash =
        file_sha256(&path).map_err(|e| JobError::compute(format!("{}: {e}", path.display())))?;
    Ok((r, hash))
}

fn same_positions(a: &SourceSpace, b: &SourceSpace) -> bool {
    a.len() == b.len()
        && a.positions
            .iter()
            .zip(&b.positions)
            .all(|(p, q)| (0..3).all(|i| (p[i] - q[i]).abs() <= 1e-9))
}

/// Carry one result's source map to the template; returns the map and how
/// it got there (for the record).
pub fn to_template(
    dir: &Path,
    r: &ResultFile,
    template: &TemplateSpace,
    spec: Option<&MapSpec>,
) -> Result<(Vec<f64>, String), JobError> {
    let name = dir.display().to_string();
    let sources = r.sources.as_ref().ok_or_else(|| {
        bad(format!(
            "{name}: result.h5 holds no /sources (the source space); it cannot be placed on the template"
        ))
    })?;
    let n_t = template.sources.len();
    let (map, how) = match spec {
        None => {
            if same_positions(sources, &template.sources) {
                return Ok((r.attribution.source_map.clone(), "same mesh".to_string()));
            }
            return Err(bad(format!(
                "{name}: fitted on a different cortex ({} sources) than the template {} ({n_t} sources); give --map {name}=MAPFILE",
                sources.len(),
                template.name
            )));
        }
        Some(MapSpec::Indices(file)) => {
            let indices = read_vertex_map(file).input(format!("reading the map of {name}"))?;
            if indices.len() != sources.len() {
                return Err(bad(format!(
                    "{}: {} indices, but {name} has {} sources",
                    file.display(),
                    indices.len(),
                    sources.len()
                )));
            }
            let m = VertexMap::from_indices(&file.display().to_string(), &indices, n_t)
                .input(format!("the map of {name}"))?;
            (m, format!("index map {}", file.display()))
        }
        Some(MapSpec::Spheres(subject, tmpl)) => {
            let s = read_gifti_surface(subject).input(format!("the sphere of {name}"))?;
            let t = read_gifti_surface(tmpl).input("the template sphere")?;
            if s.n_vertices() != sources.len() {
                return Err(bad(format!(
                    "{}: {} vertices, but {name} has {} sources",
                    subject.display(),
                    s.n_vertices(),
                    sources.len()
                )));
            }
            if t.n_vertices() != n_t {
                return Err(bad(format!(
                    "{}: {} vertices, but the template has {n_t}",
                    tmpl.display(),
                    t.n_vertices()
                )));
            }
            let m = nearest_on_sphere(&name, &s.vertices, &t.vertices)
                .input(format!("mapping {name}"))?;
            (
                m,
                format!(
                    "nearest neighbour {} -> {}",
                    subject.display(),
                    tmpl.display()
                ),
            )
        }
    };
    let carried = map
        .carry(&name, &r.attribution.source_map, r.k)
        .input(format!("carrying the source map of {name}"))?;
    Ok((carried, how))
}

/// One subject for the statistics: the result's shares and its source map
/// on the template.
pub fn subject_result(name: String, r: &ResultFile, source_map: Vec<f64>) -> SubjectResult {
    SubjectResult {
        name,
        component_names: r.component_names.clone(),
        region_names: r.attribution.region_names.clone(),
        share: r.attribution.share.clone(),
        share_low: r.attribution.share_low.clone(),
        share_high: r.attribution.share_high.clone(),
        selection_frequency: r.attribution.selection_frequency.clone(),
        source_map,
        filter_gain: r.filter_gain.as_ref().map(|g| g.region_mean.clone()),
    }
}

/// The subject of a result folder for decoder `label`: the folder is named
/// `<subject>-<label>`, `<subject>_<label>` or `<subject>.<label>`, or it is
/// named `<label>` and sits in the subject's folder (`<subject>/<label>`).
fn subject_of(dir: &Path, label: &str) -> Option<String> {
    let n = folder_name(dir);
    if n == label {
        return parent_folder_name(dir);
    }
    ['-', '_', '.'].iter().find_map(|sep| {
        n.strip_suffix(&format!("{sep}{label}"))
            .filter(|s| !s.is_empty())
            .map(str::to_string)
    })
}

/// The A and B folders of each subject (see [`subject_of`]), as (subject,
/// index of A, index of B) in subject order.
pub fn pairs(
    results: &[PathBuf],
    a: &str,
    b: &str,
) -> Result<Vec<(String, usize, usize)>, JobError> {
    let mut found: BTreeMap<String, (Option<usize>, Option<usize>)> = BTreeMap::new();
    for (i, dir) in results.iter().enumerate() {
        let (subject, is_a) = if let Some(s) = subject_of(dir, a) {
            (s, true)
        } else if let Some(s) = subject_of(dir, b) {
            (s, false)
        } else {
            return Err(bad(format!(
                "{}: with --pair {a} {b} every folder must be named <subject>-{a} or \
                 <subject>-{b} (or with _ or . for -), or be <subject>/{a} or <subject>/{b}",
                dir.display()
            )));
        };
        let e = found.entry(subject).or_default();
        let slot = if is_a { &mut e.0 } else { &mut e.1 };
        if slot.is_some() {
            return Err(bad(format!(
                "{}: a second folder for this subject and decoder",
                dir.display()
            )));
        }
        *slot = Some(i);
    }
    let mut out = Vec::new();
    for (subject, (ia, ib)) in found {
        match (ia, ib) {
            (Some(x), Some(y)) => out.push((subject, x, y)),
            (Some(x), None) | (None, Some(x)) => {
                return Err(bad(format!(
                    "{}: subject {subject:?} has no matching {} folder",
                    results[x].display(),
                    if ia.is_some() { b } else { a }
                )))
            }
            (None, None) => {}
        }
    }
    Ok(out)
}
