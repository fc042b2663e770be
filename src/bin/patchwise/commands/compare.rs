//! `patchwise compare`: compare attributions across subjects on one template
//! cortex (group shares, consistency, sign-flip group test, map similarity,
//! optionally a paired comparison of two decoders).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use patchwise::cohort::mapping::{nearest_on_sphere, VertexMap};
use patchwise::cohort::{
    compare, compare_paired, region_transport_costs, CompareParams, Comparison, PairedComparison,
    SmoothingKernel, SubjectResult,
};
use patchwise::geometry::{template, GeodesicSolver, SourceSpace, TemplateResolution};
use patchwise::io::cache::{default_cache_dir, entry_path, file_sha256, ContentHash};
use patchwise::io::compare_file::{
    summary_json, write_compare, write_paired_csv, write_regions_csv, write_similarity_csv,
    CompareRecord,
};
use patchwise::io::gifti::read_gifti_surface;
use patchwise::io::kernel_file::{read_kernel, write_kernel};
use patchwise::io::mapping_file::read_vertex_map;
use patchwise::io::result_file::{read_result, ResultFile, CAUTION};
use patchwise::limits::{check_count, RESAMPLE_RECORD_BYTES};

use crate::cli_error::OrExit;
use crate::progress::note;
use crate::CliError;
use patchwise::io::staging::Staging;

/// Arguments of `patchwise compare`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Result folders (each holding result.h5 from `attribute` or `demo`).
    #[arg(required = true, value_name = "RESULT_DIR")]
    pub results: Vec<PathBuf>,
    /// Output folder.
    #[arg(long)]
    pub out: PathBuf,
    /// Paired comparison of decoders A and B: the folders must be named
    /// `<subject>-A` and `<subject>-B` (or with `_` or `.` for `-`), or be
    /// `<subject>/A` and `<subject>/B`; the group statistics use the A results.
    #[arg(long, num_args = 2, value_names = ["A", "B"])]
    pub pair: Option<Vec<String>>,
    /// How a result on another cortex reaches the template:
    /// `SUBJECT_DIR=INDEX_FILE` (.npy/.csv/.txt, one template vertex per
    /// subject vertex) or `SUBJECT_DIR=SUBJECT_SPHERE.gii,TEMPLATE_SPHERE.gii`
    /// (nearest neighbour between registered spheres). Repeatable.
    #[arg(long = "map", value_name = "SUBJECT_DIR=MAPFILE")]
    pub maps: Vec<String>,
    /// The template: `template` or `template-5k`; default: the source space
    /// of the first result without a --map.
    #[arg(long)]
    pub template: Option<String>,
    /// Geodesic Gaussian width σ (mm) of the smoothing before the cosine.
    #[arg(long, default_value_t = 10.0)]
    pub smoothing_mm: f64,
    /// Cut the smoothing kernel at this many σ.
    #[arg(long, default_value_t = 3.0)]
    pub smoothing_cutoff: f64,
    /// Bootstrap resamples of the subjects for the group mean's interval.
    #[arg(long, default_value_t = 2000)]
    pub bootstrap: usize,
    /// Random sign flips of the group test (all 2^n when 2^n is not larger).
    #[arg(long, default_value_t = 10_000)]
    pub sign_flips: usize,
    /// Family-wise error level for the table of surviving regions.
    #[arg(long, default_value_t = 0.05)]
    pub alpha: f64,
    /// Seed of the bootstrap and the sign flips.
    #[arg(long, default_value_t = 2002)]
    pub seed: u64,
    /// Entropic transport ε relative to the mean centroid distance.
    #[arg(long, default_value_t = 0.05)]
    pub transport_epsilon: f64,
    /// Skip the transport distance.
    #[arg(long)]
    pub no_transport: bool,
    /// Do not write report.html into the output folder.
    #[arg(long)]
    pub no_report: bool,
    /// Cache folder for the smoothing kernel (default: $PATCHWISE_CACHE, else
    /// the user cache folder; the same folder as `attribute`'s).
    #[arg(long)]
    pub cache: Option<PathBuf>,
}

