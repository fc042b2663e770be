//! `patchwise cache` and the cache's size cap (issue 22, item 12): the
//! listing agrees with the file system, reading an entry renews its last
//! use, the cap evicts the least recently used entries after a job,
//! `--no-cache` leaves no entry and changes no number, and an entry a job
//! holds is never removed.

use std::path::{Path, PathBuf};
use std::process::Output;
use std::time::{Duration, SystemTime};

use patchwise::io::cache_entries::{hold_entry, list_entries};
use patchwise::job::cache_folder::{clean, CleanParams};
use patchwise::job::keyed_lock::{cache_locks, entry_lock_key};

use crate::support;
use crate::support::cli::patchwise_with_env;
use crate::support::files::{attribute_quickly_with_env, SMALL_ON_TEMPLATE_5K};

fn scratch(name: &str) -> PathBuf {
    let dir = support::scratch(&format!("cache_cli_{name}"));
    support::files::decoder_10_20(&dir, 11);
    dir
}

/// `patchwise ARGS` in `dir` (cache in `dir/cache`) with `env` set.
fn run(dir: &Path, args: &[&str], env: &[(&str, &str)]) -> Output {
    patchwise_with_env(args, dir, env)
}

/// The small attribution of these tests, which must succeed.
fn attribute(dir: &Path, out: &str, extra: &[&str], env: &[(&str, &str)]) -> Output {
    let mut args = SMALL_ON_TEMPLATE_5K.to_vec();
    args.extend_from_slice(extra);
    let o = attribute_quickly_with_env(dir, out, &args, env);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    o
}

fn text(o: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}

/// The entry files of the folder, by the file system (not our listing).
fn entry_files(cache: &Path) -> Vec<(String, u64)> {
    let mut v: Vec<(String, u64)> = std::fs::read_dir(cache)
        .unwrap()
        .map(|e| e.unwrap())
        .filter(|e| e.file_name().to_string_lossy().ends_with(".h5"))
        .map(|e| {
            (
                e.file_name().to_string_lossy().into_owned(),
                e.metadata().unwrap().len(),
            )
        })
        .collect();
    v.sort();
    v
}

fn set_last_use(path: &Path, t: SystemTime) {
    std::fs::File::options()
        .write(true)
        .open(path)
        .unwrap()
        .set_modified(t)
        .unwrap();
}

#[test]
fn listing_matches_the_files_and_clean_removes_only_entries() {
    let dir = scratch("listing");
    attribute(&dir, "a", &[], &[]);
    let cache = dir.join("cache");
    let files = entry_files(&cache);
    assert_eq!(files.len(), 2, "{files:?}");
    // A file of someone else's in the folder is neither listed nor removed.
    std::fs::write(cache.join("notes.txt"), "mine").unwrap();
    let listed = run(&dir, &["cache"], &[]);
    let listing = text(&listed);
    assert!(listed.status.success(), "{listing}");
    let total: u64 = files.iter().map(|(_, b)| b).sum();
    for (name, _) in &files {
        let key = name.trim_end_matches(".h5").rsplit_once('-').unwrap().1;
        assert!(listing.contains(key), "{key} in {listing}");
    }
    assert!(!listing.contains("notes"), "{listing}");
    // The total, as the file system counts it, in MB with one decimal.
    let mb = format!("2 entries, {:.1} MB", total as f64 / 1e6);
    assert!(listing.contains(&mb), "{mb} in {listing}");
    let cleaned = run(&dir, &["cache", "clean", "--kind", "leadfield"], &[]);
    assert!(
        text(&cleaned).contains("removed 1 entry"),
        "{}",
        text(&cleaned)
    );
    assert_eq!(entry_files(&cache).len(), 1);
    assert!(entry_files(&cache)[0].0.starts_with("dictionary-"));
    let cleaned = run(&dir, &["cache", "clean"], &[]);
    assert!(
        text(&cleaned).contains("removed 1 entry"),
        "{}",
        text(&cleaned)
    );
    assert!(entry_files(&cache).is_empty());
    assert_eq!(
        std::fs::read_to_string(cache.join("notes.txt")).unwrap(),
        "mine"
    );
}

