//! Small CSV/TSV tables: a reader (header row, quoted CSV fields, errors naming file,
//! line and column) and an atomic writer.

use crate::montage::MontageError;
use std::path::{Path, PathBuf};

/// What went wrong while reading or writing a table (or a file built on one).
/// Every variant names the file; those about a row name its 1-based line.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum TableError {
    /// The file could not be read or written.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The underlying error.
        source: std::io::Error,
    },
    /// No header row.
    #[error("{}: empty, expected a header row naming the columns", path.display())]
    Empty {
        /// The file.
        path: PathBuf,
    },
    /// A quoted CSV field is not closed on its line.
    #[error("{}: line {line}, column {column}: quoted field not closed, expected a closing \"", path.display())]
    UnterminatedQuote {
        /// The file.
        path: PathBuf,
        /// 1-based line.
        line: usize,
        /// 1-based character column where the field starts.
        column: usize,
    },
    /// Something other than a delimiter follows a closing quote.
    #[error("{}: line {line}, column {column}: expected a delimiter or the end of the line after a closing quote", path.display())]
    BadQuote {
        /// The file.
        path: PathBuf,
        /// 1-based line.
        line: usize,
        /// 1-based character column of the unexpected character.
        column: usize,
    },
    /// A row has a different number of fields from the header.
    #[error("{}: line {line}: {found} fields, expected {expected} (as in the header)", path.display())]
    FieldCount {
        /// The file.
        path: PathBuf,
        /// 1-based line.
        line: usize,
        /// Fields in the header.
        expected: usize,
        /// Fields on this line.
        found: usize,
    },
    /// A required column is absent.
    #[error("{}: missing column {expected}; the header has [{}]", path.display(), found.join(", "))]
    MissingColumn {
        /// The file.
        path: PathBuf,
        /// The column (or alternatives) looked for.
        expected: String,
        /// The header as read.
        found: Vec<String>,
    },
    /// Two header fields have the same name.
    #[error("{}: column {column} appears twice in the header, expected unique column names", path.display())]
    DuplicateColumn {
        /// The file.
        path: PathBuf,
        /// The repeated name.
        column: String,
    },
    /// A field that must be a number is not.
    #[error("{}: line {line}, column {column}: {value:?} is not a number", path.display())]
    NotANumber {
        /// The file.
        path: PathBuf,
        /// 1-based line.
        line: usize,
        /// The column name.
        column: String,
        /// The field as read.
        value: String,
    },
    /// A required value is `n/a` (BIDS for "not available").
    #[error("{}: line {line}, column {column}: value is n/a, expected a number", path.display())]
    NotAvailable {
        /// The file.
        path: PathBuf,
        /// 1-based line.
        line: usize,
        /// The column name.
        column: String,
    },
    /// A required field is empty.
    #[error("{}: line {line}, column {column}: empty field, expected a value", path.display())]
    EmptyField {
        /// The file.
        path: PathBuf,
        /// 1-based line.
        line: usize,
        /// The column name.
        column: String,
    },
    /// A label appears twice (ignoring case and the temporal aliases T3=T7 ...).
    #[error("{}: line {line}: label {label} repeats {first_label} of line {first_line}", path.display())]
    DuplicateLabel {
        /// The file.
        path: PathBuf,
        /// 1-based line of the repetition.
        line: usize,
        /// The repeated label as written there.
        label: String,
        /// The first occurrence as written.
        first_label: String,
        /// 1-based line of the first occurrence.
        first_line: usize,
    },
    /// The electrodes read do not make a valid montage.
    #[error("{}: {source}", path.display())]
    Montage {
        /// The file.
        path: PathBuf,
        /// Why the montage is invalid.
        source: MontageError,
    },
    /// A field cannot be written in this format.
    #[error("{}: row {row}, column {column}: {reason}", path.display())]
    Unwritable {
        /// The file.
        path: PathBuf,
        /// 1-based data row.
        row: usize,
        /// The column name.
        column: String,
        /// Why.
        reason: &'static str,
    },
}

/// The field separator of a table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Delimiter {
    /// Tab-separated (`.tsv`, `.tab`; BIDS). No quoting.
    Tab,
    /// Comma-separated (`.csv`), fields may be quoted with `"` (a doubled `""` is a quote).
    Comma,
}

