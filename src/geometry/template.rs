//! The synthetic template cortex: two folded hemispheres with named regions.
//!
//! The template is our own construction, not a scan. Each hemisphere starts as
//! an icosphere, is mapped onto a smooth brain-like hemisphere (an ellipsoid of
//! different semi-axes per octant, with a flattened medial wall, poles drawn
//! toward the midline, a narrower and lower occipital lobe, a temporal lobe
//! that hangs below the frontal base with a rounded pole, and a broad groove
//! along the lateral fissure), and is then folded: every
//! vertex moves inward along the unfolded surface's normal by the depth of the
//! deepest sulcus near it (the sulcal lines are in `template_sulci.rs`).
//! Because the unfolded surface is a smooth embedded surface and the fold is
//! an inward height field shallower than its curvature radius, the folded
//! surface stays closed, edge-manifold and free of self-intersections.
//!
//! The construction is deterministic: no random numbers, and the only
//! parallel step computes each vertex's depth independently, so the bits do not
//! depend on the thread count. Sizes and region definitions are documented in
//! `docs/template.md`.

use rayon::prelude::*;

use super::mesh::{add, dot, norm, scale, sub, Mesh, Vec3};
use super::template_regions::{region_names, region_of, REGIONS_PER_HEMISPHERE};
use super::template_sulci::{SulcalLine, SULCI};

/// Millimetres to metres.
const MM: f64 = 1e-3;

/// How finely the template cortex is sampled.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum TemplateResolution {
    /// "template-5k": an icosphere of level 4 per hemisphere, 5124 vertices.
    Low,
    /// "template": an icosphere of level 5 per hemisphere, 20484 vertices.
    Standard,
}

impl TemplateResolution {
    /// Every resolution, coarsest first.
    pub const ALL: [TemplateResolution; 2] =
        [TemplateResolution::Low, TemplateResolution::Standard];

    /// The name users give on the command line and in job files.
    pub fn name(self) -> &'static str {
        match self {
            TemplateResolution::Low => "template-5k",
            TemplateResolution::Standard => "template",
        }
    }

    /// The resolution with this name, if any (exact, lowercase match).
    pub fn from_name(name: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|r| r.name() == name)
    }

    /// Icosphere subdivision level of each hemisphere.
    pub fn icosphere_level(self) -> u32 {
        match self {
            TemplateResolution::Low => 4,
            TemplateResolution::Standard => 5,
        }
    }
}

/// The template cortex: one mesh holding both hemispheres, with a region and
/// a hemisphere per vertex.
#[derive(Debug, Clone, PartialEq)]
pub struct Template {
    /// Both hemispheres (metres, head coordinates): the left hemisphere's
    /// vertices and triangles first, then the right's. Each hemisphere is a
    /// closed, outward-oriented surface.
    pub mesh: Mesh,
    /// Region per vertex: an index into `region_names`, or -1 for none (the
    /// generator labels every vertex).
    pub region: Vec<i32>,
    /// Region names, lowercase and hyphenated (`left-precentral`, ...): the
    /// left hemisphere's regions first, then the right's in the same order.
    pub region_names: Vec<String>,
    /// Hemisphere per vertex: 0 left (x < 0), 1 right (x > 0).
    pub hemisphere: Vec<u8>,
}

// Shape of one hemisphere (mm), in hemisphere-local coordinates (lateral,
// anterior, superior) about the hemisphere centre. Chosen so that every
// vertex stays within 78 mm of the head centre (docs/template.md).

