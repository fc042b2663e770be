//! The pictures of one component for the report: sensor maps, cortex views
//! and charts, each as inline markup (SVG, or a PNG data URI) with a caption.
//!
//! The pictures themselves come from the picture makers of this module
//! (`charts`, and the topographic maps and cortex views when present);
//! this file only chooses what to draw, at which size, and how to caption it.

use super::charts::{
    region_shares_svg, regularisation_path_svg, PathChartOptions, PathSample, RegionBar,
    RegionSharesOptions,
};
use super::colormap::diverging;
use super::cortex_panel::{
    best_view, colour_bar_svg, cortex_panel_with_dipoles, diverging_painted, source_map_options,
    DipoleMark, MARKS_NOTE, SOURCE_MAP_THRESHOLD, VIEW_DISPLAY,
};
use super::page::ReportError;
use super::topomap::{topomap_svg, TopomapOptions};
use crate::io::result_file::ResultFile;

/// One picture: its markup (an inline `<svg>` or an `<img>` with a data URI)
/// and a caption.
#[derive(Debug, Clone, Default)]
pub struct Figure {
    /// Inline markup of the picture.
    pub markup: String,
    /// Caption text (escaped by the page).
    pub caption: String,
}

/// Pictures shown side by side under one heading.
#[derive(Debug, Clone, Default)]
pub struct FigureGroup {
    /// Heading of the group.
    pub title: String,
    /// The pictures.
    pub figures: Vec<Figure>,
    /// A note under the group (escaped by the page); empty for none.
    pub note: String,
    /// Layout: `row` (side by side, wrapping) or `cortex` (a grid of three
    /// columns with the last picture, the colour bar, beside them).
    pub layout: &'static str,
}

/// All pictures of one component, in page order; groups that cannot be
/// drawn from what the result holds are simply absent.
#[derive(Debug, Clone, Default)]
pub struct ComponentFigures {
    /// The groups.
    pub groups: Vec<FigureGroup>,
    /// The cortex view that shows most of the source map, for the summary
    /// card at the top of the page.
    pub thumbnail: Option<Figure>,
}

/// Width of one of two charts side by side (px): half the page's text
/// column (1056 px) less half the gap between them.
const CHART_WIDTH: u32 = 520;
/// Height of the path chart (px).
const PATH_HEIGHT: u32 = 300;
/// At most this many regions in the share chart.
const CHART_REGIONS: usize = 8;
/// Width of one topographic map (px): three to a row of the text column.
const TOPOMAP_WIDTH: u32 = 340;

fn figure_error(r: &ResultFile, figure: String, e: impl std::fmt::Display) -> ReportError {
    ReportError::figure(&r.path, figure, e)
}

/// Draw the pictures of component `c`; `order` lists the regions by
/// decreasing share and `shown` how many of them the region table lists.
pub fn component_figures(
    result: &ResultFile,
    c: usize,
    order: &[usize],
    shown: usize,
) -> Result<ComponentFigures, ReportError> {
    let mut groups = Vec::new();
    if let Some(g) = sensor_maps(result, c)? {
        groups.push(g);
    }
    let mut thumbnail = None;
    if let Some((g, best)) = cortex_views(result, c)? {
        thumbnail = g.figures.get(best).cloned();
        groups.push(g);
    }
    let mut charts = Vec::new();
    if let Some(f) = share_chart(result, c, order, shown)? {
        charts.push(f);
    }
    if let Some(f) = path_chart(result, c)? {
        charts.push(f);
    }
    if !charts.is_empty() {
        groups.push(FigureGroup {
            title: "Shares and the regularisation path".to_string(),
            figures: charts,
            note: String::new(),
            layout: "row",
        });
    }
    Ok(ComponentFigures { groups, thumbnail })
}

/// The bars of the first `shown` (1 to [`CHART_REGIONS`]) regions of
/// `order` for component `c`: share, 95 % interval when finite and ordered,
/// selection frequency when in [0, 1].
pub(crate) fn share_bars(
    r: &ResultFile,
    c: usize,
    order: &[usize],
    shown: usize,
) -> Vec<RegionBar> {
    let a = &r.attribution;
    let k = r.k;
    order
        .iter()
        .take(shown.clamp(1, CHART_REGIONS))
        .map(|&reg| {
            let i = reg * k + c;
            let low = a.share_low.as_ref().map(|v| v[i]);
            let high = a.share_high.as_ref().map(|v| v[i]);
            let interval = match (low, high) {
                (Some(l), Some(h)) if l.is_finite() && h.is_finite() && l <= h => Some([l, h]),
                _ => None,
            };
            RegionBar {
                name: a.region_names[reg].clone(),
                share: a.share[i],
                interval,
                selection_frequency: a
                    .selection_frequency
                    .as_ref()
                    .map(|v| v[i])
                    .filter(|f| (0.0..=1.0).contains(f)),
            }
        })
        .collect()
}