impl Delimiter {
    /// The delimiter implied by the file extension (`tsv`/`tab` or `csv`, any case).
    pub fn from_path(path: &Path) -> Option<Delimiter> {
        let ext = path.extension()?.to_string_lossy().to_lowercase();
        match ext.as_str() {
            "tsv" | "tab" => Some(Delimiter::Tab),
            "csv" => Some(Delimiter::Comma),
            _ => None,
        }
    }

    /// Guess from the header line: a tab means TSV, else a comma means CSV, else TSV
    /// (a single column).
    pub fn sniff(header_line: &str) -> Delimiter {
        if header_line.contains('\t') {
            Delimiter::Tab
        } else if header_line.contains(',') {
            Delimiter::Comma
        } else {
            Delimiter::Tab
        }
    }

    fn as_char(self) -> char {
        match self {
            Delimiter::Tab => '\t',
            Delimiter::Comma => ',',
        }
    }
}

/// One data row and the line it came from.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    /// 1-based line number in the file.
    pub line: usize,
    /// The fields, one per header column.
    pub fields: Vec<String>,
}

/// A table read from a file: header and rows of text fields.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    /// The file it was read from (for error messages).
    pub path: PathBuf,
    /// The delimiter used.
    pub delimiter: Delimiter,
    /// Column names as written.
    pub header: Vec<String>,
    /// Data rows, blank lines skipped.
    pub rows: Vec<Row>,
}

impl Table {
    /// Index of the first column whose name matches one of `names` (case-insensitive;
    /// `names` in order of preference), or a [`TableError::MissingColumn`] listing them.
    pub fn column(&self, names: &[&str]) -> Result<usize, TableError> {
        for name in names {
            if let Some(i) = self
                .header
                .iter()
                .position(|h| h.eq_ignore_ascii_case(name))
            {
                return Ok(i);
            }
        }
        Err(TableError::MissingColumn {
            path: self.path.clone(),
            expected: names.join(" or "),
            found: self.header.clone(),
        })
    }
}

/// Read a table; the delimiter comes from the extension, else is sniffed from the header.
pub fn read_table(path: &Path) -> Result<Table, TableError> {
    let text = crate::io::input::read_input_string(path).map_err(|source| TableError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    let delimiter = Delimiter::from_path(path).unwrap_or_else(|| {
        Delimiter::sniff(text.lines().find(|l| !l.trim().is_empty()).unwrap_or(""))
    });
    parse_table(&text, delimiter, path)
}

/// Parse table text; `path` is only used in error messages.
pub fn parse_table(text: &str, delimiter: Delimiter, path: &Path) -> Result<Table, TableError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut header: Option<Vec<String>> = None;
    let mut rows = Vec::new();
    for (i, raw) in text.lines().enumerate() {
        let line = i + 1;
        let content = raw.strip_suffix('\r').unwrap_or(raw);
        if content.trim().is_empty() {
            continue;
        }
        let fields = split_line(content, delimiter, path, line)?;
        match &header {
            None => {
                for (a, name) in fields.iter().enumerate() {
                    if fields[..a].iter().any(|f| f.eq_ignore_ascii_case(name)) {
                        return Err(TableError::DuplicateColumn {
                            path: path.to_path_buf(),
                            column: name.clone(),
                        });
                    }
                }
                header = Some(fields);
            }
            Some(h) => {
                if fields.len() != h.len() {
                    return Err(TableError::FieldCount {
                        path: path.to_path_buf(),
                        line,
                        expected: h.len(),
                        found: fields.len(),
                    });
                }
                rows.push(Row { line, fields });
            }
        }
    }
    let header = header.ok_or_else(|| TableError::Empty {
        path: path.to_path_buf(),
    })?;
    Ok(Table {
        path: path.to_path_buf(),
        delimiter,
        header,
        rows,
    })
}

