//! The file form of a head model: TOML head files and the JSON `head_model`
//! attribute, in millimetres.

use serde::{Deserialize, Serialize};

use super::bem::{BemError, MAX_SURFACES};
use super::{HeadError, SphereHead};

/// Which conductor model a head file describes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
#[non_exhaustive]
pub enum HeadModelKind {
    /// Concentric spheres ([`SphereHead`]).
    Spheres,
    /// Nested triangle surfaces ([`super::bem`]).
    Bem,
}

/// A head as written in files: `model = "spheres"`, `radii_mm`, `conductivities`
/// (S/m), optional `center_mm` (default the origin); or `model = "bem"`,
/// `surfaces` (files, innermost first, relative to the head file) and
/// `conductivities` (one per compartment, innermost first), optionally
/// `landmarks_mm` (the head's nasion, LPA and RPA, to align electrodes
/// given in another frame). Unknown keys are an error.
///
/// TOML examples:
/// ```toml
/// model = "spheres"
/// center_mm = [0.0, 0.0, 0.0]
/// radii_mm = [81.0, 83.0, 88.0, 94.0]
/// conductivities = [0.47, 1.79, 0.02, 0.41]
/// ```
/// ```toml
/// model = "bem"
/// surfaces = ["inner_skull.gii", "outer_skull.gii", "scalp.gii"]
/// conductivities = [0.47, 0.02, 0.41]
/// landmarks_mm = { nasion = [0.0, 95.0, -30.0], lpa = [-78.0, 0.0, -30.0], rpa = [78.0, 0.0, -30.0] }
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct HeadSpec {
    /// The model kind.
    pub model: HeadModelKind,
    /// Shell radii (mm), innermost first (spheres only).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub radii_mm: Vec<f64>,
    /// Surface files, innermost first (bem only; GIFTI, PLY or OFF in mm).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub surfaces: Vec<String>,
    /// Content hash (BLAKE3, `io::cache::ContentHash`) of the surfaces'
    /// vertices and triangles as read (bem only;
    /// written into the `head_model` attribute, so a lead field records
    /// which surfaces it came from).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub surfaces_hash: Option<String>,
    /// Shell conductivities (S/m), innermost first.
    pub conductivities: Vec<f64>,
    /// Centre (mm); the origin when absent.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub center_mm: Option<[f64; 3]>,
    /// The head's anatomical landmarks (mm, the surfaces' frame; bem
    /// only): electrodes that come with their own landmarks are aligned to
    /// these.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub landmarks_mm: Option<HeadLandmarksMm>,
}

/// The landmarks of a bem head file (mm, head coordinates):
/// `landmarks_mm = { nasion = [x, y, z], lpa = [...], rpa = [...] }`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct HeadLandmarksMm {
    /// Nasion.
    pub nasion: [f64; 3],
    /// Left preauricular point.
    pub lpa: [f64; 3],
    /// Right preauricular point.
    pub rpa: [f64; 3],
}

/// The radii (mm) a head file may give: wide enough for any head and its
/// phantoms, narrow enough to catch metres or micrometres written as mm.
pub const PLAUSIBLE_RADIUS_MM: (f64, f64) = (1.0, 1000.0);

impl HeadSpec {
    /// Parses and validates a TOML head file; `source_name` (a path or a
    /// label) is put in front of every error message.
    pub fn from_toml_str(text: &str, source_name: &str) -> Result<Self, HeadError> {
        let spec: HeadSpec = toml::from_str(text).map_err(|e| HeadError::Parse {
            source_name: source_name.to_string(),
            message: e.to_string(),
        })?;
        spec.validated(source_name)
    }

    /// Parses and validates the JSON form (the `head_model` attribute).
    pub fn from_json_str(text: &str, source_name: &str) -> Result<Self, HeadError> {
        let spec: HeadSpec = serde_json::from_str(text).map_err(|e| HeadError::Parse {
            source_name: source_name.to_string(),
            message: e.to_string(),
        })?;
        spec.validated(source_name)
    }

