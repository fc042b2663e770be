//! The standard 10-20, 10-10 and 10-5 layouts, built on a sphere from the
//! proportional rule (construction described in docs/montage.md).

use super::{Montage, MontageError};
use crate::geometry::{cross, dot, normalize, scale, sub, Vec3};

/// Names accepted by [`standard`] (`10-05` is also accepted for `10-5`, the name the literature uses).
const NAMES: [&str; 3] = ["10-20", "10-10", "10-5"];

/// Angle (degrees) of 5 % of the nasion–inion or preauricular arc. Fpz and Oz lie on the
/// equator, 10 % above nasion and inion, so Fpz–Cz (40 %) spans 90° and 5 % is 11.25°.
const ARC_STEP_DEG: f64 = 11.25;

/// Angle (degrees) of 5 % of the half circumference Fpz–T7–Oz (the equator): 9°.
const EQUATOR_STEP_DEG: f64 = 9.0;

/// Row names from front (Fp, 10 % above the nasion) to back (O), one per 5 % of the
/// nasion–inion arc.
const ROWS: [&str; 17] = [
    "Fp", "AFp", "AF", "AFF", "F", "FFC", "FC", "FCC", "C", "CCP", "CP", "CPP", "P", "PPO", "PO",
    "POO", "O",
];

/// Row names used from column 7h outward on rows FFC..CPP (the temporal positions).
const TEMPORAL_ROWS: [(usize, &str); 7] = [
    (5, "FFT"),
    (6, "FT"),
    (7, "FTT"),
    (8, "T"),
    (9, "TTP"),
    (10, "TP"),
    (11, "TPP"),
];

/// The names of the built-in layouts.
pub fn standard_names() -> &'static [&'static str] {
    &NAMES
}

/// A standard layout on a sphere of `radius_m` (m) centred at the origin, Cz at +z,
/// Fpz, T7, Oz and T8 on the equator (see docs/montage.md for the construction).
///
/// `10-20`: 21 positions (the 19 of Jasper 1958 plus Fpz and Oz); `10-10`: 85
/// (Chatrian, Lettich & Nelson 1985, including the 9/10 columns, Nz and Iz); `10-5`: 345
/// (Oostenveld & Praamstra 2001). The temporal electrodes carry the 10-10 names T7, T8,
/// P7, P8 in every layout; [`Montage::find`] also accepts T3, T4, T5, T6.
pub fn standard(name: &str, radius_m: f64) -> Result<Montage, MontageError> {
    let tier = tier_of(name)?;
    if !(radius_m.is_finite() && radius_m > 0.0) {
        return Err(MontageError::InvalidRadius { radius: radius_m });
    }
    let (labels, positions): (Vec<String>, Vec<Vec3>) = ten_five_grid(&UnitSphere)?
        .into_iter()
        .filter(|e| e.tier <= tier)
        .map(|e| (e.label, scale(e.position, radius_m)))
        .unzip();
    Montage::new(labels, positions)
}

/// The layout called `name` (case and surrounding blanks ignored).
pub(super) fn tier_of(name: &str) -> Result<Tier, MontageError> {
    match name.trim().to_lowercase().as_str() {
        "10-20" => Ok(Tier::Twenty),
        "10-10" => Ok(Tier::Ten),
        "10-5" | "10-05" => Ok(Tier::Five),
        _ => Err(MontageError::UnknownStandard {
            name: name.to_string(),
            known: NAMES.to_vec(),
        }),
    }
}

/// The three layouts, each containing the coarser ones.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub(super) enum Tier {
    /// 10-20.
    Twenty,
    /// 10-10.
    Ten,
    /// 10-5.
    Five,
}

/// Where the grid's construction lines lie on a head: the proportional
/// rule (docs/montage.md) applied to a sphere ([`UnitSphere`]) or to a
/// scalp surface (`super::scalp_layout`). Left-side positions; the right
/// side is their mirror image (x → −x), so the head must be left-right
/// symmetric.
pub(super) trait GridPlacement {
    /// The midline point `steps` × 5 % of the nasion–inion arc behind Fpz
    /// (Fpz at 10 %, so `steps` = −2 is the nasion, 18 the inion).
    fn midline(&self, steps: i32) -> Result<Vec3, MontageError>;
    /// Row `r` (1..=15) at half-steps 1..=10 on the left: the section
    /// through the row's midline point and its equator points, cut into 8
    /// equal parts from the midline to the equator and continued 2 below.
    fn row_left(&self, r: usize) -> Result<Vec<Vec3>, MontageError>;
    /// The left point at latitude `lat_deg` (0, −11.25 or −22.5: the
    /// equator, or 5 % or 10 % of the nasion–inion arc below it) under the
    /// equator point at azimuth `az_deg` (degrees from Fpz, 180 at Oz).
    fn lateral(&self, lat_deg: f64, az_deg: f64) -> Result<Vec3, MontageError>;
}

