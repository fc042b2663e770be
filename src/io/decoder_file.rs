//! Decoders from files: `.npz`, `.h5` or `.mat` (MATLAB v7.3) holding
//! `channels` and either `patterns` (n_ch × k) or `weights` (n_ch × k) with
//! `covariance` (n_ch × n_ch); or a bare `.npy`/`.csv` matrix of patterns
//! with the channel labels from a separate file.
//!
//! Values are taken as they are (volts for patterns, arbitrary units for
//! weights, V² for the covariance); only their shapes and finiteness are
//! checked here. Symmetry and positive semi-definiteness are checked by the
//! patterns stage.

use std::collections::BTreeMap;
use std::path::Path;

use super::decoder_extras::{extras_from_npz, extras_from_store};
pub use super::decoder_extras::{DecoderContent, DecoderExtras};
use super::electrodes::read_channel_list;
use super::npy::{read_npy, read_npz, NpyArray, NpyData};
use super::sources_file::InputError;
use super::store::Store;

/// A decoder read from a file.
#[derive(Debug, Clone, PartialEq)]
pub struct DecoderFile {
    /// Channel labels (n_ch).
    pub channels: Vec<String>,
    /// Number of components.
    pub k: usize,
    /// Patterns, or weights and covariance.
    pub content: DecoderContent,
    /// Component names, sample count and fold decoders, when the file has them.
    pub extras: DecoderExtras,
}

impl DecoderFile {
    /// `"patterns"` or `"weights+covariance"`, for `/patterns/source`.
    pub fn source_kind(&self) -> &'static str {
        match self.content {
            DecoderContent::Patterns(_) => "patterns",
            DecoderContent::Weights { .. } => "weights+covariance",
            DecoderContent::SpaceTimeWeights { .. } => "space-time weights+covariance",
            DecoderContent::PerTimeWeights { .. } => "per-time weights+covariance",
        }
    }
}

/// A decoder with a time axis: its content and columns from
/// [`super::decoder_times::time_resolved`], the extras with `k` = the
/// components per time point; folds laid out like the decoder
/// ([`super::decoder_times::time_folds`]).
fn with_time_axis(
    path: &Path,
    channels: Vec<String>,
    times: super::decoder_times::Array,
    fetch: &dyn Fn(&str) -> Result<Option<super::decoder_times::Array>, InputError>,
    extras: &dyn Fn(usize) -> Result<DecoderExtras, InputError>,
) -> Result<DecoderFile, InputError> {
    let (k, content, axis) =
        super::decoder_times::time_resolved(path, channels.len(), times, fetch)?;
    let mut extras = extras(axis.n_components)?;
    extras.folds = super::decoder_times::time_folds(path, channels.len(), &content, &axis, fetch)?;
    extras.time = Some(axis);
    Ok(DecoderFile {
        channels,
        k,
        content,
        extras,
    })
}

fn content_error(path: &Path, message: String) -> InputError {
    InputError::Content {
        path: path.display().to_string(),
        message,
    }
}

fn ext(path: &Path) -> String {
    path.extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default()
}

/// Read a decoder. `channels_file` supplies the labels for `.npy`/`.csv`
/// (one label a line, or a BIDS channels.tsv) and overrides none otherwise.
pub fn read_decoder(path: &Path, channels_file: Option<&Path>) -> Result<DecoderFile, InputError> {
    let decoder = match ext(path).as_str() {
        "npz" => read_npz_decoder(path)?,
        "h5" | "hdf5" | "mat" => read_store_decoder(path)?,
        "npy" | "csv" | "tsv" | "txt" => {
            let Some(ch) = channels_file else {
                return Err(content_error(
                    path,
                    "a bare matrix of patterns needs --channels FILE with one label per row"
                        .to_string(),
                ));
            };
            let channels = read_channel_list(ch)?;
            let (values, rows, cols) = read_matrix(path)?;
            if rows != channels.len() {
                return Err(content_error(
                    path,
                    format!(
                        "has {rows} rows but {} names {} channels; expected one row per channel",
                        ch.display(),
                        channels.len()
                    ),
                ));
            }
            DecoderFile {
                channels,
                k: cols,
                content: DecoderContent::Patterns(values),
                extras: DecoderExtras::default(),
            }
        }
        other => {
            return Err(content_error(
                path,
                format!(
                    "unknown decoder file kind {other:?}; expected .npz, .h5, .mat, .npy or .csv"
                ),
            ))
        }
    };
    if decoder.channels.is_empty() || decoder.k == 0 {
        return Err(content_error(
            path,
            "holds no channels or no components".to_string(),
        ));
    }
    Ok(decoder)
}