/// Lateral semi-axis.
const SEMI_LATERAL: f64 = 37.0;
/// Medial semi-axis before the medial wall is flattened.
const SEMI_MEDIAL: f64 = 30.0;
/// Anterior semi-axis (to the frontal pole).
const SEMI_ANTERIOR: f64 = 73.0;
/// Posterior semi-axis (to the occipital pole).
const SEMI_POSTERIOR: f64 = 75.0;
/// Superior semi-axis.
const SEMI_SUPERIOR: f64 = 45.0;
/// Inferior semi-axis before the temporal lobe is lowered.
const SEMI_INFERIOR: f64 = 20.0;
/// The upper half grows in front by this fraction (times the squared
/// fraction of the way to the frontal pole): a full, blunt frontal lobe.
const FRONTAL_FULLNESS: f64 = 0.10;
/// The upper half shrinks behind by this fraction (times the squared
/// fraction of the way to the occipital pole): a low occipital lobe.
const OCCIPITAL_LOWERING: f64 = 0.12;
/// The lateral side narrows toward the frontal pole by this fraction of its
/// width (times the squared fraction of the way to the pole).
const FRONTAL_NARROWING: f64 = 0.05;
/// The same toward the occipital pole, which is narrower.
const OCCIPITAL_NARROWING: f64 = 0.60;
/// The lateral side widens by this fraction times the fraction of the way
/// to the occipital pole (and narrows as much toward the frontal pole), so
/// the brain is widest behind its middle.
const WIDER_BEHIND: f64 = 0.2;
/// The lateral side bulges by this fraction of its width over the temporal
/// and lower parietal lobes, where the brain is widest.
const TEMPORAL_BULGE: f64 = 0.12;
/// Anterior position of the middle of the bulge.
const BULGE_CENTRE: f64 = -25.0;
/// Anterior-posterior scale of the bulge (a Gaussian along the length).
const BULGE_SPREAD: f64 = 30.0;
/// Vertical scale over which the bulge fades above the hemisphere centre.
const BULGE_FADE: f64 = 12.0;
/// The medial wall lies this far medial of the hemisphere centre.
const MEDIAL_WALL: f64 = 24.0;
/// Sharpness of the medial flattening (1/mm): the wall bends over about 4/k.
const MEDIAL_SHARPNESS: f64 = 0.25;
/// The distance from the medial wall shrinks at the frontal pole by this
/// fraction (times the cube of the fraction of the way to the pole),
/// so the frontal poles lie near the midline.
const FRONTAL_POLE_TUCK: f64 = 0.15;
/// The same at the occipital pole.
const OCCIPITAL_POLE_TUCK: f64 = 0.40;
/// How far the temporal lobe hangs below the frontal base.
const TEMPORAL_DROP: f64 = 24.0;
/// The temporal lobe is fully lowered from here (anterior position)...
const TEMPORAL_FRONT_FULL: f64 = 6.0;
/// ... to its pole here, in front of which the frontal base is not lowered.
const TEMPORAL_POLE: f64 = 36.0;
/// Behind this anterior position the drop fades toward the occipital pole...
const TEMPORAL_BACK_FULL: f64 = -30.0;
/// ... to this fraction of itself at the occipital pole.
const OCCIPITAL_DROP_FRACTION: f64 = 0.25;
/// Vertical scale over which the temporal drop fades out upward.
const TEMPORAL_FADE: f64 = 7.0;
/// The lateral fissure's envelope groove: from its front end to its back end
/// in (anterior, superior) before the temporal lobe is lowered (mm).
const SYLVIAN_GROOVE: [[f64; 2]; 2] = [[34.0, -7.0], [-38.0, 6.5]];
/// Fraction of the lateral width the groove takes away at its middle.
const SYLVIAN_GROOVE_DEPTH: f64 = 0.14;
/// Width scale (mm) of the groove (a Gaussian across it).
const SYLVIAN_GROOVE_WIDTH: f64 = 9.0;
/// Half the gap between the hemispheres' medial walls.
const HALF_GAP: f64 = 1.5;
/// Hemisphere centre, distance from the midline.
const CENTRE_LATERAL: f64 = MEDIAL_WALL + HALF_GAP;
/// Hemisphere centre, anterior position.
const CENTRE_ANTERIOR: f64 = 0.0;
/// Hemisphere centre, height.
const CENTRE_SUPERIOR: f64 = 2.0;
/// Length over which a sulcus becomes shallow at each end.
const END_TAPER: f64 = 12.0;
/// Angular step (rad) when sampling a sulcal line.
const LINE_STEP: f64 = 0.01;

/// `t²(3 − 2t)` clamped to [0, 1]: a smooth step from 0 to 1.
fn smoothstep(t: f64) -> f64 {
    let t = t.clamp(0.0, 1.0);
    t * t * (3.0 - 2.0 * t)
}

