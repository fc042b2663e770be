//! The patch dictionary as an artefact: what `dictionary.h5` holds (read and
//! written by `io`), with the operations that bring it into a fit's space:
//! restriction to a decoder's channels, the common average reference and
//! whitening.

use sprs::CsMat;
use thiserror::Error;

use super::{
    atoms_for_channels, select_channels, AtomComponent, DictionaryError, DEFAULT_DROP_RELATIVE_NORM,
};
use crate::forward::LeadField;
use crate::montage::{Montage, MontageError};
use crate::numeric::{rescale_all_to_unit_norm, rescale_to_unit_norm};
use crate::patterns::{PatternsError, Whitener};

/// A patch dictionary: atoms (scalp fields of cortical patches) with their
/// groups and, when known, the lead field and the per-atom seeds, radii,
/// norms, components and source profiles they came from.
///
/// The reader in `io` validates it once: `atoms` is `n_channels × n_atoms`
/// (both at least 1, not all zero), `group` partitions the atoms into
/// groups 0..n_groups−1 with none empty, every optional per-atom array has
/// `n_atoms` entries, seeds are source indices, `profile` is a valid CSC
/// matrix of n_src × n_atoms, and the lead field (when present) has
/// `n_channels` channels.
#[derive(Debug, Clone)]
pub struct PatchDictionary {
    /// The lead field and sources, when known.
    pub leadfield: Option<LeadField>,
    /// Number of channels (rows of the atoms).
    pub n_channels: usize,
    /// Number of atoms.
    pub n_atoms: usize,
    /// Atoms, n_ch × n_atoms row-major.
    pub atoms: Vec<f64>,
    /// Group of each atom.
    pub group: Vec<usize>,
    /// Norm removed from each atom, when known.
    pub atom_norms: Option<Vec<f64>>,
    /// Seed source of each atom, when known.
    pub seed: Option<Vec<usize>>,
    /// Patch radius of each atom (mm), when known.
    pub radius_mm: Option<Vec<f64>>,
    /// Orientation component of each atom (0 normal, 1–3 x, y, z), when known.
    pub component: Option<Vec<AtomComponent>>,
    /// Source amplitudes per atom (CSC, n_src × n_atoms), when known.
    pub profile: Option<CsMat<f64>>,
    /// The dictionary parameters as JSON.
    pub params_json: String,
}

