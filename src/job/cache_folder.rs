//! The cache folder as users see it: where it is (`--cache`, `--no-cache`,
//! declared once here for every command that uses it), its size cap with
//! least-recently-used eviction after each job, and the listing and
//! cleaning behind `patchwise cache`.
//!
//! Only files named like our entries (`io::cache_entries`) are ever
//! counted or removed, so a cache folder pointed at a folder holding other
//! files loses none of them. Removal goes through the entries' locks: an
//! entry that a job of this process is building or reading (the per-key
//! lock of `keyed_lock`) or that any process is reading (its file lock) is
//! skipped, never removed under the reader.

use std::path::{Path, PathBuf};
use std::time::{Duration, SystemTime};

use super::error::JobError;
use super::keyed_lock::{cache_locks, entry_lock_key};
use super::observer::JobObserver;
use crate::io::cache::default_cache_dir;
use crate::io::cache_entries::{list_entries, remove_entry, CacheEntry, Removal};

/// The environment variable that caps the cache's size.
pub const CAP_VARIABLE: &str = "PATCHWISE_CACHE_MAX_SIZE";

/// The default cap: 2 GB. The demo's entries take about 0.16 GB (0.29 GB
/// with 64-bit dictionaries) and a long session grew a cache to about
/// 0.77 GB, so ordinary use never reaches it, while a batch over many
/// montages or heads (one dictionary of about 0.1 GB per montage on the 20k
/// template) stops at a size no disk notices.
pub const DEFAULT_CAP_BYTES: u64 = 2_000_000_000;

/// Where lead fields, dictionaries and smoothing kernels are cached.
#[derive(clap::Args, Debug, Clone, Default, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CacheOptions {
    /// Cache folder for lead fields, dictionaries and smoothing kernels (default: $PATCHWISE_CACHE, else the user cache folder; `patchwise cache` lists and cleans it).
    #[arg(long, value_name = "DIR")]
    #[serde(default)]
    pub cache: Option<PathBuf>,
    /// Use no cache: read no entry and keep none (this run's lead fields and dictionary go through a temporary folder removed at the end).
    #[arg(long, conflicts_with = "cache")]
    #[serde(default)]
    pub no_cache: bool,
}

impl CacheOptions {
    /// The cache folder the user named (`--cache`), if any: an input of
    /// the run that no output may replace.
    pub fn given_folder(&self) -> Option<&Path> {
        self.cache.as_deref()
    }

    /// The folder this run caches in, after checking the size cap's
    /// variable (a bad value is a bad input, found before any work).
    pub fn open(&self) -> Result<CacheFolder, JobError> {
        cache_cap()?;
        if !self.no_cache {
            let dir = self.cache.clone().unwrap_or_else(default_cache_dir);
            return Ok(CacheFolder { dir, own: false });
        }
        let dir =
            crate::io::atomic::temporary_path(&std::env::temp_dir().join("patchwise-no-cache"));
        std::fs::create_dir_all(&dir).map_err(|e| {
            JobError::compute(format!(
                "--no-cache: cannot make the run's temporary folder {}: {e}",
                dir.display()
            ))
        })?;
        Ok(CacheFolder { dir, own: true })
    }
}

/// The cache folder of one run; with `--no-cache` a temporary folder of
/// the run's own, removed when this value is dropped.
pub struct CacheFolder {
    dir: PathBuf,
    own: bool,
}

impl CacheFolder {
    /// The folder.
    pub fn path(&self) -> &Path {
        &self.dir
    }
}

impl Drop for CacheFolder {
    fn drop(&mut self) {
        if self.own {
            let _ = std::fs::remove_dir_all(&self.dir);
        }
    }
}

/// A non-negative number and the unit after it (trimmed, lowercase).
fn number_and_unit(text: &str) -> Option<(f64, String)> {
    let t = text.trim();
    let split = t
        .find(|c: char| !(c.is_ascii_digit() || c == '.'))
        .unwrap_or(t.len());
    let (number, unit) = t.split_at(split);
    let value = number.parse().ok()?;
    Some((value, unit.trim().to_ascii_lowercase()))
}