/// `a - b` in a plane.
fn sub2(a: [f64; 2], b: [f64; 2]) -> [f64; 2] {
    [a[0] - b[0], a[1] - b[1]]
}

/// `ln(1 + e^x)` without overflow.
fn softplus(x: f64) -> f64 {
    if x > 30.0 {
        x
    } else {
        x.exp().ln_1p()
    }
}

/// The unfolded hemisphere surface point (mm, local coordinates) for a unit
/// direction `u` of the icosphere.
///
/// Each step is a one-to-one map of space (each coordinate is changed by a
/// function increasing in that coordinate, plus shifts depending only on the
/// coordinates left unchanged), so the image of the sphere stays a closed
/// embedded surface.
pub(crate) fn unfolded_point(u: Vec3) -> Vec3 {
    let [l, a, s] = u;
    let mut q = [
        l * if l >= 0.0 { SEMI_LATERAL } else { SEMI_MEDIAL },
        a * if a >= 0.0 {
            SEMI_ANTERIOR
        } else {
            SEMI_POSTERIOR
        },
        s * if s >= 0.0 {
            SEMI_SUPERIOR
        } else {
            SEMI_INFERIOR
        },
    ];
    // Fraction of the way to the frontal (> 0) or occipital (< 0) pole; the
    // anterior coordinate is never changed, so every factor below that
    // depends on it alone is a one-to-one scaling of the other coordinates.
    let front = (q[1] / SEMI_ANTERIOR).max(0.0);
    let back = (-q[1] / SEMI_POSTERIOR).max(0.0);
    // A full frontal lobe and a low occipital lobe: the upper half scaled by
    // a positive factor.
    if q[2] > 0.0 {
        q[2] *= 1.0 + FRONTAL_FULLNESS * front * front - OCCIPITAL_LOWERING * back * back;
    }
    // Narrow the lateral side toward the poles (more toward the occipital
    // pole) and widen it over the temporal and lower parietal lobes; the
    // factor is positive and depends on the other two coordinates only.
    if q[0] > 0.0 {
        let along = (q[1] - BULGE_CENTRE) / BULGE_SPREAD;
        let low = 1.0 / (1.0 + (q[2] / BULGE_FADE).exp());
        // A broad groove along the lateral fissure sets the temporal lobe
        // off from the frontal and parietal lobes above it.
        let (p, d) = (
            SYLVIAN_GROOVE[0],
            sub2(SYLVIAN_GROOVE[1], SYLVIAN_GROOVE[0]),
        );
        let t = (((q[1] - p[0]) * d[0] + (q[2] - p[1]) * d[1]) / (d[0] * d[0] + d[1] * d[1]))
            .clamp(0.0, 1.0);
        let off = [q[1] - p[0] - t * d[0], q[2] - p[1] - t * d[1]];
        let groove = (-(off[0] * off[0] + off[1] * off[1])
            / (SYLVIAN_GROOVE_WIDTH * SYLVIAN_GROOVE_WIDTH))
            .exp();
        q[0] *= (1.0 - FRONTAL_NARROWING * front * front - OCCIPITAL_NARROWING * back * back
            + WIDER_BEHIND * (back - front))
            * (1.0 + TEMPORAL_BULGE * (-along * along).exp() * low)
            * (1.0 - SYLVIAN_GROOVE_DEPTH * groove);
    }
    // Flatten the medial side onto the wall at -MEDIAL_WALL: a soft maximum
    // keeps the map smooth and increasing.
    let wall = softplus(MEDIAL_SHARPNESS * (q[0] + MEDIAL_WALL)) / MEDIAL_SHARPNESS;
    // Bring the poles toward the midline: the distance from the wall shrinks
    // by a positive factor of the anterior coordinate.
    let tuck = 1.0 - FRONTAL_POLE_TUCK * front.powi(3) - OCCIPITAL_POLE_TUCK * back.powi(3);
    q[0] = -MEDIAL_WALL + wall * tuck;
    // Lower the base between the temporal pole and the occipital lobe (the
    // temporal lobe); the weight falls as the point rises, so heights keep
    // their order.
    let along = if q[1] > TEMPORAL_FRONT_FULL {
        1.0 - smoothstep((q[1] - TEMPORAL_FRONT_FULL) / (TEMPORAL_POLE - TEMPORAL_FRONT_FULL))
    } else if q[1] < TEMPORAL_BACK_FULL {
        let t = (TEMPORAL_BACK_FULL - q[1]) / (SEMI_POSTERIOR + TEMPORAL_BACK_FULL);
        1.0 - (1.0 - OCCIPITAL_DROP_FRACTION) * smoothstep(t)
    } else {
        1.0
    };
    let weight = 1.0 / (1.0 + (q[2] / TEMPORAL_FADE).exp());
    q[2] -= TEMPORAL_DROP * along * weight;
    q
}

