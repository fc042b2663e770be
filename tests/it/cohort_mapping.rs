//! Carrying source maps from an individual cortex to the template: index
//! maps conserve the moment exactly, nearest neighbour on registered spheres
//! agrees with brute force, index files read back.

use crate::support;
use patchwise::attribution::rng::SplitMix64;
use patchwise::cohort::mapping::{nearest_on_sphere, VertexMap};
use patchwise::geometry::{normalize, Mesh};
use patchwise::io::mapping_file::read_vertex_map;
use patchwise::io::npy::{write_npy, NpyArray, NpyData};

/// Conservation of the total moment and of the moment per template vertex
/// (the sum over the subject vertices mapped there) is the defining
/// property of the carry (docs/cohort.md); checked against a direct sum,
/// to 1e-15 relative.
#[test]
fn an_index_map_carries_the_moment_exactly() {
    let n_subject = 300;
    let n_template = 40;
    let mut rng = SplitMix64::new(3, 0);
    let indices: Vec<i64> = (0..n_subject)
        .map(|_| (rng.uniform() * n_template as f64) as i64)
        .collect();
    let map = VertexMap::from_indices("subject", &indices, n_template).unwrap();
    let k = 2;
    let values: Vec<f64> = (0..n_subject * k).map(|_| rng.normal()).collect();
    let carried = map.carry("subject", &values, k).unwrap();
    for c in 0..k {
        let before: f64 = (0..n_subject).map(|v| values[v * k + c]).sum();
        let after: f64 = (0..n_template).map(|t| carried[t * k + c]).sum();
        assert!((before - after).abs() <= 1e-12 * before.abs().max(1.0));
        for t in 0..n_template {
            let direct: f64 = (0..n_subject)
                .filter(|&v| indices[v] == t as i64)
                .map(|v| values[v * k + c])
                .sum();
            assert!((carried[t * k + c] - direct).abs() <= 1e-15 * direct.abs().max(1.0));
        }
    }
    assert!(VertexMap::from_indices("s", &[0, 40], n_template).is_err());
    assert!(VertexMap::from_indices("s", &[-1], n_template).is_err());
    assert!(map.carry("s", &values[..10], k).is_err());
}

#[test]
fn nearest_neighbour_on_identical_spheres_is_the_identity() {
    let sphere = Mesh::icosphere(4, 0.1);
    // The subject's registered sphere may have another radius.
    let scaled: Vec<_> = sphere.vertices.iter().map(|p| p.map(|x| 0.5 * x)).collect();
    let map = nearest_on_sphere("subject", &scaled, &sphere.vertices).unwrap();
    assert!(map.target.iter().enumerate().all(|(v, &t)| v == t as usize));
}

/// Against brute-force nearest neighbour by angle (common practice, no
/// source): random subject directions onto a level-3 icosphere; exact
/// agreement except for exact ties, which both break to the lower index.
#[test]
fn nearest_neighbour_agrees_with_brute_force() {
    let template = Mesh::icosphere(3, 1.0);
    let mut rng = SplitMix64::new(8, 0);
    let subject: Vec<[f64; 3]> = (0..2000)
        .map(|_| normalize([rng.normal(), rng.normal(), rng.normal()]))
        .collect();
    let map = nearest_on_sphere("subject", &subject, &template.vertices).unwrap();
    for (v, q) in subject.iter().enumerate() {
        let mut best = (f64::INFINITY, 0);
        for (t, p) in template.vertices.iter().enumerate() {
            let d: f64 = (0..3).map(|i| (p[i] - q[i]).powi(2)).sum();
            if d < best.0 {
                best = (d, t);
            }
        }
        assert_eq!(map.target[v] as usize, best.1, "subject vertex {v}");
    }
    assert!(nearest_on_sphere("s", &[[0.0, 0.0, 0.0]], &template.vertices).is_err());
}

#[test]
fn index_files_read_as_npy_csv_and_txt() {
    let dir = support::scratch("cohort_mapping_files");
    let npy = dir.join("map.npy");
    write_npy(
        &npy,
        &NpyArray {
            shape: vec![4],
            data: NpyData::I64(vec![3, 1, 0, 2]),
        },
    )
    .unwrap();
    assert_eq!(read_vertex_map(&npy).unwrap(), vec![3, 1, 0, 2]);
    let csv = dir.join("map.csv");
    std::fs::write(&csv, "template_vertex\n3\n1\n\n# comment\n0\n2\n").unwrap();
    assert_eq!(read_vertex_map(&csv).unwrap(), vec![3, 1, 0, 2]);
    let bad = dir.join("bad.txt");
    std::fs::write(&bad, "3\n1\nx\n").unwrap();
    let err = read_vertex_map(&bad).unwrap_err().to_string();
    assert!(err.contains("line 3"), "{err}");
    let floats = dir.join("floats.npy");
    write_npy(
        &floats,
        &NpyArray {
            shape: vec![2],
            data: NpyData::F64(vec![1.0, 2.0]),
        },
    )
    .unwrap();
    assert!(read_vertex_map(&floats).is_err());
}
