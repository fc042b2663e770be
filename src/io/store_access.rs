//! Typed accessors on a [`Store`]: fetch a dataset or attribute as numbers or
//! strings, checking shape, type and finiteness, with errors that name the
//! file and the dataset.
//!
//! Datasets written by MATLAB v7.3 (those carrying a `MATLAB_class`
//! attribute) are stored transposed, because MATLAB is column-major: an m×n
//! MATLAB matrix appears with HDF5 shape `[n, m]`. The matrix and vector
//! accessors undo that, so callers see MATLAB's orientation, and `strings`
//! decodes MATLAB `char` arrays (UTF-16 code units, one string per row of the
//! MATLAB char matrix, trailing blanks removed).

use std::path::Path;

use super::error::IoError;
use super::store::{normalise_path, Array, Attr, Dataset, Store};

/// The MATLAB attribute that marks a dataset written by MATLAB.
const MATLAB_CLASS: &str = "MATLAB_class";

fn describe(expected: &[Option<usize>]) -> String {
    let parts: Vec<String> = expected
        .iter()
        .map(|d| d.map_or_else(|| "any".to_string(), |n| n.to_string()))
        .collect();
    format!("[{}]", parts.join(", "))
}

fn matches(shape: &[usize], expected: &[Option<usize>]) -> bool {
    shape.len() == expected.len()
        && shape
            .iter()
            .zip(expected)
            .all(|(s, e)| e.is_none_or(|e| e == *s))
}

impl Dataset {
    /// True when MATLAB wrote this dataset (it carries `MATLAB_class`).
    pub fn is_matlab(&self) -> bool {
        self.attrs.contains_key(MATLAB_CLASS)
    }
}

impl Store {
    /// The dataset at `name`, or an error naming `file` and `name`.
    pub fn dataset(&self, file: &Path, name: &str) -> Result<&Dataset, IoError> {
        let key = normalise_path(name);
        self.datasets
            .get(&key)
            .ok_or_else(|| IoError::MissingDataset {
                path: file.to_path_buf(),
                dataset: key,
            })
    }

    /// True when a dataset exists at `name`.
    pub fn contains(&self, name: &str) -> bool {
        self.datasets.contains_key(&normalise_path(name))
    }

    /// Values of a numeric dataset as floats, any rank, row-major with the
    /// stored shape; every value must be finite.
    pub fn f64_array(&self, file: &Path, name: &str) -> Result<(Vec<f64>, Vec<usize>), IoError> {
        let ds = self.dataset(file, name)?;
        let values = numeric_as_f64(ds, file, name)?;
        check_finite(&values, file, name)?;
        Ok((values, ds.shape.clone()))
    }

    /// Like [`Store::f64_array`] but NaN is allowed (our own "no value"
    /// mark) and the shape must be `shape`.
    pub fn f64_array_nan(
        &self,
        file: &Path,
        name: &str,
        shape: &[usize],
    ) -> Result<Vec<f64>, IoError> {
        let ds = self.dataset(file, name)?;
        if ds.shape != shape {
            let expected: Vec<Option<usize>> = shape.iter().map(|&d| Some(d)).collect();
            return Err(shape_error(file, name, &ds.shape, &expected));
        }
        let values = numeric_as_f64(ds, file, name)?;
        check_values(&values, file, name, true)?;
        Ok(values)
    }

    /// A rank-2 float matrix, row-major, with its (rows, columns); each
    /// expected dimension is checked when given. Integer datasets are
    /// converted. MATLAB datasets are transposed back to MATLAB's orientation.
    pub fn f64_matrix(
        &self,
        file: &Path,
        name: &str,
        expected_rows: Option<usize>,
        expected_cols: Option<usize>,
    ) -> Result<(Vec<f64>, usize, usize), IoError> {
        self.matrix_checked(file, name, expected_rows, expected_cols, false)
    }

    /// Like [`Store::f64_matrix`] but NaN is allowed (our own files mark
    /// "no value" with NaN, e.g. a peak of a component with nothing active);
    /// infinities are still rejected.
    pub fn f64_matrix_nan(
        &self,
        file: &Path,
        name: &str,
        expected_rows: Option<usize>,
        expected_cols: Option<usize>,
    ) -> Result<(Vec<f64>, usize, usize), IoError> {
        self.matrix_checked(file, name, expected_rows, expected_cols, true)
    }

