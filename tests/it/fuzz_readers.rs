//! A mutation fuzzer over every file reader (issue 18, item 16).
//!
//! The test builds a corpus of valid files itself (NPY, NPZ, HDF5 decoder,
//! lead field and dictionary, MATLAB v7.3 decoder when h5py is there, GIFTI surfaces in three encodings and labels,
//! PLY ASCII and binary, OFF, CSV/TSV matrices, electrodes and sources, head
//! TOML, job TOML), then mutates each with a seeded generator (bit flips,
//! interesting bytes, truncations, insertions, duplicated slices, numbers in
//! text swapped for extreme ones, 8-byte fields swapped for extreme
//! integers) and hands every mutant to its reader. Every case must end in
//! `Ok` or an `Err`, never a panic (caught with `catch_unwind`), within a
//! memory cap: the cases run in a child process under `ulimit -v`
//! (`FUZZ_CAP_KIB`), where an allocation beyond the cap aborts the child,
//! and the parent reports the reader and case it was at.
//!
//! `cargo test --release --test it -- fuzz_readers::` runs `PATCHWISE_FUZZ_CASES`
//! cases per reader (default 5000, seed `PATCHWISE_FUZZ_SEED`, default
//! 20261205); `PATCHWISE_FUZZ_CASES=1000000` is the long run. A failing
//! input is kept in `target/fuzz-failures/` with its reader, case and seed.

use crate::support;
use std::collections::BTreeMap;
use std::io::Write;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};
use std::process::Command;

use patchwise::attribution::rng::SplitMix64;
use patchwise::dictionary::DictionaryParams;
use patchwise::forward::LeadField;
use patchwise::geometry::{Mesh, SourceSpace};
use patchwise::io::dictionary_file::{read_dictionary, write_dictionary};
use patchwise::io::gifti::{
    read_gifti_labels, read_gifti_surface, write_gifti_labels, write_gifti_surface, GiftiEncoding,
};
use patchwise::io::leadfield_file::{read_leadfield, write_leadfield};
use patchwise::io::npy::{read_npy, read_npz, write_npy_f64, write_npz, NpyArray, NpyData};
use patchwise::io::ply::{read_ply, write_ply, PlyFormat};
use patchwise::io::{Dataset, Store};

/// The virtual-memory cap of the child that runs the cases: 2 GiB.
const FUZZ_CAP_KIB: u64 = 2 << 20;

/// A reader under test: its name, the extension its input needs, the valid
/// file it starts from, and the call (its result reduced to ok or not).
struct Target {
    name: &'static str,
    file_name: &'static str,
    valid: Vec<u8>,
    read: fn(&Path) -> bool,
}

