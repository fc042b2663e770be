//! Our colour maps, built in the Oklab colour space: a diverging map for signed
//! maps, a sequential map for shares, a categorical palette, and lookup tables.
//!
//! Oklab and its conversion from linear sRGB follow Ottosson (2020), "A
//! perceptual color space for image processing" (blog post); the sRGB transfer
//! curve is the one of IEC 61966-2-1:1999. Design notes, the lightness
//! profiles and the colour-vision reasoning are in `docs/pictures.md`.

/// A colour in Oklab: lightness `l` (0 black, 1 white) and the opponent axes
/// `a` (green to red) and `b` (blue to yellow).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Oklab {
    /// Perceived lightness, 0 to 1.
    pub l: f64,
    /// Green (negative) to red (positive).
    pub a: f64,
    /// Blue (negative) to yellow (positive).
    pub b: f64,
}

impl Oklab {
    /// The colour with lightness `l`, chroma `c` and hue angle `hue_deg`
    /// (degrees, counter-clockwise from +a).
    pub fn from_lch(l: f64, c: f64, hue_deg: f64) -> Oklab {
        let h = hue_deg.to_radians();
        Oklab {
            l,
            a: c * h.cos(),
            b: c * h.sin(),
        }
    }
}

/// sRGB transfer, encoded value (0..1) to linear light (IEC 61966-2-1).
pub fn srgb_to_linear(c: f64) -> f64 {
    if c <= 0.04045 {
        c / 12.92
    } else {
        ((c + 0.055) / 1.055).powf(2.4)
    }
}

/// sRGB transfer, linear light (0..1) to encoded value (IEC 61966-2-1).
pub fn linear_to_srgb(c: f64) -> f64 {
    if c <= 0.003_130_8 {
        12.92 * c
    } else {
        1.055 * c.powf(1.0 / 2.4) - 0.055
    }
}

/// Linear sRGB (each 0..1) to Oklab (Ottosson 2020, matrices M1 and M2
/// combined with the sRGB primaries, as given in the post).
pub fn linear_srgb_to_oklab(rgb: [f64; 3]) -> Oklab {
    let [r, g, b] = rgb;
    let l = 0.412_221_470_8 * r + 0.536_332_536_3 * g + 0.051_445_992_9 * b;
    let m = 0.211_903_498_2 * r + 0.680_699_545_1 * g + 0.107_396_956_6 * b;
    let s = 0.088_302_461_9 * r + 0.281_718_837_6 * g + 0.629_978_700_5 * b;
    let (l, m, s) = (l.cbrt(), m.cbrt(), s.cbrt());
    Oklab {
        l: 0.210_454_255_3 * l + 0.793_617_785_0 * m - 0.004_072_046_8 * s,
        a: 1.977_998_495_1 * l - 2.428_592_205_0 * m + 0.450_593_709_9 * s,
        b: 0.025_904_037_1 * l + 0.782_771_766_2 * m - 0.808_675_766_0 * s,
    }
}

/// Oklab to linear sRGB (Ottosson 2020, the inverse matrices of the post).
/// Components may fall outside 0..1 when the colour is outside the sRGB gamut.
pub fn oklab_to_linear_srgb(c: Oklab) -> [f64; 3] {
    let l = c.l + 0.396_337_777_4 * c.a + 0.215_803_757_3 * c.b;
    let m = c.l - 0.105_561_345_8 * c.a - 0.063_854_172_8 * c.b;
    let s = c.l - 0.089_484_177_5 * c.a - 1.291_485_548_0 * c.b;
    let (l, m, s) = (l * l * l, m * m * m, s * s * s);
    [
        4.076_741_662_1 * l - 3.307_711_591_3 * m + 0.230_969_929_2 * s,
        -1.268_438_004_6 * l + 2.609_757_401_1 * m - 0.341_319_396_5 * s,
        -0.004_196_086_3 * l - 0.703_418_614_7 * m + 1.707_614_701_0 * s,
    ]
}

