//! The BIDS-style coordinate-system file beside an electrodes table
//! (`sub-01_electrodes.tsv` → `sub-01_coordsystem.json`): the unit of the
//! table's coordinates (`EEGCoordinateUnits`) and the anatomical landmarks
//! (`AnatomicalLandmarkCoordinates` with `NAS`, `LPA`, `RPA`, in
//! `AnatomicalLandmarkCoordinateUnits`, else in the electrodes' unit). The
//! field names are those of the BIDS specification (Pernet et al. 2019,
//! Scientific Data 6:103, the EEG extension; cited from memory). Units m, cm or mm; the
//! landmarks are returned in metres.

use std::path::{Path, PathBuf};

use serde_json::{Map, Value};

use super::electrodes::LengthUnit;
use crate::geometry::Vec3;
use crate::montage::{landmark_slot, LandmarkTriple};

/// The unit of the electrodes' coordinates.
pub const UNITS_FIELD: &str = "EEGCoordinateUnits";
/// The landmarks: an object of name → [x, y, z].
pub const LANDMARKS_FIELD: &str = "AnatomicalLandmarkCoordinates";
/// The unit of the landmarks (the electrodes' unit when absent).
pub const LANDMARK_UNITS_FIELD: &str = "AnatomicalLandmarkCoordinateUnits";
/// The frame of the electrodes and that of the landmarks: when both are
/// given they must be the same.
const FRAME_FIELDS: [&str; 2] = ["EEGCoordinateSystem", "AnatomicalLandmarkCoordinateSystem"];

/// What a coordinate-system file says about its electrodes table.
#[derive(Debug, Clone, PartialEq)]
pub struct CoordSystem {
    /// The file read.
    pub path: PathBuf,
    /// The unit of the electrodes' coordinates.
    pub electrodes_unit: LengthUnit,
    /// Nasion, LPA and RPA (m, the electrodes' frame), when the file gives
    /// them.
    pub landmarks: Option<LandmarkTriple>,
}

/// A coordinate-system file that cannot be used; each names the file and
/// the field.
#[derive(Debug, thiserror::Error)]
pub enum CoordSystemError {
    /// The file could not be read.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The underlying error.
        source: std::io::Error,
    },
    /// Not JSON, or not a JSON object.
    #[error("{}: not a JSON object ({message}); expected a BIDS coordinate-system file", path.display())]
    Json {
        /// The file.
        path: PathBuf,
        /// What the parser said.
        message: String,
    },
    /// A required field is absent.
    #[error("{}: no field {field}; expected {expected}", path.display())]
    Missing {
        /// The file.
        path: PathBuf,
        /// The field.
        field: String,
        /// What it should hold.
        expected: &'static str,
    },
    /// A unit other than m, cm or mm.
    #[error("{}: field {field} is {value}; expected \"m\", \"cm\" or \"mm\"", path.display())]
    Unit {
        /// The file.
        path: PathBuf,
        /// The field.
        field: &'static str,
        /// The value found (as JSON).
        value: String,
    },
    /// A field of the wrong kind or shape.
    #[error("{}: field {field} is {value}; expected {expected}", path.display())]
    Invalid {
        /// The file.
        path: PathBuf,
        /// The field (with the landmark's key).
        field: String,
        /// The value found (as JSON, shortened).
        value: String,
        /// What it should hold.
        expected: &'static str,
    },
    /// The landmarks lack one or more of nasion, LPA and RPA.
    #[error("{}: field {LANDMARKS_FIELD} has no {}; expected NAS, LPA and RPA", path.display(), missing.join(", "))]
    MissingLandmarks {
        /// The file.
        path: PathBuf,
        /// The landmarks not given.
        missing: Vec<String>,
    },
    /// The landmarks are in another frame than the electrodes.
    #[error("{}: the landmarks are in frame {landmarks} ({}) but the electrodes in {electrodes} ({}); expected one frame for both", path.display(), FRAME_FIELDS[1], FRAME_FIELDS[0])]
    OtherFrame {
        /// The file.
        path: PathBuf,
        /// The electrodes' frame.
        electrodes: String,
        /// The landmarks' frame.
        landmarks: String,
    },
}

/// The coordinate-system file that belongs to the electrodes table at
/// `electrodes`, when there is one: the same name with its ending
/// `_electrodes.tsv` (or `.csv`) replaced by `_coordsystem.json`, in the same
/// folder (the BIDS naming; the inheritance from higher folders is not
/// followed).
pub fn coordsystem_beside(electrodes: &Path) -> Option<PathBuf> {
    let name = electrodes.file_name()?.to_str()?;
    let stem = [".tsv", ".csv"]
        .iter()
        .find_map(|ext| name.strip_suffix(ext))?
        .strip_suffix("_electrodes")?;
    let path = electrodes.with_file_name(format!("{stem}_coordsystem.json"));
    path.is_file().then_some(path)
}

