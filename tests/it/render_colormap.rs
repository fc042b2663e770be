//! Checks of the colour maps (lightness profiles, colour-vision deficiency
//! separation, Oklab conversion) and of the PNG round trip of `Image`.

use patchwise::render::colormap::{
    categorical, diverging, linear_srgb_to_oklab, oklab_to_linear_srgb, sequential, ColourTable,
    Oklab, CATEGORICAL_LEN,
};
use patchwise::render::{Image, RenderError};

/// sRGB decoding, IEC 61966-2-1:1999 (written out here, independent of the
/// library's copy).
fn decode(c: u8) -> f64 {
    let c = c as f64 / 255.0;
    if c <= 0.04045 {
        c / 12.92
    } else {
        ((c + 0.055) / 1.055).powf(2.4)
    }
}

/// Linear sRGB to CIE XYZ, the matrix of IEC 61966-2-1:1999 (D65).
fn xyz_linear([r, g, b]: [f64; 3]) -> [f64; 3] {
    [
        0.4124 * r + 0.3576 * g + 0.1805 * b,
        0.2126 * r + 0.7152 * g + 0.0722 * b,
        0.0193 * r + 0.1192 * g + 0.9505 * b,
    ]
}

/// CIE 1976 L*a*b* of linear sRGB, D65 white (Xn, Yn, Zn) = (0.95047, 1,
/// 1.08883) (CIE 15:2004).
fn lab_linear(rgb: [f64; 3]) -> [f64; 3] {
    let [x, y, z] = xyz_linear(rgb);
    let f = |t: f64| {
        let d: f64 = 6.0 / 29.0;
        if t > d * d * d {
            t.cbrt()
        } else {
            t / (3.0 * d * d) + 4.0 / 29.0
        }
    };
    let (fx, fy, fz) = (f(x / 0.95047), f(y), f(z / 1.08883));
    [116.0 * fy - 16.0, 500.0 * (fx - fy), 200.0 * (fy - fz)]
}

fn lab(rgb: [u8; 3]) -> [f64; 3] {
    lab_linear(rgb.map(decode))
}

fn delta_e76(p: [f64; 3], q: [f64; 3]) -> f64 {
    ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2)).sqrt()
}

/// Machado, Oliveira & Fernandes (2009), IEEE TVCG 15:1291, severity 1.0
/// simulation matrices on linear RGB. Matrix values from memory; each row sums
/// to 1 (white stays white), which the test below checks as a sanity test of
/// the recalled digits.
const PROTANOPIA: [[f64; 3]; 3] = [
    [0.152286, 1.052583, -0.204868],
    [0.114503, 0.786281, 0.099216],
    [-0.003882, -0.048116, 1.051998],
];
const DEUTERANOPIA: [[f64; 3]; 3] = [
    [0.367322, 0.860646, -0.227968],
    [0.280085, 0.672501, 0.047413],
    [-0.011820, 0.042940, 0.968881],
];

fn simulate(m: &[[f64; 3]; 3], rgb: [u8; 3]) -> [f64; 3] {
    let v = rgb.map(decode);
    let mut out = [0.0; 3];
    for i in 0..3 {
        out[i] = (m[i][0] * v[0] + m[i][1] * v[1] + m[i][2] * v[2]).clamp(0.0, 1.0);
    }
    out
}

#[test]
fn oklab_matches_ottosson_2020_reference_table() {
    // Ottosson (2020), "A perceptual color space for image processing", table
    // of XYZ -> Oklab test values (values from memory, printed to 3 decimals).
    // XYZ is turned into linear sRGB with the inverse matrix of IEC
    // 61966-2-1 (4 digits), so the tolerance is 0.01.
    let cases = [
        ([0.950, 1.000, 1.089], [1.000, 0.000, 0.000]),
        ([1.000, 0.000, 0.000], [0.450, 1.236, -0.019]),
        ([0.000, 1.000, 0.000], [0.922, -0.671, 0.263]),
        ([0.000, 0.000, 1.000], [0.153, -1.415, -0.449]),
    ];
    for (x, expected) in cases {
        let rgb = [
            3.2406 * x[0] - 1.5372 * x[1] - 0.4986 * x[2],
            -0.9689 * x[0] + 1.8758 * x[1] + 0.0415 * x[2],
            0.0557 * x[0] - 0.2040 * x[1] + 1.0570 * x[2],
        ];
        let c = linear_srgb_to_oklab(rgb);
        let got = [c.l, c.a, c.b];
        for k in 0..3 {
            assert!(
                (got[k] - expected[k]).abs() < 0.01,
                "XYZ {x:?}: Oklab {got:?}, expected {expected:?}"
            );
        }
        // The inverse returns the input: the post's matrices are printed to
        // 10 digits, so they invert each other to about 1e-7 (tolerance 1e-6).
        let back = oklab_to_linear_srgb(Oklab {
            l: c.l,
            a: c.a,
            b: c.b,
        });
        for k in 0..3 {
            assert!((back[k] - rgb[k]).abs() < 1e-6, "{back:?} vs {rgb:?}");
        }
    }
}