    fn matrix_checked(
        &self,
        file: &Path,
        name: &str,
        expected_rows: Option<usize>,
        expected_cols: Option<usize>,
        allow_nan: bool,
    ) -> Result<(Vec<f64>, usize, usize), IoError> {
        let ds = self.dataset(file, name)?;
        let values = numeric_as_f64(ds, file, name)?;
        let (values, rows, cols) = as_matrix(ds, values, file, name, expected_rows, expected_cols)?;
        check_values(&values, file, name, allow_nan)?;
        Ok((values, rows, cols))
    }

    /// A one-dimensional float dataset (a MATLAB 1×n or n×1 matrix also
    /// counts), its length checked when given; every value must be finite.
    pub fn f64s(
        &self,
        file: &Path,
        name: &str,
        expected_len: Option<usize>,
    ) -> Result<Vec<f64>, IoError> {
        self.vector_checked(file, name, expected_len, false)
    }

    /// Like [`Store::f64s`] but NaN is allowed (our own "no value" mark);
    /// infinities are still rejected.
    pub fn f64s_nan(
        &self,
        file: &Path,
        name: &str,
        expected_len: Option<usize>,
    ) -> Result<Vec<f64>, IoError> {
        self.vector_checked(file, name, expected_len, true)
    }

    fn vector_checked(
        &self,
        file: &Path,
        name: &str,
        expected_len: Option<usize>,
        allow_nan: bool,
    ) -> Result<Vec<f64>, IoError> {
        let ds = self.dataset(file, name)?;
        vector_shape(ds, file, name, expected_len)?;
        let values = numeric_as_f64(ds, file, name)?;
        check_values(&values, file, name, allow_nan)?;
        Ok(values)
    }

    /// A single finite float: a scalar dataset, or one of shape `[1]` (or
    /// MATLAB's `[1, 1]`).
    pub fn f64_scalar(&self, file: &Path, name: &str) -> Result<f64, IoError> {
        let ds = self.dataset(file, name)?;
        let values = numeric_as_f64(ds, file, name)?;
        match values.as_slice() {
            [x] => {
                check_finite(&values, file, name)?;
                Ok(*x)
            }
            _ => Err(IoError::Shape {
                path: file.to_path_buf(),
                dataset: normalise_path(name),
                found: ds.shape.clone(),
                expected: "a single value".to_string(),
            }),
        }
    }

    /// A one-dimensional integer dataset, its length checked when given.
    /// Float datasets are accepted when every value is a whole number (MATLAB
    /// stores indices as doubles).
    pub fn i64s(
        &self,
        file: &Path,
        name: &str,
        expected_len: Option<usize>,
    ) -> Result<Vec<i64>, IoError> {
        let ds = self.dataset(file, name)?;
        vector_shape(ds, file, name, expected_len)?;
        integers(ds, file, name)
    }

    /// An integer matrix (e.g. triangles, `[n_tri, 3]`), row-major, with its
    /// (rows, columns); MATLAB datasets are transposed back.
    pub fn i64_matrix(
        &self,
        file: &Path,
        name: &str,
        expected_rows: Option<usize>,
        expected_cols: Option<usize>,
    ) -> Result<(Vec<i64>, usize, usize), IoError> {
        let ds = self.dataset(file, name)?;
        let values = integers(ds, file, name)?;
        as_matrix(ds, values, file, name, expected_rows, expected_cols)
    }

    /// A one-dimensional string dataset, or a MATLAB `char` array (one string
    /// per row of the char matrix, trailing blanks removed), its length
    /// checked when given.
    pub fn strings(
        &self,
        file: &Path,
        name: &str,
        expected_len: Option<usize>,
    ) -> Result<Vec<String>, IoError> {
        let ds = self.dataset(file, name)?;
        let strings = match &ds.data {
            Array::Str(v) => {
                if ds.shape.len() != 1 {
                    return Err(shape_error(file, name, &ds.shape, &[expected_len]));
                }
                v.clone()
            }
            Array::I64(codes) if attr_is(ds, MATLAB_CLASS, "char") => {
                matlab_chars(codes, &ds.shape, file, name)?
            }
            other => {
                return Err(IoError::Type {
                    path: file.to_path_buf(),
                    object: normalise_path(name),
                    found: other.kind(),
                    expected: "strings".to_string(),
                })
            }
        };
        if let Some(n) = expected_len {
            if strings.len() != n {
                return Err(shape_error(file, name, &[strings.len()], &[expected_len]));
            }
        }
        Ok(strings)
    }

