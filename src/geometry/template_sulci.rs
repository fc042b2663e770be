//! The sulcal lines of the synthetic template cortex, shared by the folding and the parcellation.
//!
//! Each line is a chain of great-circle arcs between directions on the unit
//! sphere of one hemisphere, in hemisphere-local coordinates (lateral,
//! anterior, superior): lateral points away from the midline, so the same
//! lines serve both hemispheres by mirroring. The folding maps the arcs onto
//! the unfolded hemisphere surface and digs a furrow along them; the
//! parcellation uses the planes of the two-point lines as region boundaries,
//! so a region border runs along the fundus of its sulcus.

use super::mesh::{cross, dot, normalize, Vec3};

/// One sulcus: where it runs and the shape of its furrow.
#[derive(Debug, Clone, Copy)]
pub(crate) struct SulcalLine {
    /// Anatomical name, for documentation and diagnostics.
    #[allow(dead_code)]
    pub name: &'static str,
    /// Directions (not necessarily unit length) joined by great-circle arcs.
    pub path: &'static [Vec3],
    /// Depth of the fundus below the crown (mm).
    pub depth_mm: f64,
    /// Half-width of the flat fundus (mm).
    pub fundus_half_width_mm: f64,
    /// Horizontal width of each wall, from fundus to crown (mm).
    pub wall_width_mm: f64,
}

impl SulcalLine {
    /// The unit normal of the plane through the first and last direction
    /// (and the hemisphere centre), oriented to have positive dot product with
    /// `toward`. For a two-point line this plane holds the whole line.
    pub(crate) fn plane_normal(&self, toward: Vec3) -> Vec3 {
        plane_normal(self.path[0], self.path[self.path.len() - 1], toward)
    }
}

/// A sulcus with the usual furrow: a 0.75 mm half-width fundus and 4.5 mm walls.
const fn sulcus(name: &'static str, path: &'static [Vec3], depth_mm: f64) -> SulcalLine {
    SulcalLine {
        name,
        path,
        depth_mm,
        fundus_half_width_mm: 0.75,
        wall_width_mm: 4.5,
    }
}

/// The unit normal of the plane through the hemisphere centre and the
/// directions `first` and `last`, oriented to have positive dot product with
/// `toward`.
pub(crate) fn plane_normal(first: Vec3, last: Vec3, toward: Vec3) -> Vec3 {
    let n = normalize(cross(first, last));
    if dot(n, toward) >= 0.0 {
        n
    } else {
        [-n[0], -n[1], -n[2]]
    }
}

/// Central sulcus: from just over the dorsal margin, slightly behind the
/// middle, down and forward across the lateral surface to just above the
/// lateral fissure.
pub(crate) const CENTRAL: SulcalLine =
    sulcus("central", &[[-0.25, -0.10, 1.0], [0.97, 0.20, 0.22]], 12.0);

/// Lateral (Sylvian) fissure: from the front of the temporal lobe backward,
/// rising toward the parietal lobe; wider than the others.
pub(crate) const LATERAL: SulcalLine = SulcalLine {
    name: "lateral fissure",
    path: &[[0.82, 0.47, -0.33], [0.85, -0.50, 0.14]],
    depth_mm: 12.0,
    fundus_half_width_mm: 2.0,
    wall_width_mm: 4.5,
};

/// Precentral sulcus, parallel to and in front of the central sulcus.
pub(crate) const PRECENTRAL: SulcalLine = sulcus(
    "precentral",
    &[[-0.20, 0.22, 1.0], [0.92, 0.50, 0.08]],
    10.0,
);

/// Postcentral sulcus, parallel to and behind the central sulcus.
pub(crate) const POSTCENTRAL: SulcalLine = sulcus(
    "postcentral",
    &[[-0.20, -0.42, 1.0], [0.92, -0.12, 0.30]],
    10.0,
);