/// The standard construction on the unit sphere.
struct UnitSphere;

impl GridPlacement for UnitSphere {
    fn midline(&self, steps: i32) -> Result<Vec3, MontageError> {
        Ok(midline(steps))
    }
    fn row_left(&self, r: usize) -> Result<Vec<Vec3>, MontageError> {
        Ok(row_positions(r))
    }
    fn lateral(&self, lat_deg: f64, az_deg: f64) -> Result<Vec3, MontageError> {
        Ok(from_angles(lat_deg, az_deg))
    }
}

/// One position of the 10-5 grid.
pub(super) struct Entry {
    pub(super) label: String,
    pub(super) position: Vec3,
    /// The coarsest layout that contains it.
    pub(super) tier: Tier,
}

/// Unit vector at latitude `lat` and azimuth `az` (degrees); the azimuth is measured
/// from +y (nose) toward −x (left ear).
fn from_angles(lat_deg: f64, az_deg: f64) -> Vec3 {
    let (lat, az) = (lat_deg.to_radians(), az_deg.to_radians());
    [-az.sin() * lat.cos(), az.cos() * lat.cos(), lat.sin()]
}

/// The midline point `steps` × 5 % behind Fpz along the nasion–inion great circle
/// (negative: toward the nasion).
fn midline(steps: i32) -> Vec3 {
    let t = (steps as f64 * ARC_STEP_DEG).to_radians();
    [0.0, t.cos(), t.sin()]
}

/// Mirror a left position to the right (x → −x).
fn mirror(p: Vec3) -> Vec3 {
    [-p[0], p[1], p[2]]
}

/// Column label suffixes for half-steps 1..=10 from the midline: left and right.
/// Odd half-steps are the "h" positions between two 10-10 columns.
fn column_names(half_steps: usize) -> (String, String) {
    if half_steps.is_multiple_of(2) {
        ((half_steps - 1).to_string(), half_steps.to_string())
    } else {
        (format!("{half_steps}h"), format!("{}h", half_steps + 1))
    }
}

/// Positions of row `r` (1..=15) at half-steps 1..=10 on the left: the row is the plane
/// section of the sphere through its midline point and its two equator points; the arc
/// from the midline to the left equator point is cut into 8 equal angles and continued
/// 2 more steps below the equator.
fn row_positions(r: usize) -> Vec<Vec3> {
    let m = midline(r as i32);
    let e = from_angles(0.0, 18.0 + EQUATOR_STEP_DEG * r as f64);
    let x = [1.0, 0.0, 0.0];
    // The plane contains the x axis (left–right symmetry) and the chord m–e.
    let n = normalize(cross(x, sub(m, e)));
    let center = scale(n, dot(n, m));
    let rho_u = sub(m, center);
    let rho = dot(rho_u, rho_u).sqrt();
    let u = scale(rho_u, 1.0 / rho);
    let w = [-1.0, 0.0, 0.0];
    let de = sub(e, center);
    let t_e = dot(de, w).atan2(dot(de, u));
    (1..=10)
        .map(|c| {
            let t = t_e * c as f64 / 8.0;
            let along = [
                u[0] * t.cos() + w[0] * t.sin(),
                u[1] * t.cos() + w[1] * t.sin(),
                u[2] * t.cos() + w[2] * t.sin(),
            ];
            [
                center[0] + rho * along[0],
                center[1] + rho * along[1],
                center[2] + rho * along[2],
            ]
        })
        .collect()
}

