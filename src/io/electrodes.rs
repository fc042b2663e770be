//! Electrode positions from BIDS-style `electrodes.tsv` (or CSV with the same header)
//! into a [`Montage`] in metres, the reverse, and channel lists.

use super::table::{read_table, write_table, Delimiter, Table, TableError};
use crate::geometry::Vec3;
use crate::montage::{canonical_label, Montage};
use std::collections::HashMap;
use std::path::Path;

/// The length unit of the coordinates in a file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LengthUnit {
    /// Metres.
    Metre,
    /// Centimetres.
    Centimetre,
    /// Millimetres (what this crate writes, and its default for reading).
    Millimetre,
}

impl LengthUnit {
    /// How many of this unit make a metre (exact integers, so that dividing by them is
    /// one correctly rounded operation).
    pub fn per_metre(self) -> f64 {
        match self {
            LengthUnit::Metre => 1.0,
            LengthUnit::Centimetre => 100.0,
            LengthUnit::Millimetre => 1000.0,
        }
    }
}

/// Read electrodes (columns `name` or `label`, `x`, `y`, `z`, in millimetres; other
/// columns ignored) into a montage in metres. The delimiter comes from the extension
/// (`.tsv`, `.csv`) or is sniffed.
pub fn read_electrodes(path: &Path) -> Result<Montage, TableError> {
    read_electrodes_in(path, LengthUnit::Millimetre)
}

/// [`read_electrodes`] with the coordinates in `unit` (BIDS gives the unit in the
/// accompanying coordinate-system file).
pub fn read_electrodes_in(path: &Path, unit: LengthUnit) -> Result<Montage, TableError> {
    electrodes_from_table(&read_table(path)?, unit)
}

/// Electrodes from a table already read. Errors name the file, line and column: a
/// missing column, an empty label, a label repeated (ignoring case and the aliases
/// T3=T7 ...), an `n/a` or non-numeric coordinate.
pub fn electrodes_from_table(table: &Table, unit: LengthUnit) -> Result<Montage, TableError> {
    let name_col = table.column(&["name", "label"])?;
    let axes = [
        table.column(&["x"])?,
        table.column(&["y"])?,
        table.column(&["z"])?,
    ];
    let path = &table.path;
    let mut labels = Vec::with_capacity(table.rows.len());
    let mut positions = Vec::with_capacity(table.rows.len());
    let mut seen: HashMap<String, (usize, String)> = HashMap::new();
    for row in &table.rows {
        let label = row.fields[name_col].clone();
        if label.is_empty() {
            return Err(TableError::EmptyField {
                path: path.clone(),
                line: row.line,
                column: table.header[name_col].clone(),
            });
        }
        if let Some((first_line, first_label)) = seen.get(&canonical_label(&label)) {
            return Err(TableError::DuplicateLabel {
                path: path.clone(),
                line: row.line,
                label,
                first_label: first_label.clone(),
                first_line: *first_line,
            });
        }
        seen.insert(canonical_label(&label), (row.line, label.clone()));
        let mut p: Vec3 = [0.0; 3];
        for (d, &col) in axes.iter().enumerate() {
            p[d] = number(table, row.line, col, &row.fields[col])? / unit.per_metre();
        }
        labels.push(label);
        positions.push(p);
    }
    Montage::new(labels, positions).map_err(|source| TableError::Montage {
        path: path.clone(),
        source,
    })
}

/// A finite number from a field, or an error naming file, line and column.
fn number(table: &Table, line: usize, col: usize, field: &str) -> Result<f64, TableError> {
    let column = || table.header[col].clone();
    if field.eq_ignore_ascii_case("n/a") {
        return Err(TableError::NotAvailable {
            path: table.path.clone(),
            line,
            column: column(),
        });
    }
    if field.is_empty() {
        return Err(TableError::EmptyField {
            path: table.path.clone(),
            line,
            column: column(),
        });
    }
    match field.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        _ => Err(TableError::NotANumber {
            path: table.path.clone(),
            line,
            column: column(),
            value: field.to_string(),
        }),
    }
}

/// Write a montage as a BIDS-style `electrodes.tsv`: columns `name x y z`, millimetres,
/// shortest decimal form that reads back to the same double. Atomic.
pub fn write_electrodes_tsv(path: &Path, montage: &Montage) -> Result<(), TableError> {
    let rows: Vec<Vec<String>> = montage
        .labels
        .iter()
        .zip(&montage.positions)
        .map(|(label, p)| {
            let mut row = vec![label.clone()];
            row.extend(
                p.iter()
                    .map(|c| format!("{}", c * LengthUnit::Millimetre.per_metre())),
            );
            row
        })
        .collect();
    write_table(path, Delimiter::Tab, &["name", "x", "y", "z"], &rows)
}

/// Read a channel list: a BIDS `channels.tsv` (a tab-separated header with a `name`
/// column; the labels are that column), or otherwise one label a line (blank lines
/// skipped, surrounding white space trimmed). Labels repeated (ignoring case and the
/// temporal aliases) are an error naming both lines.
pub fn read_channel_list(path: &Path) -> Result<Vec<String>, TableError> {
    let text = crate::io::input::read_input_string(path).map_err(|source| TableError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(&text);
    let first = text.lines().find(|l| !l.trim().is_empty()).unwrap_or("");
    let is_bids = first.split('\t').any(|f| f.trim() == "name");
    let entries: Vec<(usize, String)> = if is_bids {
        let table = super::table::parse_table(text, Delimiter::Tab, path)?;
        let col = table.column(&["name"])?;
        table
            .rows
            .iter()
            .map(|r| (r.line, r.fields[col].clone()))
            .collect()
    } else {
        text.lines()
            .enumerate()
            .map(|(i, l)| (i + 1, l.trim().to_string()))
            .filter(|(_, l)| !l.is_empty())
            .collect()
    };
    if entries.is_empty() {
        return Err(TableError::Empty {
            path: path.to_path_buf(),
        });
    }
    let mut seen: HashMap<String, (usize, String)> = HashMap::new();
    let mut labels = Vec::with_capacity(entries.len());
    for (line, label) in entries {
        if label.is_empty() {
            return Err(TableError::EmptyField {
                path: path.to_path_buf(),
                line,
                column: "name".to_string(),
            });
        }
        if let Some((first_line, first_label)) = seen.get(&canonical_label(&label)) {
            return Err(TableError::DuplicateLabel {
                path: path.to_path_buf(),
                line,
                label,
                first_label: first_label.clone(),
                first_line: *first_line,
            });
        }
        seen.insert(canonical_label(&label), (line, label.clone()));
        labels.push(label);
    }
    Ok(labels)
}