/// Superior frontal sulcus: from the precentral sulcus forward, parallel to
/// the dorsal margin.
pub(crate) const SUPERIOR_FRONTAL: SulcalLine = sulcus(
    "superior frontal",
    &[[0.40, 0.30, 0.90], [0.40, 0.86, 0.35]],
    9.0,
);

/// Middle frontal sulcus, splitting the middle frontal gyrus.
pub(crate) const MIDDLE_FRONTAL: SulcalLine = sulcus(
    "middle frontal",
    &[[0.70, 0.42, 0.62], [0.52, 0.84, 0.28]],
    8.0,
);

/// Inferior frontal sulcus: from the precentral sulcus forward at mid-height.
pub(crate) const INFERIOR_FRONTAL: SulcalLine = sulcus(
    "inferior frontal",
    &[[0.85, 0.42, 0.38], [0.62, 0.80, 0.05]],
    9.0,
);

/// Anterior ascending ramus of the lateral fissure, into the inferior frontal gyrus.
pub(crate) const ASCENDING_RAMUS: SulcalLine = sulcus(
    "ascending ramus",
    &[[0.85, 0.40, -0.12], [0.85, 0.45, 0.22]],
    8.0,
);

/// Intraparietal sulcus: from the postcentral sulcus backward, between the
/// superior and inferior parietal lobules.
pub(crate) const INTRAPARIETAL: SulcalLine = sulcus(
    "intraparietal",
    &[[0.70, -0.28, 0.72], [0.45, -0.80, 0.40]],
    10.0,
);

/// Transverse occipital sulcus, across the back end of the intraparietal sulcus.
pub(crate) const TRANSVERSE_OCCIPITAL: SulcalLine = sulcus(
    "transverse occipital",
    &[[0.20, -0.74, 0.64], [0.62, -0.74, 0.05]],
    8.0,
);

/// Superior temporal sulcus, parallel to and below the lateral fissure.
pub(crate) const SUPERIOR_TEMPORAL: SulcalLine = sulcus(
    "superior temporal",
    &[[0.85, 0.45, -0.55], [0.85, -0.58, -0.08]],
    10.0,
);

/// Posterior ascending branch of the superior temporal sulcus, into the
/// angular gyrus.
pub(crate) const ANGULAR: SulcalLine =
    sulcus("angular", &[[0.80, -0.56, -0.06], [0.70, -0.60, 0.30]], 8.0);

/// Inferior temporal sulcus, on the lower lateral surface of the temporal lobe.
pub(crate) const INFERIOR_TEMPORAL: SulcalLine = sulcus(
    "inferior temporal",
    &[[0.65, 0.35, -0.85], [0.72, -0.58, -0.45]],
    8.0,
);

/// Lateral occipital sulcus, across the lateral occipital lobe.
pub(crate) const LATERAL_OCCIPITAL: SulcalLine = sulcus(
    "lateral occipital",
    &[[0.72, -0.66, -0.25], [0.35, -0.84, -0.30]],
    8.0,
);

/// Cingulate sulcus: an arc on the medial surface around the middle of the
/// medial wall (38° about [`CINGULATE_CENTRE`], where a real brain has the
/// corpus callosum), ending in a marginal branch that climbs to the dorsal
/// margin behind the paracentral lobule.
pub(crate) const CINGULATE: SulcalLine = sulcus(
    "cingulate",
    &[
        [-0.739, 0.597, -0.314],
        [-0.708, 0.705, 0.039],
        [-0.704, 0.592, 0.392],
        [-0.728, 0.299, 0.617],
        [-0.771, -0.068, 0.633],
        [-0.805, -0.302, 0.510],
        [-0.45, -0.32, 0.84],
    ],
    10.0,
);

/// Callosal sulcus: an inner arc 22° about [`CINGULATE_CENTRE`], the inner
/// edge of the cingulate gyrus.
pub(crate) const CALLOSAL: SulcalLine = sulcus(
    "callosal",
    &[
        [-0.893, 0.416, -0.169],
        [-0.875, 0.482, 0.046],
        [-0.872, 0.414, 0.261],
        [-0.887, 0.235, 0.398],
        [-0.913, 0.012, 0.407],
        [-0.942, -0.176, 0.286],
        [-0.962, -0.260, 0.079],
        [-0.967, -0.211, -0.141],
    ],
    8.0,
);

