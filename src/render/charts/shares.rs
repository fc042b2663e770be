//! The region-share chart: horizontal bars of region shares with their
//! intervals and selection frequencies.

use super::{check_side, LABEL_CHARS, MARGIN, TITLE_BASELINE};
use crate::render::axes::{
    bottom_axis, labelled, shorten, text_width, title, Scale, ACCENT, FONT_SIZE, INK, MUTED,
};
use crate::render::figure_error::{check_finite, FigureError};
use crate::render::svg::{num, Attrs, Figure, Svg};
use crate::render::ticks::nice_ticks;

/// One bar of the region-share chart.
#[derive(Debug, Clone, PartialEq)]
pub struct RegionBar {
    /// Region name.
    pub name: String,
    /// Share of the fitted pattern (fraction, usually in [0, 1]).
    pub share: f64,
    /// Interval [low, high] for the share (e.g. a bootstrap percentile interval).
    pub interval: Option<[f64; 2]>,
    /// How often the region was selected across resamples, in [0, 1].
    pub selection_frequency: Option<f64>,
}

/// Options of [`region_shares_svg`].
#[derive(Debug, Clone, PartialEq)]
pub struct RegionSharesOptions {
    /// Figure width (px); the height follows from the number of bars.
    pub width: u32,
    /// Title above the chart.
    pub title: String,
    /// Label of the share axis.
    pub axis_label: String,
    /// Show shares as percentages (× 100) on the axis.
    pub percent: bool,
}

impl Default for RegionSharesOptions {
    fn default() -> Self {
        Self {
            width: 640,
            title: "Region shares".to_string(),
            axis_label: "share of the fitted pattern (%)".to_string(),
            percent: true,
        }
    }
}

/// Row pitch and bar thickness of the region chart (px).
const ROW: f64 = 24.0;
const BAR: f64 = 14.0;

