//! Charts as SVG: well-formed XML of the stated size, escaped text, nice-number ticks
//! (Heckbert 1990), bar lengths proportional to shares, the path drawn in order of λ.

use crate::support::render::{keep, parse_svg, Element};
use base64::Engine;
use patchwise::render::charts::{
    heatmap_svg, region_shares_svg, regularisation_path_svg, HeatmapOptions, HeatmapScale,
    PathChartOptions, PathSample, RegionBar, RegionSharesOptions,
};
use patchwise::render::colormap::{diverging, sequential};
use patchwise::render::svg::{Attrs, Svg};
use patchwise::render::ticks::{log_ticks, nice_number, nice_ticks};
use patchwise::render::FigureError;

fn points(polyline: &Element) -> Vec<(f64, f64)> {
    polyline.attrs["points"]
        .split_whitespace()
        .map(|p| {
            let (x, y) = p.split_once(',').unwrap();
            (x.parse().unwrap(), y.parse().unwrap())
        })
        .collect()
}

fn bars() -> Vec<RegionBar> {
    let names = [
        "precentral L",
        "postcentral L",
        "superior parietal L",
        "supplementary motor",
        "a region with a very long name that will be shortened",
    ];
    let shares = [0.42, 0.21, 0.12, 0.07, 0.031];
    names
        .iter()
        .zip(shares)
        .enumerate()
        .map(|(i, (n, s))| RegionBar {
            name: n.to_string(),
            share: s,
            interval: Some([s * 0.7, s * 1.25]),
            selection_frequency: Some(1.0 - 0.2 * i as f64),
        })
        .collect()
}

#[test]
fn nice_numbers_follow_heckbert_1990() {
    // Heckbert 1990, Graphics Gems "Nice numbers for graph labels": nicenum rounds to
    // 1/2/5/10 × 10^k with cut points 1.5, 3, 7 (round) or takes the next ≥ value
    // (cut points 1, 2, 5) (thresholds from memory of the published C code). Exact.
    assert_eq!(nice_number(0.25, true), 0.2);
    assert_eq!(nice_number(15.9, false), 20.0);
    assert_eq!(nice_number(700.0, true), 1000.0);
    assert_eq!(nice_number(3.0, true), 5.0);
    assert_eq!(nice_number(5.0, false), 5.0);
}

#[test]
fn loose_ticks_match_hand_worked_examples() {
    // Heckbert 1990 loose labelling, worked by hand (values rounded to the tick
    // decimals, so the comparison is exact):
    // [0, 1], 5 ticks: range nice(1) = 1, step nice(0.25, round) = 0.2 → 0, 0.2, …, 1.
    let t = nice_ticks(0.0, 1.0, 5).unwrap();
    assert_eq!(t.values, vec![0.0, 0.2, 0.4, 0.6, 0.8, 1.0]);
    assert_eq!(t.decimals, 1);
    assert_eq!(t.label(0.4), "0.4");
    // [−3.7, 12.2], 5: range nice(15.9) = 20, step nice(5) = 5 → −5 … 15.
    let t = nice_ticks(-3.7, 12.2, 5).unwrap();
    assert_eq!(t.values, vec![-5.0, 0.0, 5.0, 10.0, 15.0]);
    assert_eq!(t.decimals, 0);
    // [0.0013, 0.0091], 4: range nice(0.0078) = 0.01, step nice(0.00333) = 0.005.
    let t = nice_ticks(0.0013, 0.0091, 4).unwrap();
    assert_eq!(t.values, vec![0.0, 0.005, 0.01]);
    assert_eq!(t.decimals, 3);
    assert_eq!(t.label(0.005), "0.005");
    // [98, 1030], 6: range nice(932) = 1000, step nice(200) = 200 → 0 … 1200.
    let t = nice_ticks(98.0, 1030.0, 6).unwrap();
    assert_eq!(
        t.values,
        vec![0.0, 200.0, 400.0, 600.0, 800.0, 1000.0, 1200.0]
    );
    // [−0.42, −0.17], 5: range nice(0.25) = 0.5, step nice(0.125) = 0.1 → −0.5 … −0.1.
    let t = nice_ticks(-0.42, -0.17, 5).unwrap();
    assert_eq!(t.values, vec![-0.5, -0.4, -0.3, -0.2, -0.1]);
    assert!(nice_ticks(f64::NAN, 1.0, 5).is_none());
    // A zero-width range is widened (our convention): [2, 2] → [1, 3], step 0.5.
    let t = nice_ticks(2.0, 2.0, 5).unwrap();
    assert!(t.lo <= 1.0 && t.hi >= 3.0);
}