/// The smoothing kernel of the template from the cache (keyed by the mesh's
/// vertices and triangles, σ and the cut-off), built and cached when missing
/// or unreadable. A cache that cannot be written costs a note, not the run.
fn cached_kernel(
    args: &Args,
    sources: &SourceSpace,
    solver: &GeodesicSolver,
) -> Result<SmoothingKernel, CliError> {
    let sigma_m = args.smoothing_mm * 1e-3;
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
        .f64s(&[sigma_m, args.smoothing_cutoff]);
    let cache = args.cache.clone().unwrap_or_else(default_cache_dir);
    let path = entry_path(&cache, "kernel", &h.hex());
    if path.is_file() {
        if let Ok(k) = read_kernel(&path, sources.len()) {
            note(format!("using cached smoothing kernel {}", path.display()));
            return Ok(k);
        }
    }
    let kernel = SmoothingKernel::new(solver, sigma_m, args.smoothing_cutoff)
        .bad_input("the smoothing kernel")?;
    let written = std::fs::create_dir_all(&cache)
        .map_err(|e| e.to_string())
        .and_then(|()| write_kernel(&path, &kernel).map_err(|e| e.to_string()));
    if let Err(e) = written {
        note(format!(
            "could not cache the smoothing kernel in {}: {e}",
            cache.display()
        ));
    }
    Ok(kernel)
}

fn bad(message: String) -> CliError {
    CliError::bad_input(anyhow::anyhow!(message))
}

/// The template the results are compared on.
struct TemplateSpace {
    name: String,
    sources: SourceSpace,
}

/// How one subject reaches the template.
enum MapSpec {
    Indices(PathBuf),
    Spheres(PathBuf, PathBuf),
}

fn parse_maps(maps: &[String]) -> Result<BTreeMap<PathBuf, MapSpec>, CliError> {
    let mut out = BTreeMap::new();
    for m in maps {
        let (dir, file) = m.split_once('=').ok_or_else(|| {
            bad(format!(
                "--map {m:?}: expected SUBJECT_DIR=MAPFILE or SUBJECT_DIR=SUBJECT_SPHERE.gii,TEMPLATE_SPHERE.gii"
            ))
        })?;
        let spec = match file.split_once(',') {
            Some((a, b)) => MapSpec::Spheres(PathBuf::from(a), PathBuf::from(b)),
            None => MapSpec::Indices(PathBuf::from(file)),
        };
        out.insert(normalise(Path::new(dir)), spec);
    }
    Ok(out)
}

