//! Boundary-element head files for the command-line tests: icosphere
//! surfaces as OFF files (mm) and the head TOML naming them.

use std::path::Path;

use patchwise::geometry::Mesh;

/// An OFF file of `mesh` (metres) in millimetres.
pub fn write_off(path: &Path, mesh: &Mesh) {
    let mut text = format!("OFF\n{} {} 0\n", mesh.n_vertices(), mesh.n_triangles());
    for v in &mesh.vertices {
        text += &format!("{} {} {}\n", v[0] * 1e3, v[1] * 1e3, v[2] * 1e3);
    }
    for t in &mesh.triangles {
        text += &format!("3 {} {} {}\n", t[0], t[1], t[2]);
    }
    std::fs::write(path, text).unwrap();
}

/// Icospheres of level 3 (642 vertices) with `radii` (m) in `dir/head/`,
/// named inner_skull.off, outer_skull.off, scalp.off (as many as given).
pub fn write_shells(dir: &Path, radii: &[f64]) {
    std::fs::create_dir_all(dir.join("head")).unwrap();
    for (name, &r) in ["inner_skull.off", "outer_skull.off", "scalp.off"]
        .iter()
        .zip(radii)
    {
        write_off(&dir.join("head").join(name), &Mesh::icosphere(3, r));
    }
}

/// `dir/head/<file>`: a bem head file of `surfaces` and `conductivities`.
pub fn bem_toml(dir: &Path, file: &str, surfaces: &[&str], conductivities: &[f64]) {
    let s: Vec<String> = surfaces.iter().map(|s| format!("{s:?}")).collect();
    let c: Vec<String> = conductivities.iter().map(|c| format!("{c:?}")).collect();
    std::fs::write(
        dir.join("head").join(file),
        format!(
            "model = \"bem\"\nsurfaces = [{}]\nconductivities = [{}]\n",
            s.join(", "),
            c.join(", ")
        ),
    )
    .unwrap();
}

/// The surface names [`write_shells`] writes.
pub const SHELLS: [&str; 3] = ["inner_skull.off", "outer_skull.off", "scalp.off"];
