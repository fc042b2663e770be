//! Electrodes measured in another frame, brought into the head's frame by
//! three anatomical landmarks (nasion, left and right preauricular points)
//! given as rows of the electrodes file.
//!
//! The transform is rigid (no scaling), built from the three points alone:
//! in each frame the origin is the midpoint of the preauricular points, x
//! points from the left to the right one, y toward the nasion (its part
//! across x), z = x × y (a common landmark convention, no source). The
//! electrodes keep their place in that landmark frame; the caller then
//! moves each onto the scalp and reports how far.

use super::{Montage, MontageError};
use crate::geometry::{add, cross, dot, norm, normalize, scale, sub, Vec3};

/// Row names read as landmarks (compared ignoring case), with the name
/// used in messages: nasion, left and right preauricular points.
const LANDMARK_NAMES: [(&str, &[&str]); 3] = [
    ("nasion", &["nasion", "nas"]),
    ("LPA", &["lpa", "left_preauricular"]),
    ("RPA", &["rpa", "right_preauricular"]),
];

/// Which of the three landmarks (0 nasion, 1 LPA, 2 RPA) a row or key
/// named `name` is (compared ignoring case and surrounding blanks), with
/// the name used in messages.
pub fn landmark_slot(name: &str) -> Option<(usize, &'static str)> {
    let key = name.trim().to_lowercase();
    LANDMARK_NAMES
        .iter()
        .position(|(_, names)| names.contains(&key.as_str()))
        .map(|k| (k, LANDMARK_NAMES[k].0))
}

/// Nasion, left and right preauricular points (m), in one frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LandmarkTriple {
    /// Nasion.
    pub nasion: Vec3,
    /// Left preauricular point.
    pub lpa: Vec3,
    /// Right preauricular point.
    pub rpa: Vec3,
}

impl LandmarkTriple {
    /// The landmark frame: origin and the unit axes x, y, z.
    fn frame(&self, side: &str) -> Result<(Vec3, [Vec3; 3]), MontageError> {
        let origin = scale(add(self.lpa, self.rpa), 0.5);
        let across = sub(self.rpa, self.lpa);
        let forward = sub(self.nasion, origin);
        let width = norm(across);
        let spread = norm(cross(across, forward));
        // Landmarks closer than 1 cm, or a nasion within 1 cm of the line
        // through the preauricular points, give no usable frame.
        if width.is_nan() || width < 0.01 || spread.is_nan() || spread < 0.01 * width {
            return Err(MontageError::DegenerateLandmarks {
                side: side.to_string(),
            });
        }
        let x = normalize(across);
        let y = normalize(sub(forward, scale(x, dot(forward, x))));
        Ok((origin, [x, y, cross(x, y)]))
    }
}

/// The montage without its landmark rows, and the landmarks (when the file
/// gives any). Some but not all three landmarks is an error naming the
/// missing ones.
pub fn split_landmarks(
    montage: &Montage,
) -> Result<(Montage, Option<LandmarkTriple>), MontageError> {
    let mut found: [Option<Vec3>; 3] = [None; 3];
    let mut keep = Vec::with_capacity(montage.len());
    for (i, label) in montage.labels.iter().enumerate() {
        match landmark_slot(label) {
            Some((k, _)) => found[k] = Some(montage.positions[i]),
            None => keep.push(i),
        }
    }
    let rest = montage.subset(&keep);
    match found {
        [None, None, None] => Ok((rest, None)),
        [Some(nasion), Some(lpa), Some(rpa)] => {
            if rest.is_empty() {
                return Err(MontageError::Empty);
            }
            Ok((rest, Some(LandmarkTriple { nasion, lpa, rpa })))
        }
        _ => Err(MontageError::MissingLandmarks {
            missing: LANDMARK_NAMES
                .iter()
                .zip(found)
                .filter(|(_, f)| f.is_none())
                .map(|((name, _), _)| name.to_string())
                .collect(),
        }),
    }
}

/// The electrodes of `montage` moved rigidly so that the landmark frame of
/// `from` (the file's landmarks) lands on that of `to` (the head's).
pub fn align_to_landmarks(
    montage: &Montage,
    from: &LandmarkTriple,
    to: &LandmarkTriple,
) -> Result<Montage, MontageError> {
    let (o_from, axes_from) = from.frame("the electrodes file")?;
    let (o_to, axes_to) = to.frame("the head")?;
    let positions = montage
        .positions
        .iter()
        .map(|&p| {
            let d = sub(p, o_from);
            let mut q = o_to;
            for k in 0..3 {
                q = add(q, scale(axes_to[k], dot(d, axes_from[k])));
            }
            q
        })
        .collect();
    Montage::new(montage.labels.clone(), positions)
}