/// A sulcal line sampled on the unfolded surface as a polyline (mm).
struct SampledLine {
    points: Vec<Vec3>,
    /// Arc length from the start to each point.
    arclength: Vec<f64>,
    /// Centre and radius of a sphere holding every point, to skip far vertices.
    centre: Vec3,
    radius: f64,
    line: SulcalLine,
}

impl SampledLine {
    fn new(line: &SulcalLine) -> SampledLine {
        let mut points = Vec::new();
        for pair in line.path.windows(2) {
            let (p, q) = (
                super::mesh::normalize(pair[0]),
                super::mesh::normalize(pair[1]),
            );
            let angle = dot(p, q).clamp(-1.0, 1.0).acos();
            let steps = ((angle / LINE_STEP).ceil() as usize).max(1);
            let start = if points.is_empty() { 0 } else { 1 };
            for i in start..=steps {
                // Spherical linear interpolation along the great circle.
                let t = i as f64 / steps as f64;
                let w0 = ((1.0 - t) * angle).sin() / angle.sin();
                let w1 = (t * angle).sin() / angle.sin();
                let u = add(scale(p, w0), scale(q, w1));
                points.push(unfolded_point(u));
            }
        }
        let mut arclength = Vec::with_capacity(points.len());
        let mut total = 0.0;
        for (i, &p) in points.iter().enumerate() {
            if i > 0 {
                total += norm(sub(p, points[i - 1]));
            }
            arclength.push(total);
        }
        let sum = points.iter().fold([0.0; 3], |acc, &p| add(acc, p));
        let centre = scale(sum, 1.0 / points.len() as f64);
        let radius = points
            .iter()
            .map(|&p| norm(sub(p, centre)))
            .fold(0.0, f64::max);
        SampledLine {
            points,
            arclength,
            centre,
            radius,
            line: *line,
        }
    }

