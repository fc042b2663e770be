//! Declared sizes are checked before anything is allocated, decompression
//! stops at the declared size, inputs must be regular files and no header
//! makes a reader spin (issue 18, items 6, 7 and 8). Each test builds its
//! offending file itself; the memory tests run the binary under a virtual
//! memory cap (`ulimit -v`), where an allocation beyond the cap aborts the
//! process (exit 134) instead of giving exit 2.

use crate::support;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use patchwise::io::dictionary_file::read_dictionary;
use patchwise::io::{Dataset, IoError, Store};

use crate::support::cli::patchwise;

/// The virtual-memory cap of the capped runs: 1 GiB, far below what the
/// unchecked readers took (680 GB, 1 TB, 4 GiB) and far above what the
/// binary needs to refuse a file.
const CAP_KIB: u64 = 1 << 20;

fn scratch(name: &str) -> PathBuf {
    support::scratch(&format!("reliability_limits_{name}"))
}

/// Run `patchwise ARGS` in `cwd` under `ulimit -v CAP_KIB`.
fn patchwise_capped(args: &[&str], cwd: &Path) -> Output {
    let mut script = format!(
        "ulimit -v {CAP_KIB} && exec '{}'",
        env!("CARGO_BIN_EXE_patchwise")
    );
    for a in args {
        script.push_str(&format!(" '{a}'"));
    }
    Command::new("sh")
        .args(["-c", &script])
        .current_dir(cwd)
        .env("PATCHWISE_CACHE", cwd.join("cache"))
        .env("RAYON_NUM_THREADS", "1")
        .output()
        .unwrap()
}

