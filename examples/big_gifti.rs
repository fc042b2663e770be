//! Writes a 327 684-vertex GIFTI surface (two level-7 icospheres of radius
//! 70 mm, 200 mm apart) for the read-and-validate benchmark of
//! docs/benchmarks.md: `cargo run --release --example big_gifti -- OUT.gii`,
//! then `time patchwise check OUT.gii`.
#![allow(clippy::unwrap_used)]

use patchwise::geometry::Mesh;
use patchwise::io::gifti::{write_gifti_surface, GiftiEncoding};

fn main() {
    let out = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "big.surf.gii".to_string());
    let a = Mesh::icosphere(7, 0.07);
    let mut b = a.clone();
    for v in &mut b.vertices {
        v[0] += 0.2;
    }
    let offset = a.vertices.len() as u32;
    let mut mesh = a;
    mesh.vertices.extend(b.vertices);
    mesh.triangles.extend(
        b.triangles
            .iter()
            .map(|t| [t[0] + offset, t[1] + offset, t[2] + offset]),
    );
    write_gifti_surface(
        std::path::Path::new(&out),
        &mesh,
        GiftiEncoding::GZipBase64Binary,
    )
    .unwrap();
    println!("wrote {out}: {} vertices", mesh.vertices.len());
}