/// Why a dictionary cannot be restricted to a set of channels.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum RestrictError {
    /// The dictionary has no channel labels and a different channel count.
    #[error("the dictionary has {rows} rows and no channel labels, but the patterns have {channels} channels")]
    Unlabelled {
        /// Rows of the atoms.
        rows: usize,
        /// Channels asked for.
        channels: usize,
    },
    /// The dictionary's own channel labels are not a valid montage.
    #[error("channel labels")]
    Labels(#[source] MontageError),
    /// A channel asked for is not among the dictionary's.
    #[error("matching the channels to the dictionary's")]
    Match(#[source] MontageError),
    /// The channels differ and there are no profiles to recompute the atoms.
    #[error("channels differ from the dictionary's and it has no source profiles to recompute the atoms")]
    NoProfile,
    /// Selecting the lead-field rows failed.
    #[error("selecting channels")]
    Channels(#[source] DictionaryError),
    /// Recomputing the atoms from the profiles failed.
    #[error("recomputing atoms for the channels")]
    Atoms(#[source] DictionaryError),
}

impl PatchDictionary {
    /// The dictionary on the channels `labels` (in that order), recomputing
    /// the atoms from the profiles and the lead field when channels must be
    /// dropped or reordered. Without channel labels the rows are taken to
    /// be `labels` when their count matches. Unchanged when the channels
    /// already are `labels` in order.
    pub fn restrict_to(self, labels: &[String]) -> Result<PatchDictionary, RestrictError> {
        let Some(lf) = &self.leadfield else {
            if labels.len() != self.n_channels {
                return Err(RestrictError::Unlabelled {
                    rows: self.n_channels,
                    channels: labels.len(),
                });
            }
            return Ok(self);
        };
        let montage = Montage::new(lf.labels.clone(), lf.electrode_positions.clone())
            .map_err(RestrictError::Labels)?;
        let idx = montage.select(labels).map_err(RestrictError::Match)?;
        if idx.iter().copied().eq(0..self.n_channels) {
            return Ok(self);
        }
        let (Some(profile), Some(_)) = (&self.profile, &self.atom_norms) else {
            return Err(RestrictError::NoProfile);
        };
        let gain =
            select_channels(&lf.gain, lf.n_channels(), &idx).map_err(RestrictError::Channels)?;
        let gain_xyz = match &lf.gain_xyz {
            Some(g) => {
                Some(select_channels(g, lf.n_channels(), &idx).map_err(RestrictError::Channels)?)
            }
            None => None,
        };
        let component = self
            .component
            .clone()
            .unwrap_or_else(|| vec![AtomComponent::Normal; self.n_atoms]);
        let (atoms, norms) = atoms_for_channels(
            profile,
            &component,
            &gain,
            gain_xyz.as_deref(),
            idx.len(),
            true,
            DEFAULT_DROP_RELATIVE_NORM,
        )
        .map_err(RestrictError::Atoms)?;
        let mut sub_lf = lf.clone();
        sub_lf.labels = idx.iter().map(|&i| lf.labels[i].clone()).collect();
        sub_lf.electrode_positions = idx.iter().map(|&i| lf.electrode_positions[i]).collect();
        sub_lf.gain = gain;
        sub_lf.gain_xyz = gain_xyz;
        Ok(PatchDictionary {
            leadfield: Some(sub_lf),
            n_channels: idx.len(),
            atoms,
            atom_norms: Some(norms),
            ..self
        })
    }

    /// Re-reference the atoms to the common average (subtract each column's
    /// channel mean) and rescale them to unit norm, folding the scale into
    /// the atom norms; columns already referenced are left as they are.
    #[allow(clippy::needless_range_loop)]
    pub fn rereference(&mut self) {
        let (n, m) = (self.n_channels, self.n_atoms);
        let mut norms = self.atom_norms.clone().unwrap_or_else(|| vec![1.0; m]);
        for j in 0..m {
            let mean = (0..n).map(|i| self.atoms[i * m + j]).sum::<f64>() / n as f64;
            let scale = (0..n)
                .map(|i| self.atoms[i * m + j].abs())
                .fold(0.0, f64::max);
            if mean.abs() <= 1e-12 * scale {
                continue;
            }
            for i in 0..n {
                self.atoms[i * m + j] -= mean;
            }
            rescale_to_unit_norm(&mut self.atoms, n, m, j, &mut norms[j]);
        }
        self.atom_norms = Some(norms);
    }

    /// Whiten the atoms by `whitener` (of this dictionary's channels) and
    /// rescale them to unit norm, folding the scale into the atom norms.
    /// Returns, per atom, the norm of its whitened column (the factor the
    /// rescale removed; 1 where the atom's norm was 0), so fits can be
    /// mapped back to the unwhitened units.
    pub fn whiten(&mut self, whitener: &Whitener) -> Result<Vec<f64>, PatternsError> {
        let m = self.n_atoms;
        let mut atoms = whitener.apply(&self.atoms, m)?;
        let mut norms = self.atom_norms.clone().unwrap_or_else(|| vec![1.0; m]);
        let before = norms.clone();
        rescale_all_to_unit_norm(&mut atoms, m, &mut norms);
        let scales = norms
            .iter()
            .zip(&before)
            .map(|(&after, &b)| if b > 0.0 { after / b } else { 1.0 })
            .collect();
        self.atoms = atoms;
        self.atom_norms = Some(norms);
        Ok(scales)
    }
}
