//! The template head of our own (`--head template-bem`): inner skull, outer
//! skull and scalp built around the template cortex, with its landmarks.
//!
//! Each surface is star-shaped about one centre: a point at direction `u`
//! from the centre lies at a smooth radius `R(u)`. The inner skull is an
//! ellipsoid with a different semi-axis on each side of each axis (the two
//! halves meet with a common tangent plane); the outer skull lies a skull
//! thickness `t(u)` further out along the same ray, the scalp a constant
//! scalp thickness further. Positive radial offsets keep the surfaces
//! nested without touching, and every surface is sampled on a geodesic
//! sphere's directions (a grid of the same kind for each), so each mesh is
//! closed, one piece and outward like the sphere it came from. Numbers and their
//! sources are in docs/head_model.md ("The template head").

use crate::geometry::{dot, norm, scale, sub, Mesh, Vec3};

/// The name that selects this head (`--head template-bem`).
pub const TEMPLATE_BEM_NAME: &str = "template-bem";

/// Millimetres to metres.
const MM: f64 = 1e-3;

/// Centre of the surfaces (mm, head coordinates): the template cortex spans
/// z from −41 to 47 mm, its base hangs lower than its top rises.
const CENTRE_MM: Vec3 = [0.0, 0.0, -5.0];

/// Inner skull semi-axes (mm): lateral, anterior, posterior, superior,
/// inferior. Chosen to hold the template cortex (x within ±61.2 mm, y from
/// −75 to 73 mm) with at least 5 mm to spare (5.1 mm measured), and to give
/// the scalp a length/width ratio of 1.2625 (see [`LENGTH_WIDTH_RATIO`]).
const INNER_LATERAL: f64 = 70.0;
const INNER_ANTERIOR: f64 = 86.0;
const INNER_POSTERIOR: f64 = 90.0;
const INNER_SUPERIOR: f64 = 72.0;
const INNER_INFERIOR: f64 = 70.0;

/// Skull thickness (mm) at the front and at the vertex; it grows to
/// `+ SKULL_BACK_EXTRA` at the back and falls to `− SKULL_SIDE_THINNING` at
/// the sides (typical adult values recalled from memory: the occipital bone
/// thickest, the temporal squama thinnest).
const SKULL_MM: f64 = 6.0;
const SKULL_BACK_EXTRA: f64 = 2.0;
const SKULL_SIDE_THINNING: f64 = 2.0;
/// Scalp thickness (mm), as in the default sphere head.
const SCALP_MM: f64 = 6.0;

/// Height (mm) of the nasion, inion and preauricular points: the four are
/// put in one horizontal plane (a simplification; in adults they lie near
/// one plane, from memory).
const LANDMARK_HEIGHT_MM: f64 = -32.0;

/// Geodesic-sphere frequency of each surface, innermost first:
/// 10·f² + 2 vertices, so 2 562, 1 442 and 1 442. The inner skull, nearest the
/// sources, is the finest.
pub const TEMPLATE_HEAD_FREQUENCIES: [u32; 3] = [16, 12, 12];

/// Conductivities (S/m), innermost compartment first: brain, skull, scalp,
/// the default sphere head's values (docs/head_model.md; brain and CSF
/// merged as in the accuracy table there).
pub const TEMPLATE_HEAD_CONDUCTIVITIES: [f64; 3] = [0.47, 0.02, 0.41];

/// Surface names, innermost first (messages, notes and the `head_model`
/// attribute).
pub const TEMPLATE_HEAD_SURFACES: [&str; 3] = [
    "template-bem inner skull",
    "template-bem outer skull",
    "template-bem scalp",
];

/// The scalp's length (front to back) over its width (side to side), as
/// built: (86 + 6 + 6 + 90 + 8 + 6) / (2 · (70 + 4 + 6)) = 202 / 160.
/// Adult cephalic indices (width/length) lie around 0.75–0.83 (from memory),
/// a ratio of 1.20–1.33.
pub const LENGTH_WIDTH_RATIO: f64 = 202.0 / 160.0;

/// One of the three surfaces.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TemplateSurface {
    /// The inside of the skull (the brain compartment's boundary).
    InnerSkull,
    /// The outside of the skull.
    OuterSkull,
    /// The outside of the scalp, where the electrodes sit.
    Scalp,
}

impl TemplateSurface {
    /// Innermost first.
    pub const ALL: [TemplateSurface; 3] = [
        TemplateSurface::InnerSkull,
        TemplateSurface::OuterSkull,
        TemplateSurface::Scalp,
    ];
}

/// The skull thickness (mm) along the unit direction `u` from the centre:
/// 6 mm at the front and the vertex, 8 mm straight back, 4 mm straight to
/// either side, smooth in between.
pub fn skull_thickness_mm(u: Vec3) -> f64 {
    let back = (-u[1]).max(0.0);
    SKULL_MM + SKULL_BACK_EXTRA * back * back - SKULL_SIDE_THINNING * u[0] * u[0]
}