/// Run `patchwise ARGS` in `cwd`, killed after `limit` (then `None`).
fn patchwise_within(args: &[&str], cwd: &Path, limit: Duration) -> Option<Output> {
    let mut child = Command::new(env!("CARGO_BIN_EXE_patchwise"))
        .args(args)
        .current_dir(cwd)
        .env("PATCHWISE_CACHE", cwd.join("cache"))
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let start = Instant::now();
    loop {
        if child.try_wait().unwrap().is_some() {
            return Some(child.wait_with_output().unwrap());
        }
        if start.elapsed() > limit {
            child.kill().unwrap();
            child.wait().unwrap();
            return None;
        }
        std::thread::sleep(Duration::from_millis(20));
    }
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

fn assert_exit_2(out: &Output, needles: &[&str]) {
    let text = stderr(out);
    assert_eq!(out.status.code(), Some(2), "{text}");
    for n in needles {
        assert!(text.contains(n), "expected {n:?} in: {text}");
    }
}

/// Bob Jenkins' lookup3 `hashlittle` with seed 0, the checksum of HDF5's
/// version-2 object headers (a public-domain algorithm, written here from
/// its description).
fn lookup3(data: &[u8]) -> u32 {
    fn mix(a: &mut u32, b: &mut u32, c: &mut u32) {
        *a = a.wrapping_sub(*c) ^ c.rotate_left(4);
        *c = c.wrapping_add(*b);
        *b = b.wrapping_sub(*a) ^ a.rotate_left(6);
        *a = a.wrapping_add(*c);
        *c = c.wrapping_sub(*b) ^ b.rotate_left(8);
        *b = b.wrapping_add(*a);
        *a = a.wrapping_sub(*c) ^ c.rotate_left(16);
        *c = c.wrapping_add(*b);
        *b = b.wrapping_sub(*a) ^ a.rotate_left(19);
        *a = a.wrapping_add(*c);
        *c = c.wrapping_sub(*b) ^ b.rotate_left(4);
        *b = b.wrapping_add(*a);
    }
    fn last(a: &mut u32, b: &mut u32, c: &mut u32) {
        *c = (*c ^ *b).wrapping_sub(b.rotate_left(14));
        *a = (*a ^ *c).wrapping_sub(c.rotate_left(11));
        *b = (*b ^ *a).wrapping_sub(a.rotate_left(25));
        *c = (*c ^ *b).wrapping_sub(b.rotate_left(16));
        *a = (*a ^ *c).wrapping_sub(c.rotate_left(4));
        *b = (*b ^ *a).wrapping_sub(a.rotate_left(14));
        *c = (*c ^ *b).wrapping_sub(b.rotate_left(24));
    }
    let word = |s: &[u8]| {
        let mut w = [0u8; 4];
        w[..s.len()].copy_from_slice(s);
        u32::from_le_bytes(w)
    };
    let mut a = 0xdead_beefu32.wrapping_add(data.len() as u32);
    let (mut b, mut c) = (a, a);
    let mut rest = data;
    while rest.len() > 12 {
        a = a.wrapping_add(word(&rest[0..4]));
        b = b.wrapping_add(word(&rest[4..8]));
        c = c.wrapping_add(word(&rest[8..12]));
        mix(&mut a, &mut b, &mut c);
        rest = &rest[12..];
    }
    if rest.is_empty() {
        return c;
    }
    a = a.wrapping_add(word(&rest[..rest.len().min(4)]));
    if rest.len() > 4 {
        b = b.wrapping_add(word(&rest[4..rest.len().min(8)]));
    }
    if rest.len() > 8 {
        c = c.wrapping_add(word(&rest[8..]));
    }
    last(&mut a, &mut b, &mut c);
    c
}

/// Rewrite the dimensions `from` of one dataspace to `to` (same rank) and
/// reseal the checksum of the object header holding them: the file then
/// declares a shape that its data does not have.
fn patch_dims(bytes: &mut [u8], from: &[u64], to: &[u64]) {
    let enc = |d: &[u64]| -> Vec<u8> { d.iter().flat_map(|v| v.to_le_bytes()).collect() };
    let (from, to) = (enc(from), enc(to));
    let hits: Vec<usize> = (0..=bytes.len() - from.len())
        .filter(|&i| bytes[i..i + from.len()] == from[..])
        .collect();
    assert_eq!(hits.len(), 1, "the dimensions must occur once");
    let at = hits[0];
    bytes[at..at + to.len()].copy_from_slice(&to);
    reseal(bytes, at);
}

/// Recompute the checksum of the version-2 object header holding byte `at`:
/// "OHDR", version, flags, optional times and attribute phase values, the
/// chunk size, the messages, then the checksum.
fn reseal(bytes: &mut [u8], at: usize) {
    let start = (0..at)
        .rev()
        .find(|&i| &bytes[i..i + 4] == b"OHDR")
        .unwrap();
    let flags = bytes[start + 5];
    let mut p = start + 6;
    if flags & 0x20 != 0 {
        p += 16;
    }
    if flags & 0x10 != 0 {
        p += 4;
    }
    let width = 1usize << (flags & 3);
    let mut size = [0u8; 8];
    size[..width].copy_from_slice(&bytes[p..p + width]);
    let end = p + width + u64::from_le_bytes(size) as usize;
    assert!(end > at, "the patch lies in the first chunk");
    let sum = lookup3(&bytes[start..end]);
    bytes[end..end + 4].copy_from_slice(&sum.to_le_bytes());
}

/// An HDF5 file holding `/channels` (4 labels), `/patterns` (4 × 2) and a
/// float dataset `name` of 4 × 3 written values whose dataspace is then
/// rewritten to declare 4 × `columns`; chunked and compressed when
/// `chunked`.
fn declaring_file(name: &str, columns: u64, chunked: bool) -> Vec<u8> {
    let mut builder = hdf5::FileBuilder::new();
    builder
        .create_dataset("channels")
        .with_vlen_strings(&["Cz", "Pz", "Fz", "Oz"]);
    builder
        .create_dataset("patterns")
        .with_f64_data(&[1.0; 8])
        .with_shape(&[4, 2]);
    let ds = builder.create_dataset(name);
    ds.with_f64_data(&[1.0; 12]).with_shape(&[4, 3]);
    if chunked {
        ds.with_chunks(&[4, 3]).with_deflate(6);
    }
    let mut bytes = builder.finish().unwrap();
    patch_dims(&mut bytes, &[4, 3], &[4, columns]);
    bytes
}

#[test]
fn hdf5_declared_size_beyond_file_is_refused() {
    let dir = scratch("hdf5_declared");
    let path = dir.join("decoder.h5");
    let bytes = declaring_file("covariance", 10_000_000_000, false);
    std::fs::write(&path, &bytes).unwrap();
    assert!(bytes.len() < 20_000, "the file itself is small");
    // The library refuses it before reading, naming the dataset.
    match Store::read(&path) {
        Err(IoError::Value {
            path: p,
            object,
            message,
        }) => {
            assert_eq!(p, path);
            assert_eq!(object, "/covariance");
            assert!(message.contains("more than the file's"), "{message}");
        }
        other => panic!("expected a size error, got {other:?}"),
    }
    // The binary exits 2 under a 1 GiB cap instead of aborting.
    let out = patchwise_capped(
        &["attribute", "--decoder", "decoder.h5", "--out", "out"],
        &dir,
    );
    assert_exit_2(&out, &["decoder.h5", "/covariance", "more than the file's"]);
    assert!(!dir.join("out").exists(), "nothing written");
}

#[test]
fn hdf5_chunked_declared_size_beyond_the_memory_bound_is_refused() {
    let dir = scratch("hdf5_chunked");
    let path = dir.join("big.h5");
    let bytes = declaring_file("values", 10_000_000_000, true);
    std::fs::write(&path, &bytes).unwrap();
    match Store::read(&path) {
        Err(IoError::Value {
            object, message, ..
        }) => {
            assert_eq!(object, "/values");
            assert!(message.contains("memory budget"), "{message}");
        }
        other => panic!("expected a size error, got {other:?}"),
    }
}

#[test]
fn decoder_reads_only_the_datasets_it_needs() {
    let dir = scratch("hdf5_only_needed");
    let path = dir.join("decoder.h5");
    // The decoder's datasets beside one declaring 320 GB.
    std::fs::write(&path, declaring_file("unrelated", 10_000_000_000, false)).unwrap();
    assert!(Store::read(&path).is_err(), "the whole file cannot be read");
    let decoder = patchwise::io::decoder_file::read_decoder(&path, None).unwrap();
    assert_eq!(decoder.k, 2);
}

#[test]
fn dictionary_group_index_beyond_atoms_is_refused_without_allocating() {
    let dir = scratch("dictionary_group");
    let path = dir.join("dictionary.h5");
    let mut store = Store::new();
    store.insert("/dictionary/atoms", Dataset::f64(vec![2, 3], vec![1.0; 6]));
    store.insert(
        "/dictionary/group",
        Dataset::i64(vec![3], vec![0, 1, 1 << 40]),
    );
    store.write_atomic(&path).unwrap();
    // Before the fix this sized a table by the index: 1 TB, an abort.
    support::files::assert_value_error(
        read_dictionary(&path),
        &path,
        "/dictionary/group",
        "atom 2 has group 1099511627776",
    );
}

#[test]
fn resample_counts_beyond_memory_exit_2_naming_the_limit() {
    let dir = scratch("resamples");
    let out = patchwise(
        &[
            "attribute",
            "--decoder",
            "absent.npz",
            "--resamples",
            "100000000000",
            "--out",
            "out",
        ],
        &dir,
    );
    assert_exit_2(&out, &["--resamples = 100000000000", "at most 1048576"]);
    let out = patchwise(
        &[
            "compare",
            "a",
            "b",
            "--bootstrap",
            "100000000000",
            "--out",
            "cmp",
        ],
        &dir,
    );
    assert_exit_2(&out, &["--bootstrap = 100000000000", "at most 1048576"]);
    std::fs::write(
        dir.join("jobs.toml"),
        "[defaults]\nresamples = 100000000000\n\n[[job]]\nname = \"s1\"\ndecoder = \"d.npz\"\n",
    )
    .unwrap();
    std::fs::write(dir.join("d.npz"), b"").unwrap();
    let out = patchwise(&["batch", "jobs.toml", "--out", "runs"], &dir);
    assert_exit_2(
        &out,
        &["jobs.toml", "resamples = 100000000000", "at most 1048576"],
    );
    for folder in ["out", "cmp", "runs"] {
        assert!(!dir.join(folder).exists(), "{folder} must not be made");
    }
}

/// A zlib stream of `n` zero bytes (compresses about 1000 : 1).
fn zeros_zlib(n: usize) -> Vec<u8> {
    let mut enc = flate2::write::ZlibEncoder::new(Vec::new(), flate2::Compression::fast());
    let block = vec![0u8; 1 << 20];
    for _ in 0..n / block.len() {
        enc.write_all(&block).unwrap();
    }
    enc.finish().unwrap()
}

/// A raw deflate stream of `n` zero bytes.
fn zeros_deflate(n: usize) -> Vec<u8> {
    let mut enc = flate2::write::DeflateEncoder::new(Vec::new(), flate2::Compression::fast());
    let block = vec![0u8; 1 << 20];
    for _ in 0..n / block.len() {
        enc.write_all(&block).unwrap();
    }
    enc.finish().unwrap()
}

/// The size of the inflation bombs: 2 GiB, twice the memory cap.
const BOMB: usize = 2 << 30;

#[test]
fn gifti_gzip_array_inflating_beyond_its_declared_size_is_refused() {
    use base64::Engine;
    let dir = scratch("gifti_bomb");
    let data = base64::engine::general_purpose::STANDARD.encode(zeros_zlib(BOMB));
    let xml = format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<GIFTI Version=\"1.0\" NumberOfDataArrays=\"1\">\n\
         <DataArray Intent=\"NIFTI_INTENT_POINTSET\" DataType=\"NIFTI_TYPE_FLOAT32\" ArrayIndexingOrder=\"RowMajorOrder\" \
         Dimensionality=\"2\" Dim0=\"64\" Dim1=\"3\" Encoding=\"GZipBase64Binary\" Endian=\"LittleEndian\" ExternalFileName=\"\" ExternalFileOffset=\"\">\n\
         <Data>{data}</Data>\n</DataArray>\n</GIFTI>\n"
    );
    std::fs::write(dir.join("bomb.surf.gii"), xml).unwrap();
    let out = patchwise_capped(&["check", "bomb.surf.gii"], &dir);
    assert_exit_2(
        &out,
        &[
            "bomb.surf.gii",
            "DataArray 0",
            "too much data: more than 768 bytes",
        ],
    );
}