#[test]
fn sequential_lightness_is_monotone() {
    // Monotone lightness is what lets a sequential map be read as "more"
    // (common practice, no source). 8-bit rounding moves L* by at most about
    // 0.4, so with 41 samples (steps of about 1.3 L*) the decrease must be
    // strict; the range must span at least 55 L*.
    let ls: Vec<f64> = (0..=40)
        .map(|i| lab(sequential(i as f64 / 40.0))[0])
        .collect();
    for w in ls.windows(2) {
        assert!(w[1] < w[0], "L* not decreasing: {ls:?}");
    }
    eprintln!("sequential: L* {:.1} .. {:.1}", ls[0], ls[40]);
    assert!(ls[0] - ls[40] > 55.0, "L* range {} .. {}", ls[0], ls[40]);
    assert!(ls[0] > 90.0, "the start is light: L* {}", ls[0]);
}

#[test]
fn diverging_halves_are_monotone_and_symmetric() {
    // Each half darkens from the centre; the halves match in CIE L* within
    // 2.5 (our stated tolerance: both halves share one Oklab lightness
    // profile, and Oklab L and CIE L* differ a little with hue).
    let n = 40;
    let half = |sign: f64| -> Vec<f64> {
        (0..=n)
            .map(|i| lab(diverging(sign * i as f64 / n as f64))[0])
            .collect()
    };
    let (neg, pos) = (half(-1.0), half(1.0));
    for h in [&neg, &pos] {
        for w in h.windows(2) {
            assert!(w[1] < w[0], "L* not decreasing away from 0: {h:?}");
        }
    }
    let worst = neg
        .iter()
        .zip(&pos)
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    eprintln!(
        "diverging: halves differ by up to {worst:.2} L*; L* centre {:.1}, ends {:.1} / {:.1}",
        neg[0], neg[n], pos[n]
    );
    assert!(worst < 2.5, "halves differ by up to {worst} L*");
    // The centre is a light neutral: chroma in CIELAB below 2.
    let c = lab(diverging(0.0));
    assert!(c[0] > 90.0 && c[1].hypot(c[2]) < 2.0, "centre {c:?}");
    // The ends are dark enough to stand out from the centre by 35 L*.
    assert!(neg[0] - neg[n] > 35.0 && pos[0] - pos[n] > 35.0);
}

#[test]
fn machado_matrices_keep_white() {
    for m in [&PROTANOPIA, &DEUTERANOPIA] {
        for row in m.iter() {
            assert!((row.iter().sum::<f64>() - 1.0).abs() < 1e-5);
        }
    }
}

#[test]
fn diverging_ends_stay_apart_for_protanopia_and_deuteranopia() {
    // Simulated dichromats (Machado et al. 2009, severity 1.0) must still see
    // the two signs as clearly different colours: ΔE76 > 60 between the ends
    // (our stated threshold; ΔE76 ≈ 2.3 is a just-noticeable difference,
    // Sharma 2003, "Digital Color Imaging Handbook", from memory), and the
    // half-way colours (|t| = 0.5) > 30 apart.
    for (name, m) in [("protanopia", &PROTANOPIA), ("deuteranopia", &DEUTERANOPIA)] {
        for (t, threshold) in [(1.0, 60.0), (0.5, 30.0)] {
            let a = lab_linear(simulate(m, diverging(-t)));
            let b = lab_linear(simulate(m, diverging(t)));
            let d = delta_e76(a, b);
            eprintln!("{name}, t = ±{t}: ΔE76 = {d:.1}");
            assert!(d > threshold, "{name}, t = ±{t}: ΔE76 = {d}");
        }
    }
}

#[test]
fn sequential_steps_stay_visible_for_dichromats() {
    // Lightness carries the sequential map, so a dichromat still sees each
    // tenth of the range as a step of more than 5 ΔE76 (our threshold).
    for m in [&PROTANOPIA, &DEUTERANOPIA] {
        for i in 0..10 {
            let a = lab_linear(simulate(m, sequential(i as f64 / 10.0)));
            let b = lab_linear(simulate(m, sequential((i + 1) as f64 / 10.0)));
            assert!(delta_e76(a, b) > 5.0, "step {i}");
        }
    }
}

