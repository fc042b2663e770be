//! From a job script to a validated list of jobs: defaults merged, paths
//! resolved, globs expanded, names checked; and each job's input hash.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Serialize;

use super::error::BatchError;
use super::script::{line_column, JobOptions, LenientScript, RawJob, RawScript};
use crate::geometry::TemplateResolution;
use crate::io::cache::{file_sha256, ContentHash};
use crate::limits::{check_count, MAX_PATCH_LENGTH_MM, RESAMPLE_RECORD_BYTES};
use crate::montage::standard_names;

/// One job, ready to run: its options are merged with `[defaults]` and its
/// paths are absolute or relative to the working folder (resolved from the
/// script's folder).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Job {
    /// The job's name, also its output folder's name. A job from a glob
    /// pattern is named `<table name>-<file stem>`.
    pub name: String,
    /// The `name` of the `[[job]]` table it came from (equal to `name`
    /// unless the decoder was a glob pattern).
    pub group: String,
    /// The decoder file.
    pub decoder: PathBuf,
    /// The options, defaults filled in from `[defaults]`.
    pub options: JobOptions,
    /// 1-based line of the job's `[[job]]` table in the script.
    pub line: usize,
    /// The glob pattern (resolved against the script's folder) the decoder
    /// came from, when the table's decoder was one.
    pub pattern: Option<String>,
}

impl Job {
    /// The job's input files as (key, path): the decoder and every
    /// file-valued option (names of standard montages and templates left out).
    pub fn input_files(&self) -> Vec<(&'static str, PathBuf)> {
        let mut files = vec![("decoder", self.decoder.clone())];
        files.extend(input_files(&self.options));
        files
    }
}

/// The `[compare]` table: compare the attributions of all jobs on one
/// template cortex (`patchwise compare`), optionally pairing decoders.
#[derive(Debug, Clone, PartialEq)]
pub struct CompareSpec {
    /// Output folder of the comparison.
    pub out: PathBuf,
    /// Paired comparison of decoders A and B: every job is named
    /// `<subject>-A` or `<subject>-B` (the rule of `patchwise compare --pair`).
    pub pair: Option<[String; 2]>,
    /// 1-based line of the table.
    pub line: usize,
}

/// A validated job script.
#[derive(Debug, Clone, PartialEq)]
pub struct Script {
    /// The script file.
    pub path: PathBuf,
    /// The jobs, sorted by name (names are unique).
    pub jobs: Vec<Job>,
    /// The optional comparison.
    pub compare: Option<CompareSpec>,
}