#[test]
fn log_ticks_are_decades_with_two_and_five_on_short_ranges() {
    // Common practice, no source: decades, plus 2 and 5 multiples within two decades.
    assert_eq!(log_ticks(0.001, 1.0).unwrap(), vec![0.001, 0.01, 0.1, 1.0]);
    assert_eq!(
        log_ticks(0.03, 0.8).unwrap(),
        vec![0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1.0]
    );
    assert!(log_ticks(0.0, 1.0).is_none());
}

#[test]
fn text_is_escaped_and_the_document_parses() {
    let title = "Fit <k=3> & \"weights\" 'A'";
    let mut svg = Svg::new(300, 120);
    svg.text(
        10.0,
        20.0,
        title,
        &Attrs::new().set("data-note", "a<b&\"c\""),
    );
    svg.begin_group(&Attrs::new().class("g"));
    svg.circle(5.0, 5.0, 2.0, &Attrs::new().fill("#000"));
    let figure = svg.finish();
    assert!(!figure.svg.contains("<k=3>"));
    let elements = parse_svg(&figure.svg, 300, 120);
    let text = elements.iter().find(|e| e.name == "text").unwrap();
    assert_eq!(text.text, title);
    assert_eq!(text.attrs["data-note"], "a<b&\"c\"");
    // The open group is closed by finish.
    assert!(elements.iter().any(|e| e.name == "g"));

    let mut bars = bars();
    bars[0].name = "<script>&\"x\"".to_string();
    let options = RegionSharesOptions {
        title: "Shares <&\">".to_string(),
        ..RegionSharesOptions::default()
    };
    let figure = region_shares_svg(&bars, &options).unwrap();
    let elements = parse_svg(&figure.svg, figure.width, figure.height);
    let texts: Vec<&str> = elements
        .iter()
        .filter(|e| e.name == "text")
        .map(|e| e.text.as_str())
        .collect();
    assert!(texts.contains(&"Shares <&\">"));
    assert!(texts.contains(&"<script>&\"x\""));
}

#[test]
fn bar_lengths_are_proportional_to_the_shares() {
    let bars = bars();
    let figure = region_shares_svg(&bars, &RegionSharesOptions::default()).unwrap();
    keep("render_charts", "region_shares.svg", &figure.svg);
    assert_eq!(figure.width, 640);
    let elements = parse_svg(&figure.svg, figure.width, figure.height);
    let widths: Vec<f64> = elements
        .iter()
        .filter(|e| e.has_class("bar"))
        .map(|e| e.num("width"))
        .collect();
    assert_eq!(widths.len(), bars.len());
    // Pixels per unit share from the longest bar; coordinates are written to 0.01 px,
    // so each width may be off by 0.005 px from exact proportionality (2 roundings).
    let k = widths[0] / bars[0].share;
    for (w, b) in widths.iter().zip(&bars) {
        assert!((w - k * b.share).abs() <= 0.011, "{w} vs {}", k * b.share);
    }
    // Each bar has a whisker (3 lines) and a frequency label in percent (the
    // unit of the tables and the terminal).
    assert_eq!(
        elements.iter().filter(|e| e.has_class("whisker")).count(),
        15
    );
    let freq: Vec<&str> = elements
        .iter()
        .filter(|e| e.has_class("frequency"))
        .map(|e| e.text.as_str())
        .collect();
    assert_eq!(
        freq,
        vec![
            "100\u{2009}%",
            "80\u{2009}%",
            "60\u{2009}%",
            "40\u{2009}%",
            "20\u{2009}%"
        ]
    );
    // Long names are shortened with an ellipsis.
    assert!(figure.svg.contains('…'));
}