/// Is a linear sRGB colour inside the gamut (each component in 0..1, with a
/// hair of slack for rounding)?
fn in_gamut(rgb: [f64; 3]) -> bool {
    rgb.iter().all(|&v| (-1e-9..=1.0 + 1e-9).contains(&v))
}

/// Linear sRGB (0..1) to 8-bit sRGB.
pub fn linear_srgb_to_bytes(rgb: [f64; 3]) -> [u8; 3] {
    rgb.map(|v| (linear_to_srgb(v.clamp(0.0, 1.0)) * 255.0).round() as u8)
}

/// 8-bit sRGB to linear sRGB (0..1).
pub fn bytes_to_linear_srgb(rgb: [u8; 3]) -> [f64; 3] {
    rgb.map(|v| srgb_to_linear(v as f64 / 255.0))
}

/// The 8-bit sRGB colour of lightness `l`, chroma `c` and hue `hue_deg` in
/// Oklab, with the chroma reduced (lightness and hue kept) until it fits the
/// sRGB gamut. Keeping the lightness exact is what keeps the maps' lightness
/// profiles exact.
pub fn oklch_to_bytes(l: f64, c: f64, hue_deg: f64) -> [u8; 3] {
    let l = l.clamp(0.0, 1.0);
    let mut rgb = oklab_to_linear_srgb(Oklab::from_lch(l, c, hue_deg));
    if !in_gamut(rgb) {
        // Bisection on the chroma: the grey of the same lightness (c = 0) is
        // always in gamut, so the boundary lies between 0 and c.
        let (mut lo, mut hi) = (0.0, c);
        for _ in 0..40 {
            let mid = 0.5 * (lo + hi);
            if in_gamut(oklab_to_linear_srgb(Oklab::from_lch(l, mid, hue_deg))) {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        rgb = oklab_to_linear_srgb(Oklab::from_lch(l, lo, hue_deg));
    }
    linear_srgb_to_bytes(rgb)
}

/// Oklab lightness of the diverging map's light neutral centre.
pub const DIVERGING_CENTRE_L: f64 = 0.965;
/// Oklab lightness of both ends of the diverging map.
pub const DIVERGING_END_L: f64 = 0.48;
/// Oklab chroma at both ends of the diverging map.
pub const DIVERGING_END_C: f64 = 0.16;
/// Hue (degrees in Oklab) of the negative half: a clear blue.
pub const DIVERGING_NEGATIVE_HUE: f64 = 258.0;
/// Hue (degrees in Oklab) of the positive half: an orange-red.
pub const DIVERGING_POSITIVE_HUE: f64 = 42.0;

/// The diverging map: `t` in [-1, 1] (clamped; NaN gives the centre), blue at
/// -1, a light neutral at 0, orange-red at +1.
///
/// In each half the Oklab lightness falls linearly from the centre to the end
/// and the chroma rises with a gentle ease (`|t|^0.8`) at a fixed hue, so the
/// two halves have the same lightness profile and differ in hue only: the
/// sign reads as hue, the magnitude as darkness.
pub fn diverging(t: f64) -> [u8; 3] {
    let t = if t.is_nan() { 0.0 } else { t.clamp(-1.0, 1.0) };
    let u = t.abs();
    let l = DIVERGING_CENTRE_L + (DIVERGING_END_L - DIVERGING_CENTRE_L) * u;
    let c = DIVERGING_END_C * u.powf(0.8);
    let hue = if t < 0.0 {
        DIVERGING_NEGATIVE_HUE
    } else {
        DIVERGING_POSITIVE_HUE
    };
    oklch_to_bytes(l, c, hue)
}

/// Control points of the sequential map: (t, Oklab chroma, hue in degrees).
/// The hue walks from a pale sand through olive and moss green to a deep
/// spruce teal; the lightness is set separately, linear in `t`. The walk
/// turns towards green and teal, away from the usual light-yellow-to-dark-
/// purple walks of general plotting tools, and away from both hues of
/// [`diverging`] (258° and 42°), so a share map is never read as a signed one.
const SEQUENTIAL_STOPS: [(f64, f64, f64); 5] = [
    (0.0, 0.045, 95.0),
    (0.3, 0.11, 115.0),
    (0.6, 0.13, 145.0),
    (0.85, 0.11, 175.0),
    (1.0, 0.09, 195.0),
];
/// Oklab lightness of the sequential map at t = 0.
pub const SEQUENTIAL_START_L: f64 = 0.96;
/// Oklab lightness of the sequential map at t = 1.
pub const SEQUENTIAL_END_L: f64 = 0.34;

/// The sequential map for values >= 0: `t` in [0, 1] (clamped; NaN gives 0),
/// pale sand at 0 through olive and moss green to deep spruce teal at 1.
///
/// The Oklab lightness falls linearly with `t`, so larger always reads darker;
/// chroma and hue are interpolated piecewise linearly between a few stops.
pub fn sequential(t: f64) -> [u8; 3] {
    let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
    let l = SEQUENTIAL_START_L + (SEQUENTIAL_END_L - SEQUENTIAL_START_L) * t;
    let mut c = SEQUENTIAL_STOPS[0].1;
    let mut h = SEQUENTIAL_STOPS[0].2;
    for w in SEQUENTIAL_STOPS.windows(2) {
        let (t0, c0, h0) = w[0];
        let (t1, c1, h1) = w[1];
        if t >= t0 && t <= t1 {
            let f = (t - t0) / (t1 - t0);
            c = c0 + (c1 - c0) * f;
            h = h0 + (h1 - h0) * f;
            break;
        }
    }
    oklch_to_bytes(l, c, h)
}

/// Number of colours in [`categorical`] before it repeats.
pub const CATEGORICAL_LEN: usize = 8;

/// A categorical palette for region outlines and labels: eight hues 45°
/// apart in Oklab, visited in steps of 135° so that neighbours in the list
/// are far apart in hue, and alternating between two lightness levels so
/// that neighbours also differ in lightness (which survives any colour
/// deficiency). Index `i` wraps around.
pub fn categorical(i: usize) -> [u8; 3] {
    let k = i % CATEGORICAL_LEN;
    let l = if k.is_multiple_of(2) { 0.58 } else { 0.74 };
    let hue = 25.0 + 45.0 * ((3 * k) % CATEGORICAL_LEN) as f64;
    oklch_to_bytes(l, 0.12, hue)
}

/// A colour map tabulated at evenly spaced points, for fast lookup in pixel
/// loops (evaluating the Oklab conversion per pixel costs a cube root and a
/// power per channel).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ColourTable {
    entries: Vec<[u8; 3]>,
}

impl ColourTable {
    /// Tabulates `map` at `n` points (at least 2) evenly spaced over
    /// `[lo, hi]`.
    pub fn new(map: fn(f64) -> [u8; 3], lo: f64, hi: f64, n: usize) -> ColourTable {
        let n = n.max(2);
        let entries = (0..n)
            .map(|i| map(lo + (hi - lo) * i as f64 / (n - 1) as f64))
            .collect();
        ColourTable { entries }
    }

    /// The diverging map over [-1, 1] with 1025 entries (0 falls on an entry).
    pub fn diverging() -> ColourTable {
        ColourTable::new(diverging, -1.0, 1.0, 1025)
    }

    /// The sequential map over [0, 1] with 1024 entries.
    pub fn sequential() -> ColourTable {
        ColourTable::new(sequential, 0.0, 1.0, 1024)
    }

    /// The colour at fraction `f` of the table's range (clamped to [0, 1];
    /// NaN gives the first entry), nearest entry.
    pub fn at(&self, f: f64) -> [u8; 3] {
        let f = if f.is_nan() { 0.0 } else { f.clamp(0.0, 1.0) };
        let i = (f * (self.entries.len() - 1) as f64).round() as usize;
        self.entries[i.min(self.entries.len() - 1)]
    }

    /// Number of entries.
    pub fn len(&self) -> usize {
        self.entries.len()
    }

    /// Always false: a table has at least two entries.
    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }
}