/// A zip archive of one deflated entry `name` whose central directory
/// declares `declared` uncompressed bytes.
fn zip_one(name: &str, deflated: &[u8], declared: u32) -> Vec<u8> {
    let mut z = Vec::new();
    let le16 = |v: u16| v.to_le_bytes();
    let le32 = |v: u32| v.to_le_bytes();
    let csize = u32::try_from(deflated.len()).unwrap();
    // The fields a local header and a central-directory entry share:
    // method deflate, no time, CRC 0, sizes and the name's length.
    let shared = |z: &mut Vec<u8>| {
        z.extend(le16(8));
        z.extend([0u8; 4]);
        z.extend(le32(0));
        z.extend(le32(csize));
        z.extend(le32(declared));
        z.extend(le16(name.len() as u16));
    };
    // Local file header.
    z.extend(le32(0x0403_4b50));
    z.extend(le16(20));
    z.extend(le16(0));
    shared(&mut z);
    z.extend(le16(0));
    z.extend(name.as_bytes());
    z.extend(deflated);
    let cd = z.len() as u32;
    // Central directory entry.
    z.extend(le32(0x0201_4b50));
    z.extend(le16(20));
    z.extend(le16(20));
    z.extend(le16(0));
    shared(&mut z);
    z.extend([0u8; 12]);
    z.extend(le32(0));
    z.extend(name.as_bytes());
    let cd_len = z.len() as u32 - cd;
    // End of central directory.
    z.extend(le32(0x0605_4b50));
    z.extend([0u8; 4]);
    z.extend(le16(1));
    z.extend(le16(1));
    z.extend(le32(cd_len));
    z.extend(le32(cd));
    z.extend(le16(0));
    z
}

