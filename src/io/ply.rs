//! PLY surfaces: read ASCII, binary little-endian and binary big-endian files
//! (vertex `x y z` of any scalar type, faces as a `vertex_indices` or
//! `vertex_index` list; polygons are split into triangle fans), write ASCII
//! or binary little-endian. Positions in files are millimetres; [`Mesh`]
//! holds metres.

use std::path::Path;

use super::atomic;
use super::error::IoError;
use crate::geometry::Mesh;

/// Metres per millimetre.
const M_PER_MM: f64 = 1e-3;

/// The PLY storage format to write.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PlyFormat {
    /// `format ascii 1.0`.
    Ascii,
    /// `format binary_little_endian 1.0`.
    BinaryLittleEndian,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Scalar {
    I8,
    U8,
    I16,
    U16,
    I32,
    U32,
    F32,
    F64,
}

impl Scalar {
    fn parse(s: &str) -> Option<Scalar> {
        Some(match s {
            "char" | "int8" => Scalar::I8,
            "uchar" | "uint8" => Scalar::U8,
            "short" | "int16" => Scalar::I16,
            "ushort" | "uint16" => Scalar::U16,
            "int" | "int32" => Scalar::I32,
            "uint" | "uint32" => Scalar::U32,
            "float" | "float32" => Scalar::F32,
            "double" | "float64" => Scalar::F64,
            _ => return None,
        })
    }

    fn size(self) -> usize {
        match self {
            Scalar::I8 | Scalar::U8 => 1,
            Scalar::I16 | Scalar::U16 => 2,
            Scalar::I32 | Scalar::U32 | Scalar::F32 => 4,
            Scalar::F64 => 8,
        }
    }

    fn decode(self, b: &[u8], big_endian: bool) -> f64 {
        let mut a = [0u8; 8];
        a[..b.len()].copy_from_slice(b);
        if big_endian {
            a[..b.len()].reverse();
        }
        match self {
            Scalar::I8 => f64::from(a[0] as i8),
            Scalar::U8 => f64::from(a[0]),
            Scalar::I16 => f64::from(i16::from_le_bytes([a[0], a[1]])),
            Scalar::U16 => f64::from(u16::from_le_bytes([a[0], a[1]])),
            Scalar::I32 => f64::from(i32::from_le_bytes([a[0], a[1], a[2], a[3]])),
            Scalar::U32 => f64::from(u32::from_le_bytes([a[0], a[1], a[2], a[3]])),
            Scalar::F32 => f64::from(f32::from_le_bytes([a[0], a[1], a[2], a[3]])),
            Scalar::F64 => f64::from_le_bytes(a),
        }
    }
}

#[derive(Debug, Clone)]
enum Property {
    Scalar(String, Scalar),
    List(String, Scalar, Scalar),
}