/// Read and validate the job script at `path`.
pub fn load_script(path: &Path) -> Result<Script, BatchError> {
    let text = crate::io::input::read_input_string(path).map_err(|source| BatchError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    let folder = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    parse_script(&text, path, folder)
}

/// Validate the job script `text` (read from `path`, used in messages);
/// relative paths are resolved against `folder`. Input files must exist.
pub fn parse_script(text: &str, path: &Path, folder: &Path) -> Result<Script, BatchError> {
    let raw: RawScript = toml::from_str(text).map_err(|e| parse_error(text, path, &e))?;
    let defaults = raw
        .defaults
        .as_ref()
        .map(|d| d.get_ref().clone())
        .unwrap_or_default();
    let mut jobs = Vec::new();
    for spanned in &raw.job {
        let line = line_column(text, spanned.span().start).0;
        expand(spanned.get_ref(), &defaults, line, path, folder, &mut jobs)?;
    }
    if jobs.is_empty() {
        return Err(BatchError::NoJobs {
            path: path.to_path_buf(),
        });
    }
    jobs.sort_by(|a, b| a.name.cmp(&b.name).then(a.line.cmp(&b.line)));
    for pair in jobs.windows(2) {
        if pair[0].name == pair[1].name {
            return Err(BatchError::DuplicateName {
                path: path.to_path_buf(),
                name: pair[0].name.clone(),
                first_line: pair[0].line,
                second_line: pair[1].line,
            });
        }
    }
    let compare = match &raw.compare {
        None => None,
        Some(c) => {
            let line = line_column(text, c.span().start).0;
            let table_err = |message: String| BatchError::Table {
                path: path.to_path_buf(),
                line,
                table: "compare",
                message,
            };
            let c = c.get_ref();
            if c.out.trim().is_empty() {
                return Err(table_err("out is empty; expected a folder".to_string()));
            }
            if jobs.len() < 2 {
                return Err(table_err(format!(
                    "a comparison needs at least 2 jobs, the script has {}",
                    jobs.len()
                )));
            }
            let pair = match &c.pair {
                None => None,
                Some(p) => Some(check_pair(p, &jobs, path).map_err(|e| match e {
                    PairError::Table(m) => table_err(m),
                    PairError::Job(e) => e,
                })?),
            };
            Some(CompareSpec {
                out: resolve(folder, &c.out),
                pair,
                line,
            })
        }
    };
    Ok(Script {
        path: path.to_path_buf(),
        jobs,
        compare,
    })
}

enum PairError {
    Table(String),
    Job(BatchError),
}

/// `pair = [A, B]`: two distinct labels, and every job named
/// `<subject>-A` or `<subject>-B`.
fn check_pair(pair: &[String], jobs: &[Job], path: &Path) -> Result<[String; 2], PairError> {
    let [a, b] = <[String; 2]>::try_from(pair.to_vec()).map_err(|p| {
        PairError::Table(format!(
            "pair has {} entries; expected two decoder labels, pair = [\"A\", \"B\"]",
            p.len()
        ))
    })?;
    if a == b || a.is_empty() || b.is_empty() {
        return Err(PairError::Table(format!(
            "pair = [{a:?}, {b:?}]: expected two different, non-empty labels"
        )));
    }
    for job in jobs {
        let ok = [&a, &b].iter().any(|l| {
            job.name
                .strip_suffix(l.as_str())
                .is_some_and(|s| s.len() > 1 && s.ends_with('-'))
        });
        if !ok {
            return Err(PairError::Job(BatchError::Job {
                path: path.to_path_buf(),
                line: job.line,
                job: job.name.clone(),
                message: format!(
                    "[compare] pair = [{a:?}, {b:?}] pairs jobs named <subject>-{a} with <subject>-{b}; this name ends in neither"
                ),
            }));
        }
    }
    Ok([a, b])
}

/// A TOML or schema error with its line, column and (when the line is inside
/// a `[[job]]` table) the job's name.
fn parse_error(text: &str, path: &Path, e: &toml::de::Error) -> BatchError {
    let offset = e.span().map_or(0, |s| s.start);
    let (line, column) = line_column(text, offset);
    let job = toml::from_str::<LenientScript>(text)
        .ok()
        .and_then(|s| job_at(text, &s, offset));
    BatchError::Parse {
        path: path.to_path_buf(),
        line,
        column,
        job,
        message: e.message().trim().to_string(),
    }
}

/// The name of the `[[job]]` table holding byte `offset`: the last one
/// whose header is before it with no other table header in between (the
/// parser's span of a table of an array covers its header).
fn job_at(text: &str, script: &LenientScript, offset: usize) -> Option<String> {
    let table = script
        .job
        .iter()
        .filter(|t| t.span().start <= offset)
        .max_by_key(|t| t.span().start)?;
    let body = text.get(table.span().end.min(offset)..offset)?;
    // A line that opens another table ends the job's body.
    if body
        .lines()
        .skip(1)
        .any(|l| l.trim_start().starts_with('['))
    {
        return None;
    }
    Some(
        table
            .get_ref()
            .get("name")
            .and_then(|n| n.as_str())
            .map_or_else(
                || format!("at line {}", line_column(text, table.span().start).0),
                str::to_string,
            ),
    )
}

fn resolve(folder: &Path, value: &str) -> PathBuf {
    let p = Path::new(value);
    if p.is_absolute() {
        p.to_path_buf()
    } else {
        folder.join(p)
    }
}

/// Whether an option's value is a name (a standard montage, a template, the
/// default head) rather than a file, as `attribute` decides.
fn is_named(key: &str, value: &str) -> bool {
    match key {
        "montage" => {
            standard_names()
                .iter()
                .any(|n| n.eq_ignore_ascii_case(value))
                || value.eq_ignore_ascii_case("10-5")
        }
        "sources" => TemplateResolution::from_name(value).is_some(),
        "head" => value == "default",
        _ => false,
    }
}

/// The file-valued options of a job, as (key, path); names are left out.
fn input_files(options: &JobOptions) -> Vec<(&'static str, PathBuf)> {
    let entries = [
        ("montage", &options.montage),
        ("sources", &options.sources),
        ("head", &options.head),
        ("regions", &options.regions),
        ("channels", &options.channels),
        ("dictionary", &options.dictionary),
        ("noise_covariance", &options.noise_covariance),
    ];
    entries
        .into_iter()
        .filter_map(|(key, v)| {
            v.as_ref()
                .filter(|v| !is_named(key, v))
                .map(|v| (key, PathBuf::from(v)))
        })
        .collect()
}

fn resolve_options(options: &mut JobOptions, folder: &Path) {
    for (key, value) in [
        ("montage", &mut options.montage),
        ("sources", &mut options.sources),
        ("head", &mut options.head),
        ("regions", &mut options.regions),
        ("channels", &mut options.channels),
        ("dictionary", &mut options.dictionary),
        ("noise_covariance", &mut options.noise_covariance),
    ] {
        if let Some(v) = value {
            if !is_named(key, v) {
                *v = resolve(folder, v).to_string_lossy().into_owned();
            }
        }
    }
}

/// Values out of range, as `attribute` would refuse them, found before any
/// job runs.
fn check_values(o: &JobOptions) -> Result<(), String> {
    let one_of = |key: &str, value: &Option<String>, allowed: &[&str]| match value {
        Some(v) if !allowed.contains(&v.as_str()) => Err(format!(
            "{key} = {v:?}; expected one of {}",
            allowed.join(", ")
        )),
        _ => Ok(()),
    };
    one_of("reference", &o.reference, &["average", "none"])?;
    one_of("profile", &o.profile, &["gaussian", "flat"])?;
    one_of("atom_orientation", &o.atom_orientation, &["normal", "free"])?;
    one_of(
        "lambda_rule",
        &o.lambda_rule,
        &["noise", "bic", "aic", "gcv"],
    )?;
    if let Some(sd) = o.noise_sd {
        if !(sd.is_finite() && sd > 0.0) {
            return Err(format!(
                "noise_sd = {sd}; expected a positive standard deviation in the patterns' units"
            ));
        }
    }
    if let Some(r) = o.lambda_ratio {
        if !(r.is_finite() && r > 0.0 && r <= 1.0) {
            return Err(format!("lambda_ratio = {r}; expected 0 < R <= 1"));
        }
        if o.lambda.is_some() {
            return Err("both lambda_ratio and lambda are set; give one".to_string());
        }
    }
    if let Some(l) = o.lambda {
        if !(l.is_finite() && l > 0.0) {
            return Err(format!("lambda = {l}; expected a positive number"));
        }
    }
    if let Some(t) = o.tol {
        if !(t.is_finite() && t > 0.0 && t < 1.0) {
            return Err(format!("tol = {t}; expected 0 < tol < 1"));
        }
    }
    if let Some(r) = &o.radii_mm {
        if r.is_empty()
            || r.iter()
                .any(|v| !(v.is_finite() && *v > 0.0 && *v <= MAX_PATCH_LENGTH_MM))
        {
            return Err(format!(
                "radii_mm = {r:?}; expected a non-empty list of positive lengths in mm, at most {MAX_PATCH_LENGTH_MM}"
            ));
        }
    }
    if let Some(r) = o.resamples {
        check_count("resamples", r, RESAMPLE_RECORD_BYTES).map_err(|e| e.to_string())?;
    }
    if let Some(s) = o.spacing_mm {
        if !(s.is_finite() && s > 0.0 && s <= MAX_PATCH_LENGTH_MM) {
            return Err(format!(
                "spacing_mm = {s}; expected a positive length in mm, at most {MAX_PATCH_LENGTH_MM}"
            ));
        }
    }
    Ok(())
}

/// The batch's summary file in the output folder; no job may take its name.
pub const SUMMARY_FILE: &str = "batch-summary.csv";

/// Names become folder names: letters, digits, `.`, `_`, `-`, not starting
/// with `.` (hidden folders are the staging area).
fn check_name(name: &str) -> Result<(), String> {
    if name.is_empty() {
        return Err("the name is empty".to_string());
    }
    if name.starts_with('.') {
        return Err("the name starts with '.'".to_string());
    }
    if name == SUMMARY_FILE {
        return Err(format!(
            "the name {SUMMARY_FILE:?} is the batch's own summary file; choose another"
        ));
    }
    if let Some(c) = name
        .chars()
        .find(|c| !(c.is_ascii_alphanumeric() || matches!(c, '.' | '_' | '-')))
    {
        return Err(format!(
            "the name holds {c:?}; expected letters, digits, '.', '_' or '-' (it names a folder)"
        ));
    }
    Ok(())
}

fn is_pattern(s: &str) -> bool {
    s.contains(['*', '?', '['])
}

/// One `[[job]]` table into one job, or one job per file of its glob.
fn expand(
    raw: &RawJob,
    defaults: &JobOptions,
    line: usize,
    path: &Path,
    folder: &Path,
    out: &mut Vec<Job>,
) -> Result<(), BatchError> {
    let group = raw.name.get_ref().clone();
    let err = |job: &str, message: String| BatchError::Job {
        path: path.to_path_buf(),
        line,
        job: job.to_string(),
        message,
    };
    check_name(&group).map_err(|m| err(&group, m))?;
    let mut options = raw.options().or(defaults);
    check_values(&options).map_err(|m| err(&group, m))?;
    resolve_options(&mut options, folder);
    for (key, file) in input_files(&options) {
        if !file.is_file() {
            let what = if matches!(key, "montage" | "sources" | "head") {
                " (neither a known name nor an existing file)"
            } else {
                ""
            };
            return Err(err(
                &group,
                format!("{key} {} does not exist{what}", file.display()),
            ));
        }
    }
    let decoder = raw.decoder.get_ref();
    if !is_pattern(decoder) {
        let file = resolve(folder, decoder);
        if !file.is_file() {
            return Err(err(
                &group,
                format!("decoder {} does not exist", file.display()),
            ));
        }
        out.push(Job {
            name: group.clone(),
            group,
            decoder: file,
            options,
            line,
            pattern: None,
        });
        return Ok(());
    }
    let pattern = if Path::new(decoder).is_absolute() {
        decoder.clone()
    } else {
        format!(
            "{}/{decoder}",
            glob::Pattern::escape(&folder.to_string_lossy())
        )
    };
    let paths = glob::glob(&pattern)
        .map_err(|e| err(&group, format!("decoder pattern {decoder:?}: {e}")))?;
    let mut files: Vec<PathBuf> = paths
        .filter_map(Result::ok)
        .filter(|p| p.is_file())
        .collect();
    files.sort();
    if files.is_empty() {
        return Err(err(
            &group,
            format!("decoder pattern {pattern:?} matches no file"),
        ));
    }
    for file in files {
        let stem = file
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default();
        let name = format!("{group}-{stem}");
        check_name(&name).map_err(|m| err(&name, format!("{m} (from {})", file.display())))?;
        out.push(Job {
            name,
            group: group.clone(),
            decoder: file,
            options: options.clone(),
            line,
            pattern: Some(pattern.clone()),
        });
    }
    Ok(())
}

/// The input hash of a job: SHA-256 over the software version, the job's
/// options (as set; an unset option means `attribute`'s default of this
/// version) and the content hashes of its input files (decoder and every
/// file-valued option). File names and the job's name do not enter, so
/// moving the data or renaming the script keeps the hash; changing a
/// value or a file's bytes changes it.
pub fn input_hash(job: &Job) -> Result<String, BatchError> {
    let file_hash = |key: &str, p: &Path| {
        file_sha256(p).map_err(|source| BatchError::Input {
            job: job.name.clone(),
            key: key.to_string(),
            path: p.to_path_buf(),
            source,
        })
    };
    let mut h = ContentHash::new("batch-job-v1");
    h.str(env!("CARGO_PKG_VERSION"));
    h.str("decoder").str(&file_hash("decoder", &job.decoder)?);
    let files: BTreeMap<&str, PathBuf> = input_files(&job.options).into_iter().collect();
    let values = serde_json::to_value(&job.options).unwrap_or_default();
    if let serde_json::Value::Object(map) = values {
        for (key, value) in map {
            if value.is_null() {
                continue;
            }
            h.str(&key);
            match files.get(key.as_str()) {
                Some(p) => h.str("file").str(&file_hash(&key, p)?),
                None => h.str("value").str(&value.to_string()),
            };
        }
    }
    Ok(h.hex())
}