/// Paracingulate sulcus: an outer arc 46° about [`CINGULATE_CENTRE`] in the
/// medial frontal lobe.
pub(crate) const PARACINGULATE: SulcalLine = sulcus(
    "paracingulate",
    &[
        [-0.620, 0.755, -0.211],
        [-0.598, 0.785, 0.159],
        [-0.600, 0.627, 0.496],
        [-0.621, 0.381, 0.686],
    ],
    7.0,
);

/// Paracentral sulcus: medial, from the cingulate sulcus up to the dorsal
/// margin in front of the paracentral lobule.
pub(crate) const PARACENTRAL: SulcalLine = sulcus(
    "paracentral",
    &[[-0.74, 0.15, 0.62], [-0.50, 0.15, 0.85]],
    7.0,
);

/// Parieto-occipital sulcus: on the medial surface, from the dorsal margin
/// down and forward to meet the calcarine sulcus.
pub(crate) const PARIETO_OCCIPITAL: SulcalLine = sulcus(
    "parieto-occipital",
    &[[-0.35, -0.62, 0.75], [-0.75, -0.60, -0.10]],
    11.0,
);

/// Calcarine sulcus: from the parieto-occipital junction back toward the
/// occipital pole.
pub(crate) const CALCARINE: SulcalLine = sulcus(
    "calcarine",
    &[[-0.75, -0.60, -0.10], [-0.30, -0.94, -0.05]],
    10.0,
);

/// Cuneal sulcus, in the cuneus between the parieto-occipital and calcarine sulci.
pub(crate) const CUNEAL: SulcalLine =
    sulcus("cuneal", &[[-0.62, -0.76, 0.28], [-0.36, -0.90, 0.20]], 7.0);

/// Lingual sulcus, in the lingual gyrus below the calcarine sulcus.
pub(crate) const LINGUAL: SulcalLine = sulcus(
    "lingual",
    &[[-0.78, -0.50, -0.38], [-0.40, -0.82, -0.42]],
    7.0,
);

/// Collateral sulcus, on the ventral surface of the temporal and occipital lobes.
pub(crate) const COLLATERAL: SulcalLine = sulcus(
    "collateral",
    &[[0.10, 0.30, -0.95], [-0.10, -0.65, -0.75]],
    8.0,
);

/// Occipitotemporal sulcus, on the ventral surface between the collateral and
/// inferior temporal sulci.
pub(crate) const OCCIPITOTEMPORAL: SulcalLine = sulcus(
    "occipitotemporal",
    &[[0.42, 0.28, -0.90], [0.32, -0.62, -0.70]],
    8.0,
);

/// Olfactory sulcus, on the orbital surface of the frontal lobe near the midline.
pub(crate) const OLFACTORY: SulcalLine = sulcus(
    "olfactory",
    &[[-0.20, 0.55, -0.80], [-0.20, 0.90, -0.35]],
    8.0,
);

/// Lateral orbital sulcus, on the orbital surface.
pub(crate) const LATERAL_ORBITAL: SulcalLine = sulcus(
    "lateral orbital",
    &[[0.40, 0.52, -0.75], [0.40, 0.86, -0.30]],
    7.0,
);

/// Transverse orbital sulcus, joining the orbital sulci.
pub(crate) const TRANSVERSE_ORBITAL: SulcalLine = sulcus(
    "transverse orbital",
    &[[-0.05, 0.70, -0.70], [0.55, 0.68, -0.45]],
    7.0,
);

/// Frontomarginal sulcus, across the lateral frontal pole.
pub(crate) const FRONTOMARGINAL: SulcalLine = sulcus(
    "frontomarginal",
    &[[0.62, 0.74, 0.10], [0.30, 0.90, -0.20]],
    8.0,
);