/// A bare numeric matrix (or vector, as one column) from a `.npy` file or a
/// text file, row-major with its rows and columns; every value finite.
pub fn read_matrix(path: &Path) -> Result<(Vec<f64>, usize, usize), InputError> {
    if ext(path) == "npy" {
        matrix_of(path, "the array", &read_npy(path)?)
    } else {
        read_text_matrix(path)
    }
}

fn matrix_of(
    path: &Path,
    what: &str,
    a: &NpyArray,
) -> Result<(Vec<f64>, usize, usize), InputError> {
    let values = a
        .to_f64()
        .ok_or_else(|| content_error(path, format!("{what} holds strings; expected numbers")))?;
    if let Some(i) = values.iter().position(|v| !v.is_finite()) {
        return Err(content_error(
            path,
            format!("{what} has a non-finite value at flat index {i}"),
        ));
    }
    match a.shape.as_slice() {
        [n] => Ok((values, *n, 1)),
        [r, c] => Ok((values, *r, *c)),
        s => Err(content_error(
            path,
            format!("{what} has shape {s:?}; expected a vector or a matrix"),
        )),
    }
}

fn read_npz_decoder(path: &Path) -> Result<DecoderFile, InputError> {
    let arrays: BTreeMap<String, NpyArray> = read_npz(path)?;
    let get = |name: &str| {
        arrays
            .get(name)
            .or_else(|| arrays.get(&format!("{name}.npy")))
    };
    let channels = match get("channels").map(|a| &a.data) {
        Some(NpyData::Str(s)) => s.clone(),
        Some(_) => {
            return Err(content_error(
                path,
                "entry channels holds numbers; expected channel labels (strings)".to_string(),
            ))
        }
        None => {
            return Err(content_error(
                path,
                "has no entry channels; expected channel labels".to_string(),
            ))
        }
    };
    let n = channels.len();
    if let Some(t) = get("times") {
        let numbers =
            |name: &str, a: &NpyArray| -> Result<super::decoder_times::Array, InputError> {
                let values = a.to_f64().ok_or_else(|| {
                    content_error(
                        path,
                        format!("entry {name} holds strings; expected numbers"),
                    )
                })?;
                if let Some(i) = values.iter().position(|v| !v.is_finite()) {
                    return Err(content_error(
                        path,
                        format!("entry {name} has a non-finite value at flat index {i}"),
                    ));
                }
                Ok((values, a.shape.clone()))
            };
        let fetch = |name: &str| get(name).map(|a| numbers(name, a)).transpose();
        return with_time_axis(path, channels, numbers("times", t)?, &fetch, &|k| {
            extras_from_npz(path, &arrays, n, k, None, false)
        });
    }
    if let Some(p) = get("patterns") {
        let (values, rows, k) = matrix_of(path, "entry patterns", p)?;
        check_rows(path, "patterns", rows, n)?;
        let extras = extras_from_npz(path, &arrays, n, k, None, true)?;
        return Ok(DecoderFile {
            channels,
            k,
            content: DecoderContent::Patterns(values),
            extras,
        });
    }
    let (Some(w), Some(c)) = (get("weights"), get("covariance")) else {
        return Err(content_error(
            path,
            "has neither patterns nor weights with covariance".to_string(),
        ));
    };
    let (weights, rows, k) = matrix_of(path, "entry weights", w)?;
    check_rows(path, "weights", rows, n)?;
    let (covariance, cr, cc) = matrix_of(path, "entry covariance", c)?;
    check_square(path, cr, cc, n)?;
    let extras = extras_from_npz(path, &arrays, n, k, Some(&covariance), true)?;
    Ok(DecoderFile {
        channels,
        k,
        content: DecoderContent::Weights {
            weights,
            covariance,
        },
        extras,
    })
}