/// The radius (mm) of `surface` along the unit direction `u`.
pub fn radius_mm(surface: TemplateSurface, u: Vec3) -> f64 {
    let semi = |c: f64, plus: f64, minus: f64| c / if c >= 0.0 { plus } else { minus };
    let q = [
        u[0] / INNER_LATERAL,
        semi(u[1], INNER_ANTERIOR, INNER_POSTERIOR),
        semi(u[2], INNER_SUPERIOR, INNER_INFERIOR),
    ];
    let inner = 1.0 / dot(q, q).sqrt();
    match surface {
        TemplateSurface::InnerSkull => inner,
        TemplateSurface::OuterSkull => inner + skull_thickness_mm(u),
        TemplateSurface::Scalp => inner + skull_thickness_mm(u) + SCALP_MM,
    }
}

/// The centre of the surfaces (m).
pub fn template_head_centre() -> Vec3 {
    scale(CENTRE_MM, MM)
}

/// The point (m) of `surface` along the unit direction `u` from the centre.
pub fn surface_point(surface: TemplateSurface, u: Vec3) -> Vec3 {
    let r = radius_mm(surface, u) * MM;
    let c = template_head_centre();
    [c[0] + r * u[0], c[1] + r * u[1], c[2] + r * u[2]]
}

/// True when `p` (m) lies strictly inside `surface`.
pub fn is_inside(surface: TemplateSurface, p: Vec3) -> bool {
    let d = sub(p, template_head_centre());
    let r = norm(d);
    r == 0.0 || r < radius_mm(surface, scale(d, 1.0 / r)) * MM
}

/// Where the ray from `origin` (m, inside `surface`) along `direction`
/// first leaves `surface`, to 1e-9 m; `None` when `origin` is not inside,
/// the direction is zero, or the ray has not left within 1 m.
pub fn ray_exit(surface: TemplateSurface, origin: Vec3, direction: Vec3) -> Option<Vec3> {
    let length = norm(direction);
    if !is_inside(surface, origin) || length.is_nan() || length <= 0.0 {
        return None;
    }
    let d = scale(direction, 1.0 / length);
    let at = |t: f64| {
        [
            origin[0] + t * d[0],
            origin[1] + t * d[1],
            origin[2] + t * d[2],
        ]
    };
    // March out in 1 mm steps (thinner than any feature), then bisect.
    let step = 1e-3;
    let mut inside_t = 0.0;
    let mut outside_t = None;
    for k in 1..=1000 {
        let t = k as f64 * step;
        if !is_inside(surface, at(t)) {
            outside_t = Some(t);
            break;
        }
        inside_t = t;
    }
    let mut outside_t = outside_t?;
    while outside_t - inside_t > 1e-9 {
        let mid = 0.5 * (inside_t + outside_t);
        if is_inside(surface, at(mid)) {
            inside_t = mid;
        } else {
            outside_t = mid;
        }
    }
    Some(at(0.5 * (inside_t + outside_t)))
}

/// The template head's anatomical landmarks (m, head coordinates), on its
/// scalp.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Landmarks {
    /// Nasion: on the midline at the front.
    pub nasion: Vec3,
    /// Inion: on the midline at the back.
    pub inion: Vec3,
    /// Left preauricular point.
    pub lpa: Vec3,
    /// Right preauricular point.
    pub rpa: Vec3,
}

/// The landmarks: the scalp points straight ahead of, behind and to either
/// side of the point (0, 0, −32 mm), so the nasion and inion lie on the
/// midline and the preauricular points on the line x through y = 0.
pub fn template_landmarks() -> Landmarks {
    let o = [0.0, 0.0, LANDMARK_HEIGHT_MM * MM];
    // The origin is inside the scalp and each ray leaves it within the
    // head's size, so these cannot miss; fall back to the origin all the same.
    let exit = |d: Vec3| ray_exit(TemplateSurface::Scalp, o, d).unwrap_or(o);
    Landmarks {
        nasion: exit([0.0, 1.0, 0.0]),
        inion: exit([0.0, -1.0, 0.0]),
        lpa: exit([-1.0, 0.0, 0.0]),
        rpa: exit([1.0, 0.0, 0.0]),
    }
}

/// The three surfaces as meshes (m, outward), innermost first: geodesic
/// spheres of [`TEMPLATE_HEAD_FREQUENCIES`] mapped onto each surface.
pub fn template_head_surfaces() -> Vec<Mesh> {
    TemplateSurface::ALL
        .iter()
        .zip(TEMPLATE_HEAD_FREQUENCIES)
        .map(|(&surface, frequency)| {
            let sphere = Mesh::geodesic_sphere(frequency, 1.0);
            Mesh {
                vertices: sphere
                    .vertices
                    .iter()
                    .map(|&u| surface_point(surface, u))
                    .collect(),
                triangles: sphere.triangles,
            }
        })
        .collect()
}