/// Bars of the leading regions with their intervals and selection frequencies.
fn share_chart(
    r: &ResultFile,
    c: usize,
    order: &[usize],
    shown: usize,
) -> Result<Option<Figure>, ReportError> {
    if order.is_empty() {
        return Ok(None);
    }
    let bars = share_bars(r, c, order, shown);
    let with_intervals = bars.iter().any(|b| b.interval.is_some());
    let options = RegionSharesOptions {
        width: CHART_WIDTH,
        title: "Leading regions".to_string(),
        ..RegionSharesOptions::default()
    };
    let svg = region_shares_svg(&bars, &options)
        .map_err(|e| figure_error(r, format!("the share chart of component {c}"), e))?;
    Ok(Some(Figure {
        markup: svg.svg,
        caption: if with_intervals {
            "Bars: share of the fitted pattern; whiskers: 95 % bootstrap interval; \
             dots: how often the region was selected across resamples."
                .to_string()
        } else {
            "Bars: share of the fitted pattern (no resampling, so no intervals).".to_string()
        },
    }))
}

/// The λ path of component `c` (finite points only) and the chosen
/// λ/λmax, or `None` without a stored path.
pub(crate) fn path_samples(r: &ResultFile, c: usize) -> Option<(Vec<PathSample>, Option<f64>)> {
    let p = r.fit.path.as_ref()?;
    let k = r.k;
    let samples: Vec<PathSample> = (0..p.n_points)
        .filter_map(|i| {
            let ratio = p.ratio[i * k + c];
            let ev = p.explained_variance[i * k + c];
            let active = p.active_patches[i * k + c];
            (ratio.is_finite()
                && ratio > 0.0
                && ev.is_finite()
                && active.is_finite()
                && active >= 0.0)
                .then_some(PathSample {
                    ratio,
                    explained_variance: ev,
                    active_patches: active as usize,
                })
        })
        .collect();
    if samples.is_empty() {
        return None;
    }
    let chosen = r.fit.lambda[c] / r.fit.lambda_max[c];
    Some((
        samples,
        (chosen.is_finite() && chosen > 0.0).then_some(chosen),
    ))
}

/// Explained variance and active patches along the λ path, the chosen λ marked.
fn path_chart(r: &ResultFile, c: usize) -> Result<Option<Figure>, ReportError> {
    let Some((samples, chosen_ratio)) = path_samples(r, c) else {
        return Ok(None);
    };
    let options = PathChartOptions {
        width: CHART_WIDTH,
        height: PATH_HEIGHT,
        title: "Regularisation path".to_string(),
        chosen_ratio,
    };
    let svg = regularisation_path_svg(&samples, &options)
        .map_err(|e| figure_error(r, format!("the path chart of component {c}"), e))?;
    Ok(Some(Figure {
        markup: svg.svg,
        caption: "Explained variance and active patches as \u{03bb} falls from \u{03bb}max; \
                  the dashed line is the \u{03bb} of the fit (minimum BIC)."
            .to_string(),
    }))
}

/// Component `c`'s source map, one value per source (A·m), and its largest
/// |value|; `None` when the result has no source mesh or no map.
pub(crate) fn source_map(r: &ResultFile, c: usize) -> Result<Option<(Vec<f64>, f64)>, ReportError> {
    let Some(sources) = &r.sources else {
        return Ok(None);
    };
    let n_src = sources.len();
    if sources.triangles.is_empty() || r.attribution.source_map.len() != n_src * r.k {
        return Ok(None);
    }
    let values: Vec<f64> = (0..n_src)
        .map(|v| r.attribution.source_map[v * r.k + c])
        .collect();
    let largest = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if !largest.is_finite() {
        return Err(figure_error(
            r,
            format!("the cortex views of component {c}"),
            "the source map holds a value that is not finite",
        ));
    }
    Ok(Some((values, largest)))
}

/// The equivalent dipoles of component `c` (positions in the file in mm,
/// here in m), when the result holds a dipole fit.
fn dipole_marks(r: &ResultFile, c: usize) -> Vec<DipoleMark> {
    let Some(d) = &r.dipoles else {
        return Vec::new();
    };
    (0..d.component.len())
        .filter(|&row| usize::try_from(d.component[row]).ok() == Some(c))
        .filter(|&row| d.positions_mm[row].iter().all(|v| v.is_finite()))
        .map(|row| DipoleMark {
            position: d.positions_mm[row].map(|v| v * 1e-3),
            moment: d.moments[row],
        })
        .collect()
}