#[derive(Debug, Clone)]
struct Element {
    name: String,
    count: usize,
    properties: Vec<Property>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Format {
    Ascii,
    Binary { big_endian: bool },
}

/// Read a PLY surface.
pub fn read_ply(path: &Path) -> Result<Mesh, IoError> {
    let bytes = crate::io::input::read_input(path).map_err(|e| IoError::file(path, e))?;
    let (format, elements, body, header_lines) = parse_header(path, &bytes)?;
    check_counts(path, format, &elements, body.len())?;
    let vertex = elements
        .iter()
        .position(|e| e.name == "vertex")
        .ok_or_else(|| IoError::format(path, "header", "no `element vertex`"))?;
    let xyz: Vec<usize> = ["x", "y", "z"]
        .iter()
        .map(|axis| {
            elements[vertex]
                .properties
                .iter()
                .position(|p| matches!(p, Property::Scalar(n, _) if n == axis))
                .ok_or_else(|| {
                    IoError::format(
                        path,
                        "header",
                        format!("element vertex has no scalar property {axis}"),
                    )
                })
        })
        .collect::<Result<_, _>>()?;
    let face = elements.iter().position(|e| e.name == "face");
    let face_list = match face {
        None => None,
        Some(f) => Some(
            elements[f]
                .properties
                .iter()
                .position(|p| matches!(p, Property::List(n, _, _) if n == "vertex_indices" || n == "vertex_index"))
                .ok_or_else(|| {
                    IoError::format(path, "header", "element face has no list property vertex_indices")
                })?,
        ),
    };
    let mut reader = Body::new(path, format, body, header_lines);
    let mut vertices = Vec::new();
    let mut faces: Vec<(String, Vec<f64>)> = Vec::new();
    for (ei, element) in elements.iter().enumerate() {
        for item in 0..element.count {
            let where_ = reader.location(&element.name, item);
            let mut values: Vec<Vec<f64>> = Vec::with_capacity(element.properties.len());
            for prop in &element.properties {
                match prop {
                    Property::Scalar(_, t) => values.push(vec![reader.next(*t, &where_)?]),
                    Property::List(_, count_t, item_t) => {
                        let n = reader.next(*count_t, &where_)?;
                        if !(n >= 0.0 && n.fract() == 0.0) {
                            return Err(IoError::format(
                                path,
                                where_,
                                format!("list length {n} is not a count"),
                            ));
                        }
                        // No capacity from the file: a damaged count must not allocate.
                        let mut list = Vec::new();
                        for _ in 0..n as usize {
                            list.push(reader.next(*item_t, &where_)?);
                        }
                        values.push(list);
                    }
                }
            }
            reader.end_item(&where_)?;
            if ei == vertex {
                let p = [values[xyz[0]][0], values[xyz[1]][0], values[xyz[2]][0]];
                if p.iter().any(|x| !x.is_finite()) {
                    return Err(IoError::Value {
                        path: path.to_path_buf(),
                        object: where_,
                        message: format!("coordinates {p:?} are not finite"),
                    });
                }
                vertices.push([p[0] * M_PER_MM, p[1] * M_PER_MM, p[2] * M_PER_MM]);
            } else if Some(ei) == face {
                if let Some(li) = face_list {
                    faces.push((where_, std::mem::take(&mut values[li])));
                }
            }
        }
    }
    reader.finish()?;
    let triangles = fans(path, &faces, vertices.len())?;
    Ok(Mesh {
        vertices,
        triangles,
    })
}

/// Refuse an element whose declared count cannot fit in the body: each item
/// takes at least its scalars and list counts in a binary file, at least two
/// characters a value in an ASCII one, and at least one byte either way
/// (even an item without properties, which would otherwise make a count of
/// 10^14 a loop of 10^14 empty steps).
fn check_counts(
    path: &Path,
    format: Format,
    elements: &[Element],
    body_bytes: usize,
) -> Result<(), IoError> {
    for e in elements {
        let smallest: usize = match format {
            Format::Binary { .. } => e
                .properties
                .iter()
                .map(|p| match p {
                    Property::Scalar(_, t) | Property::List(_, t, _) => t.size(),
                })
                .sum(),
            Format::Ascii => 2 * e.properties.len(),
        };
        let most = body_bytes / smallest.max(1);
        if e.count > most {
            return Err(IoError::format(
                path,
                "header",
                format!(
                    "the file ends early: element {} declares {} items, but the {body_bytes} bytes after the header hold at most {most}",
                    e.name, e.count
                ),
            ));
        }
    }
    Ok(())
}

/// Split polygons into triangle fans, checking every index.
pub(crate) fn fans(
    path: &Path,
    faces: &[(String, Vec<f64>)],
    n_vertices: usize,
) -> Result<Vec<[u32; 3]>, IoError> {
    let mut triangles = Vec::with_capacity(faces.len());
    for (where_, list) in faces {
        if list.len() < 3 {
            return Err(IoError::format(
                path,
                where_.clone(),
                format!("a face with {} vertices, expected at least 3", list.len()),
            ));
        }
        let mut idx = Vec::with_capacity(list.len());
        for &x in list {
            if !(x >= 0.0 && x < n_vertices as f64 && x.fract() == 0.0) {
                return Err(IoError::Value {
                    path: path.to_path_buf(),
                    object: where_.clone(),
                    message: format!(
                        "vertex index {x} out of range, expected 0 to {}",
                        n_vertices as i64 - 1
                    ),
                });
            }
            idx.push(x as u32);
        }
        for k in 1..idx.len() - 1 {
            triangles.push([idx[0], idx[k], idx[k + 1]]);
        }
    }
    Ok(triangles)
}

type Header<'a> = (Format, Vec<Element>, &'a [u8], usize);

