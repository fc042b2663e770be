//! The standard layouts placed on a scalp surface by the proportional rule:
//! the same construction as on the sphere (docs/montage.md), with every
//! angle replaced by a percentage of an arc measured along the scalp
//! (Jasper 1958, Electroencephalogr Clin Neurophysiol 10:371, for the
//! 10-20 rule; Chatrian, Lettich & Nelson 1985 and Oostenveld & Praamstra
//! 2001 for the finer layouts).
//!
//! - The midline: the scalp section through nasion and inion over the
//!   vertex (the plane x = 0); Fpz at 10 %, Cz at 50 %, Oz at 90 %.
//! - The coronal arc: the section through the preauricular points and Cz;
//!   T7 and T8 at 10 % from either end.
//! - The equator: the section through Fpz, T7 and Oz; Fpz–T7 and T7–Oz each
//!   cut into 5 equal parts (10 % of the half circumference each).
//! - Each row: the section through its midline point containing the
//!   left–right direction (as on the sphere), cut into 8 equal parts from
//!   the midline to the equator and continued 2 parts below.
//! - Below the equator: down the vertical section through the equator
//!   point, 5 % of the nasion–inion arc per step.
//!
//! The scalp is given as a ray caster (`exit(origin, direction)`, metres),
//! and must be left-right symmetric about x = 0 (the right side is the
//! mirror image of the left).

use super::standard::{ten_five_grid, GridPlacement};
use super::{Montage, MontageError};
use crate::geometry::{add, cross, dot, norm, normalize, scale, sub, Vec3};

/// Samples per radian along a section.
const SAMPLES_PER_RADIAN: f64 = 600.0;

/// The landmarks a layout is placed from (m, head coordinates).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScalpLandmarks {
    /// Nasion (on the midline, x = 0).
    pub nasion: Vec3,
    /// Inion (on the midline, x = 0).
    pub inion: Vec3,
    /// Left preauricular point.
    pub lpa: Vec3,
    /// Right preauricular point.
    pub rpa: Vec3,
}

/// Where a ray from a point inside the scalp along a direction leaves it
/// (m), or `None`.
pub type ScalpExit<'a> = &'a dyn Fn(Vec3, Vec3) -> Option<Vec3>;

/// A plane section of the scalp sampled by rays from `origin` at angles
/// 0..=`end` (rad) in the plane of the unit vectors `a` (angle 0) and `b`
/// (angle π/2): the arc length (of the polyline through the samples) from
/// angle 0 to each sample.
struct Section<'a> {
    exit: ScalpExit<'a>,
    origin: Vec3,
    a: Vec3,
    b: Vec3,
    angles: Vec<f64>,
    lengths: Vec<f64>,
}

impl<'a> Section<'a> {
    fn new(
        exit: ScalpExit<'a>,
        origin: Vec3,
        a: Vec3,
        b: Vec3,
        end: f64,
        what: &str,
    ) -> Result<Self, MontageError> {
        let n = ((end * SAMPLES_PER_RADIAN).ceil() as usize).max(2);
        let mut angles = Vec::with_capacity(n + 1);
        let mut previous: Option<Vec3> = None;
        let mut lengths = Vec::with_capacity(n + 1);
        for k in 0..=n {
            let angle = end * k as f64 / n as f64;
            let direction = add(scale(a, angle.cos()), scale(b, angle.sin()));
            let p = exit(origin, direction).ok_or_else(|| MontageError::OffScalp {
                what: what.to_string(),
            })?;
            let length = match previous {
                Some(q) => lengths[lengths.len() - 1] + norm(sub(p, q)),
                None => 0.0,
            };
            angles.push(angle);
            previous = Some(p);
            lengths.push(length);
        }
        Ok(Section {
            exit,
            origin,
            a,
            b,
            angles,
            lengths,
        })
    }

    /// The angle of `p` (a point of the plane) in [0, 2π).
    fn angle_of(&self, p: Vec3) -> f64 {
        let d = sub(p, self.origin);
        dot(d, self.b)
            .atan2(dot(d, self.a))
            .rem_euclid(std::f64::consts::TAU)
    }