/// Seven views of the source map on the cortex at one common scale, with
/// region outlines and orientation marks, and a colour bar; with the index
/// of the view that shows the most coloured cortex.
fn cortex_views(r: &ResultFile, c: usize) -> Result<Option<(FigureGroup, usize)>, ReportError> {
    let Some((values, largest)) = source_map(r, c)? else {
        return Ok(None);
    };
    let Some(sources) = &r.sources else {
        return Ok(None);
    };
    let mesh = sources.mesh();
    let options = source_map_options(&sources.region, largest);
    let what = || format!("the cortex views of component {c}");
    let dipoles = dipole_marks(r, c);
    let panel = cortex_panel_with_dipoles(&mesh, &values, &options, diverging_painted, &dipoles)
        .map_err(|e| figure_error(r, what(), e))?;
    let best = best_view(&panel);
    let mut figures = Vec::with_capacity(panel.len() + 1);
    for (i, v) in panel.into_iter().enumerate() {
        let mut caption = v.view.caption().to_string();
        if i == best && largest > 0.0 {
            caption.push_str(" (shows the most of the map)");
        }
        figures.push(Figure {
            markup: v.markup,
            caption,
        });
    }
    let dipole_note = if dipoles.is_empty() {
        ""
    } else {
        " Rings with arrows: the equivalent dipoles of this component (their position projected \
         onto each view, the arrow along the moment's part in the picture plane; lateral and \
         medial views show their hemisphere's dipoles only; a ring can lie under the cortex)."
    };
    let note = if largest > 0.0 {
        figures.push(Figure {
            markup: signed_colour_bar(VIEW_DISPLAY.1),
            caption: String::new(),
        });
        format!(
            "Source map: dipole moment per source relative to the largest, {:.3e} A\u{00b7}m \
             (orange positive, blue negative, along the outward normal); values below {:.0} % of \
             the largest are left grey, and a dark ring edges the coloured areas so small ones \
             stay visible; thin lines: region borders. All views share one scale. {}{}",
            largest,
            100.0 * SOURCE_MAP_THRESHOLD,
            MARKS_NOTE,
            dipole_note
        )
    } else {
        "The source map is zero everywhere: the fit kept no patch.".to_string()
    };
    Ok(Some((
        FigureGroup {
            title: "Source map on the cortex".to_string(),
            figures,
            note,
            layout: "cortex",
        },
        best,
    )))
}

/// A vertical colour bar of the diverging map from −1 to 1, `height` px tall.
fn signed_colour_bar(height: u32) -> String {
    relative_colour_bar(height, -1.0, &|t: f64| diverging(2.0 * t - 1.0))
}

/// A vertical colour bar labelled "relative" from `lo` to 1, `height` px
/// tall, of `map` (which takes the position 0..1 along the bar).
pub(crate) fn relative_colour_bar(height: u32, lo: f64, map: &dyn Fn(f64) -> [u8; 3]) -> String {
    colour_bar_svg(height, lo, 1.0, map, "relative")
}

/// Topographic maps of the pattern, its fit and the residual on one colour
/// scale (the largest |pattern| value), so the residual reads against the
/// pattern. Without a stored reconstruction only the pattern is drawn
/// (the stored residual is in the fit's whitened space then).
fn sensor_maps(r: &ResultFile, c: usize) -> Result<Option<FigureGroup>, ReportError> {
    let Some(positions) = &r.electrode_positions else {
        return Ok(None);
    };
    let k = r.k;
    let n_ch = r.labels.len();
    let column = |m: &[f64]| -> Vec<f64> { (0..n_ch).map(|e| m[e * k + c]).collect() };
    let pattern = column(&r.patterns);
    let largest = pattern.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if !(largest.is_finite() && largest > 0.0) {
        return Ok(None);
    }
    let mut maps = vec![("Pattern", pattern.clone())];
    let mut note = String::new();
    if let Some(recon) = &r.fit.reconstruction {
        let fitted = column(recon);
        let residual: Vec<f64> = pattern.iter().zip(&fitted).map(|(p, f)| p - f).collect();
        let norm = |v: &[f64]| v.iter().map(|x| x * x).sum::<f64>().sqrt();
        note = format!(
            "The pattern as stored (after the average reference), its fit D\u{00b7}X and their \
             difference, all relative to the largest |pattern| value ({:.3e}) on one colour scale \
             (a tick times the factor under the bar is the value in the pattern's own unit: the \
             data's unit per unit of the component's output for weights with a covariance, e.g. \
             \u{00b5}V if the data were in \u{00b5}V); \u{2016}residual\u{2016} / \u{2016}pattern\u{2016} = \
             {:.1} %. Dots: electrodes; view from above, nose up; the outline is drawn where the \
             map ends when electrodes lie below the level of Fpz, T7, Oz and T8 (dashed).",
            largest,
            100.0 * norm(&residual) / norm(&pattern)
        );
        maps.push(("Fit", fitted));
        maps.push(("Residual", residual));
    }
    let mut figures = Vec::with_capacity(maps.len());
    for (title, values) in &maps {
        // Drawn relative to the largest |pattern| value so that the colour
        // bar reads in plain numbers whatever the patterns' unit.
        let relative: Vec<f64> = values.iter().map(|v| v / largest).collect();
        let options = TopomapOptions {
            size_px: TOPOMAP_WIDTH,
            title: title.to_string(),
            unit: "a.u.".to_string(),
            scale: Some(largest),
            limits: Some(1.0),
            pixel_ratio: 2,
            ..TopomapOptions::default()
        };
        let svg = topomap_svg(positions, &relative, &options).map_err(|e| {
            figure_error(
                r,
                format!("the {} map of component {c}", title.to_lowercase()),
                e,
            )
        })?;
        figures.push(Figure {
            markup: svg.svg,
            caption: String::new(),
        });
    }
    Ok(Some(FigureGroup {
        title: "Sensor patterns".to_string(),
        figures,
        note,
        layout: "row",
    }))
}