/// Horizontal bars of region shares in the order given (pass the leading regions of a
/// component), whiskers for the intervals and, when any bar has one, a column with the
/// selection frequency as a number and a dot whose opacity follows it. Bars carry
/// `class="bar"`; their widths are proportional to the shares.
///
/// Errors: no bars, a non-finite share or bound, an interval with low > high, a
/// selection frequency outside [0, 1], a width outside 160–8000 px.
pub fn region_shares_svg(
    bars: &[RegionBar],
    options: &RegionSharesOptions,
) -> Result<Figure, FigureError> {
    check_side("width", options.width)?;
    if bars.is_empty() {
        return Err(FigureError::Empty {
            field: "bars",
            required: 1,
        });
    }
    let shares: Vec<f64> = bars.iter().map(|b| b.share).collect();
    check_finite("bars.share", &shares)?;
    for (index, bar) in bars.iter().enumerate() {
        if let Some([low, high]) = bar.interval {
            check_finite("bars.interval", &[low, high]).map_err(|_| FigureError::NotFinite {
                field: "bars.interval",
                index,
                value: if low.is_finite() { high } else { low },
            })?;
            if low > high {
                return Err(FigureError::OutOfRange {
                    field: "bars.interval",
                    index,
                    value: low,
                    expected: "low <= high",
                });
            }
        }
        if let Some(f) = bar.selection_frequency {
            if !(0.0..=1.0).contains(&f) {
                return Err(FigureError::OutOfRange {
                    field: "bars.selection_frequency",
                    index,
                    value: f,
                    expected: "a frequency in [0, 1]",
                });
            }
        }
    }

    let factor = if options.percent { 100.0 } else { 1.0 };
    let (mut lo, mut hi) = (0.0f64, 0.0f64);
    for bar in bars {
        lo = lo.min(bar.share);
        hi = hi.max(bar.share);
        if let Some([low, high]) = bar.interval {
            lo = lo.min(low);
            hi = hi.max(high);
        }
    }
    if hi == lo {
        hi = lo + 1.0 / factor;
    }
    let ticks = nice_ticks(lo * factor, hi * factor, 5).ok_or(FigureError::BadOption {
        field: "bars",
        value: format!("[{lo}, {hi}]"),
        expected: "a finite range",
    })?;

    let width = f64::from(options.width);
    let names: Vec<String> = bars.iter().map(|b| shorten(&b.name, LABEL_CHARS)).collect();
    let label_width = names
        .iter()
        .map(|n| text_width(n, FONT_SIZE))
        .fold(0.0, f64::max)
        .min(0.4 * width);
    let with_frequency = bars.iter().any(|b| b.selection_frequency.is_some());
    let frequency_column = if with_frequency { 64.0 } else { 0.0 };
    let top = TITLE_BASELINE + if with_frequency { 30.0 } else { 18.0 };
    let x0 = MARGIN + label_width + 10.0;
    let x1 = width - MARGIN - frequency_column - 8.0;
    let axis_y = top + bars.len() as f64 * ROW + 6.0;
    let height = (axis_y + 50.0).ceil();
    // The axis starts at the first tick, unless that tick lies far below a
    // slightly negative minimum (an interval reaching −0.3 % would otherwise
    // stretch the axis to −20 %): then just below the minimum, and the
    // ticks under it are dropped.
    let data_lo = lo * factor;
    let axis_lo = if ticks.lo < data_lo - 0.25 * ticks.step {
        (data_lo - 0.03 * (ticks.hi - data_lo)).min(0.0)
    } else {
        ticks.lo
    };
    let shown_ticks: Vec<(f64, String)> = labelled(&ticks)
        .into_iter()
        .filter(|(v, _)| *v >= axis_lo - 1e-9 * ticks.step)
        .collect();
    let scale = Scale {
        lo: axis_lo,
        hi: ticks.hi,
        start_px: x0,
        end_px: x1.max(x0 + 40.0),
        log: false,
    };

    let mut svg = Svg::new(options.width, height as u32);
    svg.rect(0.0, 0.0, width, height, &Attrs::new().fill("#ffffff"));
    title(&mut svg, MARGIN, TITLE_BASELINE, &options.title);
    bottom_axis(
        &mut svg,
        &scale,
        axis_y,
        top - 4.0,
        &shown_ticks,
        &options.axis_label,
    );
    if axis_lo < 0.0 {
        let x = scale.px(0.0);
        svg.line(x, top - 4.0, x, axis_y, &Attrs::new().stroke(MUTED, 1.0));
    }
    if with_frequency {
        svg.text(
            width - MARGIN - frequency_column / 2.0,
            top - 8.0,
            "selected",
            &Attrs::new()
                .fill(MUTED)
                .set("text-anchor", "middle")
                .set("font-size", "11"),
        );
    }
    let zero = scale.px(0.0);
    for (i, (bar, name)) in bars.iter().zip(&names).enumerate() {
        let centre = top + (i as f64 + 0.5) * ROW;
        svg.text(
            x0 - 8.0,
            centre + 4.0,
            name,
            &Attrs::new().fill(INK).set("text-anchor", "end"),
        );
        let end = scale.px(bar.share * factor);
        svg.rect(
            zero.min(end),
            centre - BAR / 2.0,
            (end - zero).abs(),
            BAR,
            &Attrs::new().fill(ACCENT).class("bar").set("rx", "1.5"),
        );
        if let Some([low, high]) = bar.interval {
            let (a, b) = (scale.px(low * factor), scale.px(high * factor));
            let whisker = Attrs::new().stroke(INK, 1.25).class("whisker");
            svg.line(a, centre, b, centre, &whisker);
            svg.line(a, centre - 4.0, a, centre + 4.0, &whisker);
            svg.line(b, centre - 4.0, b, centre + 4.0, &whisker);
        }
        if let Some(f) = bar.selection_frequency {
            let cx = width - MARGIN - frequency_column + 10.0;
            svg.circle(
                cx,
                centre,
                4.5,
                &Attrs::new()
                    .fill(ACCENT)
                    .set("fill-opacity", num(0.12 + 0.88 * f))
                    .set("stroke", ACCENT)
                    .set("stroke-width", "0.75"),
            );
            svg.text(
                cx + 10.0,
                centre + 4.0,
                // A percentage, as in the tables and the terminal: one unit
                // for the selection frequency everywhere.
                &format!("{:.0}\u{2009}%", 100.0 * f),
                &Attrs::new().fill(MUTED).class("frequency"),
            );
        }
    }
    Ok(svg.finish())
}
