//! From a job script to a validated list of jobs: defaults merged, paths
//! resolved, globs expanded, names checked; and each job's input hash.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use super::error::BatchError;
use super::script::{line_column, option_keys, LenientScript, RawScript, NO_REPORT};
use crate::io::cache::{file_hash, ContentHash};
use crate::job::AttributeParams;

/// One job, ready to run: its options are merged with `[defaults]` and its
/// paths are absolute or relative to the working folder (resolved from the
/// script's folder).
#[derive(Debug, Clone, PartialEq)]
pub struct Job {
    /// The job's name, also its output folder's name. A job from a glob
    /// pattern is named `<table name>-<file stem>`, or `<file stem>` when
    /// the stem already starts with `<table name>-` or `<table name>_`.
    pub name: String,
    /// The `name` of the `[[job]]` table it came from (equal to `name`
    /// unless the decoder was a glob pattern).
    pub group: String,
    /// The decoder file.
    pub decoder: PathBuf,
    /// `attribute`'s parameters for this job: its defaults, then
    /// `[defaults]`, then the job's own keys; paths resolved.
    pub params: AttributeParams,
    /// The keys set by `[defaults]` or the job (sorted): they, not the
    /// defaults of this version, enter the job record and the input hash.
    pub set_keys: Vec<String>,
    /// `no_report`: no report.html in the job's folder.
    pub no_report: bool,
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
        files.extend(file_values(&self.params));
        files
    }

    /// The options as set, for job.json and the input hash: every option
    /// key (sorted), with its value when `[defaults]` or the job set it and
    /// null otherwise (null means `attribute`'s default of this version).
    pub fn options_json(&self) -> serde_json::Value {
        let all = match serde_json::to_value(&self.params) {
            Ok(serde_json::Value::Object(map)) => map,
            _ => serde_json::Map::new(),
        };
        let mut out = serde_json::Map::new();
        for key in option_keys() {
            let set = self.set_keys.contains(&key);
            let value = if !set {
                serde_json::Value::Null
            } else if key == NO_REPORT {
                serde_json::Value::Bool(self.no_report)
            } else {
                all.get(&key).cloned().unwrap_or(serde_json::Value::Null)
            };
            out.insert(key, value);
        }
        serde_json::Value::Object(out)
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
    let defaults = match &raw.defaults {
        Some(d) => {
            check_keys(
                d.get_ref(),
                None,
                text,
                (d.span().start, d.span().end),
                path,
            )?;
            d.get_ref().clone()
        }
        None => toml::Table::new(),
    };
    let mut jobs = Vec::new();
    for spanned in &raw.job {
        let (start, end) = (spanned.span().start, spanned.span().end);
        let line = line_column(text, start).0;
        let mut table = spanned.get_ref().clone();
        let name = take_string(&mut table, "name", text, start, path)?;
        let decoder = take_string(&mut table, "decoder", text, start, path)?;
        check_keys(&table, Some(&name), text, (start, end), path)?;
        let raw_job = RawJob {
            name,
            decoder,
            options: table,
        };
        expand(&raw_job, &defaults, line, path, folder, &mut jobs)?;
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

/// A `[[job]]` table as written: its name, its decoder (a file or a glob
/// pattern) and its option keys.
struct RawJob {
    name: String,
    decoder: String,
    options: toml::Table,
}

/// Take the string `key` out of the job table starting at byte `start`.
fn take_string(
    table: &mut toml::Table,
    key: &str,
    text: &str,
    start: usize,
    path: &Path,
) -> Result<String, BatchError> {
    let (line, column) = line_column(text, start);
    let parse = |message: String| BatchError::Parse {
        path: path.to_path_buf(),
        line,
        column,
        job: None,
        message,
    };
    match table.remove(key) {
        Some(toml::Value::String(s)) => Ok(s),
        Some(other) => Err(parse(format!(
            "{key} = {other}: expected a string in the [[job]] table"
        ))),
        None => Err(parse(format!("missing field `{key}` in the [[job]] table"))),
    }
}

/// Every key of `table` (whose text spans `start..end`) is an option key;
/// an unknown key is named with its line and column.
fn check_keys(
    table: &toml::Table,
    job: Option<&str>,
    text: &str,
    (start, end): (usize, usize),
    path: &Path,
) -> Result<(), BatchError> {
    let known = option_keys();
    let Some(key) = table.keys().find(|k| !known.contains(k)) else {
        return Ok(());
    };
    // The key's own line: the first line of the table's body that sets
    // it (the parser's span may cover the header only: the body runs to
    // the next table header).
    let after = text.get(start.min(text.len())..).unwrap_or("");
    let header_end = after.find('\n').map_or(after.len(), |n| n + 1);
    let body_len = after[header_end..]
        .match_indices('\n')
        .map(|(i, _)| header_end + i + 1)
        .find(|&i| after[i..].trim_start().starts_with('['))
        .unwrap_or(after.len());
    let body = &after[..body_len.max(end.saturating_sub(start)).min(after.len())];
    let offset = body
        .match_indices(key.as_str())
        .find(|(i, _)| {
            let before = &body[..*i];
            let line_start = before.rfind('\n').map_or(0, |n| n + 1);
            // The whole key: `lam` must not be found at the start of `lambda`.
            let after = body[*i + key.len()..].chars().next();
            before[line_start..].trim().is_empty()
                && after.is_none_or(|c| c.is_whitespace() || c == '=' || c == '.')
        })
        .map_or(start, |(i, _)| start + i);
    let (line, column) = line_column(text, offset);
    Err(BatchError::Parse {
        path: path.to_path_buf(),
        line,
        column,
        job: job.map(str::to_string),
        message: format!(
            "unknown field `{key}`, expected one of {}",
            known
                .iter()
                .map(|k| format!("`{k}`"))
                .collect::<Vec<_>>()
                .join(", ")
        ),
    })
}

/// The job's file-valued options (the decoder, which a job names apart,
/// left out).
fn file_values(p: &AttributeParams) -> Vec<(&'static str, PathBuf)> {
    let mut files = p.files();
    files.retain(|(key, _)| *key != "decoder" && *key != "patterns");
    // The forward model's files first (the order the checks report in).
    let forward: Vec<&str> = p.forward.files().iter().map(|(k, _)| *k).collect();
    files.sort_by_key(|(key, _)| !forward.contains(key));
    files
}

/// Resolve every file-valued option against the script's folder.
fn resolve_files(p: &mut AttributeParams, folder: &Path) {
    for (key, f) in p.files_mut() {
        if key != "decoder" && key != "patterns" {
            *f = resolve(folder, &f.to_string_lossy());
        }
    }
}

/// A message of `attribute`'s checks in the script's words: each flag
/// (`--radii-mm`) becomes its key (`radii_mm`).
fn as_script_keys(message: &str) -> String {
    let mut out = String::with_capacity(message.len());
    let mut rest = message;
    while let Some(i) = rest.find("--") {
        out.push_str(&rest[..i]);
        let after = &rest[i + 2..];
        let end = after
            .find(|c: char| !(c.is_ascii_lowercase() || c == '-'))
            .unwrap_or(after.len());
        if end == 0 {
            out.push_str("--");
        } else {
            out.push_str(&after[..end].replace('-', "_"));
            // A flag and its number read `key = value` in a script.
            let value = after[end..]
                .strip_prefix(' ')
                .and_then(|v| v.split([' ', ':', ',']).next())
                .unwrap_or("");
            if value.parse::<f64>().is_ok() {
                out.push_str(" =");
            }
        }
        rest = &after[end..];
    }
    out.push_str(rest);
    out
}

/// `[defaults]` then the job's keys, read into `attribute`'s parameters
/// (its defaults fill the rest) and checked as `attribute` checks them.
fn job_params(
    defaults: &toml::Table,
    options: &toml::Table,
) -> Result<(AttributeParams, Vec<String>, bool), String> {
    let mut merged = defaults.clone();
    for (k, v) in options {
        merged.insert(k.clone(), v.clone());
    }
    let mut set_keys: Vec<String> = merged.keys().cloned().collect();
    set_keys.sort();
    let no_report = match merged.remove(NO_REPORT) {
        None => false,
        Some(toml::Value::Boolean(b)) => b,
        Some(other) => return Err(format!("{NO_REPORT} = {other}: expected true or false")),
    };
    let read = |table: toml::Table| -> Result<AttributeParams, String> {
        toml::Value::Table(table)
            .try_into()
            .map_err(|e: toml::de::Error| e.message().trim().to_string())
    };
    let params = read(merged.clone()).map_err(|message| {
        // Name the key: the first that fails on its own.
        merged
            .iter()
            .find_map(|(k, v)| {
                read(toml::Table::from_iter([(k.clone(), v.clone())]))
                    .err()
                    .map(|m| format!("{k} = {v}: {m}"))
            })
            .unwrap_or(message)
    })?;
    Ok((params, set_keys, no_report))
}

/// A job folder's completion marker, written last into the staged folder:
/// the job's name, input hash, options and status.
pub const MARKER_FILE: &str = "job.json";

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
    defaults: &toml::Table,
    line: usize,
    path: &Path,
    folder: &Path,
    out: &mut Vec<Job>,
) -> Result<(), BatchError> {
    let group = raw.name.clone();
    let err = |job: &str, message: String| BatchError::Job {
        path: path.to_path_buf(),
        line,
        job: job.to_string(),
        message,
    };
    check_name(&group).map_err(|m| err(&group, m))?;
    let (mut params, set_keys, no_report) =
        job_params(defaults, &raw.options).map_err(|m| err(&group, m))?;
    // The values as `attribute` checks them (its decoder stands in until
    // the pattern is expanded).
    params.inputs.decoder = Some(PathBuf::from(&raw.decoder));
    params
        .validate()
        .map_err(|e| err(&group, as_script_keys(&e.chain_text())))?;
    resolve_files(&mut params, folder);
    for (key, file) in file_values(&params) {
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
    let decoder = &raw.decoder;
    if !is_pattern(decoder) {
        let file = resolve(folder, decoder);
        if !file.is_file() {
            return Err(err(
                &group,
                format!("decoder {} does not exist", file.display()),
            ));
        }
        params.inputs.decoder = Some(file.clone());
        out.push(Job {
            name: group.clone(),
            group,
            decoder: file,
            params,
            set_keys,
            no_report,
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
        // A stem that already starts with the table's name (`sub` and
        // `sub-01_csp.npz`) is the job's name as it is: `sub-01_csp`, not
        // `sub-sub-01_csp`.
        let name =
            if stem.starts_with(&format!("{group}-")) || stem.starts_with(&format!("{group}_")) {
                stem
            } else {
                format!("{group}-{stem}")
            };
        check_name(&name).map_err(|m| err(&name, format!("{m} (from {})", file.display())))?;
        let mut params = params.clone();
        params.inputs.decoder = Some(file.clone());
        out.push(Job {
            name,
            group: group.clone(),
            decoder: file,
            params,
            set_keys: set_keys.clone(),
            no_report,
            line,
            pattern: Some(pattern.clone()),
        });
    }
    Ok(())
}

/// The input hash of a job: BLAKE3 over the software version, the job's
/// options (as set; an unset option means `attribute`'s default of this
/// version) and the content hashes of its input files (decoder and every
/// file-valued option). File names and the job's name do not enter, so
/// moving the data or renaming the script keeps the hash; changing a
/// value or a file's bytes changes it.
pub fn input_hash(job: &Job) -> Result<String, BatchError> {
    let hash_of = |key: &str, p: &Path| {
        file_hash(p).map_err(|source| BatchError::Input {
            job: job.name.clone(),
            key: key.to_string(),
            path: p.to_path_buf(),
            source,
        })
    };
    let mut h = ContentHash::new("batch-job-v1");
    h.str(env!("CARGO_PKG_VERSION"));
    h.str("decoder").str(&hash_of("decoder", &job.decoder)?);
    let files: BTreeMap<&str, PathBuf> = file_values(&job.params).into_iter().collect();
    let values = job.options_json();
    if let serde_json::Value::Object(map) = values {
        for (key, value) in map {
            if value.is_null() {
                continue;
            }
            h.str(&key);
            match files.get(key.as_str()) {
                Some(p) => h.str("file").str(&hash_of(&key, p)?),
                None => h.str("value").str(&value.to_string()),
            };
        }
    }
    Ok(h.hex())
}