    fn validated(self, source_name: &str) -> Result<Self, HeadError> {
        let invalid = |inner: HeadError| HeadError::InvalidSpec {
            source_name: source_name.to_string(),
            inner: Box::new(inner),
        };
        if self.model == HeadModelKind::Bem {
            self.check_bem().map_err(invalid)?;
            return Ok(self);
        }
        for (field, given) in [
            ("surfaces", !self.surfaces.is_empty()),
            ("landmarks_mm", self.landmarks_mm.is_some()),
        ] {
            if given {
                return Err(invalid(HeadError::FieldNotForModel {
                    field,
                    model: "spheres",
                }));
            }
        }
        self.to_head().map_err(invalid)?;
        // A file's radii are in millimetres; a value far outside a head's
        // size is a unit slip (metres, micrometres) or a typing error, and
        // would move every electrode by that much.
        if let Some((index, &value_mm)) = self
            .radii_mm
            .iter()
            .enumerate()
            .find(|(_, r)| !(PLAUSIBLE_RADIUS_MM.0..=PLAUSIBLE_RADIUS_MM.1).contains(*r))
        {
            return Err(invalid(HeadError::RadiusImplausible {
                index,
                value_mm,
                min_mm: PLAUSIBLE_RADIUS_MM.0,
                max_mm: PLAUSIBLE_RADIUS_MM.1,
            }));
        }
        Ok(self)
    }

    /// The counts and values a bem head file can be checked for before its
    /// surfaces are read: 1 to 4 surfaces, one positive conductivity each,
    /// no sphere fields.
    fn check_bem(&self) -> Result<(), HeadError> {
        if let Some(l) = &self.landmarks_mm {
            for (landmark, value) in [("nasion", l.nasion), ("lpa", l.lpa), ("rpa", l.rpa)] {
                if !value.iter().all(|c| c.is_finite()) {
                    return Err(HeadError::LandmarkNotFinite { landmark, value });
                }
            }
        }
        for (field, given) in [
            ("radii_mm", !self.radii_mm.is_empty()),
            ("center_mm", self.center_mm.is_some()),
        ] {
            if given {
                return Err(HeadError::FieldNotForModel {
                    field,
                    model: "bem",
                });
            }
        }
        let n = self.surfaces.len();
        if n == 0 || n > MAX_SURFACES {
            return Err(HeadError::Bem(BemError::SurfaceCount {
                count: n,
                max: MAX_SURFACES,
            }));
        }
        if self.conductivities.len() != n {
            return Err(HeadError::Bem(BemError::ConductivityCount {
                surfaces: n,
                conductivities: self.conductivities.len(),
            }));
        }
        for (index, (&value, surface)) in self.conductivities.iter().zip(&self.surfaces).enumerate()
        {
            if !(value.is_finite() && value > 0.0) {
                return Err(HeadError::Bem(BemError::ConductivityNotPositive {
                    index,
                    surface: surface.clone(),
                    value,
                }));
            }
        }
        Ok(())
    }

    /// Builds the sphere model (metres inside), checking every value; a bem
    /// head is built from its surfaces by the caller that reads them.
    pub fn to_head(&self) -> Result<SphereHead, HeadError> {
        match self.model {
            HeadModelKind::Spheres => {
                let center = self.center_mm.unwrap_or([0.0; 3]).map(|v| v * 1e-3);
                let radii = self.radii_mm.iter().map(|v| v * 1e-3).collect();
                SphereHead::new(center, radii, self.conductivities.clone())
            }
            HeadModelKind::Bem => Err(HeadError::NotSpheres),
        }
    }

    /// The JSON string for the `head_model` attribute:
    /// `{"model":"spheres","radii_mm":[...],"conductivities":[...],"center_mm":[...]}`.
    pub fn to_json(&self) -> String {
        // Serialising plain numbers and strings cannot fail; fall back to an
        // empty object rather than panic all the same.
        serde_json::to_string(self).unwrap_or_else(|_| String::from("{}"))
    }
}

impl SphereHead {
    /// The file form of this head (millimetres; the centre always written).
    pub fn to_spec(&self) -> HeadSpec {
        HeadSpec {
            model: HeadModelKind::Spheres,
            radii_mm: self.radii().iter().map(|v| v * 1e3).collect(),
            surfaces: Vec::new(),
            surfaces_hash: None,
            conductivities: self.conductivities().to_vec(),
            center_mm: Some(self.center().map(|v| v * 1e3)),
            landmarks_mm: None,
        }
    }

    /// The JSON `head_model` attribute of this head; see [`HeadSpec::to_json`].
    pub fn head_model_json(&self) -> String {
        self.to_spec().to_json()
    }
}
