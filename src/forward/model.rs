//! The lead field as an artefact: the channels, the sources and the gain of
//! one head, the model `io` reads from and writes to `leadfield.h5` (and the
//! lead-field part of `dictionary.h5`). SI units throughout.

use crate::geometry::{SourceSpace, Vec3};

/// A lead field with everything needed to use it on its own: channel labels
/// and electrode positions, the sources, the gain along the normals (and in
/// x, y, z when computed), its reference and the head it was computed for.
///
/// The reader in `io` checks the shapes once (`gain` is n_ch × n_src,
/// `gain_xyz` n_ch × n_src × 3, one position per label, unit normals, valid
/// triangle and region indices), so code holding one need not re-check them.
#[derive(Debug, Clone, PartialEq)]
pub struct LeadField {
    /// Channel labels (n_ch).
    pub labels: Vec<String>,
    /// Electrode positions (m).
    pub electrode_positions: Vec<Vec3>,
    /// The sources.
    pub sources: SourceSpace,
    /// Gain along the normals, n_ch × n_src row-major, V/(A·m).
    pub gain: Vec<f64>,
    /// Optional free-orientation gain, n_ch × n_src × 3 row-major.
    pub gain_xyz: Option<Vec<f64>>,
    /// Reference of the gain as recorded (`average`, `none`, or `unknown`
    /// for a file that does not say).
    pub reference: String,
    /// The head model as a JSON string.
    pub head_model: String,
}

impl LeadField {
    /// Number of channels.
    pub fn n_channels(&self) -> usize {
        self.labels.len()
    }

    /// Number of sources.
    pub fn n_sources(&self) -> usize {
        self.sources.len()
    }
}