fn check_rows(path: &Path, what: &str, rows: usize, n: usize) -> Result<(), InputError> {
    if rows != n {
        return Err(content_error(
            path,
            format!("{what} has {rows} rows; expected one per channel ({n})"),
        ));
    }
    Ok(())
}

fn check_square(path: &Path, rows: usize, cols: usize, n: usize) -> Result<(), InputError> {
    if rows != n || cols != n {
        return Err(content_error(
            path,
            format!("covariance is {rows} x {cols}; expected {n} x {n} (channels x channels)"),
        ));
    }
    Ok(())
}

/// The datasets a decoder in an HDF5 or MATLAB file is read from; any other
/// dataset in the file is neither read nor sized.
const DECODER_DATASETS: [&str; 9] = [
    "/times",
    "/channels",
    "/patterns",
    "/weights",
    "/covariance",
    "/component_names",
    "/n_samples",
    "/folds",
    "/fold_covariances",
];

fn read_store_decoder(path: &Path) -> Result<DecoderFile, InputError> {
    let store = Store::read_only(path, &|name| DECODER_DATASETS.contains(&name))?;
    decoder_from_store(&store, path)
}

/// A decoder from a store laid out as a decoder file (`channels` with
/// `patterns`, or `weights` and `covariance`; the extras when present):
/// what [`read_decoder`] reads from .h5 and .mat files, for a store made in
/// memory (the demo's). `path` names the file in messages.
pub fn decoder_from_store(store: &Store, path: &Path) -> Result<DecoderFile, InputError> {
    let name = |n: &str| {
        if store.contains(n) {
            n.to_string()
        } else {
            format!("/{n}")
        }
    };
    let channels = store.strings(path, &name("channels"), None)?;
    let n = channels.len();
    if store.contains(&name("times")) {
        let fetch = |entry: &str| -> Result<Option<super::decoder_times::Array>, InputError> {
            let full = name(entry);
            if !store.contains(&full) {
                return Ok(None);
            }
            let array = store.f64_array(path, &full)?;
            Ok(Some(if store.dataset(path, &full)?.is_matlab() {
                super::decoder_times::from_matlab(array)
            } else {
                array
            }))
        };
        let times = fetch("times")?.unwrap_or_default();
        return with_time_axis(path, channels, times, &fetch, &|k| {
            extras_from_store(path, store, n, k, None, false)
        });
    }
    if store.contains(&name("patterns")) {
        let (values, _, k) = store.f64_matrix_or_vector(path, &name("patterns"), n)?;
        let extras = extras_from_store(path, store, n, k, None, true)?;
        return Ok(DecoderFile {
            channels,
            k,
            content: DecoderContent::Patterns(values),
            extras,
        });
    }
    if !(store.contains(&name("weights")) && store.contains(&name("covariance"))) {
        return Err(content_error(
            path,
            "has neither /patterns nor /weights with /covariance".to_string(),
        ));
    }
    let (weights, _, k) = store.f64_matrix_or_vector(path, &name("weights"), n)?;
    let (covariance, _, _) = store.f64_matrix(path, &name("covariance"), Some(n), Some(n))?;
    let extras = extras_from_store(path, store, n, k, Some(&covariance), true)?;
    Ok(DecoderFile {
        channels,
        k,
        content: DecoderContent::Weights {
            weights,
            covariance,
        },
        extras,
    })
}

impl Store {
    /// A matrix with `rows` rows, or a vector of length `rows` taken as one
    /// column.
    pub fn f64_matrix_or_vector(
        &self,
        file: &Path,
        name: &str,
        rows: usize,
    ) -> Result<(Vec<f64>, usize, usize), super::IoError> {
        let (values, shape) = self.f64_array(file, name)?;
        if shape.len() == 1 && shape[0] == rows {
            return Ok((values, rows, 1));
        }
        self.f64_matrix(file, name, Some(rows), None)
    }
}

/// The field separator of a text matrix, found from its lines.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Separator {
    Tab,
    /// `;`, the separator of spreadsheets that write a decimal comma.
    Semicolon,
    Comma,
    /// Runs of spaces (NumPy's `savetxt` default).
    Spaces,
}

