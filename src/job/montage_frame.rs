//! The montage of a run in the head's frame: a standard layout, or an
//! electrodes file (in millimetres, or in the unit of the BIDS
//! `*_coordsystem.json` beside it) whose landmarks (nasion, LPA and RPA rows,
//! or the coordinate-system file's `AnatomicalLandmarkCoordinates`) align it
//! to a boundary-element head that has landmarks of its own: the template
//! head's, or `landmarks_mm` of a head file.

use std::path::{Path, PathBuf};

use super::error::{JobError, JobResult};
use super::observer::JobObserver;
use super::specs::MontageSpec;
use crate::head::{HeadLandmarksMm, SphereHead};
use crate::io::coordsystem::{coordsystem_beside, read_coordsystem};
use crate::io::electrodes::{read_electrodes_in, LengthUnit};
use crate::montage::{
    align_to_landmarks, split_landmarks, standard, standard_names, standard_on_template_head,
    LandmarkTriple, Montage,
};

/// The boundary-element head the electrodes are put on.
#[derive(Debug, Clone, PartialEq)]
pub enum BemFrame {
    /// The template head (standard layouts placed on its own scalp).
    Template,
    /// A head file (`path`) with its landmarks, when it gives them.
    File {
        /// The head file.
        path: PathBuf,
        /// Its `landmarks_mm`.
        landmarks: Option<HeadLandmarksMm>,
    },
}

/// An electrodes file's montage (m) and the landmarks that came with it:
/// from the coordinate-system file beside it (with that file's path).
fn read_montage_file(
    path: &Path,
) -> Result<(Montage, Option<(LandmarkTriple, PathBuf)>), JobError> {
    let (unit, landmarks) = match coordsystem_beside(path) {
        Some(json) => {
            let c =
                read_coordsystem(&json).input("reading the coordinate system of the electrodes")?;
            (c.electrodes_unit, c.landmarks.map(|l| (l, json)))
        }
        None => (LengthUnit::Millimetre, None),
    };
    let montage = read_electrodes_in(path, unit).input("reading electrodes")?;
    Ok((montage, landmarks))
}

/// A montage by standard name (on the default head's scalp sphere) or from
/// an electrodes file (BIDS TSV or CSV; mm, or the unit its
/// `*_coordsystem.json` gives). Returns whether it came from a file. The
/// landmarks of a coordinate-system file are not used here (sphere heads
/// are fitted to the electrodes).
pub fn load_montage(spec: &MontageSpec) -> Result<(Montage, bool), JobError> {
    let path = match spec {
        MontageSpec::Standard(name) => {
            let radius = SphereHead::default_adult().outer_radius();
            return Ok((standard(name, radius).input("choosing a montage")?, false));
        }
        MontageSpec::File(path) => path,
    };
    if path.is_file() {
        return Ok((read_montage_file(path)?.0, true));
    }
    refuse_special_file("montage", path)?;
    Err(JobError::input(format!(
        "montage {:?} is neither a standard layout ({}) nor an existing electrodes file",
        path.display().to_string(),
        standard_names().join(", ")
    )))
}

/// The montage for a boundary-element head: a standard layout (on the
/// template head's scalp from its landmarks, or on the default sphere for
/// a head file), or an electrodes file. A file with landmarks (rows or its
/// coordinate-system file, not both) is aligned rigidly to the head's
/// landmarks, and refused when the head has none; a file without is taken
/// to be in the head's frame. Returns whether the montage came from a file.
pub fn load_bem_montage(
    spec: &MontageSpec,
    frame: &BemFrame,
    observer: &dyn JobObserver,
) -> Result<(Montage, bool), JobError> {
    let path = match spec {
        MontageSpec::Standard(name) if *frame == BemFrame::Template => {
            return Ok((
                standard_on_template_head(name).input("choosing a montage")?,
                false,
            ))
        }
        MontageSpec::Standard(_) => return load_montage(spec),
        MontageSpec::File(path) if path.is_file() => path,
        MontageSpec::File(_) => return load_montage(spec),
    };
    let (head_name, to) = match frame {
        BemFrame::Template => {
            let l = crate::head::template_head::template_landmarks();
            (
                "the template head".to_string(),
                Some(LandmarkTriple {
                    nasion: l.nasion,
                    lpa: l.lpa,
                    rpa: l.rpa,
                }),
            )
        }
        BemFrame::File { path, landmarks } => (
            format!("head {}", path.display()),
            landmarks.map(|l| LandmarkTriple {
                nasion: l.nasion.map(|v| v * 1e-3),
                lpa: l.lpa.map(|v| v * 1e-3),
                rpa: l.rpa.map(|v| v * 1e-3),
            }),
        ),
    };
    let context = format!(
        "aligning the electrodes of {} to {head_name}",
        path.display()
    );
    let (montage, from_json) = read_montage_file(path)?;
    let (rest, from_rows) = split_landmarks(&montage).input(&context)?;
    let (from, how) = match (from_rows, from_json) {
        (None, None) => return Ok((rest, true)),
        (Some(_), Some((_, json))) => {
            return Err(JobError::input(format!(
                "{context}: landmarks given twice, as nasion/LPA/RPA rows and in {}; expected them in one place",
                json.display()
            )))
        }
        (Some(l), None) => (l, "their nasion, LPA and RPA rows".to_string()),
        (None, Some((l, json))) => (l, format!("the landmarks of {}", json.display())),
    };
    let Some(to) = to else {
        return Err(JobError::input(format!(
            "{context}: the electrodes come with landmarks ({how}) but the head gives none to align them to; expected landmarks_mm = {{ nasion = [x, y, z], lpa = [...], rpa = [...] }} in the head file (mm), or electrodes without landmarks in the head's frame"
        )));
    };
    let aligned = align_to_landmarks(&rest, &from, &to).input(&context)?;
    observer.note(&format!(
        "note: {}: {} electrodes aligned to {head_name} by {how} (rigid; origin between the preauricular points, x to the right one, y to the nasion), then moved onto its scalp",
        path.display(),
        aligned.len()
    ));
    Ok((aligned, true))
}

/// Refuse `path` when it names something that exists but is not a regular
/// file (a folder, pipe, socket or device): saying "no such file" there
/// would mislead, and opening a pipe would block.
pub(super) fn refuse_special_file(what: &str, path: &Path) -> Result<(), JobError> {
    match std::fs::metadata(path) {
        Ok(meta) if !meta.is_file() => Err(JobError::input(format!(
            "{what} {:?}: not a regular file (a folder, pipe, socket or device); give a file or a built-in name",
            path.display().to_string()
        ))),
        _ => Ok(()),
    }
}