/// Reads and checks a coordinate-system file: the electrodes' unit
/// (required), and the landmarks when the file gives the field.
pub fn read_coordsystem(path: &Path) -> Result<CoordSystem, CoordSystemError> {
    let text = super::input::read_input_string(path).map_err(|source| CoordSystemError::Io {
        path: path.to_path_buf(),
        source,
    })?;
    parse_coordsystem(&text, path)
}

/// [`read_coordsystem`] on text already read (`path` for messages).
pub fn parse_coordsystem(text: &str, path: &Path) -> Result<CoordSystem, CoordSystemError> {
    let json_error = |message: String| CoordSystemError::Json {
        path: path.to_path_buf(),
        message,
    };
    let value: Value = serde_json::from_str(text).map_err(|e| json_error(e.to_string()))?;
    let Value::Object(fields) = value else {
        return Err(json_error("the top level is not an object".to_string()));
    };
    let electrodes_unit = match fields.get(UNITS_FIELD) {
        Some(v) => unit(v, UNITS_FIELD, path)?,
        None => {
            return Err(CoordSystemError::Missing {
                path: path.to_path_buf(),
                field: UNITS_FIELD.to_string(),
                expected: "the unit of the electrodes' coordinates (\"m\", \"cm\" or \"mm\")",
            })
        }
    };
    let landmarks = match fields.get(LANDMARKS_FIELD) {
        None => None,
        Some(v) => {
            same_frame(&fields, path)?;
            let landmark_unit = match fields.get(LANDMARK_UNITS_FIELD) {
                Some(u) => unit(u, LANDMARK_UNITS_FIELD, path)?,
                None => electrodes_unit,
            };
            Some(landmarks(v, landmark_unit, path)?)
        }
    };
    Ok(CoordSystem {
        path: path.to_path_buf(),
        electrodes_unit,
        landmarks,
    })
}

/// A JSON value shortened for a message.
fn shown(v: &Value) -> String {
    let s = v.to_string();
    match s.char_indices().nth(60) {
        Some((cut, _)) => format!("{}…", &s[..cut]),
        None => s,
    }
}

/// The unit a field names.
fn unit(v: &Value, field: &'static str, path: &Path) -> Result<LengthUnit, CoordSystemError> {
    match v.as_str().map(str::trim) {
        Some("m") => Ok(LengthUnit::Metre),
        Some("cm") => Ok(LengthUnit::Centimetre),
        Some("mm") => Ok(LengthUnit::Millimetre),
        _ => Err(CoordSystemError::Unit {
            path: path.to_path_buf(),
            field,
            value: shown(v),
        }),
    }
}

/// Refuses landmarks declared in another frame than the electrodes.
fn same_frame(fields: &Map<String, Value>, path: &Path) -> Result<(), CoordSystemError> {
    let frame = |f: &str| fields.get(f).and_then(Value::as_str).map(str::trim);
    match (frame(FRAME_FIELDS[0]), frame(FRAME_FIELDS[1])) {
        (Some(e), Some(l)) if !e.eq_ignore_ascii_case(l) => Err(CoordSystemError::OtherFrame {
            path: path.to_path_buf(),
            electrodes: e.to_string(),
            landmarks: l.to_string(),
        }),
        _ => Ok(()),
    }
}