impl Separator {
    /// A tab anywhere means tabs; else a semicolon means semicolons (and
    /// commas are then decimal commas); else a comma means commas; else
    /// spaces.
    fn sniff<'a>(mut lines: impl Iterator<Item = &'a str> + Clone) -> Separator {
        if lines.clone().any(|l| l.contains('\t')) {
            Separator::Tab
        } else if lines.clone().any(|l| l.contains(';')) {
            Separator::Semicolon
        } else if lines.any(|l| l.contains(',')) {
            Separator::Comma
        } else {
            Separator::Spaces
        }
    }

    fn split(self, line: &str) -> Vec<&str> {
        match self {
            Separator::Tab => line.split('\t').map(str::trim).collect(),
            Separator::Semicolon => line.split(';').map(str::trim).collect(),
            Separator::Comma => line.split(',').map(str::trim).collect(),
            Separator::Spaces => line.split_whitespace().collect(),
        }
    }

    fn name(self) -> &'static str {
        match self {
            Separator::Tab => "tabs",
            Separator::Semicolon => "semicolons",
            Separator::Comma => "commas",
            Separator::Spaces => "spaces",
        }
    }
}

/// A field as a number; with any separator but the comma, one comma and no
/// point is read as a decimal comma (`0,1257`).
fn parse_field(field: &str, separator: Separator) -> Option<f64> {
    if let Ok(v) = field.parse::<f64>() {
        return Some(v);
    }
    let decimal_comma =
        separator != Separator::Comma && field.matches(',').count() == 1 && !field.contains('.');
    if decimal_comma {
        field.replacen(',', ".", 1).parse().ok()
    } else {
        None
    }
}

/// A numeric text matrix, row-major with its rows and columns. The separator
/// is a tab, a semicolon (then a decimal comma is allowed), a comma or runs
/// of spaces, found from the file; `#` comments and blank lines are skipped;
/// the first line may be a header (no field a number), no other line. A
/// field that is not a number is an error naming its line, data row and
/// column.
pub fn read_text_matrix(path: &Path) -> Result<(Vec<f64>, usize, usize), InputError> {
    let text =
        crate::io::input::read_input_string(path).map_err(|source| super::IoError::File {
            path: path.to_path_buf(),
            source,
        })?;
    let lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l.trim()))
        .filter(|(_, l)| !l.is_empty() && !l.starts_with('#'));
    let separator = Separator::sniff(lines.clone().map(|(_, l)| l));
    let mut values = Vec::new();
    let mut rows = 0;
    let mut cols = None;
    for (n, (line, content)) in lines.enumerate() {
        let fields = separator.split(content);
        let parsed: Vec<Option<f64>> = fields.iter().map(|f| parse_field(f, separator)).collect();
        if n == 0 && parsed.iter().all(Option::is_none) {
            continue; // the one header line
        }
        if let Some(c) = parsed.iter().position(Option::is_none) {
            return Err(content_error(
                path,
                format!(
                    "line {line} (data row {}), column {}: {:?} is not a number (fields separated by {})",
                    rows + 1,
                    c + 1,
                    fields[c],
                    separator.name()
                ),
            ));
        }
        let parsed: Vec<f64> = parsed.into_iter().flatten().collect();
        if let Some(j) = parsed.iter().position(|v| !v.is_finite()) {
            return Err(content_error(
                path,
                format!(
                    "line {line} (data row {}), column {}: value is not finite",
                    rows + 1,
                    j + 1
                ),
            ));
        }
        match cols {
            None => cols = Some(parsed.len()),
            Some(c) if c != parsed.len() => {
                return Err(content_error(
                    path,
                    format!(
                        "line {line} (data row {}): {} fields, expected {c} (separated by {})",
                        rows + 1,
                        parsed.len(),
                        separator.name()
                    ),
                ))
            }
            _ => {}
        }
        values.extend(parsed);
        rows += 1;
    }
    let cols = cols.ok_or_else(|| content_error(path, "holds no numbers".to_string()))?;
    Ok((values, rows, cols))
}
