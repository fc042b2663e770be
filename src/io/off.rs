//! OFF (Object File Format) surfaces: read and write. Positions in files are
//! millimetres; [`Mesh`] holds metres. Polygons are split into triangle fans.

use std::path::Path;

use super::atomic;
use super::error::IoError;
use super::ply::fans;
use crate::geometry::Mesh;

/// Metres per millimetre.
const M_PER_MM: f64 = 1e-3;

/// Read an OFF surface (`OFF` header, counts, vertices, faces; `#` starts a
/// comment; colours after a face's indices are ignored).
pub fn read_off(path: &Path) -> Result<Mesh, IoError> {
    let text = crate::io::input::read_input(path).map_err(|e| IoError::file(path, e))?;
    let text = String::from_utf8_lossy(&text);
    // Lines with their 1-based numbers, comments and blank lines removed.
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l.split('#').next().unwrap_or("").trim()))
        .filter(|(_, l)| !l.is_empty());
    let (first_no, first) = lines
        .next()
        .ok_or_else(|| IoError::format(path, "line 1", "empty file, expected `OFF`"))?;
    let rest = first.strip_prefix("OFF").ok_or_else(|| {
        IoError::format(
            path,
            format!("line {first_no}"),
            "not an OFF file (expected `OFF`)",
        )
    })?;
    let (counts_no, counts) = if rest.trim().is_empty() {
        lines
            .next()
            .ok_or_else(|| IoError::format(path, "header", "no vertex and face counts"))?
    } else {
        (first_no, rest.trim())
    };
    let counts: Vec<usize> = counts
        .split_whitespace()
        .map(|t| t.parse::<usize>())
        .collect::<Result<_, _>>()
        .map_err(|_| {
            IoError::format(
                path,
                format!("line {counts_no}"),
                "counts are not whole numbers",
            )
        })?;
    let [nv, nf, ..] = counts.as_slice() else {
        return Err(IoError::format(
            path,
            format!("line {counts_no}"),
            "expected `n_vertices n_faces n_edges`",
        ));
    };
    // Counts come from the file; a damaged one must not reserve memory.
    let mut vertices = Vec::new();
    for v in 0..*nv {
        let (no, line) = lines.next().ok_or_else(|| {
            IoError::format(
                path,
                format!("vertex {v}"),
                "the file ends early (truncated)",
            )
        })?;
        let loc = format!("vertex {v} (line {no})");
        let p: Vec<f64> = line
            .split_whitespace()
            .take(3)
            .map(|t| t.parse::<f64>())
            .collect::<Result<_, _>>()
            .map_err(|_| IoError::format(path, loc.clone(), "coordinates are not numbers"))?;
        if p.len() != 3 {
            return Err(IoError::format(path, loc, "expected three coordinates"));
        }
        if p.iter().any(|x| !x.is_finite()) {
            return Err(IoError::Value {
                path: path.to_path_buf(),
                object: loc,
                message: format!("coordinates {p:?} are not finite"),
            });
        }
        vertices.push([p[0] * M_PER_MM, p[1] * M_PER_MM, p[2] * M_PER_MM]);
    }
    let mut faces = Vec::new();
    for f in 0..*nf {
        let (no, line) = lines.next().ok_or_else(|| {
            IoError::format(path, format!("face {f}"), "the file ends early (truncated)")
        })?;
        let loc = format!("face {f} (line {no})");
        let mut tokens = line.split_whitespace();
        let n: usize = tokens
            .next()
            .and_then(|t| t.parse().ok())
            .ok_or_else(|| IoError::format(path, loc.clone(), "expected the vertex count first"))?;
        let idx: Vec<f64> = tokens
            .take(n)
            .map(|t| t.parse::<f64>())
            .collect::<Result<_, _>>()
            .map_err(|_| IoError::format(path, loc.clone(), "indices are not numbers"))?;
        if idx.len() != n {
            return Err(IoError::format(
                path,
                loc,
                format!("expected {n} indices, found {}", idx.len()),
            ));
        }
        faces.push((loc, idx));
    }
    let triangles = fans(path, &faces, vertices.len())?;
    Ok(Mesh {
        vertices,
        triangles,
    })
}

/// Write an OFF surface, positions in millimetres.
pub fn write_off(path: &Path, mesh: &Mesh) -> Result<(), IoError> {
    super::error::check_finite_vertices(path, mesh)?;
    let mut s = format!(
        "OFF\n# positions in millimetres\n{} {} 0\n",
        mesh.vertices.len(),
        mesh.triangles.len()
    );
    for p in &mesh.vertices {
        s.push_str(&format!(
            "{} {} {}\n",
            p[0] / M_PER_MM,
            p[1] / M_PER_MM,
            p[2] / M_PER_MM
        ));
    }
    for t in &mesh.triangles {
        s.push_str(&format!("3 {} {} {}\n", t[0], t[1], t[2]));
    }
    atomic::write_atomic(path, s.as_bytes()).map_err(|e| IoError::file(path, e))
}