    /// A string attribute of a dataset or group `object` (dataset attributes
    /// are looked up first).
    pub fn attr_str(&self, file: &Path, object: &str, name: &str) -> Result<String, IoError> {
        match self.attr(file, object, name)? {
            Attr::Str(s) => Ok(s.clone()),
            Attr::StrArray(v) if v.len() == 1 => Ok(v[0].clone()),
            other => Err(attr_type_error(file, object, name, other, "a string")),
        }
    }

    /// A float attribute (integers are converted).
    pub fn attr_f64(&self, file: &Path, object: &str, name: &str) -> Result<f64, IoError> {
        match self.attr(file, object, name)? {
            Attr::F64(x) => Ok(*x),
            Attr::I64(x) => Ok(*x as f64),
            other => Err(attr_type_error(file, object, name, other, "a number")),
        }
    }

    /// An attribute of a dataset or group, or an error naming both.
    pub fn attr(&self, file: &Path, object: &str, name: &str) -> Result<&Attr, IoError> {
        let key = normalise_path(object);
        let found = self
            .datasets
            .get(&key)
            .and_then(|d| d.attrs.get(name))
            .or_else(|| self.group_attrs.get(&key).and_then(|a| a.get(name)));
        found.ok_or_else(|| IoError::MissingAttribute {
            path: file.to_path_buf(),
            object: key,
            name: name.to_string(),
        })
    }
}

fn attr_is(ds: &Dataset, name: &str, value: &str) -> bool {
    matches!(ds.attrs.get(name), Some(Attr::Str(s)) if s == value)
}

fn attr_type_error(file: &Path, object: &str, name: &str, found: &Attr, expected: &str) -> IoError {
    let kind = match found {
        Attr::Str(_) => "a string",
        Attr::F64(_) => "a float",
        Attr::I64(_) => "an integer",
        Attr::StrArray(_) => "an array of strings",
        Attr::F64Array(_) => "an array of floats",
        Attr::I64Array(_) => "an array of integers",
    };
    IoError::Type {
        path: file.to_path_buf(),
        object: format!("attribute {name:?} of {}", normalise_path(object)),
        found: kind.to_string(),
        expected: expected.to_string(),
    }
}

fn shape_error(file: &Path, name: &str, found: &[usize], expected: &[Option<usize>]) -> IoError {
    IoError::Shape {
        path: file.to_path_buf(),
        dataset: normalise_path(name),
        found: found.to_vec(),
        expected: describe(expected),
    }
}

fn vector_shape(
    ds: &Dataset,
    file: &Path,
    name: &str,
    expected_len: Option<usize>,
) -> Result<(), IoError> {
    let len = match (ds.shape.as_slice(), ds.is_matlab()) {
        ([n], _) => *n,
        ([1, n], true) | ([n, 1], true) => *n,
        _ => return Err(shape_error(file, name, &ds.shape, &[expected_len])),
    };
    if expected_len.is_some_and(|e| e != len) {
        return Err(shape_error(file, name, &[len], &[expected_len]));
    }
    Ok(())
}

fn numeric_as_f64(ds: &Dataset, file: &Path, name: &str) -> Result<Vec<f64>, IoError> {
    match &ds.data {
        Array::F64(v) => Ok(v.clone()),
        Array::I64(v) => Ok(v.iter().map(|&x| x as f64).collect()),
        other => Err(IoError::Type {
            path: file.to_path_buf(),
            object: normalise_path(name),
            found: other.kind(),
            expected: "numbers".to_string(),
        }),
    }
}