    /// Arc length from angle 0 to `angle`.
    fn length_at(&self, angle: f64) -> f64 {
        let i = self
            .angles
            .partition_point(|&t| t <= angle)
            .clamp(1, self.angles.len() - 1);
        let (t0, t1) = (self.angles[i - 1], self.angles[i]);
        let w = ((angle - t0) / (t1 - t0)).clamp(0.0, 1.0);
        self.lengths[i - 1] + w * (self.lengths[i] - self.lengths[i - 1])
    }

    /// The scalp point at arc length `s` from angle 0 (interpolated between
    /// samples, then put back on the scalp along its ray).
    fn at_length(&self, s: f64, what: &str) -> Result<Vec3, MontageError> {
        let off = || MontageError::OffScalp {
            what: what.to_string(),
        };
        if !(s >= 0.0 && s <= self.lengths[self.lengths.len() - 1]) {
            return Err(off());
        }
        let i = self
            .lengths
            .partition_point(|&l| l <= s)
            .clamp(1, self.lengths.len() - 1);
        let (l0, l1) = (self.lengths[i - 1], self.lengths[i]);
        let w = if l1 > l0 { (s - l0) / (l1 - l0) } else { 0.0 };
        let angle = self.angles[i - 1] + w * (self.angles[i] - self.angles[i - 1]);
        let direction = add(scale(self.a, angle.cos()), scale(self.b, angle.sin()));
        (self.exit)(self.origin, direction).ok_or_else(off)
    }
}

/// The unit vector of `v` with its component along the unit `a` removed.
fn perpendicular(v: Vec3, a: Vec3) -> Vec3 {
    normalize(sub(v, scale(a, dot(v, a))))
}

/// The proportional construction on one scalp.
struct ScalpPlacement<'a> {
    exit: ScalpExit<'a>,
    /// Midline from the nasion over the vertex to the inion.
    midline: Section<'a>,
    /// Its length.
    midline_length: f64,
    /// Equator from Fpz over T7 to Oz, and the arc lengths to T7 and Oz.
    equator: Section<'a>,
    to_t7: f64,
    to_oz: f64,
    /// A point inside the head on the vertical through the centre.
    centre: Vec3,
}

impl<'a> ScalpPlacement<'a> {
    fn new(
        exit: ScalpExit<'a>,
        landmarks: &ScalpLandmarks,
        centre: Vec3,
    ) -> Result<Self, MontageError> {
        let ScalpLandmarks {
            nasion,
            inion,
            lpa,
            rpa,
        } = *landmarks;
        let up = [0.0, 0.0, 1.0];
        let a = normalize(sub(nasion, centre));
        let b = perpendicular(up, a);
        let probe = Section::new(exit, centre, a, b, 0.0, "the nasion")?;
        let inion_angle = probe.angle_of(inion);
        let midline = Section::new(exit, centre, a, b, inion_angle, "the midline")?;
        let midline_length = midline.length_at(inion_angle);
        let at_percent = |p: f64, what: &str| midline.at_length(midline_length * p / 100.0, what);
        let cz = at_percent(50.0, "Cz")?;
        let (fpz, oz) = (at_percent(10.0, "Fpz")?, at_percent(90.0, "Oz")?);
        // Coronal arc: from the left preauricular point over Cz to the right.
        let o = scale(add(lpa, rpa), 0.5);
        let a = normalize(sub(lpa, o));
        let b = perpendicular(sub(cz, o), a);
        let coronal = Section::new(exit, o, a, b, std::f64::consts::PI, "the coronal arc")?;
        let coronal_length = coronal.length_at(coronal.angle_of(rpa));
        let t7 = coronal.at_length(0.1 * coronal_length, "T7")?;
        // Equator: from Fpz over T7 to Oz, in the plane of the three.
        let o = scale(add(fpz, oz), 0.5);
        let a = normalize(sub(fpz, o));
        let bend = norm(cross(a, sub(t7, o)));
        if bend.is_nan() || bend <= 0.0 {
            return Err(MontageError::OffScalp {
                what: "the equator".to_string(),
            });
        }
        let b = perpendicular(sub(t7, o), a);
        let probe = Section::new(exit, o, a, b, 0.0, "the equator")?;
        let oz_angle = probe.angle_of(oz);
        let equator = Section::new(exit, o, a, b, oz_angle, "the equator")?;
        let to_t7 = equator.length_at(equator.angle_of(t7));
        let to_oz = equator.length_at(oz_angle);
        Ok(ScalpPlacement {
            exit,
            midline,
            midline_length,
            equator,
            to_t7,
            to_oz,
            centre,
        })
    }