    /// How deep this sulcus digs at the unfolded point `p` (mm, ≥ 0).
    fn depth_at(&self, p: Vec3) -> f64 {
        let reach = self.line.fundus_half_width_mm + self.line.wall_width_mm;
        if norm(sub(p, self.centre)) > self.radius + reach {
            return 0.0;
        }
        let mut best = f64::INFINITY;
        let mut best_s = 0.0;
        for i in 1..self.points.len() {
            let (a, b) = (self.points[i - 1], self.points[i]);
            let ab = sub(b, a);
            let len2 = dot(ab, ab);
            let t = if len2 > 0.0 {
                (dot(sub(p, a), ab) / len2).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let d = norm(sub(p, add(a, scale(ab, t))));
            if d < best {
                best = d;
                best_s = self.arclength[i - 1] + t * (self.arclength[i] - self.arclength[i - 1]);
            }
        }
        if best >= reach {
            return 0.0;
        }
        let length = self.arclength[self.arclength.len() - 1];
        let taper_length = END_TAPER.min(length / 3.0);
        let taper = smoothstep(best_s.min(length - best_s) / taper_length);
        let across =
            1.0 - smoothstep((best - self.line.fundus_half_width_mm) / self.line.wall_width_mm);
        self.line.depth_mm * taper * across
    }
}

/// One folded hemisphere in local coordinates (mm), with its unfolded surface
/// and the icosphere directions it came from.
pub(crate) struct LocalHemisphere {
    /// Icosphere directions (unit vectors).
    pub directions: Vec<Vec3>,
    /// Unfolded surface (mm).
    pub unfolded: Vec<Vec3>,
    /// Folded surface (mm).
    pub folded: Vec<Vec3>,
    /// Triangles, outward-oriented in local coordinates.
    pub triangles: Vec<[u32; 3]>,
}

/// Builds one hemisphere in local coordinates.
pub(crate) fn local_hemisphere(level: u32) -> LocalHemisphere {
    let sphere = Mesh::icosphere(level, 1.0);
    let unfolded_mesh = Mesh {
        vertices: sphere.vertices.iter().map(|&u| unfolded_point(u)).collect(),
        triangles: sphere.triangles.clone(),
    };
    let normals = unfolded_mesh.vertex_normals();
    let lines: Vec<SampledLine> = SULCI.iter().map(|l| SampledLine::new(l)).collect();
    // Each vertex's depth depends on that vertex alone, and max is exact, so
    // the result does not depend on how rayon splits the work.
    let folded: Vec<Vec3> = unfolded_mesh
        .vertices
        .par_iter()
        .zip(normals.par_iter())
        .map(|(&p, &n)| {
            let depth = lines.iter().map(|l| l.depth_at(p)).fold(0.0, f64::max);
            sub(p, scale(n, depth))
        })
        .collect();
    LocalHemisphere {
        directions: sphere.vertices,
        unfolded: unfolded_mesh.vertices,
        folded,
        triangles: sphere.triangles,
    }
}

/// Head coordinates (m) of a local point (mm) of the given hemisphere.
fn to_head(q: Vec3, hemisphere: u8) -> Vec3 {
    let side = if hemisphere == 0 { -1.0 } else { 1.0 };
    [
        side * (CENTRE_LATERAL + q[0]) * MM,
        (CENTRE_ANTERIOR + q[1]) * MM,
        (CENTRE_SUPERIOR + q[2]) * MM,
    ]
}

/// Both hemispheres of one local surface as a head-coordinate mesh (m): the
/// left hemisphere (mirrored, triangles reversed to stay outward) first.
fn both_hemispheres(local: &[Vec3], triangles: &[[u32; 3]]) -> Mesh {
    let n = local.len();
    let mut vertices = Vec::with_capacity(2 * n);
    let mut all_triangles = Vec::with_capacity(2 * triangles.len());
    for side in 0..2u8 {
        let offset = side as u32 * n as u32;
        vertices.extend(local.iter().map(|&q| to_head(q, side)));
        // Mirroring the left hemisphere (x = -lateral) reverses orientation,
        // so its triangles are listed the other way round.
        all_triangles.extend(triangles.iter().map(|&[a, b, c]| {
            if side == 0 {
                [a + offset, c + offset, b + offset]
            } else {
                [a + offset, b + offset, c + offset]
            }
        }));
    }
    Mesh {
        vertices,
        triangles: all_triangles,
    }
}

/// Builds the template cortex at the given resolution.
///
/// The result is the same, bit for bit, on every call and for every rayon
/// thread count.
pub fn template(resolution: TemplateResolution) -> Template {
    let local = local_hemisphere(resolution.icosphere_level());
    let n = local.folded.len();
    let local_region: Vec<usize> = local.directions.iter().map(|&u| region_of(u)).collect();
    let mut region = Vec::with_capacity(2 * n);
    let mut hemisphere = Vec::with_capacity(2 * n);
    for side in 0..2u8 {
        let first = side as usize * REGIONS_PER_HEMISPHERE;
        region.extend(local_region.iter().map(|&r| (first + r) as i32));
        hemisphere.extend(std::iter::repeat_n(side, n));
    }
    Template {
        mesh: both_hemispheres(&local.folded, &local.triangles),
        region,
        region_names: region_names(),
        hemisphere,
    }
}

/// The template before folding: the smooth hemisphere surfaces the folds were
/// dug into, with the same vertices and triangles in the same order as
/// [`template`]. Useful for drawing regions on a smooth surface and for
/// checking the folding.
pub fn unfolded_template(resolution: TemplateResolution) -> Mesh {
    let local = local_hemisphere(resolution.icosphere_level());
    both_hemispheres(&local.unfolded, &local.triangles)
}