/// Nasion, LPA and RPA (m) from the landmarks object; other keys (an inion,
/// say) are ignored.
fn landmarks(v: &Value, unit: LengthUnit, path: &Path) -> Result<LandmarkTriple, CoordSystemError> {
    let invalid =
        |field: String, value: &Value, expected: &'static str| CoordSystemError::Invalid {
            path: path.to_path_buf(),
            field,
            value: shown(value),
            expected,
        };
    let Value::Object(entries) = v else {
        return Err(invalid(
            LANDMARKS_FIELD.to_string(),
            v,
            "an object of landmark names (NAS, LPA, RPA) to [x, y, z]",
        ));
    };
    let mut found: [Option<Vec3>; 3] = [None; 3];
    for (key, point) in entries {
        let Some((slot, _)) = landmark_slot(key) else {
            continue;
        };
        let field = format!("{LANDMARKS_FIELD}.{key}");
        if found[slot].is_some() {
            return Err(invalid(
                field,
                point,
                "each landmark once (NAS and nasion name the same point)",
            ));
        }
        let xyz: Option<Vec<f64>> = point
            .as_array()
            .map(|a| a.iter().map(Value::as_f64).collect::<Option<Vec<f64>>>())
            .and_then(|c| c.filter(|c| c.len() == 3 && c.iter().all(|x| x.is_finite())));
        let Some(xyz) = xyz else {
            return Err(invalid(field, point, "three finite numbers [x, y, z]"));
        };
        found[slot] = Some([0, 1, 2].map(|a| xyz[a] / unit.per_metre()));
    }
    match found {
        [Some(nasion), Some(lpa), Some(rpa)] => Ok(LandmarkTriple { nasion, lpa, rpa }),
        _ => Err(CoordSystemError::MissingLandmarks {
            path: path.to_path_buf(),
            missing: ["NAS", "LPA", "RPA"]
                .iter()
                .zip(found)
                .filter(|(_, f)| f.is_none())
                .map(|(name, _)| name.to_string())
                .collect(),
        }),
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    fn parse(text: &str) -> Result<CoordSystem, CoordSystemError> {
        parse_coordsystem(text, Path::new("sub-01_coordsystem.json"))
    }

    #[test]
    fn units_and_landmarks_are_read_in_metres() {
        let c = parse(
            r#"{"EEGCoordinateSystem": "CapTrak", "EEGCoordinateUnits": "mm",
                "AnatomicalLandmarkCoordinateUnits": "cm",
                "AnatomicalLandmarkCoordinates": {"NAS": [0, 9.5, 0], "LPA": [-7.5, 0, 0], "RPA": [7.5, 0, 0], "INI": [0, -9, 0]}}"#,
        )
        .unwrap();
        assert_eq!(c.electrodes_unit, LengthUnit::Millimetre);
        let l = c.landmarks.unwrap();
        // 9.5 cm = 0.095 m (one division by an exact 100).
        assert_eq!(l.nasion, [0.0, 0.095, 0.0]);
        assert_eq!(l.lpa, [-0.075, 0.0, 0.0]);
    }

    #[test]
    fn landmark_unit_defaults_to_the_electrodes_unit() {
        let c = parse(
            r#"{"EEGCoordinateUnits": "m", "AnatomicalLandmarkCoordinates": {"nas": [0, 0.1, 0], "lpa": [-0.07, 0, 0], "rpa": [0.07, 0, 0]}}"#,
        )
        .unwrap();
        assert_eq!(c.landmarks.unwrap().rpa, [0.07, 0.0, 0.0]);
        let none = parse(r#"{"EEGCoordinateUnits": "cm"}"#).unwrap();
        assert_eq!(none.electrodes_unit, LengthUnit::Centimetre);
        assert!(none.landmarks.is_none());
    }

    #[test]
    fn bad_files_name_the_field() {
        let message = |text: &str| parse(text).unwrap_err().to_string();
        assert!(message("{not json").contains("not a JSON object"));
        assert!(message("[1, 2]").contains("not a JSON object"));
        assert!(message("{}").contains("no field EEGCoordinateUnits"));
        let m = message(r#"{"EEGCoordinateUnits": "inch"}"#);
        assert!(
            m.contains("EEGCoordinateUnits") && m.contains("\"inch\""),
            "{m}"
        );
        let m = message(
            r#"{"EEGCoordinateUnits": "mm", "AnatomicalLandmarkCoordinateUnits": "n/a", "AnatomicalLandmarkCoordinates": {}}"#,
        );
        assert!(m.contains("AnatomicalLandmarkCoordinateUnits"), "{m}");
        let m = message(
            r#"{"EEGCoordinateUnits": "mm", "AnatomicalLandmarkCoordinates": {"NAS": [0, 95, 0], "LPA": [-75, 0, 0]}}"#,
        );
        assert!(
            m.contains("AnatomicalLandmarkCoordinates has no RPA"),
            "{m}"
        );
        let m = message(
            r#"{"EEGCoordinateUnits": "mm", "AnatomicalLandmarkCoordinates": {"NAS": [0, 95], "LPA": [-75, 0, 0], "RPA": [75, 0, 0]}}"#,
        );
        assert!(m.contains("AnatomicalLandmarkCoordinates.NAS"), "{m}");
        let m = message(
            r#"{"EEGCoordinateUnits": "mm", "EEGCoordinateSystem": "CapTrak", "AnatomicalLandmarkCoordinateSystem": "Other", "AnatomicalLandmarkCoordinates": {}}"#,
        );
        assert!(m.contains("frame Other"), "{m}");
    }

    #[test]
    fn the_file_beside_follows_the_bids_name() {
        let dir = std::env::temp_dir().join(format!("pw-coordsystem-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let tsv = dir.join("sub-01_ses-1_electrodes.tsv");
        assert_eq!(coordsystem_beside(&tsv), None);
        let json = dir.join("sub-01_ses-1_coordsystem.json");
        std::fs::write(&json, "{}").unwrap();
        assert_eq!(coordsystem_beside(&tsv), Some(json));
        assert_eq!(coordsystem_beside(&dir.join("cap.tsv")), None);
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