fn integers(ds: &Dataset, file: &Path, name: &str) -> Result<Vec<i64>, IoError> {
    match &ds.data {
        Array::I64(v) => Ok(v.clone()),
        Array::F64(v) => v
            .iter()
            .enumerate()
            .map(|(i, &x)| {
                // 2^63 is the first float beyond i64; whole numbers below it convert exactly.
                if x.is_finite() && x.fract() == 0.0 && x.abs() < 2f64.powi(63) {
                    Ok(x as i64)
                } else {
                    Err(IoError::Value {
                        path: file.to_path_buf(),
                        object: format!("{} element {i}", normalise_path(name)),
                        message: format!("{x} is not a whole number"),
                    })
                }
            })
            .collect(),
        other => Err(IoError::Type {
            path: file.to_path_buf(),
            object: normalise_path(name),
            found: other.kind(),
            expected: "integers".to_string(),
        }),
    }
}

/// Every value finite (or NaN, when `allow_nan`).
fn check_values(values: &[f64], file: &Path, name: &str, allow_nan: bool) -> Result<(), IoError> {
    match values
        .iter()
        .position(|v| !(v.is_finite() || (allow_nan && v.is_nan())))
    {
        None => Ok(()),
        Some(i) => Err(IoError::Value {
            path: file.to_path_buf(),
            object: format!("{} element {i}", normalise_path(name)),
            message: format!("{} is not finite, expected a finite number", values[i]),
        }),
    }
}

fn check_finite(values: &[f64], file: &Path, name: &str) -> Result<(), IoError> {
    check_values(values, file, name, false)
}

/// `values` holds a row-major `rows × cols` matrix; return its transpose,
/// row-major `cols × rows`.
/// The values of a rank-2 dataset as a row-major matrix with its (rows,
/// columns), MATLAB datasets transposed back, each expected dimension
/// checked when given.
fn as_matrix<T: Copy>(
    ds: &Dataset,
    values: Vec<T>,
    file: &Path,
    name: &str,
    expected_rows: Option<usize>,
    expected_cols: Option<usize>,
) -> Result<(Vec<T>, usize, usize), IoError> {
    let expected = [expected_rows, expected_cols];
    let (rows, cols, matlab) = match (ds.shape.as_slice(), ds.is_matlab()) {
        ([r, c], false) => (*r, *c, false),
        ([c, r], true) => (*r, *c, true),
        _ => return Err(shape_error(file, name, &ds.shape, &expected)),
    };
    // The count is checked before a transpose indexes by the shape: a
    // damaged file can declare more elements than it holds.
    if rows.checked_mul(cols) != Some(values.len()) {
        return Err(shape_error(
            file,
            name,
            &ds.shape,
            &[Some(values.len()), None],
        ));
    }
    let values = if matlab {
        transpose(&values, cols, rows)
    } else {
        values
    };
    if !matches(&[rows, cols], &expected) {
        return Err(shape_error(file, name, &[rows, cols], &expected));
    }
    Ok((values, rows, cols))
}

fn transpose<T: Copy>(values: &[T], rows: usize, cols: usize) -> Vec<T> {
    let mut out = Vec::with_capacity(values.len());
    for j in 0..cols {
        for i in 0..rows {
            out.push(values[i * cols + j]);
        }
    }
    out
}

fn matlab_chars(
    codes: &[i64],
    shape: &[usize],
    file: &Path,
    name: &str,
) -> Result<Vec<String>, IoError> {
    // MATLAB's m×n char matrix is stored with HDF5 shape [n, m].
    let (n, m) = match shape {
        [n, m] => (*n, *m),
        [n] => (*n, 1),
        _ => return Err(shape_error(file, name, shape, &[None, None])),
    };
    if codes.len() != n * m {
        return Err(shape_error(
            file,
            name,
            shape,
            &[Some(codes.len()), Some(1)],
        ));
    }
    let mut out = Vec::with_capacity(m);
    for i in 0..m {
        let mut units = Vec::with_capacity(n);
        for j in 0..n {
            let code = codes[j * m + i];
            let unit = u16::try_from(code).map_err(|_| IoError::Value {
                path: file.to_path_buf(),
                object: format!("{} element {}", normalise_path(name), j * m + i),
                message: format!("{code} is not a UTF-16 code unit"),
            })?;
            units.push(unit);
        }
        let s: String = char::decode_utf16(units)
            .collect::<Result<String, _>>()
            .map_err(|e| IoError::Value {
                path: file.to_path_buf(),
                object: format!("{} row {i}", normalise_path(name)),
                message: format!("not valid UTF-16: {e}"),
            })?;
        out.push(s.trim_end_matches(' ').to_string());
    }
    Ok(out)
}
