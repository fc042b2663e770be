//! Electrode labels and positions: standard 10-20 / 10-10 / 10-5 layouts
//! computed on a sphere, label matching, scalp projection, sphere fit.
//!
//! The construction of the standard layouts is described in docs/montage.md.

mod coregister;
mod error;
mod labels;
mod scalp_layout;
mod sphere;
mod standard;

use crate::geometry::Vec3;
use std::collections::{HashMap, HashSet};

pub use coregister::{align_to_landmarks, landmark_slot, split_landmarks, LandmarkTriple};
pub use error::{MontageError, ProjectionWarning, PROJECTION_WARNING_M};
pub use labels::{canonical_label, TEMPORAL_ALIASES};
pub use scalp_layout::{standard_on_scalp, standard_on_template_head, ScalpExit, ScalpLandmarks};
pub use sphere::fit_sphere;
pub use standard::{standard, standard_names};

/// A set of named electrodes. Positions in metres, head coordinates
/// (+x right ear, +y nose, +z up).
#[derive(Debug, Clone, PartialEq)]
pub struct Montage {
    /// Electrode labels, as given (matching is case-insensitive).
    pub labels: Vec<String>,
    /// Electrode positions (m).
    pub positions: Vec<Vec3>,
}

impl Montage {
    /// A validated montage: at least one electrode, one finite position per label,
    /// no empty label and no two labels naming the same electrode (ignoring case and the
    /// aliases T3=T7, T4=T8, T5=P7, T6=P8).
    pub fn new(labels: Vec<String>, positions: Vec<Vec3>) -> Result<Self, MontageError> {
        if labels.len() != positions.len() {
            return Err(MontageError::LengthMismatch {
                labels: labels.len(),
                positions: positions.len(),
            });
        }
        if labels.is_empty() {
            return Err(MontageError::Empty);
        }
        let mut seen: HashMap<String, usize> = HashMap::new();
        for (index, (label, position)) in labels.iter().zip(&positions).enumerate() {
            if label.trim().is_empty() {
                return Err(MontageError::EmptyLabel { index });
            }
            if position.iter().any(|c| !c.is_finite()) {
                return Err(MontageError::NotFinite {
                    label: label.clone(),
                    index,
                    position: *position,
                });
            }
            if let Some(&first_index) = seen.get(&canonical_label(label)) {
                return Err(MontageError::DuplicateLabel {
                    first: labels[first_index].clone(),
                    first_index,
                    second: label.clone(),
                    second_index: index,
                });
            }
            seen.insert(canonical_label(label), index);
        }
        Ok(Self { labels, positions })
    }

    /// Number of electrodes.
    pub fn len(&self) -> usize {
        self.labels.len()
    }

    /// True when there are no electrodes (never for a montage built by [`Montage::new`]).
    pub fn is_empty(&self) -> bool {
        self.labels.is_empty()
    }

    /// Index of the electrode called `label`, ignoring case and accepting the old
    /// temporal names (T3/T4/T5/T6 for T7/T8/P7/P8, and the reverse).
    pub fn find(&self, label: &str) -> Option<usize> {
        let key = canonical_label(label);
        self.labels.iter().position(|l| canonical_label(l) == key)
    }

    /// Indices of the requested electrodes, in the order asked for. Every unknown label
    /// and every label asked for twice is listed in one [`MontageError::Selection`].
    pub fn select(&self, labels: &[String]) -> Result<Vec<usize>, MontageError> {
        let index: HashMap<String, usize> = self
            .labels
            .iter()
            .enumerate()
            .map(|(i, l)| (canonical_label(l), i))
            .collect();
        let mut picked = Vec::with_capacity(labels.len());
        let mut asked: HashSet<String> = HashSet::new();
        let mut unknown = Vec::new();
        let mut duplicates = Vec::new();
        for label in labels {
            let key = canonical_label(label);
            if !asked.insert(key.clone()) {
                duplicates.push(label.clone());
                continue;
            }
            match index.get(&key) {
                Some(&i) => picked.push(i),
                None => unknown.push(label.clone()),
            }
        }
        if unknown.is_empty() && duplicates.is_empty() {
            Ok(picked)
        } else {
            Err(MontageError::Selection {
                unknown,
                duplicates,
            })
        }
    }

    /// The sub-montage of the given electrode indices (as returned by [`Montage::select`]).
    /// Indices out of range are skipped.
    pub fn subset(&self, indices: &[usize]) -> Montage {
        let picked: Vec<usize> = indices
            .iter()
            .copied()
            .filter(|&i| i < self.len())
            .collect();
        Montage {
            labels: picked.iter().map(|&i| self.labels[i].clone()).collect(),
            positions: picked.iter().map(|&i| self.positions[i]).collect(),
        }
    }
}