#[test]
fn region_chart_rejects_bad_input() {
    let o = RegionSharesOptions::default();
    assert!(matches!(
        region_shares_svg(&[], &o),
        Err(FigureError::Empty { .. })
    ));
    let mut b = bars();
    b[2].share = f64::NAN;
    assert!(matches!(
        region_shares_svg(&b, &o),
        Err(FigureError::NotFinite { index: 2, .. })
    ));
    let mut b = bars();
    b[1].interval = Some([0.3, 0.1]);
    assert!(matches!(
        region_shares_svg(&b, &o),
        Err(FigureError::OutOfRange { index: 1, .. })
    ));
    let mut b = bars();
    b[3].selection_frequency = Some(1.5);
    assert!(matches!(
        region_shares_svg(&b, &o),
        Err(FigureError::OutOfRange { index: 3, .. })
    ));
    let narrow = RegionSharesOptions {
        width: 10,
        ..RegionSharesOptions::default()
    };
    assert!(matches!(
        region_shares_svg(&bars(), &narrow),
        Err(FigureError::BadOption { field: "width", .. })
    ));
}

/// A path from λ_max down to 10⁻³ λ_max, given in a shuffled order.
fn path_samples() -> Vec<PathSample> {
    let mut samples: Vec<PathSample> = (0..16)
        .map(|i| {
            let ratio = 10f64.powf(-3.0 * i as f64 / 15.0);
            let ev = 0.93 * (1.0 - ratio.powf(0.35));
            PathSample {
                ratio,
                explained_variance: ev,
                active_patches: (i * i) / 8,
            }
        })
        .collect();
    samples.swap(2, 11);
    samples.swap(0, 7);
    samples
}

#[test]
fn path_points_are_monotone_in_lambda() {
    let options = PathChartOptions {
        chosen_ratio: Some(0.05),
        ..PathChartOptions::default()
    };
    let figure = regularisation_path_svg(&path_samples(), &options).unwrap();
    keep("render_charts", "path.svg", &figure.svg);
    let elements = parse_svg(&figure.svg, 640, 360);
    for class in ["explained", "active"] {
        let line = elements.iter().find(|e| e.has_class(class)).unwrap();
        let pts = points(line);
        assert_eq!(pts.len(), 16);
        assert!(
            pts.windows(2).all(|w| w[1].0 > w[0].0),
            "{class} x increases"
        );
    }
    // Explained variance grows as λ falls, so on screen (y down) it falls to the left:
    // the y of the explained-variance line increases with x.
    let ev = points(elements.iter().find(|e| e.has_class("explained")).unwrap());
    assert!(ev.windows(2).all(|w| w[1].1 >= w[0].1));
    // The chosen λ/λmax = 0.05 sits on the log axis from 10⁻³ to 1 at the fraction
    // (log10 0.05 + 3) / 3 of the way from the left end (definition of a log axis;
    // coordinates are written to 0.01 px, tolerance 0.02 px).
    let chosen = elements.iter().find(|e| e.has_class("chosen")).unwrap();
    let right = ev[ev.len() - 1].0; // ratio 1
    let left = ev[0].0; // ratio 10⁻³
    let expected = left + (0.05f64.log10() + 3.0) / 3.0 * (right - left);
    assert!((chosen.num("x1") - expected).abs() < 0.02);
    // The chosen λ's label sits above every point of both curves (at least
    // one text height, 12 px, above the highest), so it never covers them
    // (our layout rule, no outside source).
    let label = elements
        .iter()
        .find(|e| e.name == "text" && e.text.starts_with("chosen"))
        .unwrap();
    let highest = ["explained", "active"]
        .iter()
        .flat_map(|c| points(elements.iter().find(|e| e.has_class(c)).unwrap()))
        .map(|p| p.1)
        .fold(f64::INFINITY, f64::min);
    assert!(
        label.num("y") + 2.0 <= highest - 6.0,
        "label baseline {} vs highest point {highest}",
        label.num("y")
    );
}