/// A size in bytes from text: a number with an optional unit, `B`, `KB`,
/// `MB`, `GB`, `TB` (powers of 1000; the `B` may be left out) or `KiB`,
/// `MiB`, `GiB`, `TiB` (powers of 1024), any case: `2GB`, `500 MB`,
/// `1.5GiB`, `0`.
pub fn parse_size(text: &str) -> Result<u64, String> {
    let (value, unit) = number_and_unit(text).ok_or_else(|| {
        format!("{text:?} is not a size; expected a number and a unit such as 2GB, 500MB or 1.5GiB")
    })?;
    let scale: f64 = match unit.as_str() {
        "" | "b" => 1.0,
        "k" | "kb" => 1e3,
        "m" | "mb" => 1e6,
        "g" | "gb" => 1e9,
        "t" | "tb" => 1e12,
        "kib" => 1024.0,
        "mib" => 1024.0 * 1024.0,
        "gib" => 1024.0 * 1024.0 * 1024.0,
        "tib" => 1024.0 * 1024.0 * 1024.0 * 1024.0,
        other => {
            return Err(format!(
                "{text:?}: unknown unit {other:?}; expected B, KB, MB, GB, TB, KiB, MiB, GiB or TiB"
            ))
        }
    };
    let bytes = (value * scale).round();
    if !bytes.is_finite() || bytes >= u64::MAX as f64 {
        return Err(format!("{text:?} is too large a size"));
    }
    Ok(bytes as u64)
}

/// An age from text: a number with a unit `s`, `m` (minutes), `h`, `d` or
/// `w`: `30d`, `12h`, `90m`.
pub fn parse_age(text: &str) -> Result<Duration, String> {
    let (value, unit) = number_and_unit(text).ok_or_else(|| {
        format!("{text:?} is not an age; expected a number and a unit such as 30d, 12h or 90m")
    })?;
    let seconds = match unit.as_str() {
        "s" => 1.0,
        "m" => 60.0,
        "h" => 3600.0,
        "d" => 86_400.0,
        "w" => 604_800.0,
        _ => {
            return Err(format!(
                "{text:?}: expected a unit s, m (minutes), h, d or w after the number"
            ))
        }
    };
    Duration::try_from_secs_f64(value * seconds).map_err(|_| format!("{text:?} is not an age"))
}

/// The cache's size cap from [`CAP_VARIABLE`]: [`DEFAULT_CAP_BYTES`] when
/// unset, `None` (no cap) for `none` or `unlimited`.
pub fn cache_cap() -> Result<Option<u64>, JobError> {
    let Some(value) = std::env::var_os(CAP_VARIABLE) else {
        return Ok(Some(DEFAULT_CAP_BYTES));
    };
    let text = value.to_string_lossy();
    if matches!(
        text.trim().to_ascii_lowercase().as_str(),
        "none" | "unlimited"
    ) {
        return Ok(None);
    }
    parse_size(&text)
        .map(Some)
        .map_err(|e| JobError::input(format!("{CAP_VARIABLE}: {e}, or none for no cap")))
}

/// Which entries `patchwise cache clean` removes.
#[derive(clap::Args, Debug, Clone, Default, PartialEq)]
pub struct CleanParams {
    /// Remove only entries last used longer ago than this (30d, 12h, 90m).
    #[arg(long, value_name = "AGE", value_parser = parse_age)]
    pub older_than: Option<Duration>,
    /// Remove only entries of this kind (leadfield, dictionary, atoms: a dictionary's atoms
    /// under a perturbed head of the resamples, kernel, bem: a boundary-element head's
    /// factorised system); may be repeated.
    #[arg(long, value_name = "KIND", value_parser = ["leadfield", "dictionary", "atoms", "kernel", "bem"])]
    pub kind: Vec<String>,
    /// Remove least recently used entries until the cache holds at most this much (2GB, 500MB, 1.5GiB).
    #[arg(long, value_name = "SIZE", value_parser = parse_size)]
    pub max_size: Option<u64>,
}

/// What a clean removed and left.
#[derive(Debug, Default, Clone, PartialEq)]
pub struct CleanOutcome {
    /// The entries removed.
    pub removed: Vec<CacheEntry>,
    /// Entries that were to go but were in use by a job, left in place.
    pub busy: Vec<CacheEntry>,
    /// Bytes of the entries left.
    pub bytes_left: u64,
    /// Temporary files of killed runs removed.
    pub temporaries: usize,
}

impl CleanOutcome {
    /// Bytes removed.
    pub fn bytes_removed(&self) -> u64 {
        self.removed.iter().map(|e| e.bytes).sum()
    }
}

/// The entries of `dir`, least recently used first.
pub fn list(dir: &Path) -> Result<Vec<CacheEntry>, JobError> {
    list_entries(dir).map_err(|e| JobError::input(format!("cache folder {}: {e}", dir.display())))
}

