//! Writing GIFTI surfaces and label files (atomically).

use std::path::Path;

use base64::Engine;

use super::decode::row_to_column_major;
use super::{GiftiDataType, GiftiEncoding, GiftiLayout, M_PER_MM};
use crate::geometry::Mesh;
use crate::io::atomic;
use crate::io::error::IoError;

/// One array to write.
struct OutArray<'a> {
    intent: &'a str,
    shape: Vec<usize>,
    values: Vec<f64>,
    layout: GiftiLayout,
}

fn encode_values(a: &OutArray<'_>) -> Result<String, String> {
    let values = if a.layout.column_major && a.shape.len() > 1 {
        row_to_column_major(&a.values, &a.shape)
    } else {
        a.values.clone()
    };
    let dt = a.layout.data_type;
    if a.layout.encoding == GiftiEncoding::Ascii {
        let per_line = a.shape.get(1).copied().unwrap_or(1).max(1);
        let mut s = String::new();
        for (i, v) in values.iter().enumerate() {
            let text = match dt {
                GiftiDataType::Float32 => format!("{}", *v as f32),
                GiftiDataType::Float64 => format!("{v}"),
                _ => format!("{}", *v as i64),
            };
            s.push_str(&text);
            s.push(if (i + 1) % per_line == 0 { '\n' } else { ' ' });
        }
        return Ok(s);
    }
    let mut bytes = Vec::with_capacity(values.len() * dt.size());
    for &v in &values {
        let mut b: Vec<u8> = match dt {
            GiftiDataType::Float32 => (v as f32).to_le_bytes().to_vec(),
            GiftiDataType::Float64 => v.to_le_bytes().to_vec(),
            GiftiDataType::Int32 => (v as i32).to_le_bytes().to_vec(),
            GiftiDataType::Uint8 => vec![v as u8],
        };
        if a.layout.big_endian {
            b.reverse();
        }
        bytes.extend_from_slice(&b);
    }
    if a.layout.encoding == GiftiEncoding::GZipBase64Binary {
        use std::io::Write;
        let mut enc = flate2::write::ZlibEncoder::new(Vec::new(), flate2::Compression::default());
        enc.write_all(&bytes).map_err(|e| e.to_string())?;
        bytes = enc.finish().map_err(|e| e.to_string())?;
    }
    Ok(base64::engine::general_purpose::STANDARD.encode(&bytes))
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

fn document(
    path: &Path,
    arrays: &[OutArray<'_>],
    labels: Option<&[(i64, String, [f32; 4])]>,
) -> Result<String, IoError> {
    let mut s = String::from("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    s.push_str(&format!(
        "<GIFTI Version=\"1.0\" NumberOfDataArrays=\"{}\">\n<MetaData/>\n",
        arrays.len()
    ));
    match labels {
        None => s.push_str("<LabelTable/>\n"),
        Some(table) => {
            s.push_str("<LabelTable>\n");
            for (key, name, [r, g, b, a]) in table {
                s.push_str(&format!(
                    "<Label Key=\"{key}\" Red=\"{r}\" Green=\"{g}\" Blue=\"{b}\" Alpha=\"{a}\">{}</Label>\n",
                    xml_escape(name)
                ));
            }
            s.push_str("</LabelTable>\n");
        }
    }
    for (i, a) in arrays.iter().enumerate() {
        let data = encode_values(a).map_err(|e| {
            IoError::format(
                path,
                format!("DataArray {i}"),
                format!("cannot encode: {e}"),
            )
        })?;
        let dims: String = a
            .shape
            .iter()
            .enumerate()
            .map(|(d, n)| format!(" Dim{d}=\"{n}\""))
            .collect();
        s.push_str(&format!(
            "<DataArray Intent=\"{}\" DataType=\"{}\" ArrayIndexingOrder=\"{}\" Dimensionality=\"{}\"{dims} Encoding=\"{}\" Endian=\"{}\" ExternalFileName=\"\" ExternalFileOffset=\"\">\n<MetaData/>\n<Data>{data}</Data>\n</DataArray>\n",
            a.intent,
            a.layout.data_type.name(),
            if a.layout.column_major { "ColumnMajorOrder" } else { "RowMajorOrder" },
            a.shape.len(),
            a.layout.encoding.name(),
            if a.layout.big_endian { "BigEndian" } else { "LittleEndian" },
        ));
    }
    s.push_str("</GIFTI>\n");
    Ok(s)
}

/// Write a surface with float32 positions (millimetres) and int32
/// triangles, row-major little-endian, in the given encoding.
pub fn write_gifti_surface(
    path: &Path,
    mesh: &Mesh,
    encoding: GiftiEncoding,
) -> Result<(), IoError> {
    write_gifti_surface_with(
        path,
        mesh,
        GiftiLayout::new(encoding, GiftiDataType::Float32),
        GiftiLayout::new(encoding, GiftiDataType::Int32),
    )
}

/// Write a surface with explicit layouts for the positions and the
/// triangles (e.g. float64, column-major or big-endian).
pub fn write_gifti_surface_with(
    path: &Path,
    mesh: &Mesh,
    points: GiftiLayout,
    triangles: GiftiLayout,
) -> Result<(), IoError> {
    crate::io::error::check_finite_vertices(path, mesh)?;
    let arrays = [
        OutArray {
            intent: "NIFTI_INTENT_POINTSET",
            shape: vec![mesh.vertices.len(), 3],
            values: mesh
                .vertices
                .iter()
                .flat_map(|p| p.iter().map(|x| x / M_PER_MM))
                .collect(),
            layout: points,
        },
        OutArray {
            intent: "NIFTI_INTENT_TRIANGLE",
            shape: vec![mesh.triangles.len(), 3],
            values: mesh
                .triangles
                .iter()
                .flat_map(|t| t.iter().map(|&i| f64::from(i)))
                .collect(),
            layout: triangles,
        },
    ];
    let text = document(path, &arrays, None)?;
    atomic::write_atomic(path, text.as_bytes()).map_err(|e| IoError::file(path, e))
}

/// Write vertex labels: `indices[v]` is an index into `names` or -1 for an
/// unlabelled vertex. Key 0 is `???` (transparent) for unlabelled vertices
/// and key i+1 is `names[i]`, stored as int32 in the given encoding.
pub fn write_gifti_labels(
    path: &Path,
    indices: &[i32],
    names: &[String],
    encoding: GiftiEncoding,
) -> Result<(), IoError> {
    if let Some((v, i)) = indices
        .iter()
        .enumerate()
        .find(|(_, &i)| i < -1 || i >= names.len() as i32)
    {
        return Err(IoError::Value {
            path: path.to_path_buf(),
            object: format!("vertex {v}"),
            message: format!(
                "label index {i} out of range, expected -1 to {}",
                names.len() as i64 - 1
            ),
        });
    }
    // The reader refuses a LabelTable giving one name to two keys (two rows
    // of one region, each with part of its share): never write one.
    for (i, name) in names.iter().enumerate() {
        if let Some(first) = names[..i].iter().position(|n| n == name) {
            return Err(IoError::Value {
                path: path.to_path_buf(),
                object: "LabelTable".to_string(),
                message: format!(
                    "region name {name:?} is given to regions {first} and {i}; expected each name once"
                ),
            });
        }
    }
    let mut table = vec![(0i64, "???".to_string(), [0.0f32, 0.0, 0.0, 0.0])];
    for (i, name) in names.iter().enumerate() {
        // Colours spread around the hue circle so neighbouring indices differ.
        let h = (i as f32 * 0.618_034).fract();
        table.push((i as i64 + 1, name.clone(), hue_to_rgba(h)));
    }
    let arrays = [OutArray {
        intent: "NIFTI_INTENT_LABEL",
        shape: vec![indices.len()],
        values: indices.iter().map(|&i| f64::from(i + 1)).collect(),
        layout: GiftiLayout::new(encoding, GiftiDataType::Int32),
    }];
    let text = document(path, &arrays, Some(&table))?;
    atomic::write_atomic(path, text.as_bytes()).map_err(|e| IoError::file(path, e))
}

fn hue_to_rgba(h: f32) -> [f32; 4] {
    let x = h * 6.0;
    let f = |offset: f32| {
        let k = (x + offset) % 6.0;
        let v = 1.0 - (k.min(4.0 - k).clamp(0.0, 1.0));
        (v * 1000.0).round() / 1000.0
    };
    [f(5.0), f(3.0), f(1.0), 1.0]
}