#[test]
fn share_axis_is_not_stretched_by_a_hair_below_zero() {
    // An interval reaching −0.3 % must not stretch the share axis to the next
    // nice tick (−10 % or −20 %, Heckbert 1990): the axis starts within 3 %
    // of the data range below the lowest value (our layout rule), and no tick
    // label lies left of the axis start.
    let mut b = bars();
    b[4].interval = Some([-0.003, 0.05]);
    let figure = region_shares_svg(&b, &RegionSharesOptions::default()).unwrap();
    let elements = parse_svg(&figure.svg, figure.width, figure.height);
    let labels: Vec<f64> = elements
        .iter()
        .filter(|e| e.name == "text")
        .filter_map(|e| e.text.replace('\u{2212}', "-").parse::<f64>().ok())
        .collect();
    assert!(
        labels.iter().all(|&v| v >= -0.3 - 0.03 * 52.5),
        "tick labels {labels:?}"
    );
    assert!(labels.contains(&0.0), "zero is labelled: {labels:?}");
}

#[test]
fn path_chart_rejects_bad_input() {
    let o = PathChartOptions::default();
    assert!(matches!(
        regularisation_path_svg(&[], &o),
        Err(FigureError::Empty { .. })
    ));
    let mut s = path_samples();
    s[4].ratio = 0.0;
    assert!(matches!(
        regularisation_path_svg(&s, &o),
        Err(FigureError::OutOfRange { index: 4, .. })
    ));
    let bad = PathChartOptions {
        chosen_ratio: Some(f64::NAN),
        ..PathChartOptions::default()
    };
    assert!(matches!(
        regularisation_path_svg(&path_samples(), &bad),
        Err(FigureError::BadOption { .. })
    ));
}

fn hex(rgb: [u8; 3]) -> String {
    format!("#{:02x}{:02x}{:02x}", rgb[0], rgb[1], rgb[2])
}

#[test]
fn heatmap_cells_follow_the_colour_scale() {
    // Subjects × regions, shares in [0, 0.5]; the automatic scale for values ≥ 0 is
    // sequential from 0 to the maximum, so 0 gets sequential(0) and the maximum
    // sequential(1) (the colour map's own ends; exact byte match).
    let (rows, cols) = (6, 12);
    let values: Vec<f64> = (0..rows * cols)
        .map(|k| 0.5 * ((k * 7) % 13) as f64 / 12.0)
        .collect();
    let options = HeatmapOptions {
        title: "Region shares by subject".into(),
        unit: "share".into(),
        row_labels: (1..=rows).map(|i| format!("sub-{i:02}")).collect(),
        column_labels: (0..cols).map(|j| format!("region {j}")).collect(),
        ..HeatmapOptions::default()
    };
    let figure = heatmap_svg(&values, rows, cols, &options).unwrap();
    keep("render_charts", "heatmap.svg", &figure.svg);
    let elements = parse_svg(&figure.svg, figure.width, figure.height);
    let cells: Vec<&Element> = elements.iter().filter(|e| e.has_class("cell")).collect();
    assert_eq!(cells.len(), rows * cols);
    let max = values.iter().cloned().fold(0.0, f64::max);
    for (cell, v) in cells.iter().zip(&values) {
        if *v == 0.0 {
            assert_eq!(cell.attrs["fill"], hex(sequential(0.0)));
        }
        if *v == max {
            assert_eq!(cell.attrs["fill"], hex(sequential(1.0)));
        }
    }
    // Cells are laid out row by row, left to right.
    assert!(cells[1].num("x") > cells[0].num("x"));
    assert!(cells[cols].num("y") > cells[0].num("y"));
    let texts: Vec<&str> = elements
        .iter()
        .filter(|e| e.name == "text")
        .map(|e| e.text.as_str())
        .collect();
    assert!(texts.contains(&"sub-03") && texts.contains(&"region 11"));

    // Signed values (a similarity matrix) get the diverging map symmetric about 0;
    // a NaN cell is drawn as missing.
    let mut similarity = vec![0.2, -0.8, 0.5, 1.0];
    similarity[2] = f64::NAN;
    let figure = heatmap_svg(&similarity, 2, 2, &HeatmapOptions::default()).unwrap();
    let elements = parse_svg(&figure.svg, figure.width, figure.height);
    let cells: Vec<&Element> = elements.iter().filter(|e| e.has_class("cell")).collect();
    assert_eq!(cells[3].attrs["fill"], hex(diverging(1.0)));
    assert_eq!(cells[1].attrs["fill"], hex(diverging(-0.8)));
    assert_eq!(cells[2].attrs["fill"], "#d9dde2");
}