/// A folder path without a trailing separator or `./`, for matching --map.
fn normalise(p: &Path) -> PathBuf {
    p.components()
        .filter(|c| !matches!(c, std::path::Component::CurDir))
        .collect()
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
fn subject_names(results: &[PathBuf]) -> Vec<String> {
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

fn read_one(dir: &Path) -> Result<(ResultFile, String), CliError> {
    let path = dir.join("result.h5");
    if !path.is_file() {
        return Err(bad(format!(
            "{}: no result.h5 in this folder (expected the output folder of `patchwise attribute` or `demo`)",
            dir.display()
        )));
    }
    let r = read_result(&path).bad_input(format!("reading {}", path.display()))?;
    let hash = file_sha256(&path)
        .map_err(|e| CliError::compute(anyhow::anyhow!("{}: {e}", path.display())))?;
    Ok((r, hash))
}

fn same_positions(a: &SourceSpace, b: &SourceSpace) -> bool {
    a.len() == b.len()
        && a.positions
            .iter()
            .zip(&b.positions)
            .all(|(p, q)| (0..3).all(|i| (p[i] - q[i]).abs() <= 1e-9))
}

/// Carry one result's source map to the template.
fn to_template(
    dir: &Path,
    r: &ResultFile,
    template: &TemplateSpace,
    spec: Option<&MapSpec>,
) -> Result<(Vec<f64>, String), CliError> {
    let name = dir.display().to_string();
    let sources = r.sources.as_ref().ok_or_else(|| {
        bad(format!(
            "{name}: result.h5 holds no /sources (the source space); it cannot be placed on the template"
        ))
    })?;
    let n_t = template.sources.len();
    let k = r.k;
    let map = match spec {
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
            let indices = read_vertex_map(file).bad_input(format!("reading the map of {name}"))?;
            if indices.len() != sources.len() {
                return Err(bad(format!(
                    "{}: {} indices, but {name} has {} sources",
                    file.display(),
                    indices.len(),
                    sources.len()
                )));
            }
            let m = VertexMap::from_indices(&file.display().to_string(), &indices, n_t)
                .bad_input(format!("the map of {name}"))?;
            (m, format!("index map {}", file.display()))
        }
        Some(MapSpec::Spheres(subject, tmpl)) => {
            let s = read_gifti_surface(subject).bad_input(format!("the sphere of {name}"))?;
            let t = read_gifti_surface(tmpl).bad_input("the template sphere")?;
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
                .bad_input(format!("mapping {name}"))?;
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
    let (map, how) = map;
    let carried = map
        .carry(&name, &r.attribution.source_map, k)
        .bad_input(format!("carrying the source map of {name}"))?;
    Ok((carried, how))
}

fn subject_result(name: String, r: &ResultFile, source_map: Vec<f64>) -> SubjectResult {
    SubjectResult {
        name,
        component_names: r.component_names.clone(),
        region_names: r.attribution.region_names.clone(),
        share: r.attribution.share.clone(),
        share_low: r.attribution.share_low.clone(),
        share_high: r.attribution.share_high.clone(),
        selection_frequency: r.attribution.selection_frequency.clone(),
        source_map,
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

/// The A and B folders of each subject (see [`subject_of`]).
fn pairs(results: &[PathBuf], a: &str, b: &str) -> Result<Vec<(String, usize, usize)>, CliError> {
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

fn fmt(v: f64, digits: usize) -> String {
    if v.is_finite() {
        format!("{v:.digits$}")
    } else {
        "n/a".to_string()
    }
}

fn print_table(c: &Comparison, alpha: f64) {
    for comp in &c.components {
        outln!();
        outln!(
            "{} — {} subjects, {} sign flips{}",
            comp.name,
            c.subjects.len(),
            comp.test.n_flips,
            if comp.test.exact { " (exact)" } else { "" }
        );
        // Where each subject's largest share lies, most common first.
        let n_s = c.subjects.len();
        let leaders = patchwise::attribution::leaders(&comp.lead_fraction);
        if !leaders.is_empty() {
            let list: Vec<String> = leaders
                .iter()
                .take(3)
                .map(|&r| {
                    format!(
                        "{} ({} of {n_s})",
                        c.region_names[r],
                        (comp.lead_fraction[r] * n_s as f64).round()
                    )
                })
                .collect();
            outln!("  leading region of the subjects: {}", list.join(", "));
        }
        let mut rows: Vec<usize> = (0..c.region_names.len())
            .filter(|&r| comp.test.p_corrected[r] < alpha)
            .collect();
        if rows.is_empty() {
            outln!("  no region survives the correction at α = {alpha}");
            continue;
        }
        rows.sort_by(|&x, &y| comp.mean_share[y].total_cmp(&comp.mean_share[x]));
        outln!(
            "  {:<28} {:>10} {:>17} {:>11} {:>9} {:>11}",
            "region",
            "mean share",
            "interval",
            "consistent",
            "p",
            "p corrected"
        );
        for r in rows {
            outln!(
                "  {:<28} {:>10} {:>17} {:>11} {:>9} {:>11}",
                c.region_names[r],
                fmt(comp.mean_share[r], 3),
                format!(
                    "[{}, {}]",
                    fmt(comp.mean_low[r], 3),
                    fmt(comp.mean_high[r], 3)
                ),
                if comp.consistency[r].is_finite() {
                    format!("{:.0} %", 100.0 * comp.consistency[r])
                } else {
                    "n/a".to_string()
                },
                fmt(comp.test.p_raw[r], 4),
                fmt(comp.test.p_corrected[r], 4)
            );
        }
    }
}

fn print_paired(p: &PairedComparison, alpha: f64, a: &str, b: &str) {
    for comp in &p.components {
        outln!();
        outln!(
            "{} — paired {a} − {b}, {} subjects",
            comp.name,
            p.pairs.len()
        );
        let rows: Vec<usize> = (0..p.region_names.len())
            .filter(|&r| comp.test.p_corrected[r] < alpha)
            .collect();
        if rows.is_empty() {
            outln!("  no region differs after the correction at α = {alpha}");
        }
        for r in rows {
            outln!(
                "  {:<28} {:>8} [{}, {}]  p corrected {}",
                p.region_names[r],
                fmt(comp.mean_difference[r], 3),
                fmt(comp.mean_low[r], 3),
                fmt(comp.mean_high[r], 3),
                fmt(comp.test.p_corrected[r], 4)
            );
        }
    }
}

/// The largest `--smoothing-cutoff`, in Gaussian widths.
const MAX_SMOOTHING_CUTOFF: f64 = 10.0;

/// Check the numeric options before any file is read or any cache entry is
/// looked up (they key the smoothing kernel's entry).
fn check_options(args: &Args) -> Result<(), CliError> {
    check_count("--bootstrap", args.bootstrap as u64, RESAMPLE_RECORD_BYTES)
        .bad_input("checking the options")?;
    check_count(
        "--sign-flips",
        args.sign_flips as u64,
        RESAMPLE_RECORD_BYTES,
    )
    .bad_input("checking the options")?;
    for (name, value) in [
        ("--smoothing-mm", args.smoothing_mm),
        ("--smoothing-cutoff", args.smoothing_cutoff),
        ("--transport-epsilon", args.transport_epsilon),
    ] {
        if !(value.is_finite() && value > 0.0) {
            return Err(bad(format!("{name} {value}: expected a positive number")));
        }
    }
    // A width beyond any head makes every map one constant; a cut-off far
    // beyond the Gaussian's reach (its weight at 10 σ is e^-50) makes the
    // kernel dense, n_sources² entries, without changing a number.
    let longest = patchwise::limits::MAX_PATCH_LENGTH_MM;
    if args.smoothing_mm > longest {
        return Err(bad(format!(
            "--smoothing-mm {:e}: expected at most {longest} mm (the largest head radius)",
            args.smoothing_mm
        )));
    }
    if args.smoothing_cutoff > MAX_SMOOTHING_CUTOFF {
        return Err(bad(format!(
            "--smoothing-cutoff {:e}: expected at most {MAX_SMOOTHING_CUTOFF} (widths; the Gaussian's weight there is e^-50)",
            args.smoothing_cutoff
        )));
    }
    Ok(())
}

/// Run `patchwise compare`.
pub fn exec(args: Args) -> Result<(), CliError> {
    if args.results.len() < 2 {
        return Err(bad(format!(
            "compare needs at least 2 result folders, got {}",
            args.results.len()
        )));
    }
    check_options(&args)?;
    let params = CompareParams {
        bootstrap_resamples: args.bootstrap,
        level: 0.95,
        sign_flips: args.sign_flips,
        seed: args.seed,
        alpha: args.alpha,
        transport_epsilon_relative: (!args.no_transport).then_some(args.transport_epsilon),
    };
    if !(args.alpha > 0.0 && args.alpha < 1.0) {
        return Err(bad(format!("--alpha {}: must lie in (0, 1)", args.alpha)));
    }
    if args.sign_flips == 0 {
        return Err(bad(
            "--sign-flips 0: expected at least 1 (the group test draws this many sign vectors; 10000 by default)"
                .to_string(),
        ));
    }
    // Random flips give p >= 1 / (flips + 1): too few and nothing can pass.
    let exact = args.results.len() < 31 && (1usize << args.results.len()) <= args.sign_flips;
    if !exact && 1.0 / (args.sign_flips as f64 + 1.0) >= args.alpha {
        errln!(
            "warning: --sign-flips {}: the smallest p-value is 1/{} = {:.3}, not below --alpha {}; no region can survive the correction",
            args.sign_flips,
            args.sign_flips + 1,
            1.0 / (args.sign_flips as f64 + 1.0),
            args.alpha
        );
    }
    // The same folder twice (under any spelling) would count one subject twice.
    let resolved: Vec<PathBuf> = args
        .results
        .iter()
        .map(|r| patchwise::io::staging::resolved(r))
        .collect();
    for (i, a) in resolved.iter().enumerate() {
        if let Some(j) = resolved[..i].iter().position(|b| b == a) {
            return Err(bad(format!(
                "{} and {} are the same result folder ({}); give each subject once",
                args.results[j].display(),
                args.results[i].display(),
                a.display()
            )));
        }
    }
    // The output folder is new, empty or ours, and neither a result folder,
    // inside one, nor holding one: it is replaced as a whole.
    patchwise::io::staging::check_output_folder(&args.out, "--out")?;
    let mut inputs: Vec<(&str, &Path)> = args
        .results
        .iter()
        .map(|r| ("result folder", r.as_path()))
        .collect();
    inputs.extend(args.cache.as_deref().map(|c| ("cache folder", c)));
    // The --map files are inputs too: the output folder may not hold them.
    let maps = parse_maps(&args.maps)?;
    for spec in maps.values() {
        match spec {
            MapSpec::Indices(file) => inputs.push(("--map file", file.as_path())),
            MapSpec::Spheres(subject, template) => {
                inputs.push(("--map sphere", subject.as_path()));
                inputs.push(("--map sphere", template.as_path()));
            }
        }
    }
    patchwise::io::staging::refuse_replaced_inputs(&args.out, "--out", None, &inputs)?;
    for dir in maps.keys() {
        if !args.results.iter().any(|r| normalise(r) == *dir) {
            return Err(bad(format!(
                "--map {}: not one of the result folders given",
                dir.display()
            )));
        }
    }
    let mut read = Vec::with_capacity(args.results.len());
    for dir in &args.results {
        read.push(read_one(dir)?);
    }
    let template_space = match &args.template {
        Some(name) => {
            let res = TemplateResolution::from_name(name).ok_or_else(|| {
                bad(format!(
                    "--template {name:?}: expected template or template-5k"
                ))
            })?;
            let t = template(res);
            let mut sources = SourceSpace::from_mesh(&t.mesh);
            sources.region = t.region;
            sources.region_names = t.region_names;
            TemplateSpace {
                name: res.name().to_string(),
                sources,
            }
        }
        None => {
            let i = (0..args.results.len())
                .find(|&i| !maps.contains_key(&normalise(&args.results[i])))
                .ok_or_else(|| {
                    bad("every result has a --map; name the template with --template".to_string())
                })?;
            let sources = read[i].0.sources.clone().ok_or_else(|| {
                bad(format!(
                    "{}: result.h5 holds no /sources; name the template with --template",
                    args.results[i].display()
                ))
            })?;
            TemplateSpace {
                name: args.results[i].display().to_string(),
                sources,
            }
        }
    };
    let mut subjects = Vec::with_capacity(read.len());
    let mut mapping = Vec::with_capacity(read.len());
    let mut inputs = Vec::with_capacity(read.len());
    let names = subject_names(&args.results);
    for ((dir, (r, hash)), name) in args.results.iter().zip(&read).zip(names) {
        let (map, how) = to_template(dir, r, &template_space, maps.get(&normalise(dir)))?;
        if r.attribution.region_names.is_empty() {
            return Err(bad(format!(
                "{}: the result has no region table (its dictionary had no source regions); compare needs region shares",
                dir.display()
            )));
        }
        if r.attribution.region_names != template_space.sources.region_names {
            return Err(bad(format!(
                "{}: its regions ({}) differ from the template's ({}); compare needs one region set",
                dir.display(),
                r.attribution.region_names.len(),
                template_space.sources.region_names.len()
            )));
        }
        subjects.push(subject_result(name, r, map));
        mapping.push(how);
        inputs.push((dir.join("result.h5").display().to_string(), hash.clone()));
    }
    let (group, paired, labels) = match &args.pair {
        Some(ab) => {
            let (a, b) = (ab[0].as_str(), ab[1].as_str());
            let p = pairs(&args.results, a, b)?;
            if p.len() < 2 {
                return Err(bad(format!(
                    "--pair {a} {b}: {} complete subject(s); at least 2 are needed",
                    p.len()
                )));
            }
            let names: Vec<String> = p.iter().map(|x| x.0.clone()).collect();
            let sa: Vec<SubjectResult> = p.iter().map(|x| subjects[x.1].clone()).collect();
            let sb: Vec<SubjectResult> = p.iter().map(|x| subjects[x.2].clone()).collect();
            let paired =
                compare_paired(&names, &sa, &sb, &params).bad_input("paired comparison")?;
            let idx: Vec<usize> = p.iter().map(|x| x.1).collect();
            (sa, Some(paired), Some((a.to_string(), b.to_string(), idx)))
        }
        None => (subjects, None, None),
    };
    let (mapping, inputs) = match &labels {
        Some((_, _, idx)) => (
            idx.iter().map(|&i| mapping[i].clone()).collect::<Vec<_>>(),
            idx.iter().map(|&i| inputs[i].clone()).collect::<Vec<_>>(),
        ),
        None => (mapping, inputs),
    };
    let mesh = template_space.sources.mesh();
    let solver = GeodesicSolver::new(&mesh).bad_input("the template mesh")?;
    let kernel = cached_kernel(&args, &template_space.sources, &solver)?;
    let costs = if args.no_transport {
        None
    } else {
        Some(
            region_transport_costs(
                &template_space.sources.positions,
                &template_space.sources.areas,
                &template_space.sources.region,
                template_space.sources.region_names.len(),
                &solver,
            )
            .compute("transport costs")?,
        )
    };
    let comparison = compare(
        &group,
        &kernel,
        &template_space.sources.region,
        costs.as_ref(),
        &params,
    )
    .bad_input("comparing the results")?;
    for w in comparison
        .warnings
        .iter()
        .chain(paired.iter().flat_map(|p| &p.warnings))
    {
        errln!("warning: {w}");
    }
    let record = CompareRecord {
        comparison: &comparison,
        paired: paired.as_ref(),
        inputs: &inputs,
        mapping: &mapping,
        smoothing_sigma_m: kernel.sigma_m,
        smoothing_cutoff_m: kernel.cutoff_m,
        n_template: template_space.sources.len(),
        params: &params,
    };
    let stage = Staging::new(&args.out).map_err(CliError::compute)?;
    write_compare(&stage.file("compare.h5"), &record).compute("writing compare.h5")?;
    write_regions_csv(&stage.file("regions.csv"), &comparison).compute("writing regions.csv")?;
    write_similarity_csv(&stage.file("similarity.csv"), &comparison)
        .compute("writing similarity.csv")?;
    if let Some(p) = &paired {
        write_paired_csv(&stage.file("paired.csv"), p).compute("writing paired.csv")?;
    }
    let summary = serde_json::to_string_pretty(&summary_json(&record)).unwrap_or_default();
    patchwise::io::atomic::write_atomic(&stage.file("summary.json"), summary.as_bytes())
        .map_err(|e| CliError::compute(anyhow::anyhow!("writing summary.json: {e}")))?;
    let dir = stage.commit()?;
    print_table(&comparison, args.alpha);
    if let (Some(p), Some((a, b, _))) = (&paired, &labels) {
        print_paired(p, args.alpha, a, b);
    }
    outln!();
    outln!(
        "comparison of {} results in {} (compare.h5, regions.csv, similarity.csv{}, summary.json)",
        comparison.subjects.len(),
        dir.display(),
        if paired.is_some() { ", paired.csv" } else { "" }
    );
    outln!("caution: {CAUTION}");
    if !args.no_report {
        super::report::compare_report_after_outputs(&dir)?;
    }
    Ok(())
}