/// Remove entries of `dir`: with neither an age nor a size every entry
/// (of the kinds asked, or all), else those last used before `older_than`,
/// then the least recently used until at most `max_size` bytes of entries
/// are left. Entries in use are skipped and reported.
pub fn clean(dir: &Path, params: &CleanParams) -> Result<CleanOutcome, JobError> {
    let entries = list(dir)?;
    let wanted = |e: &CacheEntry| params.kind.is_empty() || params.kind.contains(&e.kind);
    let now = SystemTime::now();
    let everything = params.older_than.is_none() && params.max_size.is_none();
    let mut total: u64 = entries.iter().map(|e| e.bytes).sum();
    let mut out = CleanOutcome {
        temporaries: crate::io::atomic::remove_dead_temporaries(dir, None),
        ..CleanOutcome::default()
    };
    for e in entries {
        let old = params
            .older_than
            .is_some_and(|age| now.duration_since(e.last_use).unwrap_or_default() > age);
        let over = params.max_size.is_some_and(|cap| total > cap);
        if !(wanted(&e) && (everything || old || over)) {
            continue;
        }
        match remove_unheld(&e.path) {
            Ok(Removal::Removed) => {
                total -= e.bytes;
                out.removed.push(e);
            }
            Ok(Removal::Busy) => out.busy.push(e),
            Err(err) => {
                return Err(JobError::compute(format!(
                    "cannot remove the cache entry {}: {err}",
                    e.path.display()
                )))
            }
        }
    }
    out.bytes_left = total;
    Ok(out)
}

/// Remove the entry at `path` unless a job holds it: this process's key
/// lock first (a build or read under way here), then the file lock.
fn remove_unheld(path: &Path) -> std::io::Result<Removal> {
    cache_locks()
        .try_with_lock(&entry_lock_key(path), || remove_entry(path))
        .unwrap_or(Ok(Removal::Busy))
}

/// After a job: bring `cache` down to its cap ([`cache_cap`]) by removing
/// the least recently used entries (the job's own were just used, so they
/// go last). Never fails the job: a problem costs a note.
pub fn trim_after_job(cache: &Path, observer: &dyn JobObserver) {
    let cap = match cache_cap() {
        Ok(Some(cap)) => cap,
        Ok(None) => return,
        Err(e) => {
            observer.note(&format!("note: the cache was not trimmed: {e}"));
            return;
        }
    };
    let params = CleanParams {
        max_size: Some(cap),
        ..CleanParams::default()
    };
    match clean(cache, &params) {
        Ok(out) if !out.removed.is_empty() => observer.note(&format!(
            "cache over its cap of {} ({CAP_VARIABLE}): removed {} least recently used entr{} ({}) from {}",
            format_bytes(cap),
            out.removed.len(),
            if out.removed.len() == 1 { "y" } else { "ies" },
            format_bytes(out.bytes_removed()),
            cache.display()
        )),
        Ok(_) => {}
        Err(e) => observer.note(&format!("note: the cache was not trimmed: {e}")),
    }
}

/// A size for people: `238.1 MB`, `2.00 GB` (powers of 1000, like the
/// sizes [`parse_size`] reads without an `i`).
pub fn format_bytes(bytes: u64) -> String {
    let b = bytes as f64;
    if b >= 1e9 {
        format!("{:.2} GB", b / 1e9)
    } else if b >= 1e6 {
        format!("{:.1} MB", b / 1e6)
    } else if b >= 1e3 {
        format!("{:.1} kB", b / 1e3)
    } else {
        format!("{bytes} B")
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    /// Decimal and binary units as the SI and IEC 80000-13 prefixes define
    /// them (kilo = 10^3, kibi = 2^10).
    #[test]
    fn sizes_and_ages_parse() {
        assert_eq!(parse_size("2GB").unwrap(), 2_000_000_000);
        assert_eq!(parse_size("500 mb").unwrap(), 500_000_000);
        assert_eq!(parse_size("1.5GiB").unwrap(), 1_610_612_736);
        assert_eq!(parse_size("0").unwrap(), 0);
        assert!(parse_size("2 parsecs").is_err());
        assert!(parse_size("-1GB").is_err());
        assert_eq!(parse_age("90m").unwrap(), Duration::from_secs(5400));
        assert_eq!(parse_age("2d").unwrap(), Duration::from_secs(172_800));
        assert!(parse_age("3").is_err());
        assert_eq!(format_bytes(238_100_000), "238.1 MB");
    }
}