#[test]
fn large_heatmaps_embed_one_pixel_per_cell() {
    let n = 60;
    let values: Vec<f64> = (0..n * n)
        .map(|k| ((k % n) as f64 - (k / n) as f64) / n as f64)
        .collect();
    let options = HeatmapOptions {
        scale: Some(HeatmapScale::Diverging { limit: 1.0 }),
        ..HeatmapOptions::default()
    };
    let figure = heatmap_svg(&values, n, n, &options).unwrap();
    keep("render_charts", "heatmap_large.svg", &figure.svg);
    let elements = parse_svg(&figure.svg, figure.width, figure.height);
    let image = elements.iter().find(|e| e.has_class("cells")).unwrap();
    let uri = &image.attrs["href"];
    let png = base64::engine::general_purpose::STANDARD
        .decode(uri.strip_prefix("data:image/png;base64,").unwrap())
        .unwrap();
    let decoder = png::Decoder::new(std::io::Cursor::new(png));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!((info.width, info.height), (n as u32, n as u32));
    // Top-right cell: value (n−1)/n → diverging((n−1)/n).
    let k = info.color_type.samples() * (n - 1);
    assert_eq!(&buf[k..k + 3], &diverging((n as f64 - 1.0) / n as f64)[..]);
}

#[test]
fn heatmap_rejects_bad_input() {
    let o = HeatmapOptions::default();
    assert!(matches!(
        heatmap_svg(&[1.0; 5], 2, 3, &o),
        Err(FigureError::LengthMismatch {
            field: "values",
            expected: 6,
            got: 5
        })
    ));
    assert!(matches!(
        heatmap_svg(&[], 0, 3, &o),
        Err(FigureError::Empty { .. })
    ));
    let labels = HeatmapOptions {
        row_labels: vec!["a".into()],
        ..HeatmapOptions::default()
    };
    assert!(matches!(
        heatmap_svg(&[1.0; 6], 2, 3, &labels),
        Err(FigureError::LengthMismatch {
            field: "row_labels",
            ..
        })
    ));
    assert!(matches!(
        heatmap_svg(&[1.0, f64::INFINITY, 0.0, 0.0], 2, 2, &o),
        Err(FigureError::NotFinite { index: 1, .. })
    ));
    let bad = HeatmapOptions {
        scale: Some(HeatmapScale::Sequential { lo: 1.0, hi: 1.0 }),
        ..HeatmapOptions::default()
    };
    assert!(matches!(
        heatmap_svg(&[1.0; 4], 2, 2, &bad),
        Err(FigureError::BadOption { field: "scale", .. })
    ));
}