fn parse_header<'a>(path: &Path, bytes: &'a [u8]) -> Result<Header<'a>, IoError> {
    let mut pos = 0;
    let mut line_no = 0;
    let mut format = None;
    let mut elements: Vec<Element> = Vec::new();
    loop {
        let end = bytes[pos..]
            .iter()
            .position(|&b| b == b'\n')
            .ok_or_else(|| IoError::format(path, "header", "no end_header line"))?;
        let line = String::from_utf8_lossy(&bytes[pos..pos + end])
            .trim()
            .to_string();
        pos += end + 1;
        line_no += 1;
        let loc = format!("line {line_no}");
        let words: Vec<&str> = line.split_whitespace().collect();
        if line_no == 1 {
            if line != "ply" {
                return Err(IoError::format(
                    path,
                    loc,
                    "not a PLY file (expected `ply` on the first line)",
                ));
            }
            continue;
        }
        match words.as_slice() {
            [] => {}
            ["comment", ..] | ["obj_info", ..] => {}
            ["format", f, _version] => {
                format = Some(match *f {
                    "ascii" => Format::Ascii,
                    "binary_little_endian" => Format::Binary { big_endian: false },
                    "binary_big_endian" => Format::Binary { big_endian: true },
                    other => {
                        return Err(IoError::format(
                            path,
                            loc,
                            format!("unknown format {other}"),
                        ))
                    }
                })
            }
            ["element", name, count] => {
                let count = count.parse().map_err(|_| {
                    IoError::format(
                        path,
                        loc.clone(),
                        format!("element count {count:?} is not a number"),
                    )
                })?;
                elements.push(Element {
                    name: (*name).to_string(),
                    count,
                    properties: Vec::new(),
                });
            }
            ["property", "list", ct, it, name] => {
                let (Some(c), Some(i)) = (Scalar::parse(ct), Scalar::parse(it)) else {
                    return Err(IoError::format(
                        path,
                        loc,
                        format!("unknown list types {ct} {it}"),
                    ));
                };
                let el = elements.last_mut().ok_or_else(|| {
                    IoError::format(path, loc.clone(), "property before any element")
                })?;
                el.properties
                    .push(Property::List((*name).to_string(), c, i));
            }
            ["property", t, name] => {
                let t = Scalar::parse(t).ok_or_else(|| {
                    IoError::format(path, loc.clone(), format!("unknown property type {t}"))
                })?;
                let el = elements.last_mut().ok_or_else(|| {
                    IoError::format(path, loc.clone(), "property before any element")
                })?;
                el.properties.push(Property::Scalar((*name).to_string(), t));
            }
            ["end_header"] => break,
            _ => {
                return Err(IoError::format(
                    path,
                    loc,
                    format!("unexpected header line {line:?}"),
                ))
            }
        }
    }
    let format = format.ok_or_else(|| IoError::format(path, "header", "no format line"))?;
    Ok((format, elements, &bytes[pos..], line_no))
}

/// A cursor over the body, ASCII (token by token, one item per line) or
/// binary.
struct Body<'a> {
    path: &'a Path,
    format: Format,
    bytes: &'a [u8],
    pos: usize,
    line_no: usize,
    tokens: Vec<String>,
    token: usize,
}