#[test]
fn categorical_neighbours_differ() {
    // Neighbours in the palette differ by ΔE76 > 20 for normal vision and by
    // more than 8 L* for everyone (our thresholds).
    for i in 0..CATEGORICAL_LEN {
        let a = lab(categorical(i));
        let b = lab(categorical(i + 1));
        assert!(delta_e76(a, b) > 20.0, "{i}");
        assert!((a[0] - b[0]).abs() > 8.0, "{i}");
    }
}

#[test]
fn colour_table_matches_the_map() {
    let t = ColourTable::diverging();
    assert_eq!(t.at(0.5), diverging(0.0));
    assert_eq!(t.at(0.0), diverging(-1.0));
    assert_eq!(t.at(1.0), diverging(1.0));
    let s = ColourTable::sequential();
    assert_eq!(s.at(1.0), sequential(1.0));
    assert_eq!(s.at(f64::NAN), sequential(0.0));
}

#[test]
fn png_round_trip_gives_the_same_pixels() {
    // Decoding with the png crate's own decoder returns the exact bytes.
    let mut img = Image::new(37, 23, [250, 250, 250, 255]).unwrap();
    for y in 0..23 {
        for x in 0..37 {
            let c = diverging((x as f64 / 36.0) * 2.0 - 1.0);
            img.set(x, y, [c[0], c[1], c[2], (y * 11) as u8]);
        }
    }
    img.blend(3, 3, [0, 0, 0, 128]);
    let bytes = img.encode_png().unwrap();
    let decoder = png::Decoder::new(std::io::Cursor::new(bytes));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!((info.width, info.height), (37, 23));
    assert_eq!(info.color_type, png::ColorType::Rgba);
    assert_eq!(&buf[..info.buffer_size()], &img.rgba[..]);
}

#[test]
fn blend_is_source_over() {
    // Porter & Duff (1984), SIGGRAPH, "over" with an opaque destination:
    // out = src·α + dst·(1 − α); 255·0.5 + 0·0.5 = 127.5 → 128 (rounded).
    let mut img = Image::new(1, 1, [0, 0, 0, 255]).unwrap();
    img.blend(0, 0, [255, 255, 255, 128]);
    let p = img.get(0, 0).unwrap();
    assert_eq!(p, [128, 128, 128, 255]);
    // Outside the image: ignored, no panic.
    img.set(5, 5, [1, 2, 3, 4]);
    img.blend(5, 5, [1, 2, 3, 4]);
}

#[test]
fn bad_sizes_are_typed_errors() {
    assert!(matches!(
        Image::new(0, 10, [0; 4]),
        Err(RenderError::ZeroSize { .. })
    ));
    assert!(matches!(
        Image::new(10, 100_000, [0; 4]),
        Err(RenderError::TooLarge { .. })
    ));
    let bad = Image {
        width: 4,
        height: 4,
        rgba: vec![0; 10],
    };
    assert!(matches!(
        bad.encode_png(),
        Err(RenderError::BufferLength { .. })
    ));
}

#[test]
fn sequential_dark_end_is_not_either_diverging_end() {
    // A share map (sequential) must not be read as a signed map: its dark end
    // stays far from both ends of the diverging map, ΔE76 > 25 (our
    // threshold, about ten just-noticeable differences; Sharma 2003, from
    // memory), for normal vision and for simulated dichromats (Machado et
    // al. 2009, severity 1.0).
    let normal = |c: [u8; 3]| lab(c);
    for end in [-1.0, 1.0] {
        let d = delta_e76(normal(sequential(1.0)), normal(diverging(end)));
        eprintln!("normal vision, sequential(1) vs diverging({end}): ΔE76 = {d:.1}");
        assert!(d > 25.0, "normal vision, diverging({end}): ΔE76 = {d}");
        for (name, m) in [("protanopia", &PROTANOPIA), ("deuteranopia", &DEUTERANOPIA)] {
            let a = lab_linear(simulate(m, sequential(1.0)));
            let b = lab_linear(simulate(m, diverging(end)));
            let d = delta_e76(a, b);
            eprintln!("{name}, sequential(1) vs diverging({end}): ΔE76 = {d:.1}");
            assert!(d > 25.0, "{name}, diverging({end}): ΔE76 = {d}");
        }
    }
}
