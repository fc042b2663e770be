//! A batch's checks before any job runs and its view of the output folder:
//! which job folders may be replaced, which are done (their marker's input
//! hash), which outputs would overlap inputs (also through a glob pattern).

use std::path::{Path, PathBuf};

use super::{Job, MARKER_FILE as MARKER};
use crate::job::JobError;

fn bad(message: String) -> JobError {
    JobError::input(message)
}

/// `out/<name>` may be replaced by this job only when it is missing or is
/// this job's folder: its marker names the job, and it holds nothing but
/// files patchwise writes. Anything else is the user's and is refused.
pub fn check_job_folder(out: &Path, name: &str) -> Result<(), JobError> {
    let dir = out.join(name);
    let Ok(meta) = std::fs::symlink_metadata(&dir) else {
        return Ok(());
    };
    let marker = std::fs::read_to_string(dir.join(MARKER))
        .ok()
        .and_then(|t| serde_json::from_str::<serde_json::Value>(&t).ok());
    let ours = meta.is_dir()
        && marker.is_some_and(|m| m["job"].as_str() == Some(name))
        && crate::io::staging::foreign_entries(&dir).is_ok_and(|f| f.is_empty());
    if ours {
        return Ok(());
    }
    Err(bad(format!(
        "--out {}: {} exists but is not the folder of job {name} (no {MARKER} naming it, or files patchwise did not write); a batch never replaces what it did not make: move it, rename the job or choose another --out",
        out.display(),
        dir.display()
    )))
}

/// Check the batch's outputs before any job runs: `--out` can be a folder;
/// every job folder to be written is missing or the job's own; no job
/// reads a file the batch writes (a job folder, the summary, the
/// `[compare]` folder), also not through a glob that would match them on a
/// rerun; the `[compare]` folder is neither a job folder, nor inside one,
/// nor `--out` or above it, and is new, empty or ours.
pub fn check_outputs(
    out: &Path,
    jobs: &[Job],
    mine: &[&Job],
    compare_out: Option<&Path>,
) -> Result<(), JobError> {
    crate::io::staging::check_folder_path(out, "--out")?;
    for job in mine {
        check_job_folder(out, &job.name)?;
    }
    let out_resolved = crate::io::staging::resolved(out);
    let mut written: Vec<PathBuf> = jobs.iter().map(|j| out.join(&j.name)).collect();
    written.push(out.join(crate::batch::SUMMARY_FILE));
    if let Some(c) = compare_out {
        written.push(c.to_path_buf());
    }
    let written: Vec<PathBuf> = written
        .iter()
        .map(|w| crate::io::staging::resolved(w))
        .collect();
    for job in jobs {
        for (key, file) in job.input_files() {
            let file_resolved = crate::io::staging::resolved(&file);
            if let Some(w) = written.iter().find(|w| file_resolved.starts_with(w)) {
                return Err(bad(format!(
                    "job {} (line {}): {key} {} lies in {}, which this batch writes; keep inputs outside the batch's outputs",
                    job.name,
                    job.line,
                    file.display(),
                    w.display()
                )));
            }
        }
        if let Some(pattern) = job.pattern.as_deref().and_then(absolute_pattern) {
            for j in jobs {
                for f in crate::io::staging::OUR_FILES {
                    let produced = out_resolved.join(&j.name).join(f);
                    if pattern.matches_path(&produced) {
                        return Err(bad(format!(
                            "job {} (line {}): the decoder pattern {} would match {}, a file this batch writes; narrow the pattern or move --out",
                            job.name,
                            job.line,
                            pattern.as_str(),
                            produced.display()
                        )));
                    }
                }
            }
        }
    }
    if let Some(c) = compare_out {
        // Compared by path, before the job folders exist: the comparison is
        // replaced as a whole, so it may neither hold nor sit inside what
        // the jobs write.
        let compare_resolved = crate::io::staging::resolved(c);
        let mut folders: Vec<PathBuf> = jobs.iter().map(|j| out_resolved.join(&j.name)).collect();
        folders.push(out_resolved.clone());
        for folder in &folders {
            let inside_job = folder != &out_resolved && compare_resolved.starts_with(folder);
            if inside_job || folder.starts_with(&compare_resolved) {
                return Err(bad(format!(
                    "[compare] out {}: overlaps {}, which the batch writes; give the comparison a folder of its own (e.g. beside the job folders)",
                    c.display(),
                    folder.display()
                )));
            }
        }
        crate::io::staging::check_output_folder(c, "[compare] out")?;
    }
    Ok(())
}

/// A decoder glob pattern made absolute (against the working folder), with
/// `.` and `..` taken out, and its literal leading folders resolved, to be
/// matched against resolved output paths: `study/jobs/../out/**/*.h5` must
/// be seen to reach `study/out`. A `..` right after `**` is replaced by a
/// pattern that matches at least as much (`a/**/..` becomes `a/../**`), so
/// the check may refuse more than needed, never less.
fn absolute_pattern(pattern: &str) -> Option<glob::Pattern> {
    let is_glob = |c: &str| c.contains(['*', '?', '[']);
    // (component, whether it is a literal path name)
    let mut parts: Vec<(String, bool)> = Vec::new();
    if !Path::new(pattern).is_absolute() {
        let cwd = std::env::current_dir().ok()?;
        for c in cwd.components() {
            if let std::path::Component::Normal(name) = c {
                parts.push((name.to_string_lossy().into_owned(), true));
            }
        }
    }
    for c in pattern.split('/') {
        match c {
            "" | "." => {}
            ".." => {
                if parts.last().is_some_and(|(p, _)| p == "**") {
                    parts.pop();
                    parts.pop();
                    parts.push(("**".to_string(), false));
                } else {
                    parts.pop();
                }
            }
            other => parts.push((other.to_string(), !is_glob(other))),
        }
    }
    // Resolve the literal leading folders as the outputs are resolved.
    let n_literal = parts.iter().take_while(|(_, literal)| *literal).count();
    let prefix: PathBuf = std::iter::once("/".to_string())
        .chain(parts[..n_literal].iter().map(|(p, _)| p.clone()))
        .collect();
    let resolved_prefix = crate::io::staging::resolved(&prefix);
    let mut text = glob::Pattern::escape(&resolved_prefix.to_string_lossy());
    for (p, literal) in &parts[n_literal..] {
        if !text.ends_with('/') {
            text.push('/');
        }
        if *literal {
            text.push_str(&glob::Pattern::escape(p));
        } else {
            text.push_str(p);
        }
    }
    glob::Pattern::new(&text).ok()
}

/// Whether `out/<name>` holds a finished job with this input hash.
pub fn is_done(out: &Path, name: &str, hash: &str) -> bool {
    let dir = out.join(name);
    let Ok(text) = std::fs::read_to_string(dir.join(MARKER)) else {
        return false;
    };
    let Ok(marker) = serde_json::from_str::<serde_json::Value>(&text) else {
        return false;
    };
    marker["input_hash"].as_str() == Some(hash) && dir.join("result.h5").is_file()
}

/// Remove what killed runs on this machine left in `out`: the staging
/// folders of jobs and the summary's temporary file, each of a process that
/// no longer exists. Those of live processes (another shard staging right
/// now) are kept.
pub fn clean_stale(out: &Path) {
    crate::io::atomic::remove_dead_temporaries(out, None);
}