impl<'a> Body<'a> {
    fn new(path: &'a Path, format: Format, bytes: &'a [u8], header_lines: usize) -> Body<'a> {
        Body {
            path,
            format,
            bytes,
            pos: 0,
            line_no: header_lines,
            tokens: Vec::new(),
            token: 0,
        }
    }

    /// Where the next item is, for messages: a line for ASCII files, the
    /// element and its index for binary ones.
    fn location(&mut self, element: &str, item: usize) -> String {
        match self.format {
            Format::Ascii => {
                // Load the next non-empty line now so that its number is known.
                while self.token >= self.tokens.len() && self.pos < self.bytes.len() {
                    self.load_line();
                }
                format!("{element} {item} (line {})", self.line_no)
            }
            Format::Binary { .. } => format!("{element} {item}"),
        }
    }

    fn load_line(&mut self) {
        let rest = &self.bytes[self.pos..];
        let end = rest.iter().position(|&b| b == b'\n').unwrap_or(rest.len());
        let line = String::from_utf8_lossy(&rest[..end]);
        self.tokens = line.split_whitespace().map(str::to_string).collect();
        self.token = 0;
        self.pos += (end + 1).min(rest.len());
        self.line_no += 1;
    }

    fn next(&mut self, t: Scalar, where_: &str) -> Result<f64, IoError> {
        match self.format {
            Format::Ascii => {
                if self.token >= self.tokens.len() {
                    return Err(IoError::format(self.path, where_, "the line ends early"));
                }
                let tok = &self.tokens[self.token];
                self.token += 1;
                let v: f64 = tok.parse().map_err(|_| {
                    IoError::format(self.path, where_, format!("{tok:?} is not a number"))
                })?;
                Ok(v)
            }
            Format::Binary { big_endian } => {
                let n = t.size();
                if self.pos + n > self.bytes.len() {
                    return Err(IoError::format(
                        self.path,
                        where_,
                        "the file ends early (truncated)",
                    ));
                }
                let v = t.decode(&self.bytes[self.pos..self.pos + n], big_endian);
                self.pos += n;
                Ok(v)
            }
        }
    }

    fn end_item(&mut self, where_: &str) -> Result<(), IoError> {
        if self.format == Format::Ascii {
            if self.token < self.tokens.len() {
                return Err(IoError::format(
                    self.path,
                    where_,
                    "extra values at the end of the line",
                ));
            }
            self.tokens.clear();
            self.token = 0;
        }
        Ok(())
    }

    fn finish(&mut self) -> Result<(), IoError> {
        if let Format::Binary { .. } = self.format {
            if self.pos != self.bytes.len() {
                return Err(IoError::format(
                    self.path,
                    "body",
                    format!(
                        "{} bytes after the last element",
                        self.bytes.len() - self.pos
                    ),
                ));
            }
        }
        Ok(())
    }
}

/// Write a PLY surface: `double` x y z in millimetres and a
/// `uchar int vertex_indices` face list.
pub fn write_ply(path: &Path, mesh: &Mesh, format: PlyFormat) -> Result<(), IoError> {
    super::error::check_finite_vertices(path, mesh)?;
    let name = match format {
        PlyFormat::Ascii => "ascii",
        PlyFormat::BinaryLittleEndian => "binary_little_endian",
    };
    let mut out = format!(
        "ply\nformat {name} 1.0\ncomment positions in millimetres\nelement vertex {}\nproperty double x\nproperty double y\nproperty double z\nelement face {}\nproperty list uchar int vertex_indices\nend_header\n",
        mesh.vertices.len(),
        mesh.triangles.len()
    )
    .into_bytes();
    match format {
        PlyFormat::Ascii => {
            for p in &mesh.vertices {
                out.extend_from_slice(
                    format!(
                        "{} {} {}\n",
                        p[0] / M_PER_MM,
                        p[1] / M_PER_MM,
                        p[2] / M_PER_MM
                    )
                    .as_bytes(),
                );
            }
            for t in &mesh.triangles {
                out.extend_from_slice(format!("3 {} {} {}\n", t[0], t[1], t[2]).as_bytes());
            }
        }
        PlyFormat::BinaryLittleEndian => {
            for p in &mesh.vertices {
                for x in p {
                    out.extend_from_slice(&(x / M_PER_MM).to_le_bytes());
                }
            }
            for t in &mesh.triangles {
                out.push(3);
                for &i in t {
                    let i = i32::try_from(i).map_err(|_| {
                        IoError::format(
                            path,
                            "face list",
                            format!("vertex index {i} does not fit a PLY int"),
                        )
                    })?;
                    out.extend_from_slice(&i.to_le_bytes());
                }
            }
        }
    }
    atomic::write_atomic(path, &out).map_err(|e| IoError::file(path, e))
}
