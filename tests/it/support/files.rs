//! Small input files and error checks shared by the reliability tests.

use std::path::{Path, PathBuf};

use patchwise::io::{Dataset, IoError, Store};

/// A decoder on the 10-20 channels with two seeded pattern columns, as
/// `decoder.h5` in `dir`; returns its path and the channel count.
pub fn decoder_10_20(dir: &Path, seed: u64) -> (PathBuf, usize) {
    let labels = patchwise::montage::standard("10-20", 0.09).unwrap().labels;
    let n = labels.len();
    let mut state = seed;
    let values: Vec<f64> = (0..n * 2)
        .map(|_| {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1);
            (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5
        })
        .collect();
    let mut store = Store::new();
    store.insert("/channels", Dataset::strings(labels));
    store.insert("/patterns", Dataset::f64(vec![n, 2], values));
    let path = dir.join("decoder.h5");
    store.write_atomic(&path).unwrap();
    (path, n)
}

/// Assert that `result` is an [`IoError::Value`] about `object` in `file`
/// whose message contains `needle`.
pub fn assert_value_error<T: std::fmt::Debug>(
    result: Result<T, IoError>,
    file: &Path,
    object: &str,
    needle: &str,
) {
    match result {
        Err(IoError::Value {
            path,
            object: o,
            message,
        }) => {
            assert_eq!(path, file);
            assert_eq!(o, object);
            assert!(message.contains(needle), "{message}");
        }
        other => panic!("expected a value error about {object}, got {other:?}"),
    }
}

/// Run `patchwise attribute --decoder decoder.h5 --resamples 0 --no-report
/// --out OUT` with `extra` options in `dir`; returns whether it succeeded
/// and its stderr.
pub fn attribute_quickly(dir: &Path, out: &str, extra: &[&str]) -> (bool, String) {
    let run = attribute_quickly_output(dir, out, extra);
    (
        run.status.success(),
        String::from_utf8_lossy(&run.stderr).into_owned(),
    )
}

/// [`attribute_quickly`], the whole output (exit code, stdout, stderr).
pub fn attribute_quickly_output(dir: &Path, out: &str, extra: &[&str]) -> std::process::Output {
    attribute_quickly_with_env(dir, out, extra, &[])
}

/// The options of a small attribution on template-5k (10-20 channels, 10 mm
/// patches every 20 mm), quick enough for tests of the cache.
pub const SMALL_ON_TEMPLATE_5K: [&str; 8] = [
    "--montage",
    "10-20",
    "--sources",
    "template-5k",
    "--radii-mm",
    "10",
    "--spacing-mm",
    "20",
];

/// [`attribute_quickly_output`] with the environment variables `env` set.
pub fn attribute_quickly_with_env(
    dir: &Path,
    out: &str,
    extra: &[&str],
    env: &[(&str, &str)],
) -> std::process::Output {
    let mut args = vec![
        "attribute",
        "--decoder",
        "decoder.h5",
        "--resamples",
        "0",
        "--no-report",
        "--out",
        out,
    ];
    args.extend_from_slice(extra);
    super::cli::patchwise_with_env(&args, dir, env)
}

/// Rows of one of our CSV outputs (dipoles.csv, regions.csv, …) as
/// (header, fields); no field of ours holds a comma.
pub fn csv(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let mut lines = text
        .lines()
        .map(|l| l.split(',').map(str::to_string).collect::<Vec<_>>());
    let header = lines.next().unwrap();
    (header, lines.collect())
}
