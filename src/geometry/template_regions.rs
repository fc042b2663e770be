//! The parcellation of the synthetic template cortex into named regions.
//!
//! Regions are our own definitions, in anatomical words, by position relative
//! to the sulcal lines of [`template_sulci`](super::template_sulci). A vertex
//! is placed by the icosphere direction it was made from (hemisphere-local
//! coordinates: lateral, anterior, superior); the folding moves vertices along
//! the surface normal only, so a direction names the same place on the
//! folded surface. Most borders are the planes of two-point sulcal lines, so
//! they run along the fundus of their sulcus. The definitions are written out
//! in `docs/template.md`.

use super::mesh::{dot, normalize, Vec3};
use super::template_sulci::{
    plane_normal, SulcalLine, CENTRAL, CINGULATE_CENTRE, CINGULATE_RADIUS, INFERIOR_FRONTAL,
    INTRAPARIETAL, LATERAL, PARIETO_OCCIPITAL, POSTCENTRAL, PRECENTRAL, SUPERIOR_TEMPORAL,
};

/// The regions of one hemisphere; the discriminant is the index into [`NAMES`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Region {
    FrontalPole,
    DorsalFrontal,
    VentralFrontal,
    Precentral,
    Postcentral,
    SuperiorParietal,
    InferiorParietal,
    SuperiorTemporal,
    InferiorTemporal,
    Occipital,
    MedialFrontal,
    MedialParietal,
    Cingulate,
    MedialOccipital,
    MedialTemporal,
}

/// Region names within one hemisphere, in the order of [`Region`].
const NAMES: [&str; 15] = [
    "frontal-pole",
    "dorsal-frontal",
    "ventral-frontal",
    "precentral",
    "postcentral",
    "superior-parietal",
    "inferior-parietal",
    "superior-temporal",
    "inferior-temporal",
    "occipital",
    "medial-frontal",
    "medial-parietal",
    "cingulate",
    "medial-occipital",
    "medial-temporal",
];

/// Number of regions in each hemisphere.
pub(crate) const REGIONS_PER_HEMISPHERE: usize = NAMES.len();

/// Directions with `anterior` above this belong to the frontal pole (a cap
/// of about 28° around the anterior axis).
const FRONTAL_POLE_COSINE: f64 = 0.88;
/// Directions with `lateral` below minus this are on the medial surface (a
/// cap of about 53° around the medial axis).
const MEDIAL_COSINE: f64 = 0.6;
/// On the medial surface, below this height (and in front of the
/// parieto-occipital plane) lies the medial temporal region, unless anterior.
const MEDIAL_TEMPORAL_SUPERIOR: f64 = -0.35;
/// The medial temporal region ends in front at this `anterior` value; the
/// medial orbital surface in front of it is medial frontal.
const MEDIAL_TEMPORAL_ANTERIOR: f64 = 0.3;
/// Off the medial surface, directions within 40° of this axis (just lateral
/// of the posterior pole) form the occipital lobe; its front edge passes
/// behind the dorsal end of the parieto-occipital sulcus and through the
/// preoccipital notch.
const OCCIPITAL_AXIS: Vec3 = [0.25, -1.0, -0.05];
/// Cosine of the occipital cap's angular radius (40°).
const OCCIPITAL_COSINE: f64 = 0.766;
/// The border between the temporal pole and the orbital frontal surface
/// below the lateral fissure: the plane through the front of the fissure
/// and a point on the base between the orbit and the temporal pole.
const TEMPORAL_POLE_BORDER: [Vec3; 2] = [[0.82, 0.47, -0.33], [0.0, 0.40, -0.9]];

/// In front of the precentral sulcus, directions below this height are on
/// the orbital surface (ventral frontal) even where the inferior frontal
/// sulcus' plane, extended past the frontal pole, would put them above it.
const ORBITAL_SUPERIOR: f64 = -0.2;

const ANTERIOR: Vec3 = [0.0, 1.0, 0.0];
const SUPERIOR: Vec3 = [0.0, 0.0, 1.0];

/// The region of the unit direction `u` (hemisphere-local: lateral,
/// anterior, superior).
fn classify(u: Vec3) -> Region {
    let [l, a, s] = u;
    let anterior_of = |line: &SulcalLine| dot(u, line.plane_normal(ANTERIOR)) > 0.0;
    let above = |line: &SulcalLine| dot(u, line.plane_normal(SUPERIOR)) > 0.0;
    let anterior_of_border =
        |border: [Vec3; 2]| dot(u, plane_normal(border[0], border[1], ANTERIOR)) > 0.0;
    if a > FRONTAL_POLE_COSINE {
        Region::FrontalPole
    } else if l < -MEDIAL_COSINE {
        let cingulate = dot(u, normalize(CINGULATE_CENTRE)) > CINGULATE_RADIUS.cos();
        if !anterior_of(&PARIETO_OCCIPITAL) {
            Region::MedialOccipital
        } else if cingulate {
            Region::Cingulate
        } else if s < MEDIAL_TEMPORAL_SUPERIOR && a < MEDIAL_TEMPORAL_ANTERIOR {
            Region::MedialTemporal
        } else if anterior_of(&CENTRAL) {
            Region::MedialFrontal
        } else {
            Region::MedialParietal
        }
    } else if dot(u, normalize(OCCIPITAL_AXIS)) > OCCIPITAL_COSINE {
        Region::Occipital
    } else if !above(&LATERAL) {
        if anterior_of_border(TEMPORAL_POLE_BORDER) {
            Region::VentralFrontal
        } else if above(&SUPERIOR_TEMPORAL) {
            Region::SuperiorTemporal
        } else {
            Region::InferiorTemporal
        }
    } else if anterior_of(&PRECENTRAL) {
        if above(&INFERIOR_FRONTAL) && s > ORBITAL_SUPERIOR {
            Region::DorsalFrontal
        } else {
            Region::VentralFrontal
        }
    } else if anterior_of(&CENTRAL) {
        Region::Precentral
    } else if anterior_of(&POSTCENTRAL) {
        Region::Postcentral
    } else if above(&INTRAPARIETAL) {
        Region::SuperiorParietal
    } else {
        Region::InferiorParietal
    }
}

/// The region index (within one hemisphere, into the per-hemisphere names)
/// of the unit direction `u` (hemisphere-local: lateral, anterior, superior).
pub(crate) fn region_of(u: Vec3) -> usize {
    classify(u) as usize
}

/// All region names: the left hemisphere's (`left-…`) then the right's, each
/// in the same order.
pub(crate) fn region_names() -> Vec<String> {
    ["left", "right"]
        .iter()
        .flat_map(|side| NAMES.iter().map(move |name| format!("{side}-{name}")))
        .collect()
}
