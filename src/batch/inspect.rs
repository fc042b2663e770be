//! `check` of any file, job scripts and head files included: a `.toml`
//! with a `model` key is a head file (validated as `--head` reads it), any
//! other `.toml` a job script, whose plan is printed (the jobs in run
//! order, their shard under `--shard I/N`, their input hash, which a rerun
//! compares to skip a finished job); every other kind goes to
//! [`crate::job::check::check_file`].

use std::path::Path;

use super::plan::{input_hash, load_script};
use crate::head::HeadSpec;
use crate::job::error::{JobError, JobResult};

/// Check `path` and describe it in lines for a person to read.
pub fn check_any(path: &Path) -> Result<Vec<String>, JobError> {
    let is_toml = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("toml"));
    if !is_toml || !path.is_file() {
        return crate::job::check::check_file(path);
    }
    let text = crate::io::input::read_input_string(path)
        .map_err(|e| JobError::input(format!("{}: {e}", path.display())))?;
    let table: toml::Table = toml::from_str(&text)
        .map_err(|e| JobError::input(format!("{}: not valid TOML ({e})", path.display())))?;
    if table.contains_key("model") {
        head_lines(path, &text)
    } else {
        script_lines(path)
    }
}

/// A head file, validated as `--head FILE` reads it.
fn head_lines(path: &Path, text: &str) -> Result<Vec<String>, JobError> {
    let name = path.display().to_string();
    let spec = HeadSpec::from_toml_str(text, &name).input("reading the head file")?;
    spec.to_head().input(format!("head model {name}"))?;
    let list = |v: &[f64]| {
        v.iter()
            .map(|x| format!("{x}"))
            .collect::<Vec<_>>()
            .join(", ")
    };
    Ok(vec![
        format!(
            "{name}: head file, {} concentric spheres, sound",
            spec.radii_mm.len()
        ),
        format!("  radii (mm, innermost first): {}", list(&spec.radii_mm)),
        format!(
            "  conductivities (S/m, innermost first): {}",
            list(&spec.conductivities)
        ),
        match spec.center_mm {
            Some(c) => format!("  centre (mm): ({}, {}, {})", c[0], c[1], c[2]),
            None => "  centre: not given (the origin, or the sphere fitted to an electrodes file)"
                .to_string(),
        },
    ])
}

/// A job script: the plan `patchwise batch` would run.
fn script_lines(path: &Path) -> Result<Vec<String>, JobError> {
    let script = load_script(path).input("reading the job script")?;
    let n = script.jobs.len();
    let mut lines = vec![format!(
        "{}: job script, {n} job{}{}",
        path.display(),
        if n == 1 { "" } else { "s" },
        script
            .compare
            .as_ref()
            .map(|c| format!(
                ", then a comparison into {}{}",
                c.out.display(),
                c.pair
                    .as_ref()
                    .map(|p| format!(" (paired {} − {})", p[0], p[1]))
                    .unwrap_or_default()
            ))
            .unwrap_or_default()
    )];
    lines.push(format!(
        "  {:>3}  {:<24} {:<16} {:<40}",
        "#", "job (output folder)", "input hash", "decoder"
    ));
    for (i, job) in script.jobs.iter().enumerate() {
        let hash = input_hash(job).input(format!("job {}", job.name))?;
        lines.push(format!(
            "  {:>3}  {:<24} {:<16} {}",
            i + 1,
            job.name,
            hash.get(..12).unwrap_or(&hash),
            job.decoder.display()
        ));
    }
    lines.push(
        "  jobs run in this order; with --shard I/N, job # runs in shard ((# - 1) mod N) + 1"
            .to_string(),
    );
    lines.push(
        "  input hash (first 12 hex digits): of the options as set and the input files' contents; a rerun skips a job whose folder records the same hash"
            .to_string(),
    );
    Ok(lines)
}