fn cases_per_reader() -> u64 {
    std::env::var("PATCHWISE_FUZZ_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(5000)
}

fn seed() -> u64 {
    std::env::var("PATCHWISE_FUZZ_SEED")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(20_261_205)
}

fn bytes_of(path: &Path) -> Vec<u8> {
    std::fs::read(path).unwrap()
}

/// A small source space with triangles (an icosphere of 42 vertices).
fn sphere() -> Mesh {
    Mesh::icosphere(1, 0.07)
}

fn labels(n: usize) -> Vec<String> {
    ["Fp1", "Fp2", "C3", "C4", "P3", "P4", "O1", "O2"][..n]
        .iter()
        .map(|s| s.to_string())
        .collect()
}

/// The lead field of the corpus: 8 channels on the 42 sources, seeded gain.
fn leadfield() -> LeadField {
    let mesh = sphere();
    let sources = SourceSpace::from_mesh(&mesh);
    let mut rng = SplitMix64::new(1, 0);
    let n_src = sources.positions.len();
    LeadField {
        labels: labels(8),
        electrode_positions: (0..8)
            .map(|i| {
                let a = i as f64 * 0.785;
                [0.09 * a.cos(), 0.09 * a.sin(), 0.02]
            })
            .collect(),
        gain: (0..8 * n_src).map(|_| rng.uniform() - 0.5).collect(),
        sources,
        gain_xyz: None,
        reference: "none".to_string(),
        head_model: "{}".to_string(),
    }
}

/// Readers that fail on purpose, to show that the harness catches a panic
/// and an allocation beyond the cap (`PATCHWISE_FUZZ_SELFTEST`).
fn selftest(kind: &str) -> Vec<Target> {
    let read: fn(&Path) -> bool = match kind {
        "panic" => |p| {
            let bytes = std::fs::read(p).unwrap();
            assert!(bytes.len() % 2 == 0, "an odd length");
            true
        },
        _ => |p| {
            let n = std::fs::read(p).unwrap().len();
            if n == 10 {
                return true; // the valid file
            }
            // 8 GiB, four times the cap: the child must die here.
            let v = vec![1u8; (8usize << 30) + n];
            v[n] == 1
        },
    };
    vec![Target {
        name: "selftest",
        file_name: "selftest.bin",
        valid: b"0123456789".to_vec(),
        read,
    }]
}

/// Build the corpus in `dir`: one valid file per reader.
fn corpus(dir: &Path) -> Vec<Target> {
    if let Ok(kind) = std::env::var("PATCHWISE_FUZZ_SELFTEST") {
        return selftest(&kind);
    }
    let mut targets = Vec::new();
    let mut add = |name, file_name, valid, read| {
        targets.push(Target {
            name,
            file_name,
            valid,
            read,
        })
    };
    let p = dir.join("m.npy");
    write_npy_f64(&p, &[1.0, -2.5, 3.0, 4.0, 5.0, 6.0], &[3, 2]).unwrap();
    add("npy", "m.npy", bytes_of(&p), |p| read_npy(p).is_ok());

    let p = dir.join("d.npz");
    let mut arrays = BTreeMap::new();
    arrays.insert(
        "patterns".to_string(),
        NpyArray {
            shape: vec![4, 2],
            data: NpyData::F64(vec![0.5; 8]),
        },
    );
    arrays.insert(
        "covariance".to_string(),
        NpyArray {
            shape: vec![2, 2],
            data: NpyData::I64(vec![1, 0, 0, 1]),
        },
    );
    write_npz(&p, &arrays).unwrap();
    add("npz", "d.npz", bytes_of(&p), |p| read_npz(p).is_ok());

    let p = dir.join("decoder.h5");
    let mut store = Store::new();
    store.insert("/channels", Dataset::strings(labels(4)));
    store.insert("/weights", Dataset::f64(vec![4, 2], vec![0.25; 8]));
    store.insert(
        "/covariance",
        Dataset::f64(
            vec![4, 4],
            (0..16)
                .map(|k| if k % 5 == 0 { 2.0 } else { 0.1 })
                .collect(),
        ),
    );
    store.write_atomic(&p).unwrap();
    add("hdf5 decoder", "decoder.h5", bytes_of(&p), |p| {
        patchwise::io::decoder_file::read_decoder(p, None).is_ok()
    });

    let lf = leadfield();
    let p = dir.join("leadfield.h5");
    write_leadfield(&p, &lf).unwrap();
    add("hdf5 lead field", "leadfield.h5", bytes_of(&p), |p| {
        read_leadfield(p).is_ok()
    });

    let p = dir.join("dictionary.h5");
    let params = DictionaryParams {
        radii_m: vec![0.03],
        ..DictionaryParams::default()
    };
    let (d, _, _) = patchwise::pipeline::dictionary_for(&lf, &params, None, &|_| {}).unwrap();
    write_dictionary(&p, &lf, &d, "{}").unwrap();
    add("hdf5 dictionary", "dictionary.h5", bytes_of(&p), |p| {
        read_dictionary(p).is_ok()
    });

    for (name, file, encoding) in [
        ("gifti ascii", "a.surf.gii", GiftiEncoding::Ascii),
        ("gifti base64", "b.surf.gii", GiftiEncoding::Base64Binary),
        ("gifti gzip", "g.surf.gii", GiftiEncoding::GZipBase64Binary),
    ] {
        let p = dir.join(file);
        write_gifti_surface(&p, &sphere(), encoding).unwrap();
        add(name, file, bytes_of(&p), |p| read_gifti_surface(p).is_ok());
    }
    let p = dir.join("r.label.gii");
    let names: Vec<String> = ["front", "back"].map(String::from).to_vec();
    let idx: Vec<i32> = (0..42).map(|v| v % 3 - 1).collect();
    write_gifti_labels(&p, &idx, &names, GiftiEncoding::GZipBase64Binary).unwrap();
    add("gifti labels", "r.label.gii", bytes_of(&p), |p| {
        read_gifti_labels(p).is_ok()
    });

    for (name, file, format) in [
        ("ply ascii", "a.ply", PlyFormat::Ascii),
        ("ply binary", "b.ply", PlyFormat::BinaryLittleEndian),
    ] {
        let p = dir.join(file);
        write_ply(&p, &sphere(), format).unwrap();
        add(name, file, bytes_of(&p), |p| read_ply(p).is_ok());
    }
    let p = dir.join("s.off");
    patchwise::io::off::write_off(&p, &sphere()).unwrap();
    add("off", "s.off", bytes_of(&p), |p| {
        patchwise::io::off::read_off(p).is_ok()
    });

    let csv = b"c1;c2;c3\n0,1257;-0,1321;2\n1;2;3,5\n".to_vec();
    add("csv matrix", "m.csv", csv, |p| {
        patchwise::io::decoder_file::read_matrix(p).is_ok()
    });
    let tsv = b"# patterns\n1.0e+00\t-2.5e-01\n3\t4\n".to_vec();
    add("tsv matrix", "m.tsv", tsv, |p| {
        patchwise::io::decoder_file::read_matrix(p).is_ok()
    });
    let electrodes =
        b"name\tx\ty\tz\nCz\t0\t0\t94\nPz\t0\t-66\t66\nFz\t0\t66\t66\nOz\t0\t-90\t10\n".to_vec();
    add("electrodes tsv", "e.tsv", electrodes, |p| {
        patchwise::io::electrodes::read_electrodes(p).is_ok()
    });
    let sources = b"x,y,z,nx,ny,nz\n10,0,60,0,0,1\n-10,0,60,0,0,1\n0,10,60,0,0,1\n".to_vec();
    add("sources csv", "s.csv", sources, |p| {
        patchwise::io::sources_file::read_sources(p).is_ok()
    });
    let head = b"model = \"spheres\"\ncenter_mm = [0.0, 0.0, 40.0]\nradii_mm = [71.0, 72.0, 79.0, 85.0]\nconductivities = [0.33, 1.0, 0.0042, 0.33]\n".to_vec();
    add("head toml", "head.toml", head, |p| {
        let text = String::from_utf8_lossy(&std::fs::read(p).unwrap()).into_owned();
        patchwise::head::HeadSpec::from_toml_str(&text, "head.toml").is_ok()
    });
    // A MATLAB v7.3 decoder, made by the parent with h5py when the Python
    // reference environment is there (see `matlab_decoder`).
    if dir.join("decoder.mat").is_file() {
        add(
            "matlab v7.3",
            "decoder.mat",
            bytes_of(&dir.join("decoder.mat")),
            |p| patchwise::io::decoder_file::read_decoder(p, None).is_ok(),
        );
    }
    // A result folder through the report's reader and renderer (what
    // `patchwise report` calls): result.h5 and summary.json, made by
    // `attribute` in the parent (see `attribute_result`), each mutated
    // with the other kept valid beside it.
    let made = dir.join("report-corpus");
    if made.join("result.h5").is_file() && made.join("summary.json").is_file() {
        add(
            "report result.h5",
            "result.h5",
            bytes_of(&made.join("result.h5")),
            |p| report_of(p, &p.with_file_name("summary.json")),
        );
        add(
            "report summary",
            "summary.json",
            bytes_of(&made.join("summary.json")),
            |p| report_of(&p.with_file_name("result.h5"), p),
        );
    }
    let job = b"[defaults]\nmontage = \"10-20\"\nresamples = 10\nradii_mm = [5.0, 10.0]\n\n[[job]]\nname = \"s1\"\ndecoder = \"decoder.h5\"\nlambda_ratio = 0.1\n\n[[job]]\nname = \"s2\"\ndecoder = \"decoder.h5\"\nspacing_mm = 7.5\n\n[compare]\nout = \"group\"\n".to_vec();
    add("job toml", "jobs.toml", job, |p| {
        patchwise::batch::load_script(p).is_ok()
    });
    targets
}

/// One report case in this many draws its pictures.
const FIGURES_EVERY: u64 = 128;

/// The report of a result folder as `patchwise report` builds it: read
/// result.h5, parse summary.json, build the page. Drawing the pictures of
/// the 5k cortex takes about 0.25 s, so one call in `FIGURES_EVERY` draws
/// them and the others build the tables and text only (`no_figures`).
fn report_of(result: &Path, summary: &Path) -> bool {
    static CALLS: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let call = CALLS.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    let Ok(result) = patchwise::io::result_file::read_result(result) else {
        return false;
    };
    let summary = match std::fs::read_to_string(summary) {
        Ok(text) => match serde_json::from_str::<serde_json::Value>(&text) {
            Ok(v) => Some(v),
            Err(_) => return false,
        },
        Err(_) => None,
    };
    let options = patchwise::render::report::ReportOptions {
        no_figures: !call.is_multiple_of(FIGURES_EVERY),
        ..Default::default()
    };
    patchwise::render::report::build_report(&result, summary.as_ref(), &options).is_ok()
}

/// Numbers a mutation puts into text: extremes, signs, NaN and infinities.
const TEXT_NUMBERS: [&str; 12] = [
    "0",
    "-1",
    "100000000000000",
    "18446744073709551615",
    "1e308",
    "-1e308",
    "nan",
    "inf",
    "4294967296",
    "2147483648",
    "0.5x",
    "",
];

/// Integers a mutation writes into 8-byte fields.
const WORDS: [u64; 8] = [
    0,
    u64::MAX,
    1 << 40,
    1 << 32,
    0x7fff_ffff_ffff_ffff,
    10_000_000_000,
    0x8000_0000,
    1,
];

fn below(rng: &mut SplitMix64, n: usize) -> usize {
    (rng.next_u64() % n.max(1) as u64) as usize
}

/// One to four mutations of `valid`.
fn mutate(valid: &[u8], rng: &mut SplitMix64) -> Vec<u8> {
    let mut b = valid.to_vec();
    for _ in 0..1 + below(rng, 4) {
        if b.is_empty() {
            b.push(b'0');
        }
        let at = below(rng, b.len());
        match below(rng, 8) {
            0 => b[at] ^= 1 << below(rng, 8),
            1 => b[at] = [0u8, 0xff, 0x7f, 0x80, b'\n', b'-', b'9', b'<'][below(rng, 8)],
            2 => b.truncate(at),
            3 => {
                let n = 1 + below(rng, 16);
                let bytes: Vec<u8> = (0..n).map(|_| rng.next_u64() as u8).collect();
                b.splice(at..at, bytes);
            }
            4 => {
                let end = (at + 1 + below(rng, 64)).min(b.len());
                let slice = b[at..end].to_vec();
                let to = below(rng, b.len());
                b.splice(to..to, slice);
            }
            5 | 6 => {
                // Swap one number of the text for an extreme one.
                let starts: Vec<usize> = (0..b.len())
                    .filter(|&i| {
                        b[i].is_ascii_digit() && (i == 0 || !b[i - 1].is_ascii_alphanumeric())
                    })
                    .collect();
                if let Some(&s) = starts.get(below(rng, starts.len())) {
                    let mut e = s;
                    while e < b.len() && (b[e].is_ascii_alphanumeric() || b[e] == b'.') {
                        e += 1;
                    }
                    let value = TEXT_NUMBERS[below(rng, TEXT_NUMBERS.len())];
                    b.splice(s..e, value.bytes());
                }
            }
            _ => {
                if b.len() >= 8 {
                    let at = below(rng, b.len() - 7);
                    let w = WORDS[below(rng, WORDS.len())].to_le_bytes();
                    b[at..at + 8].copy_from_slice(&w);
                }
            }
        }
    }
    b
}

/// The child: run every case, writing the case about to run to `progress`
/// so that the parent can name it if the child dies.
#[test]
#[ignore = "run by fuzz_every_reader in a memory-capped child process"]
fn fuzz_child() {
    let Ok(dir) = std::env::var("PATCHWISE_FUZZ_DIR") else {
        return;
    };
    let dir = PathBuf::from(dir);
    let progress = dir.join("progress");
    let targets = corpus(&dir);
    for target in &targets {
        let valid = dir.join(target.file_name);
        std::fs::write(&valid, &target.valid).unwrap();
        assert!(
            (target.read)(&valid),
            "{}: the valid {} must read",
            target.name,
            valid.display()
        );
    }
    // Panics are counted and reported below; the default hook's messages
    // would bury the report.
    std::panic::set_hook(Box::new(|_| {}));
    let (cases, seed) = (cases_per_reader(), seed());
    let mut failures = Vec::new();
    for (t, target) in targets.iter().enumerate() {
        let input = dir.join(format!("case-{}", target.file_name));
        let mut rng = SplitMix64::new(seed, t as u64);
        let mut ok = 0u64;
        let start = std::time::Instant::now();
        for case in 0..cases {
            let bytes = mutate(&target.valid, &mut rng);
            std::fs::write(&input, &bytes).unwrap();
            std::fs::write(
                &progress,
                format!("{}\t{case}\t{}", target.name, input.display()),
            )
            .unwrap();
            match catch_unwind(AssertUnwindSafe(|| (target.read)(&input))) {
                Ok(true) => ok += 1,
                Ok(false) => {}
                Err(_) => {
                    let keep = Path::new(env!("CARGO_MANIFEST_DIR"))
                        .join("target/fuzz-failures")
                        .join(format!(
                            "{}-seed{seed}-case{case}-{}",
                            target.name.replace(' ', "_"),
                            target.file_name
                        ));
                    std::fs::create_dir_all(keep.parent().unwrap()).unwrap();
                    std::fs::write(&keep, &bytes).unwrap();
                    failures.push(format!(
                        "{} case {case}: panic (input kept in {})",
                        target.name,
                        keep.display()
                    ));
                }
            }
        }
        println!(
            "{:16} {cases} cases, {ok} read, {} refused, {:.1} s",
            target.name,
            cases - ok,
            start.elapsed().as_secs_f64()
        );
    }
    let _ = std::panic::take_hook();
    std::fs::write(&progress, "done").unwrap();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// What a child run left: whether it succeeded, the case it was at, and
/// its output.
struct ChildRun {
    success: bool,
    progress: String,
    stdout: String,
    stderr: String,
    seconds: f64,
}

/// Run `fuzz_child` under the memory cap with `env` added, killed after
/// `deadline_s` seconds.
fn run_child(env: &[(&str, &str)], deadline_s: f64, prepare: fn(&Path) -> bool) -> ChildRun {
    static RUNS: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
    let run = RUNS.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    // Each case writes its input and a progress line: on a memory file
    // system where there is one (about ten times faster here).
    let shm = Path::new("/dev/shm");
    let dir = if shm.is_dir() {
        let d = shm.join(format!("patchwise-fuzz-{}-{}", std::process::id(), run));
        std::fs::create_dir_all(&d).unwrap();
        d
    } else {
        support::scratch(&format!("fuzz_readers_{run}"))
    };
    prepare(&dir);
    let exe = std::env::current_exe().unwrap();
    let script = format!(
        "ulimit -v {FUZZ_CAP_KIB} && exec '{}' --exact fuzz_readers::fuzz_child --ignored --nocapture --test-threads 1",
        exe.display()
    );
    let start = std::time::Instant::now();
    let mut child = Command::new("sh")
        .args(["-c", &script])
        .env("PATCHWISE_FUZZ_DIR", &dir)
        .env("RAYON_NUM_THREADS", "1")
        .envs(env.iter().copied())
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    // Read the pipes on threads so that a chatty child cannot block.
    let mut out_pipe = child.stdout.take().unwrap();
    let mut err_pipe = child.stderr.take().unwrap();
    let out_reader = std::thread::spawn(move || {
        let mut s = String::new();
        let _ = std::io::Read::read_to_string(&mut out_pipe, &mut s);
        s
    });
    let err_reader = std::thread::spawn(move || {
        let mut s = String::new();
        let _ = std::io::Read::read_to_string(&mut err_pipe, &mut s);
        s
    });
    let status = loop {
        if let Some(status) = child.try_wait().unwrap() {
            break Some(status);
        }
        if start.elapsed().as_secs_f64() > deadline_s {
            child.kill().unwrap();
            child.wait().unwrap();
            break None;
        }
        std::thread::sleep(std::time::Duration::from_millis(50));
    };
    let progress = std::fs::read_to_string(dir.join("progress")).unwrap_or_default();
    if dir.starts_with(shm) {
        let _ = std::fs::remove_dir_all(&dir);
    }
    ChildRun {
        success: status.is_some_and(|s| s.success()) && progress == "done",
        progress: match status {
            Some(_) => progress,
            None => format!("{progress} (killed after {deadline_s} s)"),
        },
        stdout: out_reader.join().unwrap(),
        stderr: err_reader.join().unwrap(),
        seconds: start.elapsed().as_secs_f64(),
    }
}

/// Write `decoder.mat` (MATLAB v7.3: a 512-byte user block with the
/// MAT-file header, `channels` as a char matrix, `patterns` transposed) into
/// `dir` with h5py; false where the build found no Python (`build.rs`), so
/// the corpus then lacks the MATLAB case.
fn matlab_decoder(dir: &Path) -> bool {
    if cfg!(no_reference_python) {
        return false;
    }
    let python = support::python::python();
    let script = r#"
import sys, h5py, numpy as np
path = sys.argv[1]
with h5py.File(path, "w", userblock_size=512) as f:
    labels = np.array([[ord(c) for c in n] for n in ["Fp1", "Cz ", "Pz ", "Oz "]], dtype=np.uint16)
    c = f.create_dataset("channels", data=labels.T)
    c.attrs["MATLAB_class"] = np.bytes_(b"char")
    p = f.create_dataset("patterns", data=np.arange(8.0).reshape(4, 2).T)
    p.attrs["MATLAB_class"] = np.bytes_(b"double")
header = b"MATLAB 7.3 MAT-file, Platform: GLNXA64, Created on: Mon Jan  1 00:00:00 2024 HDF5 schema 1.00 ."
with open(path, "r+b") as fh:
    fh.write(header.ljust(116, b" ") + b"\x00" * 8 + b"\x00\x02IM")
"#;
    support::python::run(&python, script, &[&dir.join("decoder.mat")]);
    true
}

/// A small attribution on the template-5k, made once by the real binary
/// (64 channels of the 10-10 montage, two components, 4 resamples), copied
/// into `dir`/report-corpus for the result-folder readers. The cache is
/// kept between runs in target/test-scratch.
fn attribute_result(dir: &Path) {
    let work = support::scratch("fuzz_report_result");
    let cache = support::scratch_root().join("fuzz_report_cache");
    let labels: Vec<String> = patchwise::demo::CHANNELS_64
        .iter()
        .map(|s| s.to_string())
        .collect();
    let n = labels.len();
    let values: Vec<f64> = (0..n * 2)
        .map(|i| ((i / 2) as f64 * if i % 2 == 0 { 0.37 } else { 0.11 }).sin() * 1e-6)
        .collect();
    let mut store = Store::new();
    store.insert("/channels", Dataset::strings(labels));
    store.insert("/patterns", Dataset::f64(vec![n, 2], values));
    store.write_atomic(&work.join("decoder.h5")).unwrap();
    let run = Command::new(env!("CARGO_BIN_EXE_patchwise"))
        .args(["attribute", "--decoder", "decoder.h5", "--montage", "10-10"])
        .args([
            "--sources",
            "template-5k",
            "--resamples",
            "4",
            "--no-report",
        ])
        .args(["--out", "result", "--cache"])
        .arg(&cache)
        .current_dir(&work)
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "the corpus attribution failed: {}",
        String::from_utf8_lossy(&run.stderr)
    );
    let made = dir.join("report-corpus");
    std::fs::create_dir_all(&made).unwrap();
    for f in ["result.h5", "summary.json"] {
        std::fs::copy(work.join("result").join(f), made.join(f)).unwrap();
    }
}

/// The parent's part of the corpus: the MATLAB decoder (when h5py is
/// there) and the attribution for the result-folder readers.
fn prepare_corpus(dir: &Path) -> bool {
    attribute_result(dir);
    matlab_decoder(dir)
}

#[test]
fn fuzz_every_reader() {
    // A time limit of 2 ms a case on average over 21 readers, 2 minutes at
    // the least: a reader that spins is stopped and named.
    let deadline = (cases_per_reader() as f64 * 21.0 * 0.002).max(120.0);
    let run = run_child(&[], deadline, prepare_corpus);
    let _ = std::io::stdout().write_all(run.stdout.as_bytes());
    assert!(
        run.success,
        "the fuzzing child failed at [{}] under a {} MiB cap after {:.1} s:\n{}\n{}",
        run.progress,
        FUZZ_CAP_KIB >> 10,
        run.seconds,
        run.stdout,
        run.stderr
    );
    assert!(
        run.stdout.contains("job toml"),
        "every reader ran:\n{}",
        run.stdout
    );
}

#[test]
fn fuzz_harness_catches_panics_and_allocations_beyond_the_cap() {
    let run = run_child(
        &[
            ("PATCHWISE_FUZZ_SELFTEST", "panic"),
            ("PATCHWISE_FUZZ_CASES", "200"),
        ],
        120.0,
        |_| true,
    );
    assert!(!run.success);
    assert!(
        run.stderr.contains("selftest case") && run.stderr.contains("panic (input kept in"),
        "{}\n{}",
        run.stdout,
        run.stderr
    );
    let run = run_child(
        &[
            ("PATCHWISE_FUZZ_SELFTEST", "allocation"),
            ("PATCHWISE_FUZZ_CASES", "5"),
        ],
        120.0,
        |_| true,
    );
    assert!(!run.success);
    assert!(
        run.progress.starts_with("selftest\t0\t"),
        "the child died at the first case: [{}]\n{}",
        run.progress,
        run.stderr
    );
}
