//! `patchwise compare` end to end: subjects made by `attribute` on
//! perturbed copies of the demo decoder (template-5k), the group test, the
//! paired comparison, an index map, and bad input (exit 2, nothing written).

use crate::support;
use std::path::Path;

use crate::support::cli::patchwise;
use crate::support::cohort::{demo_decoder, subject};
use patchwise::io::table::read_table;
use patchwise::io::{Array, Store};

fn column(table: &patchwise::io::table::Table, name: &str) -> usize {
    table.column(&[name]).unwrap()
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn compare_finds_the_shared_region_pairs_decoders_and_rejects_bad_input() {
    let dir = support::scratch("cohort_cli");
    let decoder = demo_decoder(&dir);
    let names: Vec<String> = (0..6).map(|i| format!("s{i}-A")).collect();
    for (i, n) in names.iter().enumerate() {
        subject(&dir, &decoder, n, 100 + i as u64, 0.05, 3);
    }
    for i in 0..3 {
        subject(&dir, &decoder, &format!("s{i}-B"), 200 + i, 0.3, 3);
    }
    let mut args: Vec<&str> = vec!["compare"];
    args.extend(names.iter().map(|s| s.as_str()));
    args.extend(["--out", "group", "--bootstrap", "500"]);
    let out = patchwise(&args, &dir);
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(stdout.contains("left-precentral"), "{stdout}");
    // The smoothing kernel is cached (keyed by the mesh, σ and the cut-off):
    // a second run reads it and writes the same tables; a damaged entry is
    // rebuilt, again with the same tables.
    let kernels: Vec<_> = std::fs::read_dir(dir.join("cache"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| {
            p.file_name()
                .is_some_and(|n| n.to_string_lossy().starts_with("kernel-"))
        })
        .collect();
    assert_eq!(kernels.len(), 1, "{kernels:?}");
    for (run, damage) in [("group-cached", false), ("group-rebuilt", true)] {
        if damage {
            std::fs::write(&kernels[0], b"not an HDF5 file").unwrap();
        }
        let mut again = args.clone();
        let n = again.len();
        again[n - 3] = run;
        let out = patchwise(&again, &dir);
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert!(out.status.success(), "{stderr}");
        assert_eq!(
            stderr.contains("using cached smoothing kernel"),
            !damage,
            "{stderr}"
        );
        for table in ["regions.csv", "similarity.csv"] {
            assert_eq!(
                std::fs::read(dir.join("group").join(table)).unwrap(),
                std::fs::read(dir.join(run).join(table)).unwrap(),
                "{run}/{table}"
            );
        }
    }

    // The demo's right-hand component (named so in the decoder file)
    // is generated in the left precentral
    // region (src/demo); with six subjects the sign-flip test enumerates 64
    // sign vectors and can reach the one-sided p = 1/64 < 0.05 (Nichols & Holmes 2002).
    let regions = read_table(&dir.join("group/regions.csv")).unwrap();
    let (ci, ri, pi) = (
        column(&regions, "component"),
        column(&regions, "region"),
        column(&regions, "p_corrected"),
    );
    let row = regions
        .rows
        .iter()
        .find(|r| r.fields[ci] == "right-hand imagery" && r.fields[ri] == "left-precentral")
        .unwrap();
    let p: f64 = row.fields[pi].parse().unwrap();
    assert!(p < 0.05, "corrected p {p}");
    // All six subjects are the demo decoder with noise, so the generator
    // region leads the right-hand component in (nearly) every subject.
    assert!(
        stdout.contains("leading region of the subjects: left-precentral ("),
        "{stdout}"
    );
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("group/summary.json")).unwrap())
            .unwrap();
    let leading = &summary["components"][0]["leading_regions"];
    assert_eq!(leading[0]["region"], "left-precentral", "{leading}");
    let fractions: Vec<f64> = leading
        .as_array()
        .unwrap()
        .iter()
        .map(|l| l["fraction"].as_f64().unwrap())
        .collect();
    assert!(fractions[0] >= 5.0 / 6.0 - 1e-12, "{leading}");
    assert!(fractions.iter().sum::<f64>() <= 1.0 + 1e-12, "{leading}");
    for f in &fractions {
        assert!((f * 6.0 - (f * 6.0).round()).abs() < 1e-9, "{leading}");
    }
    let sim = read_table(&dir.join("group/similarity.csv")).unwrap();
    assert_eq!(sim.rows.len(), 3 * 15);
    let cos = column(&sim, "cosine");
    for r in &sim.rows {
        let c: f64 = r.fields[cos].parse().unwrap();
        assert!(c > 0.8, "cosine {c} in {:?}", r.fields);
    }
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("group/summary.json")).unwrap())
            .unwrap();
    assert_eq!(summary["subjects"].as_array().unwrap().len(), 6);
    assert!(summary["caution"]
        .as_str()
        .unwrap()
        .contains("not a medical device"));
    let h5 = Store::read(&dir.join("group/compare.h5")).unwrap();
    assert_eq!(h5.datasets["/group/share"].shape[..2], [3, 6]);
    assert_eq!(h5.datasets["/similarity/cosine"].shape, vec![3, 6, 6]);
    // h5py 3.16 reads the layout of docs/cohort.md (interoperability, no
    // numerical tolerance: the p-values must equal regions.csv's to 1e-6,
    // the CSV's printed precision).
    let py = support::python::python();
    {
        let script = r#"
import sys, csv, h5py, numpy as np
f = h5py.File(sys.argv[1], "r")
assert "not a medical device" in f.attrs["caution"]
p = f["/group/p_corrected"][()]
names = [n.decode() if isinstance(n, bytes) else n for n in f["/regions/names"][()]]
assert p.shape == (3, len(names))
assert f["/group/share"].shape[:2] == (3, 6)
assert abs(f["/similarity"].attrs["smoothing_sigma_mm"] - 10.0) < 1e-12
rows = list(csv.DictReader(open(sys.argv[2])))
# Components are named by the decoder file; the CSV lists them in order.
components = list(dict.fromkeys(r["component"] for r in rows))
assert len(components) == 3
for r in rows:
    c = components.index(r["component"]); j = names.index(r["region"])
    assert abs(float(r["p_corrected"]) - p[c, j]) <= 1e-6
"#;
        support::python::run(
            &py,
            script,
            &[
                &dir.join("group/compare.h5"),
                &dir.join("group/regions.csv"),
            ],
        );
    }

    // Paired comparison: A (5 % noise) against B (30 % noise), three subjects.
    let out = patchwise(
        &[
            "compare", "s0-A", "s1-A", "s2-A", "s0-B", "s1-B", "s2-B", "--pair", "A", "B", "--out",
            "paired",
        ],
        &dir,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let paired = read_table(&dir.join("paired/paired.csv")).unwrap();
    assert_eq!(paired.rows.len(), 3 * regions.rows.len() / 3);
    // The same pairs laid out as <subject>/A and <subject>_B give the same
    // paired table.
    for i in 0..3 {
        copy_dir(
            &dir.join(format!("s{i}-A")),
            &dir.join(format!("nested/s{i}/A")),
        );
        copy_dir(
            &dir.join(format!("s{i}-B")),
            &dir.join(format!("nested/s{i}_B")),
        );
    }
    let out = patchwise(
        &[
            "compare",
            "nested/s0/A",
            "nested/s1/A",
            "nested/s2/A",
            "nested/s0_B",
            "nested/s1_B",
            "nested/s2_B",
            "--pair",
            "A",
            "B",
            "--out",
            "paired2",
        ],
        &dir,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(
        std::fs::read(dir.join("paired/paired.csv")).unwrap(),
        std::fs::read(dir.join("paired2/paired.csv")).unwrap()
    );

    // A result on a shifted cortex: refused without a map, accepted with an
    // identity index map.
    copy_dir(&dir.join("s1-A"), &dir.join("shifted"));
    let result = dir.join("shifted/result.h5");
    let mut store = Store::read(&result).unwrap();
    if let Array::F64(v) = &mut store
        .datasets
        .get_mut("/sources/positions_mm")
        .unwrap()
        .data
    {
        v.iter_mut().for_each(|x| *x += 1.0);
    }
    store.write_atomic(&result).unwrap();
    let bad = patchwise(&["compare", "s0-A", "shifted", "--out", "x1"], &dir);
    assert_eq!(bad.status.code(), Some(2));
    let err = String::from_utf8_lossy(&bad.stderr);
    assert!(err.contains("shifted") && err.contains("--map"), "{err}");
    assert!(!dir.join("x1").exists());
    let n_src = store.datasets["/sources/positions_mm"].shape[0];
    let map: String = (0..n_src).map(|v| format!("{v}\n")).collect();
    std::fs::write(dir.join("identity.txt"), map).unwrap();
    let ok = patchwise(
        &[
            "compare",
            "s0-A",
            "shifted",
            "--map",
            "shifted=identity.txt",
            "--out",
            "x2",
        ],
        &dir,
    );
    assert!(
        ok.status.success(),
        "{}",
        String::from_utf8_lossy(&ok.stderr)
    );
    // The same through nearest neighbour between "registered spheres": here
    // one GIFTI file for both sides (the template's own vertex positions),
    // so every subject vertex finds its own position at distance zero and
    // the similarities equal those of the identity index map.
    let t = patchwise::geometry::template(patchwise::geometry::TemplateResolution::Low);
    patchwise::io::gifti::write_gifti_surface(
        &dir.join("sphere.gii"),
        &t.mesh,
        patchwise::io::gifti::GiftiEncoding::Base64Binary,
    )
    .unwrap();
    let nn = patchwise(
        &[
            "compare",
            "s0-A",
            "shifted",
            "--map",
            "shifted=sphere.gii,sphere.gii",
            "--out",
            "x7",
        ],
        &dir,
    );
    assert!(
        nn.status.success(),
        "{}",
        String::from_utf8_lossy(&nn.stderr)
    );
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("x7/summary.json")).unwrap())
            .unwrap();
    assert!(summary["mapping"][1]
        .as_str()
        .unwrap()
        .starts_with("nearest neighbour"));
    let by_sphere = read_table(&dir.join("x7/similarity.csv")).unwrap();
    let by_index = read_table(&dir.join("x2/similarity.csv")).unwrap();
    let cos = column(&by_sphere, "cosine");
    for (x, y) in by_sphere.rows.iter().zip(&by_index.rows) {
        assert_eq!(x.fields[cos], y.fields[cos]);
    }

    // Bad input: one result; a folder without result.h5; another region
    // set; another number of components.
    let one = patchwise(&["compare", "s0-A", "--out", "x3"], &dir);
    assert_eq!(one.status.code(), Some(2));
    std::fs::create_dir_all(dir.join("empty")).unwrap();
    let empty = patchwise(&["compare", "s0-A", "empty", "--out", "x4"], &dir);
    assert_eq!(empty.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&empty.stderr).contains("empty"));
    copy_dir(&dir.join("s1-A"), &dir.join("renamed"));
    let result = dir.join("renamed/result.h5");
    let mut store = Store::read(&result).unwrap();
    for ds in ["/attribution/region_names", "/sources/region_names"] {
        if let Array::Str(v) = &mut store.datasets.get_mut(ds).unwrap().data {
            v[0] = "somewhere-else".to_string();
        }
    }
    store.write_atomic(&result).unwrap();
    let regions_bad = patchwise(&["compare", "s0-A", "renamed", "--out", "x5"], &dir);
    assert_eq!(regions_bad.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&regions_bad.stderr).contains("renamed"));
    subject(&dir, &decoder, "two", 300, 0.05, 2);
    let k_bad = patchwise(&["compare", "s0-A", "two", "--out", "x6"], &dir);
    assert_eq!(k_bad.status.code(), Some(2));
    let err = String::from_utf8_lossy(&k_bad.stderr);
    assert!(err.contains("two") && err.contains("components"), "{err}");
    for x in ["x3", "x4", "x5", "x6"] {
        assert!(!dir.join(x).exists(), "{x} was written");
    }
}

fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap() {
        let e = e.unwrap();
        std::fs::copy(e.path(), to.join(e.file_name())).unwrap();
    }
}