#[test]
fn reading_an_entry_renews_its_last_use_and_the_cap_evicts_the_oldest() {
    let dir = scratch("lru");
    attribute(&dir, "a", &[], &[]);
    let cache = dir.join("cache");
    let old = SystemTime::now() - Duration::from_secs(3 * 86_400);
    for e in list_entries(&cache).unwrap() {
        set_last_use(&e.path, old);
    }
    // The second run reads the dictionary only (its lead field is not
    // needed), so the dictionary is now the most recently used entry.
    attribute(&dir, "b", &[], &[]);
    let entries = list_entries(&cache).unwrap();
    let dict = entries.iter().find(|e| e.kind == "dictionary").unwrap();
    let lf = entries.iter().find(|e| e.kind == "leadfield").unwrap();
    assert!(dict.last_use > old + Duration::from_secs(86_400));
    assert_eq!(lf.last_use, old);
    // `--older-than 2d` takes the lead field only.
    let cleaned = run(&dir, &["cache", "clean", "--older-than", "2d"], &[]);
    assert!(
        text(&cleaned).contains("removed 1 entry"),
        "{}",
        text(&cleaned)
    );
    let left = list_entries(&cache).unwrap();
    assert_eq!(left.len(), 1);
    assert_eq!(left[0].kind, "dictionary");
    // A cap below one entry: after the next job (which rebuilds nothing it
    // does not need) the cache is at most the cap, with a note saying so.
    let cap = (left[0].bytes / 2).to_string();
    let o = attribute(&dir, "c", &[], &[("PATCHWISE_CACHE_MAX_SIZE", &cap)]);
    assert!(text(&o).contains("cache over its cap"), "{}", text(&o));
    let bytes: u64 = list_entries(&cache).unwrap().iter().map(|e| e.bytes).sum();
    assert!(bytes <= left[0].bytes / 2);
}

#[test]
fn no_cache_keeps_nothing_and_gives_the_same_numbers() {
    let dir = scratch("no_cache");
    attribute(&dir, "cached", &[], &[]);
    let o = attribute(&dir, "uncached", &["--no-cache"], &[]);
    assert!(!text(&o).contains("using cached"), "{}", text(&o));
    assert_eq!(entry_files(&dir.join("cache")).len(), 2);
    let a = std::fs::read(dir.join("cached/regions.csv")).unwrap();
    let b = std::fs::read(dir.join("uncached/regions.csv")).unwrap();
    assert_eq!(a, b);
    // --no-cache with --cache is a contradiction, refused before any work.
    let o = run(
        &dir,
        &[
            "attribute",
            "--decoder",
            "decoder.h5",
            "--out",
            "x",
            "--cache",
            "c",
            "--no-cache",
        ],
        &[],
    );
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(!dir.join("x").exists() && !dir.join("c").exists());
}

#[test]
fn entries_in_use_are_never_removed() {
    let dir = scratch("in_use");
    attribute(&dir, "a", &[], &[]);
    let cache = dir.join("cache");
    let entries = list_entries(&cache).unwrap();
    let (first, second) = (&entries[0].path, &entries[1].path);
    // One entry read by a reader (its file lock, as another process holds
    // it), the other built or read by a job of this process (its key lock).
    let held = hold_entry(first).unwrap().unwrap();
    let out = cache_locks().with_lock(&entry_lock_key(second), || {
        clean(&cache, &CleanParams::default()).unwrap()
    });
    assert!(out.removed.is_empty(), "{out:?}");
    assert_eq!(out.busy.len(), 2);
    assert!(first.is_file() && second.is_file());
    drop(held);
    let out = clean(&cache, &CleanParams::default()).unwrap();
    assert_eq!(out.removed.len(), 2);
    assert!(entry_files(&cache).is_empty());
}

#[test]
fn a_bad_cap_is_a_bad_input() {
    let dir = scratch("bad_cap");
    let o = run(&dir, &["cache"], &[("PATCHWISE_CACHE_MAX_SIZE", "lots")]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        text(&o).contains("PATCHWISE_CACHE_MAX_SIZE"),
        "{}",
        text(&o)
    );
    let o = run(&dir, &["cache", "clean", "--max-size", "2 parsecs"], &[]);
    assert_eq!(o.status.code(), Some(2));
}
