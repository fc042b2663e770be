//! The fixed viewpoints of cortex pictures and their orthographic cameras.
//!
//! Head coordinates (design.md): +x toward the right ear, +y toward the nose,
//! +z up. Each view looks along a fixed direction with a fixed up vector; the
//! screen's right-hand direction is `forward × up`, so every view is a proper
//! (not mirrored) picture of the head as a viewer standing there would see it.

use crate::geometry::{cross, dot, Vec3};

/// Which side of the cortex a picture shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum View {
    /// The left hemisphere seen from the left (nose to the left of the picture).
    Left,
    /// The right hemisphere seen from the right (nose to the right).
    Right,
    /// Both hemispheres from above (nose up, right hemisphere on the right).
    Top,
    /// Both hemispheres from in front of the face (the subject's right on the
    /// left of the picture, as when facing someone).
    Front,
    /// Both hemispheres from behind (the subject's right on the right).
    Back,
    /// The left hemisphere's medial wall, seen from the midline (nose to the
    /// right).
    MedialLeft,
    /// The right hemisphere's medial wall, seen from the midline (nose to the
    /// left).
    MedialRight,
}

/// Which hemispheres a view draws.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Hemispheres {
    /// The left hemisphere only.
    Left,
    /// The right hemisphere only.
    Right,
    /// Both.
    Both,
}

impl View {
    /// Every view, in panel order.
    pub const ALL: [View; 7] = [
        View::Left,
        View::Right,
        View::MedialLeft,
        View::MedialRight,
        View::Top,
        View::Front,
        View::Back,
    ];

    /// The six views of a standard panel: both lateral and both medial
    /// surfaces, the top, and the back (where visual cortex lies).
    pub const PANEL: [View; 6] = [
        View::Left,
        View::Right,
        View::MedialLeft,
        View::MedialRight,
        View::Top,
        View::Back,
    ];

    /// The view's name in files and on the command line.
    pub fn name(self) -> &'static str {
        match self {
            View::Left => "left",
            View::Right => "right",
            View::Top => "top",
            View::Front => "front",
            View::Back => "back",
            View::MedialLeft => "medial-left",
            View::MedialRight => "medial-right",
        }
    }

    /// A caption for labels drawn around the picture (SVG or HTML).
    pub fn caption(self) -> &'static str {
        match self {
            View::Left => "left hemisphere, lateral",
            View::Right => "right hemisphere, lateral",
            View::Top => "top",
            View::Front => "front",
            View::Back => "back",
            View::MedialLeft => "left hemisphere, medial",
            View::MedialRight => "right hemisphere, medial",
        }
    }

    /// The view with this name, if any (exact, lowercase).
    pub fn from_name(name: &str) -> Option<View> {
        View::ALL.into_iter().find(|v| v.name() == name)
    }

    /// Direction the camera looks along (unit, head coordinates).
    pub fn forward(self) -> Vec3 {
        match self {
            View::Left | View::MedialRight => [1.0, 0.0, 0.0],
            View::Right | View::MedialLeft => [-1.0, 0.0, 0.0],
            View::Top => [0.0, 0.0, -1.0],
            View::Front => [0.0, -1.0, 0.0],
            View::Back => [0.0, 1.0, 0.0],
        }
    }

    /// The direction that points up in the picture (unit, orthogonal to
    /// [`View::forward`]).
    pub fn up(self) -> Vec3 {
        match self {
            View::Top => [0.0, 1.0, 0.0],
            _ => [0.0, 0.0, 1.0],
        }
    }

    /// The direction that points right in the picture: `forward × up`.
    pub fn right(self) -> Vec3 {
        cross(self.forward(), self.up())
    }

    /// Which hemispheres the view draws. Lateral and medial views draw one
    /// hemisphere, so the other never hides the medial wall.
    pub fn hemispheres(self) -> Hemispheres {
        match self {
            View::Left | View::MedialLeft => Hemispheres::Left,
            View::Right | View::MedialRight => Hemispheres::Right,
            View::Top | View::Front | View::Back => Hemispheres::Both,
        }
    }

    /// The anatomical direction at each edge of the picture, as a letter (A
    /// anterior, P posterior, L left, R right, S superior, I inferior):
    /// `[left edge, right edge, top edge, bottom edge]`, derived from
    /// [`View::right`] and [`View::up`] so that it cannot disagree with the
    /// camera.
    pub fn edge_marks(self) -> [&'static str; 4] {
        let letter = |d: Vec3| -> &'static str {
            let (axis, sign) = (0..3).map(|i| (i, d[i])).fold((0, 0.0), |best, (i, v)| {
                if v.abs() > f64::abs(best.1) {
                    (i, v)
                } else {
                    best
                }
            });
            match (axis, sign > 0.0) {
                (0, true) => "R",
                (0, false) => "L",
                (1, true) => "A",
                (1, false) => "P",
                (_, true) => "S",
                (_, false) => "I",
            }
        };
        let (r, u) = (self.right(), self.up());
        [
            letter([-r[0], -r[1], -r[2]]),
            letter(r),
            letter(u),
            letter([-u[0], -u[1], -u[2]]),
        ]
    }

    /// Screen coordinates of a point: (right, up, depth), in metres; a
    /// smaller depth is nearer the camera.
    pub fn project(self, p: Vec3) -> [f64; 3] {
        [
            dot(p, self.right()),
            dot(p, self.up()),
            dot(p, self.forward()),
        ]
    }
}
