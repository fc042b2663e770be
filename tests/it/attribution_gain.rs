//! Where a filter listens (issue 27): the cortical gain of decoder weights,
//! |Wᵀ L| per source, checked against NumPy, against the Cauchy–Schwarz
//! inequality, against the identity Wᵀ A = I of Haufe et al. 2014
//! (NeuroImage 87:96–110), and on a distractor in the spirit of that
//! paper's two-channel example; with the inputs that give no gain.

use std::path::Path;

use patchwise::attribution::{filter_gain, gain_agreement, FilterGain, GainInput};
use patchwise::io::{Dataset, Store};
use patchwise::patterns::activation_patterns;
use serde_json::Value;

use crate::support;
use crate::support::cli::patchwise;
use crate::support::dictionary::random_matrix;

/// `patchwise leadfield` on the 10-20 montage and the 5k template into
/// `dir/lf.h5`, read back.
fn leadfield_10_20(dir: &Path) -> patchwise::forward::LeadField {
    leadfield_file(dir, "lf.h5", "normal")
}

/// `patchwise leadfield` (10-20, 5k template, `orientation`) into `dir/name`.
fn leadfield_file(dir: &Path, name: &str, orientation: &str) -> patchwise::forward::LeadField {
    let o = patchwise(
        &[
            "leadfield",
            "--montage",
            "10-20",
            "--sources",
            "template-5k",
            "--orientation",
            orientation,
            "--out",
            name,
        ],
        dir,
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    patchwise::io::leadfield_file::read_leadfield(&dir.join(name)).unwrap()
}

/// A decoder file with weights (n × k) and a covariance (n × n).
fn write_weights_decoder(path: &Path, labels: &[String], weights: &[f64], k: usize, cov: &[f64]) {
    let n = labels.len();
    let mut store = Store::new();
    store.insert("/channels", Dataset::strings(labels.to_vec()));
    store.insert("/weights", Dataset::f64(vec![n, k], weights.to_vec()));
    store.insert("/covariance", Dataset::f64(vec![n, n], cov.to_vec()));
    store.write_atomic(path).unwrap();
}

fn attribute(dir: &Path, decoder: &str, out: &str) -> std::process::Output {
    attribute_with(dir, decoder, out, &[])
}

fn attribute_with(dir: &Path, decoder: &str, out: &str, extra: &[&str]) -> std::process::Output {
    let mut args = vec![
        "attribute",
        "--decoder",
        decoder,
        "--montage",
        "10-20",
        "--sources",
        "template-5k",
        "--resamples",
        "0",
        "--no-report",
        "--out",
        out,
    ];
    args.extend_from_slice(extra);
    patchwise(&args, dir)
}

fn summary(dir: &Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap()
}

/// The summed lead field of the sources within `radius_mm` of the source
/// nearest the centroid of `region`: the scalp field of a small patch.
fn patch_field(lf: &patchwise::forward::LeadField, region: &str, radius_mm: f64) -> Vec<f64> {
    let s = &lf.sources;
    let r = s.region_names.iter().position(|n| n == region).unwrap() as i32;
    let members: Vec<usize> = (0..s.len()).filter(|&j| s.region[j] == r).collect();
    let mut centre = [0.0; 3];
    for &j in &members {
        for (c, p) in centre.iter_mut().zip(s.positions[j]) {
            *c += p / members.len() as f64;
        }
    }
    let dist = |a: [f64; 3], b: [f64; 3]| support::dictionary::euclidean(a, b);
    let seed = *members
        .iter()
        .min_by(|&&a, &&b| dist(s.positions[a], centre).total_cmp(&dist(s.positions[b], centre)))
        .unwrap();
    let n = lf.n_channels();
    let n_src = lf.n_sources();
    let mut field = vec![0.0; n];
    for j in 0..n_src {
        if dist(s.positions[j], s.positions[seed]) < radius_mm * 1e-3 {
            for (i, f) in field.iter_mut().enumerate() {
                *f += lf.gain[i * n_src + j];
            }
        }
    }
    field
}

fn row_of(values: &[f64], n: usize, row: usize) -> &[f64] {
    &values[row * n..(row + 1) * n]
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// Σ = Σ_i c_i a_i a_iᵀ + ε² I.
fn covariance(fields: &[(&[f64], f64)], eps2: f64, n: usize) -> Vec<f64> {
    let mut cov = vec![0.0; n * n];
    for (a, c) in fields {
        for i in 0..n {
            for j in 0..n {
                cov[i * n + j] += c * a[i] * a[j];
            }
        }
    }
    for i in 0..n {
        cov[i * n + i] += eps2;
    }
    cov
}

/// The distractor example, in the spirit of Haufe et al. 2014 (NeuroImage
/// 87:96–110, section 2.2: x1 = s + d, x2 = d; the filter (1, −1) recovers
/// s and its pattern is (1, 0)): the signal s has the field a_s of a
/// left-occipital patch; the distractor d has a_d = a_s + a_f / 2 with a_f
/// the field of a left frontal-pole patch (scaled to the norm of a_s), so
/// it sits on the signal's channels and, alone, on frontal ones. The
/// filter w with wᵀ a_s = 1 and wᵀ a_d = 0 (the minimum-norm one, in the
/// span of a_s and a_d) cancels the distractor by listening to the frontal
/// channels: wᵀ a_f = −2. Its pattern Σ w / (wᵀ Σ w) stays ≈ a_s, so the
/// frontal pole carries no share while the filter's gain peaks there and
/// the flag fires. The control, the matched filter a_s / ‖a_s‖² without a
/// distractor, listens where its pattern is: no flag. (The numbers 1/2, 10
/// and ε are our choice; the direction of the result is the paper's.)
#[test]
fn a_filter_that_cancels_a_frontal_distractor_listens_frontally() {
    let dir = support::scratch("gain_distractor");
    let lf = leadfield_10_20(&dir);
    let n = lf.n_channels();
    let a_s = patch_field(&lf, "left-occipital", 12.0);
    let mut a_f = patch_field(&lf, "left-frontal-pole", 12.0);
    let scale = dot(&a_s, &a_s).sqrt() / dot(&a_f, &a_f).sqrt();
    a_f.iter_mut().for_each(|v| *v *= scale);
    let a_d: Vec<f64> = a_s.iter().zip(&a_f).map(|(s, f)| s + 0.5 * f).collect();
    // w = M (Mᵀ M)⁻¹ e₁ with M = [a_s a_d]: wᵀ a_s = 1, wᵀ a_d = 0.
    let (ss, sd, dd) = (dot(&a_s, &a_s), dot(&a_s, &a_d), dot(&a_d, &a_d));
    let det = ss * dd - sd * sd;
    let w: Vec<f64> = (0..n).map(|i| (dd * a_s[i] - sd * a_d[i]) / det).collect();
    assert!((dot(&w, &a_s) - 1.0).abs() < 1e-9 && dot(&w, &a_d).abs() < 1e-9);
    assert!((dot(&w, &a_f) + 2.0).abs() < 1e-9);
    let eps2 = 1e-4 * ss;
    let cov = covariance(&[(&a_s, 1.0), (&a_d, 10.0)], eps2, n);
    write_weights_decoder(&dir.join("distractor.h5"), &lf.labels, &w, 1, &cov);
    let matched: Vec<f64> = a_s.iter().map(|v| v / ss).collect();
    let cov_plain = covariance(&[(&a_s, 1.0)], eps2, n);
    write_weights_decoder(&dir.join("plain.h5"), &lf.labels, &matched, 1, &cov_plain);

    let o = attribute(&dir, "distractor.h5", "dist");
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let stdout = String::from_utf8_lossy(&o.stdout);
    let s = summary(&dir.join("dist"));
    let c = &s["filter_gain"]["components"][0];
    assert_eq!(c["top_gain_regions"][0], "left-frontal-pole", "{c}");
    assert_eq!(c["listens_elsewhere"], true, "{c}");
    assert!(c["also_listens_to"]
        .as_array()
        .unwrap()
        .iter()
        .any(|r| r == "left-frontal-pole"));
    assert!(
        stdout.contains("the filter also listens to left-frontal-pole"),
        "{stdout}"
    );
    // The pattern is the signal's: the frontal pole carries (almost) none of it.
    let r = patchwise::io::result_file::read_result(&dir.join("dist/result.h5")).unwrap();
    let names = &r.attribution.region_names;
    let pole = names.iter().position(|n| n == "left-frontal-pole").unwrap();
    let occipital = names.iter().position(|n| n == "left-occipital").unwrap();
    assert!(r.attribution.share[pole].abs() < 0.05);
    assert!(r.attribution.share[occipital] > 0.5);
    let gain = r.filter_gain.as_ref().unwrap();
    assert!(gain.region_mean[pole] > gain.region_mean[occipital]);
    // The report draws the gain beside the source map and says the same.
    let o = patchwise(&["report", "dist"], &dir);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let page = std::fs::read_to_string(dir.join("dist/report.html")).unwrap();
    assert!(page.contains("Where the filter listens"));
    assert!(page.contains("The filter also listens to left-frontal-pole"));

    let o = attribute(&dir, "plain.h5", "plain");
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let s = summary(&dir.join("plain"));
    let c = &s["filter_gain"]["components"][0];
    assert_eq!(c["listens_elsewhere"], false, "{c}");
    assert_eq!(c["top_gain_regions"][0], "left-occipital", "{c}");
    assert!(c["rank_correlation_gain_share"].as_f64().unwrap() > 0.0);

    // The cohort comparison carries the gain maps like the shares.
    let o = patchwise(&["compare", "dist", "plain", "--out", "cmp"], &dir);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let store = Store::read(&dir.join("cmp/compare.h5")).unwrap();
    let path = dir.join("cmp/compare.h5");
    let (relative, shape) = store
        .f64_array(&path, "/group/relative_filter_gain")
        .unwrap();
    assert_eq!(shape, vec![1, 2, names.len()]);
    for row in relative.chunks(names.len()) {
        assert_eq!(row.iter().fold(0.0f64, |m, &v| m.max(v)), 1.0);
    }
    assert_eq!(row_of(&relative, names.len(), 0)[pole], 1.0);
}

/// `/filter_gain/source` equals |(H W)ᵀ L| computed by NumPy 2.4.6 from the
/// lead field file (H the centring matrix: the fit's average reference), to
/// 1e-12 relative to the largest gain of each component, along the normals
/// and, with free orientation, as the 2-norm over x, y, z; the region means
/// are NumPy's area-weighted means over `/sources/region`, and
/// filter_gain.csv lists each component's regions by rank.
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn filter_gain_matches_numpy_from_the_leadfield_file() {
    let py = support::python::python();
    let dir = support::scratch("gain_numpy");
    let lf = leadfield_10_20(&dir);
    let n = lf.n_channels();
    let k = 2;
    let w = random_matrix(n, k, 27);
    let a = random_matrix(n, n, 28);
    // A full-rank covariance: A Aᵀ + n I.
    let mut cov = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..n {
            cov[i * n + j] = (0..n).map(|l| a[i * n + l] * a[j * n + l]).sum::<f64>();
        }
        cov[i * n + i] += n as f64;
    }
    write_weights_decoder(&dir.join("decoder.h5"), &lf.labels, &w, k, &cov);
    let o = attribute(&dir, "decoder.h5", "res");
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    leadfield_file(&dir, "lf_free.h5", "free");
    let o = attribute_with(&dir, "decoder.h5", "free", &["--atom-orientation", "free"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    support::python::run(
        &py,
        r#"
import sys, os, csv, h5py, numpy as np
d = sys.argv[1]
lf = h5py.File(os.path.join(d, "lf.h5"), "r")
res = h5py.File(os.path.join(d, "res", "result.h5"), "r")
dec = h5py.File(os.path.join(d, "decoder.h5"), "r")
text = lambda a: [x.decode() if isinstance(x, bytes) else x for x in a]
lf_labels = text(lf["montage/labels"][()])
rows = [lf_labels.index(l) for l in text(res["patterns/labels"][()])]
L = lf["leadfield/gain"][()][rows]
W = dec["weights"][()]
H = np.eye(W.shape[0]) - 1.0 / W.shape[0]
G = np.abs((H @ W).T @ L).T
got = res["filter_gain/source"][()]
assert got.shape == G.shape, (got.shape, G.shape)
rel = np.abs(got - G).max(axis=0) / np.abs(G).max(axis=0)
assert (rel <= 1e-12).all(), rel
norms = np.linalg.norm(L, axis=0)
Gn = G / norms[:, None]
rel = np.abs(res["filter_gain/source_normalised"][()] - Gn).max(axis=0) / Gn.max(axis=0)
assert (rel <= 1e-12).all(), rel
region = lf["sources/region"][()]; area = lf["sources/areas_mm2"][()]
names = text(res["attribution/region_names"][()])
mean = res["filter_gain/region_mean"][()]; mx = res["filter_gain/region_max"][()]
assert mean.shape == (len(names), W.shape[1])
for r in range(len(names)):
    m = region == r
    ref = (area[m, None] * G[m]).sum(axis=0) / area[m].sum()
    assert np.allclose(mean[r], ref, rtol=1e-12, atol=0), (r, mean[r], ref)
    assert np.allclose(mx[r], G[m].max(axis=0), rtol=1e-12, atol=0)
table = list(csv.DictReader(open(os.path.join(d, "res", "filter_gain.csv"))))
assert len(table) == len(names) * W.shape[1]
for c in range(W.shape[1]):
    mine = [t for t in table if t["component"] == str(c)]
    order = np.argsort(-mean[:, c], kind="stable")
    assert [t["region"] for t in mine] == [names[i] for i in order]
    assert [int(t["rank"]) for t in mine] == list(range(1, len(names) + 1))
    assert len({t["component_name"] for t in mine}) == 1 and mine[0]["component_name"] != ""
    assert np.allclose([float(t["mean_gain"]) for t in mine], mean[order, c], rtol=1e-8)
# Free orientation: the 2-norm over x, y, z of (H W)^T L_j, L_j the n_ch x 3 block.
lf = h5py.File(os.path.join(d, "lf_free.h5"), "r")
res = h5py.File(os.path.join(d, "free", "result.h5"), "r")
assert res["filter_gain"].attrs["orientation"] in ("free", b"free")
rows = [text(lf["montage/labels"][()]).index(l) for l in text(res["patterns/labels"][()])]
X = lf["leadfield/gain_xyz"][()][rows]
G = np.linalg.norm(np.einsum("nc,nsd->csd", H @ W, X), axis=2).T
got = res["filter_gain/source"][()]
assert got.shape == G.shape, (got.shape, G.shape)
rel = np.abs(got - G).max(axis=0) / np.abs(G).max(axis=0)
assert (rel <= 1e-12).all(), rel
Gn = G / np.sqrt((X ** 2).sum(axis=(0, 2)))[:, None]
rel = np.abs(res["filter_gain/source_normalised"][()] - Gn).max(axis=0) / Gn.max(axis=0)
assert (rel <= 1e-12).all(), rel
"#,
        &[&dir],
    );
    let s = summary(&dir.join("res"));
    assert_eq!(s["filter_gain"]["computed"], true);
    assert_eq!(s["filter_gain"]["components"].as_array().unwrap().len(), k);
}

/// Cauchy–Schwarz: |l_iᵀ l_j| / ‖l_j‖ ≤ ‖l_i‖ with equality at j = i, so the
/// depth-normalised gain of the filter w = l_i peaks at source i, where it
/// equals ‖l_i‖ (common practice, no source: the inequality itself). On a
/// seeded random lead field, 16 channels × 300 sources.
#[test]
fn normalised_gain_of_a_leadfield_column_peaks_at_its_source() {
    let (n, n_src) = (16, 300);
    let l = random_matrix(n, n_src, 5);
    let areas = vec![1.0; n_src];
    let region = vec![-1; n_src];
    for i in [0, 17, 150, 299] {
        let w: Vec<f64> = (0..n).map(|c| l[c * n_src + i]).collect();
        let g = filter_gain(&GainInput {
            weights: &w,
            n_channels: n,
            n_components: 1,
            leadfield: &l,
            orientations: 1,
            source_areas: &areas,
            source_region: &region,
            n_regions: 0,
        })
        .unwrap();
        let peak = patchwise::attribution::order_decreasing(&g.source_normalised)[0];
        assert_eq!(peak, i);
        let norm = dot(&w, &w).sqrt();
        assert!((g.source_normalised[i] - norm).abs() <= 1e-12 * norm);
        assert!(g
            .source_normalised
            .iter()
            .all(|&v| v <= norm * (1.0 + 1e-12)));
    }
}

/// Haufe et al. 2014 (NeuroImage 87:96–110, eq. 6): A = Σ_x W Σ_ŝ⁻¹ with
/// Σ_ŝ = Wᵀ Σ_x W, so Wᵀ A = Σ_ŝ Σ_ŝ⁻¹ = I (the paper states the identity
/// for the square, invertible case; for k < n_ch it follows from the same
/// algebra whenever Σ_ŝ is invertible). Read as gain: a "lead field" whose
/// sources are the k patterns gives filter c gain 1 at pattern c and 0 at
/// the others. Tolerance 1e-10 (a k × k solve of a well-conditioned Σ_ŝ).
#[test]
fn weights_and_their_patterns_satisfy_wt_a_identity() {
    let (n, k) = (12, 3);
    let w = random_matrix(n, k, 11);
    let b = random_matrix(n, n, 12);
    let mut cov = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..n {
            cov[i * n + j] = (0..n).map(|l| b[i * n + l] * b[j * n + l]).sum::<f64>();
        }
        cov[i * n + i] += 1.0;
    }
    let (a, _) = activation_patterns(&w, &cov, n, k).unwrap();
    // The patterns as k "sources", no reference change (reference none).
    let g = filter_gain(&GainInput {
        weights: &w,
        n_channels: n,
        n_components: k,
        leadfield: &a,
        orientations: 1,
        source_areas: &[1.0; 3],
        source_region: &[-1; 3],
        n_regions: 0,
    })
    .unwrap();
    for j in 0..k {
        for c in 0..k {
            let want = if j == c { 1.0 } else { 0.0 };
            assert!(
                (g.source[j * k + c] - want).abs() < 1e-10,
                "source {j} filter {c}: {}",
                g.source[j * k + c]
            );
        }
    }
}

/// A zero column among the weights gives a zero gain map, no rank
/// correlation and no flag, never NaN (a rule of our own); the job refuses
/// it earlier, as its pattern is undefined (Wᵀ Σ W singular).
#[test]
fn a_zero_weights_column_has_zero_gain_and_no_flag() {
    let (n, n_src) = (8, 40);
    let l = random_matrix(n, n_src, 3);
    let mut w = random_matrix(n, 2, 4);
    for c in 0..n {
        w[c * 2 + 1] = 0.0;
    }
    let region: Vec<i32> = (0..n_src as i32).map(|j| j % 4).collect();
    let g = filter_gain(&GainInput {
        weights: &w,
        n_channels: n,
        n_components: 2,
        leadfield: &l,
        orientations: 1,
        source_areas: &vec![1e-6; n_src],
        source_region: &region,
        n_regions: 4,
    })
    .unwrap();
    let zero = FilterGain::column(&g.region_mean, 2, 1);
    assert!(zero.iter().all(|&v| v == 0.0));
    let a = gain_agreement(&zero, &[0.4, 0.3, 0.2, 0.1]);
    assert!(a.rank_correlation.is_none() && !a.listens_elsewhere);
    assert!(FilterGain::column(&g.region_mean, 2, 0)
        .iter()
        .all(|&v| v > 0.0));
}

/// Decoders that give no gain: a zero weights column is refused as bad
/// input (exit 2, no output folder); patterns only, and weights with a
/// dictionary holding no lead field, run through and say why there is no
/// gain (summary.json, and one line for the missing lead field).
#[test]
fn decoders_without_a_gain_say_why() {
    let dir = support::scratch("gain_edges");
    let (_, n) = support::files::decoder_10_20(&dir, 3);
    let labels = patchwise::montage::standard("10-20", 0.09).unwrap().labels;
    assert_eq!(labels.len(), n);
    let o = attribute(&dir, "decoder.h5", "patterns");
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let s = summary(&dir.join("patterns"));
    assert_eq!(s["filter_gain"]["computed"], false);
    assert!(s["filter_gain"]["reason"]
        .as_str()
        .unwrap()
        .contains("needs the filters"));
    assert!(!dir.join("patterns/filter_gain.csv").exists());
    let o = patchwise(&["report", "patterns"], &dir);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let page = std::fs::read_to_string(dir.join("patterns/report.html")).unwrap();
    assert!(page.contains("needs the filters themselves"));

    let mut w = random_matrix(n, 2, 9);
    let mut cov = vec![0.0; n * n];
    for i in 0..n {
        cov[i * n + i] = 1.0 + i as f64;
    }
    for c in 0..n {
        w[c * 2 + 1] = 0.0;
    }
    write_weights_decoder(&dir.join("zero.h5"), &labels, &w, 2, &cov);
    let o = attribute(&dir, "zero.h5", "zero");
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("zero.h5"));
    assert!(!dir.join("zero").exists());

    // A bare dictionary (atoms and groups only) on the decoder's channels.
    let atoms = random_matrix(n, 30, 10);
    let mut store = Store::new();
    store.insert("/dictionary/atoms", Dataset::f64(vec![n, 30], atoms));
    store.insert(
        "/dictionary/group",
        Dataset::i64(vec![30], (0..30).collect()),
    );
    store.write_atomic(&dir.join("bare.h5")).unwrap();
    let w = random_matrix(n, 1, 12);
    write_weights_decoder(&dir.join("weights.h5"), &labels, &w, 1, &cov);
    let o = patchwise(
        &[
            "attribute",
            "--decoder",
            "weights.h5",
            "--dictionary",
            "bare.h5",
            "--resamples",
            "0",
            "--no-report",
            "--out",
            "bare",
        ],
        &dir,
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert_eq!(
        stdout.matches("no filter gain").count(),
        1,
        "one line says why: {stdout}"
    );
    let s = summary(&dir.join("bare"));
    assert_eq!(s["filter_gain"]["computed"], false);
    assert!(s["filter_gain"]["reason"]
        .as_str()
        .unwrap()
        .contains("no lead field"));
    let r = patchwise::io::result_file::read_result(&dir.join("bare/result.h5")).unwrap();
    assert!(r.filter_gain.is_none());
}