/// All 345 positions of the 10-5 grid placed by `place`, front to back, each
/// row left to right.
pub(super) fn ten_five_grid(place: &dyn GridPlacement) -> Result<Vec<Entry>, MontageError> {
    let mut out = Vec::with_capacity(345);
    let mut push = |label: String, position: Vec3, tier: Tier| {
        out.push(Entry {
            label,
            position,
            tier,
        })
    };
    // Rows below the frontal equator (latitude −22.5° and −11.25°): Nz, NFpz and their
    // neighbours at the azimuths of Fp1h (9°) and Fp1 (18°).
    for (prefix, steps, tier_z) in [("N", -2, Tier::Ten), ("NFp", -1, Tier::Five)] {
        let lat = steps as f64 * ARC_STEP_DEG;
        lateral_pair(
            &mut push,
            prefix,
            place.lateral(lat, 18.0)?,
            "1",
            "2",
            Tier::Five,
        );
        lateral_pair(
            &mut push,
            prefix,
            place.lateral(lat, 9.0)?,
            "1h",
            "2h",
            Tier::Five,
        );
        push(format!("{prefix}z"), place.midline(steps)?, tier_z);
    }
    // Fp row: it lies on the equator from Fpz to Fp1 (18°), with Fp1h halfway.
    lateral_pair(
        &mut push,
        "Fp",
        place.lateral(0.0, 18.0)?,
        "1",
        "2",
        Tier::Twenty,
    );
    lateral_pair(
        &mut push,
        "Fp",
        place.lateral(0.0, 9.0)?,
        "1h",
        "2h",
        Tier::Five,
    );
    push("Fpz".to_string(), place.midline(0)?, Tier::Twenty);
    // Rows AFp..POO.
    for (r, &row_name) in ROWS.iter().enumerate().take(16).skip(1) {
        let left = place.row_left(r)?;
        let row_tier = if r % 2 == 0 { Tier::Ten } else { Tier::Five };
        let mut row = Vec::with_capacity(21);
        for (i, &p) in left.iter().enumerate() {
            let half_steps = i + 1;
            let prefix = TEMPORAL_ROWS
                .iter()
                .find(|&&(tr, _)| tr == r && half_steps >= 7)
                .map(|&(_, name)| name)
                .unwrap_or(row_name);
            let (l, rt) = column_names(half_steps);
            let tier = if row_tier == Tier::Five || half_steps % 2 == 1 {
                Tier::Five
            } else if matches!(r, 4 | 8 | 12) && half_steps % 4 == 0 && half_steps <= 8 {
                Tier::Twenty
            } else {
                Tier::Ten
            };
            row.push((format!("{prefix}{l}"), p, format!("{prefix}{rt}"), tier));
        }
        for (l, p, _, tier) in row.iter().rev() {
            push(l.clone(), *p, *tier);
        }
        let z_tier = match r {
            4 | 8 | 12 => Tier::Twenty,
            _ => row_tier,
        };
        push(format!("{row_name}z"), place.midline(r as i32)?, z_tier);
        for (_, p, rt, tier) in &row {
            push(rt.clone(), mirror(*p), *tier);
        }
    }
    // O row on the equator, then the rows below the occipital equator (OIz, Iz).
    lateral_pair(
        &mut push,
        "O",
        place.lateral(0.0, 162.0)?,
        "1",
        "2",
        Tier::Twenty,
    );
    lateral_pair(
        &mut push,
        "O",
        place.lateral(0.0, 171.0)?,
        "1h",
        "2h",
        Tier::Five,
    );
    push("Oz".to_string(), place.midline(16)?, Tier::Twenty);
    for (prefix, steps, tier_z) in [("OI", 17, Tier::Five), ("I", 18, Tier::Ten)] {
        let lat = (16 - steps) as f64 * ARC_STEP_DEG;
        lateral_pair(
            &mut push,
            prefix,
            place.lateral(lat, 162.0)?,
            "1",
            "2",
            Tier::Five,
        );
        lateral_pair(
            &mut push,
            prefix,
            place.lateral(lat, 171.0)?,
            "1h",
            "2h",
            Tier::Five,
        );
        push(format!("{prefix}z"), place.midline(steps)?, tier_z);
    }
    Ok(out)
}

/// Push the left/right pair `{prefix}{left}` / `{prefix}{right}`: the left
/// position `p` and its mirror image.
fn lateral_pair(
    push: &mut impl FnMut(String, Vec3, Tier),
    prefix: &str,
    p: Vec3,
    left: &str,
    right: &str,
    tier: Tier,
) {
    push(format!("{prefix}{left}"), p, tier);
    push(format!("{prefix}{right}"), mirror(p), tier);
}
