//! Benchmark of the content hashes of inputs and cache keys: SHA-256 (the
//! hash before) against BLAKE3 (`io::cache::bytes_hash`) over 224 MB, the
//! size of the 20k template's cached dictionary with 64 channels, and
//! `io::cache::file_hash` of such a file the second time in a process (the
//! hash remembered by the file's stamp). Bytes are seeded, made outside the
//! timed code. Run: `cargo bench --bench hashing`.

use std::path::PathBuf;
use std::sync::LazyLock;

use patchwise::io::cache::{bytes_hash, bytes_sha256, file_hash};

const BYTES: usize = 224 * 1_000_000;

static DATA: LazyLock<Vec<u8>> = LazyLock::new(|| {
    // Seeded xorshift64 (Marsaglia 2003).
    let mut state = 0x9E37_79B9_7F4A_7C15_u64;
    (0..BYTES / 8)
        .flat_map(|_| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state.to_le_bytes()
        })
        .collect()
});

/// The bytes as a file whose last change is old enough to be remembered.
static FILE: LazyLock<PathBuf> = LazyLock::new(|| {
    let path = std::env::temp_dir().join(format!("patchwise-bench-hash-{}", std::process::id()));
    std::fs::write(&path, &*DATA).expect("writing the benchmark file");
    let old = std::time::SystemTime::now() - std::time::Duration::from_secs(3600);
    std::fs::File::options()
        .write(true)
        .open(&path)
        .and_then(|f| f.set_modified(old))
        .expect("dating the benchmark file");
    path
});

#[divan::bench(sample_count = 5)]
fn sha256_224mb() -> String {
    bytes_sha256(divan::black_box(&DATA))
}

#[divan::bench(sample_count = 5)]
fn blake3_224mb() -> String {
    bytes_hash(divan::black_box(&DATA))
}

#[divan::bench(sample_count = 5)]
fn file_hash_224mb_remembered(bencher: divan::Bencher) {
    let path = &*FILE;
    file_hash(path).expect("hashing");
    bencher.bench(|| file_hash(divan::black_box(path)).expect("hashing"));
}

fn main() {
    divan::main();
    let _ = std::fs::remove_file(&*FILE);
}