#[test]
fn npz_entry_inflating_beyond_its_declared_size_is_refused() {
    let dir = scratch("npz_bomb");
    let bomb = zeros_deflate(BOMB);
    std::fs::write(
        dir.join("decoder.npz"),
        zip_one("patterns.npy", &bomb, 2048),
    )
    .unwrap();
    let out = patchwise_capped(
        &["attribute", "--decoder", "decoder.npz", "--out", "out"],
        &dir,
    );
    assert_exit_2(
        &out,
        &[
            "decoder.npz",
            "entry patterns.npy",
            "inflates to more than 2048 bytes",
        ],
    );
    assert!(!dir.join("out").exists());
    // An entry declaring more than deflate can reach from its size is
    // refused before inflating anything.
    std::fs::write(
        dir.join("liar.npz"),
        zip_one("patterns.npy", &bomb[..1000], u32::MAX - 1),
    )
    .unwrap();
    let out = patchwise(
        &["attribute", "--decoder", "liar.npz", "--out", "out"],
        &dir,
    );
    assert_exit_2(
        &out,
        &["liar.npz", "entry patterns.npy", "more than the limit"],
    );
}

#[test]
fn ply_element_count_beyond_the_body_exits_2_at_once() {
    let dir = scratch("ply_junk");
    let ply = b"ply\nformat binary_little_endian 1.0\nelement vertex 3\nproperty float x\nproperty float y\nproperty float z\nelement junk 100000000000000\nend_header\n";
    let mut bytes = ply.to_vec();
    for v in [[0f32, 0., 0.], [1., 0., 0.], [0., 1., 0.]] {
        for x in v {
            bytes.extend(x.to_le_bytes());
        }
    }
    std::fs::write(dir.join("junk.ply"), &bytes).unwrap();
    let out = patchwise_within(&["check", "junk.ply"], &dir, Duration::from_secs(30))
        .expect("check must not spin on a huge element count");
    assert_exit_2(
        &out,
        &["junk.ply", "element junk declares 100000000000000 items"],
    );
    // The ASCII form too.
    let ascii = b"ply\nformat ascii 1.0\nelement vertex 3\nproperty float x\nproperty float y\nproperty float z\nelement junk 100000000000000\nend_header\n0 0 0\n1 0 0\n0 1 0\n";
    std::fs::write(dir.join("junk_ascii.ply"), ascii).unwrap();
    let out = patchwise_within(&["check", "junk_ascii.ply"], &dir, Duration::from_secs(30))
        .expect("check must not spin on a huge element count");
    assert_exit_2(&out, &["junk_ascii.ply", "element junk declares"]);
}

#[test]
fn fifo_given_as_an_input_exits_2_without_blocking() {
    let dir = scratch("fifo");
    for name in ["decoder.npz", "decoder.h5", "patterns.csv"] {
        let made = Command::new("mkfifo").arg(dir.join(name)).status().unwrap();
        assert!(made.success());
    }
    let cases: [&[&str]; 3] = [
        &["attribute", "--decoder", "decoder.npz", "--out", "out"],
        &["attribute", "--decoder", "decoder.h5", "--out", "out"],
        &[
            "attribute",
            "--patterns",
            "patterns.csv",
            "--dictionary",
            "decoder.h5",
            "--out",
            "out",
        ],
    ];
    for args in cases {
        let out = patchwise_within(args, &dir, Duration::from_secs(60))
            .unwrap_or_else(|| panic!("{args:?} blocked on a FIFO"));
        assert_exit_2(&out, &["not a regular file"]);
    }
    assert!(!dir.join("out").exists());
}