/// Split one line into fields. TSV: split at tabs. CSV: RFC 4180-style quotes within
/// the line (a quoted field may hold commas and doubled quotes, not line breaks).
/// Unquoted fields are trimmed of surrounding spaces.
fn split_line(
    content: &str,
    delimiter: Delimiter,
    path: &Path,
    line: usize,
) -> Result<Vec<String>, TableError> {
    if delimiter == Delimiter::Tab {
        return Ok(content.split('\t').map(|f| f.trim().to_string()).collect());
    }
    let chars: Vec<char> = content.chars().collect();
    let mut fields = Vec::new();
    let mut i = 0;
    loop {
        while i < chars.len() && chars[i] == ' ' {
            i += 1;
        }
        if i < chars.len() && chars[i] == '"' {
            let start = i;
            i += 1;
            let mut field = String::new();
            loop {
                match chars.get(i) {
                    None => {
                        return Err(TableError::UnterminatedQuote {
                            path: path.to_path_buf(),
                            line,
                            column: start + 1,
                        })
                    }
                    Some('"') if chars.get(i + 1) == Some(&'"') => {
                        field.push('"');
                        i += 2;
                    }
                    Some('"') => {
                        i += 1;
                        break;
                    }
                    Some(&c) => {
                        field.push(c);
                        i += 1;
                    }
                }
            }
            while i < chars.len() && chars[i] == ' ' {
                i += 1;
            }
            fields.push(field);
            match chars.get(i) {
                None => return Ok(fields),
                Some(',') => i += 1,
                Some(_) => {
                    return Err(TableError::BadQuote {
                        path: path.to_path_buf(),
                        line,
                        column: i + 1,
                    })
                }
            }
        } else {
            let start = i;
            while i < chars.len() && chars[i] != ',' {
                i += 1;
            }
            fields.push(
                chars[start..i]
                    .iter()
                    .collect::<String>()
                    .trim()
                    .to_string(),
            );
            if i >= chars.len() {
                return Ok(fields);
            }
            i += 1;
        }
    }
}

/// A number with `digits` decimals for a table cell or a printed table, or
/// `missing` (such as `"n/a"` or `""`) when it is not finite.
pub fn format_fixed(v: f64, digits: usize, missing: &str) -> String {
    if v.is_finite() {
        format!("{v:.digits$}")
    } else {
        missing.to_string()
    }
}

/// Write a table atomically (temporary file, then rename). CSV fields holding a comma or
/// a quote are quoted; no field may hold a line break (the reader is line-based), nor a
/// tab in TSV.
pub fn write_table(
    path: &Path,
    delimiter: Delimiter,
    header: &[&str],
    rows: &[Vec<String>],
) -> Result<(), TableError> {
    let d = delimiter.as_char();
    let mut out = String::new();
    let header_row: Vec<String> = header.iter().map(|h| h.to_string()).collect();
    for (r, fields) in std::iter::once(&header_row).chain(rows).enumerate() {
        if fields.len() != header.len() {
            return Err(TableError::FieldCount {
                path: path.to_path_buf(),
                line: r + 1,
                expected: header.len(),
                found: fields.len(),
            });
        }
        for (c, field) in fields.iter().enumerate() {
            if c > 0 {
                out.push(d);
            }
            if field.contains(['\n', '\r']) || (delimiter == Delimiter::Tab && field.contains(d)) {
                return Err(TableError::Unwritable {
                    path: path.to_path_buf(),
                    row: r,
                    column: header[c].to_string(),
                    reason: "a field cannot contain a line break (nor a tab in TSV)",
                });
            }
            match delimiter {
                Delimiter::Comma if field.contains([',', '"']) => {
                    out.push('"');
                    out.push_str(&field.replace('"', "\"\""));
                    out.push('"');
                }
                _ => out.push_str(field),
            }
        }
        out.push('\n');
    }
    crate::io::atomic::write_atomic(path, out.as_bytes()).map_err(|source| TableError::Io {
        path: path.to_path_buf(),
        source,
    })
}

#[cfg(test)]
mod tests {
    use super::format_fixed;

    // Common practice, no source: fixed decimals rounded half to even by
    // Rust's formatter; NaN and infinities become the given placeholder.
    #[test]
    fn fixed_decimals_or_placeholder() {
        assert_eq!(format_fixed(1.23456, 3, "n/a"), "1.235");
        assert_eq!(format_fixed(-0.5, 0, "n/a"), "-0");
        assert_eq!(format_fixed(f64::NAN, 3, "n/a"), "n/a");
        assert_eq!(format_fixed(f64::INFINITY, 6, ""), "");
    }
}