/// Superior parietal sulcus, splitting the superior parietal lobule.
pub(crate) const SUPERIOR_PARIETAL: SulcalLine = sulcus(
    "superior parietal",
    &[[0.35, -0.48, 0.82], [0.22, -0.70, 0.66]],
    8.0,
);

/// Superior occipital sulcus, on the dorsal lateral occipital lobe.
pub(crate) const SUPERIOR_OCCIPITAL: SulcalLine = sulcus(
    "superior occipital",
    &[[0.55, -0.80, 0.30], [0.15, -0.92, 0.30]],
    8.0,
);

/// Middle temporal sulcus, splitting the middle temporal gyrus.
pub(crate) const MIDDLE_TEMPORAL: SulcalLine = sulcus(
    "middle temporal",
    &[[0.80, 0.36, -0.72], [0.85, -0.50, -0.32]],
    8.0,
);

/// Superior rostral sulcus, on the medial frontal surface below the
/// paracingulate sulcus.
pub(crate) const SUPERIOR_ROSTRAL: SulcalLine = sulcus(
    "superior rostral",
    &[[-0.72, 0.64, -0.12], [-0.55, 0.80, -0.15]],
    8.0,
);

/// Hippocampal sulcus, on the medial temporal surface.
pub(crate) const HIPPOCAMPAL: SulcalLine = sulcus(
    "hippocampal",
    &[[-0.78, 0.10, -0.60], [-0.80, -0.36, -0.50]],
    8.0,
);

/// Rhinal sulcus, in front of the hippocampal sulcus on the ventromedial surface.
pub(crate) const RHINAL: SulcalLine = sulcus(
    "rhinal",
    &[[-0.45, 0.38, -0.82], [-0.45, -0.05, -0.90]],
    8.0,
);

/// Superior frontal paramedian sulcus, between the superior frontal sulcus
/// and the dorsal margin.
pub(crate) const PARAMEDIAN_FRONTAL: SulcalLine = sulcus(
    "paramedian frontal",
    &[[0.05, 0.36, 0.93], [0.00, 0.78, 0.60]],
    8.0,
);

/// Centre of the circles the cingulate, callosal and paracingulate sulci
/// follow (unnormalised).
pub(crate) const CINGULATE_CENTRE: Vec3 = [-1.0, 0.12, 0.05];
/// Angular radius (rad) of the cingulate sulcus' circle: 38°.
pub(crate) const CINGULATE_RADIUS: f64 = 38.0 * std::f64::consts::PI / 180.0;

/// Every sulcus that is dug into the surface.
pub(crate) const SULCI: [&SulcalLine; 35] = [
    &CENTRAL,
    &LATERAL,
    &PRECENTRAL,
    &POSTCENTRAL,
    &SUPERIOR_FRONTAL,
    &MIDDLE_FRONTAL,
    &INFERIOR_FRONTAL,
    &ASCENDING_RAMUS,
    &INTRAPARIETAL,
    &TRANSVERSE_OCCIPITAL,
    &SUPERIOR_TEMPORAL,
    &ANGULAR,
    &INFERIOR_TEMPORAL,
    &LATERAL_OCCIPITAL,
    &CINGULATE,
    &CALLOSAL,
    &PARACINGULATE,
    &PARACENTRAL,
    &PARIETO_OCCIPITAL,
    &CALCARINE,
    &CUNEAL,
    &LINGUAL,
    &COLLATERAL,
    &OCCIPITOTEMPORAL,
    &OLFACTORY,
    &LATERAL_ORBITAL,
    &TRANSVERSE_ORBITAL,
    &FRONTOMARGINAL,
    &SUPERIOR_PARIETAL,
    &SUPERIOR_OCCIPITAL,
    &MIDDLE_TEMPORAL,
    &SUPERIOR_ROSTRAL,
    &HIPPOCAMPAL,
    &RHINAL,
    &PARAMEDIAN_FRONTAL,
];
