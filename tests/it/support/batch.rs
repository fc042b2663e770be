//! Helpers of the batch tests: synthetic decoders on the template's 64
//! channels, job scripts, runs of the real binary, and exact comparison of
//! result folders.

use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};

use patchwise::io::store::{Array, Store};
use patchwise::io::Dataset;
use patchwise::montage::standard;

/// Write `n` decoders `decoders/sub-XX.h5` with two activation patterns
/// each: Gaussian bumps over the 10-10 positions of the demo's 64 channels
/// (width 40 mm) at subject-dependent centres, a stand-in for the scalp map
/// of a focal source (common practice, no source).
pub fn write_decoders(dir: &Path, n: usize) -> Vec<PathBuf> {
    let full = standard("10-10", 0.1).unwrap();
    let labels: Vec<String> = patchwise::demo::CHANNELS_64
        .iter()
        .map(|s| s.to_string())
        .collect();
    let idx = full.select(&labels).unwrap();
    let montage = full.subset(&idx);
    std::fs::create_dir_all(dir.join("decoders")).unwrap();
    (0..n)
        .map(|s| {
            let t = s as f64 * 0.7;
            let centres = [
                [-0.05 + 0.01 * t.sin(), 0.01 * t.cos(), 0.08],
                [0.05, -0.03 + 0.01 * t.sin(), 0.07],
            ];
            let mut values = Vec::with_capacity(64 * 2);
            for p in &montage.positions {
                for c in &centres {
                    let d2: f64 = (0..3).map(|a| (p[a] - c[a]).powi(2)).sum();
                    values.push((-d2 / (2.0 * 0.04f64.powi(2))).exp() * 1e-6);
                }
            }
            let mut store = Store::new();
            store.insert("/channels", Dataset::strings(labels.clone()));
            store.insert("/patterns", Dataset::f64(vec![64, 2], values));
            let path = dir.join(format!("decoders/sub-{:02}.h5", s + 1));
            store.write_atomic(&path).unwrap();
            path
        })
        .collect()
}

/// The script header shared by the tests: small, fast jobs (template-5k,
/// the demo's 10-10 montage, 5 resamples).
pub const DEFAULTS: &str =
    "[defaults]\nsources = \"template-5k\"\nmontage = \"10-10\"\nresamples = 5\n\n";

/// Write `jobs.toml` in `dir`.
pub fn write_script(dir: &Path, text: &str) -> PathBuf {
    let p = dir.join("jobs.toml");
    std::fs::write(&p, text).unwrap();
    p
}

/// `patchwise batch ARGS` in `dir`, with the cache in `dir/cache`.
pub fn command(dir: &Path, args: &[&str]) -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_patchwise"));
    c.arg("batch")
        .args(args)
        .env("PATCHWISE_CACHE", dir.join("cache"))
        .current_dir(dir);
    c
}

/// Run `patchwise batch ARGS` in `dir` to the end.
pub fn batch(dir: &Path, args: &[&str]) -> Output {
    command(dir, args).output().unwrap()
}

/// Start `patchwise batch ARGS` in `dir` without waiting.
pub fn spawn(dir: &Path, args: &[&str]) -> Child {
    command(dir, args)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap()
}

/// Both output streams, for assertion messages.
pub fn text(o: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}

/// Assert that `a/<job>/result.h5` and `b/<job>/result.h5` hold the same
/// datasets with bit-identical values and the same attributes.
pub fn assert_same_results(a: &Path, b: &Path, jobs: &[String]) {
    for job in jobs {
        let fa = Store::read(&a.join(job).join("result.h5")).unwrap();
        let fb = Store::read(&b.join(job).join("result.h5")).unwrap();
        assert_eq!(
            fa.datasets.keys().collect::<Vec<_>>(),
            fb.datasets.keys().collect::<Vec<_>>(),
            "{job}"
        );
        assert!(!fa.datasets.is_empty());
        for (name, da) in &fa.datasets {
            let db = &fb.datasets[name];
            assert_eq!(da.shape, db.shape, "{job} {name}");
            assert_eq!(da.attrs, db.attrs, "{job} {name}");
            match (&da.data, &db.data) {
                // Compared by bits so that NaN (no interval) equals NaN.
                (Array::F64(x), Array::F64(y)) => {
                    let same = x.iter().zip(y).all(|(p, q)| p.to_bits() == q.to_bits());
                    assert!(same && x.len() == y.len(), "{job} {name} differs");
                }
                (x, y) => assert_eq!(x, y, "{job} {name}"),
            }
        }
        assert_eq!(fa.group_attrs, fb.group_attrs, "{job}");
    }
}

/// Names in `dir` that are staging folders or temporaries (hidden names).
pub fn hidden_entries(dir: &Path) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with('.'))
        .collect()
}

/// The job folders in `dir` (every visible folder).
pub fn job_folders(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .flatten()
        .filter(|e| e.path().is_dir())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| !n.starts_with('.'))
        .collect();
    v.sort();
    v
}