    /// The left equator point at `percent` of the half circumference from
    /// Fpz (50 at T7, 100 at Oz).
    fn equator_left(&self, percent: f64) -> Result<Vec3, MontageError> {
        let s = if percent <= 50.0 {
            self.to_t7 * percent / 50.0
        } else {
            self.to_t7 + (self.to_oz - self.to_t7) * (percent - 50.0) / 50.0
        };
        self.equator.at_length(s, "the equator")
    }
}

impl GridPlacement for ScalpPlacement<'_> {
    fn midline(&self, steps: i32) -> Result<Vec3, MontageError> {
        let percent = 10.0 + 5.0 * f64::from(steps);
        self.midline
            .at_length(self.midline_length * percent / 100.0, "the midline")
    }

    fn row_left(&self, r: usize) -> Result<Vec<Vec3>, MontageError> {
        let m = self.midline(r as i32)?;
        let e = self.equator_left(10.0 + 5.0 * r as f64)?;
        // The row's plane holds e and the left-right direction, so the
        // midpoint of e and its mirror image (0, e_y, e_z) lies in it.
        let o = [0.0, e[1], e[2]];
        let a = normalize(sub(m, o));
        let b = [-1.0, 0.0, 0.0];
        let what = format!("row {r}");
        let row = Section::new(self.exit, o, a, b, std::f64::consts::PI, &what)?;
        let step = row.length_at(row.angle_of(e)) / 8.0;
        (1..=10)
            .map(|c| row.at_length(step * c as f64, &what))
            .collect()
    }

    fn lateral(&self, lat_deg: f64, az_deg: f64) -> Result<Vec3, MontageError> {
        // 18° of azimuth is 10 % of the half circumference; 11.25° of
        // latitude is 5 % of the nasion–inion arc (as on the sphere).
        let e = self.equator_left(az_deg / 1.8)?;
        let below = -lat_deg / 11.25;
        if below <= 0.0 {
            return Ok(e);
        }
        let o = [self.centre[0], self.centre[1], e[2]];
        let a = normalize(sub(e, o));
        let down = Section::new(
            self.exit,
            o,
            a,
            [0.0, 0.0, -1.0],
            std::f64::consts::FRAC_PI_2,
            "below the equator",
        )?;
        down.at_length(below * 0.05 * self.midline_length, "below the equator")
    }
}

/// The standard layout `name` (10-20, 10-10 or 10-5) placed on a
/// left-right symmetric scalp given by `exit` from its `landmarks`;
/// `centre` (m) is a point inside the head on the midline, above the
/// landmarks' plane, from which the midline is swept. Positions in metres.
pub fn standard_on_scalp(
    name: &str,
    exit: ScalpExit<'_>,
    landmarks: &ScalpLandmarks,
    centre: Vec3,
) -> Result<Montage, MontageError> {
    let tier = super::standard::tier_of(name)?;
    let placement = ScalpPlacement::new(exit, landmarks, centre)?;
    let (labels, positions): (Vec<String>, Vec<Vec3>) = ten_five_grid(&placement)?
        .into_iter()
        .filter(|e| e.tier <= tier)
        .map(|e| (e.label, e.position))
        .unzip();
    Montage::new(labels, positions)
}

/// The standard layout `name` on the scalp of the template head
/// (`--head template-bem`), placed from its own landmarks. Positions in
/// metres, head coordinates.
pub fn standard_on_template_head(name: &str) -> Result<Montage, MontageError> {
    use crate::head::template_head::{
        ray_exit, template_head_centre, template_landmarks, TemplateSurface,
    };
    let l = template_landmarks();
    let exit = |origin: Vec3, direction: Vec3| ray_exit(TemplateSurface::Scalp, origin, direction);
    standard_on_scalp(
        name,
        &exit,
        &ScalpLandmarks {
            nasion: l.nasion,
            inion: l.inion,
            lpa: l.lpa,
            rpa: l.rpa,
        },
        template_head_centre(),
    )
}
