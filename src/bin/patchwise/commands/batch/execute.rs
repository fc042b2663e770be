//! One batch job: `attribute`'s arguments from the job, the run, and the
//! output folder staged with its completion marker so that it appears whole
//! or not at all.

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};

use clap::{Parser, ValueEnum};
use patchwise::batch::Job;

use super::super::report::{job_of, write_report_as};
use crate::commands::attribute::{self, Args as AttributeArgs};
use crate::commands::dictionary::{AtomOrientationArg, ProfileArg};
use crate::outputs::write_files;
use crate::staging::Staging;
use crate::CliError;

/// The completion marker, written last into the staged job folder.
pub const MARKER: &str = "job.json";

/// `attribute`'s defaults, taken from its own argument parser so that
/// batch jobs and `attribute` can never disagree on them.
#[derive(Parser)]
struct AttributeDefaults {
    #[command(flatten)]
    args: AttributeArgs,
}

fn bad(message: String) -> CliError {
    CliError::bad_input(anyhow::anyhow!(message))
}

/// The arguments `patchwise attribute` would get for this job.
pub fn attribute_args(
    job: &Job,
    out: &Path,
    cache: Option<&Path>,
) -> Result<AttributeArgs, CliError> {
    let mut a = AttributeDefaults::try_parse_from([
        "attribute".into(),
        "--out".into(),
        out.as_os_str().to_os_string(),
    ])
    .map_err(|e| CliError::compute(anyhow::anyhow!("attribute's defaults: {e}")))?
    .args;
    let o = &job.options;
    a.decoder = Some(job.decoder.clone());
    if let Some(v) = &o.montage {
        a.forward.montage = v.clone();
    }
    if let Some(v) = &o.sources {
        a.forward.sources = v.clone();
    }
    if let Some(v) = &o.head {
        a.forward.head = v.clone();
    }
    a.forward.regions = o.regions.as_ref().map(PathBuf::from);
    a.channels = o.channels.as_ref().map(PathBuf::from);
    a.dictionary = o.dictionary.as_ref().map(PathBuf::from);
    a.noise_covariance = o.noise_covariance.as_ref().map(PathBuf::from);
    if let Some(v) = &o.reference {
        a.reference = v.clone();
    }
    a.joint = o.joint.unwrap_or(a.joint);
    if let Some(v) = &o.lambda_rule {
        a.lambda_rule = v.clone();
    }
    a.noise_sd = o.noise_sd.or(a.noise_sd);
    a.lambda_ratio = o.lambda_ratio.or(a.lambda_ratio);
    a.lambda = o.lambda.or(a.lambda);
    a.tol = o.tol.unwrap_or(a.tol);
    if let Some(r) = o.resamples {
        a.resamples = usize::try_from(r).map_err(|_| bad(format!("resamples = {r}: too many")))?;
    }
    a.seed = o.seed.unwrap_or(a.seed);
    a.no_refit = o.no_refit.unwrap_or(a.no_refit);
    a.no_report = o.no_report.unwrap_or(a.no_report);
    if let Some(r) = &o.radii_mm {
        a.dictionary_options.radii_mm = r.clone();
    }
    a.dictionary_options.spacing_mm = o.spacing_mm.or(a.dictionary_options.spacing_mm);
    if let Some(p) = &o.profile {
        a.dictionary_options.profile =
            ProfileArg::from_str(p, false).map_err(|e| bad(format!("profile = {p:?}: {e}")))?;
    }
    if let Some(p) = &o.atom_orientation {
        a.dictionary_options.atom_orientation = AtomOrientationArg::from_str(p, false)
            .map_err(|e| bad(format!("atom_orientation = {p:?}: {e}")))?;
    }
    a.cache = cache.map(Path::to_path_buf);
    Ok(a)
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

/// Remove the staging folders (`.<name>.partial-<pid>`) that a killed run
/// left for these jobs. Only this run's jobs are touched: another shard's
/// jobs may be staging right now.
pub fn clean_stale<'a>(out: &Path, names: impl Iterator<Item = &'a str>) {
    let names: std::collections::HashSet<&str> = names.collect();
    let Ok(entries) = std::fs::read_dir(out) else {
        return;
    };
    for entry in entries.flatten() {
        let file_name = entry.file_name().to_string_lossy().into_owned();
        let Some((name, pid)) = file_name
            .strip_prefix('.')
            .and_then(|s| s.rsplit_once(".partial-"))
        else {
            continue;
        };
        if names.contains(name) && !pid.is_empty() && pid.bytes().all(|b| b.is_ascii_digit()) {
            let _ = std::fs::remove_dir_all(entry.path());
        }
    }
    // The summary's temporary file of a run killed while writing it.
    patchwise::io::atomic::remove_dead_temporaries(out, Some(super::report::SUMMARY));
}

/// Run one job and stage its folder: result files, then the marker, then
/// the rename that makes it visible (replacing an outdated folder).
fn run_job(job: &Job, hash: &str, out: &Path, cache: Option<&Path>) -> Result<(), CliError> {
    let target = out.join(&job.name);
    let args = attribute_args(job, &target, cache)?;
    let result = attribute::run(&args, None)?;
    let stage = Staging::new(&target).map_err(CliError::compute)?;
    write_files(&stage, &result)?;
    if !args.no_report {
        // Inside the staged folder, before the marker: a job's folder has
        // its report exactly when `attribute` would have written one.
        let staged = stage.file("result.h5");
        let dir = staged.parent().unwrap_or(out);
        write_report_as(
            dir,
            Some(&stage.file("report.html")),
            job_of(&args),
            Some(&target),
        )?;
    }
    let marker = serde_json::json!({
        "job": job.name,
        "group": job.group,
        "status": "done",
        "input_hash": hash,
        "decoder": job.decoder.display().to_string(),
        "options": job.options,
        "software": format!("patchwise {}", env!("CARGO_PKG_VERSION")),
    });
    let text = serde_json::to_string_pretty(&marker).unwrap_or_default();
    patchwise::io::atomic::write_atomic(&stage.file(MARKER), text.as_bytes())
        .map_err(|e| CliError::compute(anyhow::anyhow!("writing {MARKER}: {e}")))?;
    if target.exists() {
        std::fs::remove_dir_all(&target).map_err(|e| {
            CliError::compute(anyhow::anyhow!(
                "removing the outdated {}: {e}",
                target.display()
            ))
        })?;
    }
    stage.commit().map_err(CliError::compute)?;
    Ok(())
}

/// [`run_job`], with a panic reported as this job's failure so that the
/// other jobs go on.
pub fn run_job_catching(
    job: &Job,
    hash: &str,
    out: &Path,
    cache: Option<&Path>,
) -> Result<(), CliError> {
    catch_unwind(AssertUnwindSafe(|| run_job(job, hash, out, cache))).unwrap_or_else(|panic| {
        let message = panic
            .downcast_ref::<String>()
            .cloned()
            .or_else(|| panic.downcast_ref::<&str>().map(|s| s.to_string()))
            .unwrap_or_default();
        Err(CliError::compute(anyhow::anyhow!(
            "internal error (panic) in the job: {message}"
        )))
    })
}
