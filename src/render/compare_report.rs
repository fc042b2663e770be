//! The self-contained HTML report of a cohort comparison (`compare.h5`):
//! the caution, the regions that survive the group test's correction, per
//! component a region table, heatmaps of the subjects' shares and of their
//! map similarity, the group mean chart, the paired comparison, and the
//! inputs with their hashes, in one page that needs no other file.
//!
//! It is built on the skeleton the result report uses ([`super::page`]):
//! the same head and style sheet, masthead, caution, glance cards, tables
//! and footer, the same escaping and number formats, the same content
//! security policy that forbids any fetch.

use rayon::prelude::*;

use super::camera::View;
use super::charts::{
    heatmap_svg, region_shares_svg, HeatmapOptions, HeatmapScale, RegionBar, RegionSharesOptions,
};
use super::colormap::{diverging, sequential};
use super::cortex::{ColourSpec, ViewOptions};
use super::cortex_panel::{
    colour_bar_svg, cortex_panel, diverging_painted, sequential_painted, MARKS_NOTE, VIEW_DISPLAY,
};
use super::page::{
    card, card_lead, component_section as section_of, fact, facts, figures, folder_title,
    glance as glance_section, hidden_row, interval, notes, order_by, page, region_row, section,
    table, Frame, ReportError,
};
use super::report_html::{escape, fixed, percent, Html};
use crate::geometry::{template, Template, TemplateResolution};
use crate::io::compare_read::{CompareComponent, CompareFile};

/// Mean share at or above which a region gets its own row.
const SHOWN_SHARE: f64 = 0.005;
/// Regions always listed, whatever their share.
const SHOWN_TOP: usize = 3;
/// Width of the group-mean chart (px).
const CHART_WIDTH: u32 = 640;

/// Choices for the comparison report.
#[derive(Debug, Clone, Default)]
pub struct CompareReportOptions {
    /// Page title; default "Cohort comparison" followed by the folder name.
    pub title: Option<String>,
    /// Leave the pictures out (tables only).
    pub no_figures: bool,
}

/// The pictures of one component.
#[derive(Debug, Default)]
struct ComponentCharts {
    /// Group mean shares with their intervals.
    means: Option<String>,
    /// Subject × region shares.
    shares: Option<String>,
    /// Subject × subject cosine similarity.
    similarity: Option<String>,
    /// Cortex views of the group mean share (`<img>` elements with captions).
    cortex: Vec<(String, String)>,
}

/// The template cortex the comparison was made on, found by its vertex
/// count, when its regions are the comparison's regions.
fn find_template(f: &CompareFile) -> Option<Template> {
    TemplateResolution::ALL
        .into_iter()
        .map(template)
        .find(|t| t.mesh.n_vertices() as i64 == f.template_vertices)
        .filter(|t| t.region_names == f.region_names)
}

/// Views of the group mean share of component `c` painted per region on
/// the template cortex (one colour per region, white background), with a
/// colour bar in share units: the diverging map when a shown region's mean
/// share is negative (zero at the centre), the sequential map otherwise.
fn cortex_views(
    f: &CompareFile,
    c: &CompareComponent,
    t: &Template,
) -> Result<Vec<(String, String)>, ReportError> {
    let values: Vec<f64> = t
        .region
        .iter()
        .map(|&r| {
            usize::try_from(r)
                .ok()
                .and_then(|r| c.mean_share.get(r).copied())
                .filter(|v| v.is_finite())
                .unwrap_or(0.0)
        })
        .collect();
    let largest = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if largest <= 0.0 {
        return Ok(Vec::new());
    }
    let signed = values.iter().any(|&v| v <= -SHOWN_SHARE);
    let mut options = ViewOptions::new(View::Left, 1, 1);
    options.background = [255, 255, 255, 255];
    options.regions = Some(&t.region);
    options.hemisphere = Some(&t.hemisphere);
    options.values_by_region = true;
    let values = if signed {
        options.colour = ColourSpec::Signed {
            limit: Some(largest),
            threshold: SHOWN_SHARE,
        };
        values
    } else {
        options.colour = ColourSpec::Positive {
            max: Some(largest),
            threshold: SHOWN_SHARE,
        };
        values.into_iter().map(|v| v.max(0.0)).collect()
    };
    let what = || format!("the cortex views of {}", c.name);
    let painted = if signed {
        diverging_painted
    } else {
        sequential_painted
    };
    let panel = cortex_panel(&t.mesh, &values, &options, painted)
        .map_err(|e| figure_error(f, what(), e))?;
    let mut out: Vec<(String, String)> = panel
        .into_iter()
        .map(|v| (v.markup, v.view.caption().to_string()))
        .collect();
    let bar = if signed {
        colour_bar_svg(
            VIEW_DISPLAY.1,
            -largest,
            largest,
            &|t: f64| diverging(2.0 * t - 1.0),
            "mean share",
        )
    } else {
        colour_bar_svg(VIEW_DISPLAY.1, 0.0, largest, &sequential, "mean share")
    };
    out.push((bar, String::new()));
    Ok(out)
}

fn figure_error(f: &CompareFile, figure: String, e: impl std::fmt::Display) -> ReportError {
    ReportError::figure(&f.path, figure, e)
}

/// Region indices by decreasing group mean share (NaN last), ties by name.
fn order(f: &CompareFile, c: &CompareComponent) -> Vec<usize> {
    let key = |r: usize| {
        let v = c.mean_share[r];
        if v.is_nan() {
            f64::NEG_INFINITY
        } else {
            v
        }
    };
    order_by(&f.region_names, key)
}

/// Whether region `reg` (of rank `rank`) gets its own row and bar.
fn is_shown(f: &CompareFile, c: &CompareComponent, rank: usize, reg: usize) -> bool {
    rank < SHOWN_TOP || c.mean_share[reg].abs() >= SHOWN_SHARE || surviving(f, c, reg)
}

/// Whether region `reg` survives the max-statistic correction at α.
fn surviving(f: &CompareFile, c: &CompareComponent, reg: usize) -> bool {
    let alpha = if f.alpha.is_finite() { f.alpha } else { 0.05 };
    c.p_corrected[reg] < alpha
}

fn charts(
    f: &CompareFile,
    ci: usize,
    cortex: Option<&Template>,
) -> Result<ComponentCharts, ReportError> {
    let c = &f.components[ci];
    let n_s = f.subjects.len();
    let n_r = f.region_names.len();
    let shown: Vec<usize> = order(f, c)
        .into_iter()
        .enumerate()
        .filter(|&(rank, reg)| is_shown(f, c, rank, reg) && c.mean_share[reg].is_finite())
        .map(|(_, reg)| reg)
        .collect();
    let bars: Vec<RegionBar> = shown
        .iter()
        .map(|&reg| {
            let (low, high) = (c.mean_low[reg], c.mean_high[reg]);
            let freq = c.mean_selection_frequency[reg];
            RegionBar {
                name: f.region_names[reg].clone(),
                share: c.mean_share[reg],
                interval: (low.is_finite() && high.is_finite() && low <= high)
                    .then_some([low, high]),
                selection_frequency: (freq.is_finite() && (0.0..=1.0).contains(&freq))
                    .then_some(freq),
            }
        })
        .collect();
    let means = if bars.is_empty() {
        None
    } else {
        let options = RegionSharesOptions {
            width: CHART_WIDTH,
            title: "Group mean share".to_string(),
            axis_label: "mean share over subjects (%)".to_string(),
            percent: true,
        };
        Some(
            region_shares_svg(&bars, &options)
                .map_err(|e| figure_error(f, format!("the group mean chart of {}", c.name), e))?
                .svg,
        )
    };
    let shares = if n_s == 0 || n_r == 0 {
        None
    } else {
        let options = HeatmapOptions {
            title: "Share per subject and region".to_string(),
            unit: "share".to_string(),
            row_labels: f.subjects.clone(),
            column_labels: f.region_names.clone(),
            scale: None,
            cell_px: None,
        };
        Some(
            heatmap_svg(&c.share, n_s, n_r, &options)
                .map_err(|e| figure_error(f, format!("the share heatmap of {}", c.name), e))?
                .svg,
        )
    };
    let similarity = if n_s == 0 {
        None
    } else {
        // The cosine of two non-negative smoothed maps lies in [0, 1].
        let options = HeatmapOptions {
            title: "Cosine similarity of the smoothed maps".to_string(),
            unit: "cosine".to_string(),
            row_labels: f.subjects.clone(),
            column_labels: f.subjects.clone(),
            scale: Some(HeatmapScale::Sequential { lo: 0.0, hi: 1.0 }),
            cell_px: None,
        };
        Some(
            heatmap_svg(&c.cosine, n_s, n_s, &options)
                .map_err(|e| figure_error(f, format!("the similarity heatmap of {}", c.name), e))?
                .svg,
        )
    };
    let cortex = match cortex {
        Some(t) => cortex_views(f, c, t)?,
        None => Vec::new(),
    };
    Ok(ComponentCharts {
        means,
        shares,
        similarity,
        cortex,
    })
}

/// Build the report page of the comparison `f` as one HTML string.
pub fn build_compare_report(
    f: &CompareFile,
    options: &CompareReportOptions,
) -> Result<String, ReportError> {
    let figures: Vec<ComponentCharts> = if options.no_figures {
        f.components
            .iter()
            .map(|_| ComponentCharts::default())
            .collect()
    } else {
        let cortex = find_template(f);
        (0..f.components.len())
            .into_par_iter()
            .map(|c| charts(f, c, cortex.as_ref()))
            .collect::<Result<_, _>>()?
    };
    let title = options
        .title
        .clone()
        .unwrap_or_else(|| folder_title(&f.path, "Cohort comparison", "comparison"));
    let k = f.components.len();
    let frame = Frame {
        title: &title,
        kicker: "patchwise \u{00b7} which cortical regions a cohort's decoders rely on",
        facts: format!(
            "{} \u{00b7} {} subjects \u{00b7} {} component{} \u{00b7} {} regions \u{00b7} {}",
            f.path.display(),
            f.subjects.len(),
            k,
            if k == 1 { "" } else { "s" },
            f.region_names.len(),
            f.software
        ),
        stored_caution: &f.caution,
        file_kind: "comparison file",
        software: &f.software,
        path: &f.path,
    };
    Ok(page(
        &frame,
        |h| {
            glance(h, f);
            for (ci, figs) in figures.iter().enumerate() {
                component_section(h, f, ci, figs);
            }
            if f.paired.is_some() {
                paired_section(h, f);
            }
        },
        |h| {
            settings(h, f);
            inputs(h, f);
        },
    ))
}

fn alpha_text(f: &CompareFile) -> String {
    if f.alpha.is_finite() {
        fixed(f.alpha, 2)
    } else {
        "0.05".to_string()
    }
}

/// Smallest mean share a surviving region needs to be named on a card.
const GLANCE_MIN_SHARE: f64 = 0.01;

fn glance(h: &mut Html, f: &CompareFile) {
    let cards = |h: &mut Html| {
        for c in &f.components {
            card(h, &c.name, |h| glance_card(h, f, c));
        }
    };
    let note = format!(
        "Regions listed here have a corrected p-value below \u{03b1} = {}: a sign-flip \
         permutation test of the one-sample t statistic per region (null: {}), corrected over \
         regions by the maximum statistic (Nichols & Holmes 2002).",
        alpha_text(f),
        if f.group_null.is_empty() {
            "share = 0"
        } else {
            &f.group_null
        }
    );
    glance_section(h, cards, Some(&note));
}

/// The card of component `c`: the surviving regions, the leading one first.
fn glance_card(h: &mut Html, f: &CompareFile, c: &CompareComponent) {
    let survivors: Vec<usize> = order(f, c)
        .into_iter()
        .filter(|&reg| surviving(f, c, reg))
        .collect();
    let Some(&reg) = survivors.first() else {
        h.element(
            "p",
            "region",
            &format!(
                "no region survives the correction at \u{03b1} = {}",
                alpha_text(f)
            ),
        );
        return;
    };
    card_lead(h, c.mean_share[reg], &f.region_names[reg]);
    h.element(
        "p",
        "small",
        &format!(
            "corrected p = {} \u{00b7} interval {}",
            fixed(c.p_corrected[reg], 3),
            interval(c.mean_low[reg], c.mean_high[reg])
        ),
    );
    // The card names the regions the cohort relies on: a consistently tiny
    // (or negative) share can survive the test but is listed only in the
    // region table.
    let (listed, small): (Vec<usize>, Vec<usize>) = survivors[1..]
        .iter()
        .partition(|&&r| c.mean_share[r] >= GLANCE_MIN_SHARE);
    for &other in &listed {
        h.element(
            "p",
            "small",
            &format!(
                "also {} ({}, corrected p = {})",
                f.region_names[other],
                percent(c.mean_share[other], 1),
                fixed(c.p_corrected[other], 3)
            ),
        );
    }
    if !small.is_empty() {
        h.element(
            "p",
            "small",
            &format!(
                "{} more surviving region{} with a mean share below {} (see the table)",
                small.len(),
                if small.len() == 1 { "" } else { "s" },
                percent(GLANCE_MIN_SHARE, 0)
            ),
        );
    }
}

/// Mean and minimum of the off-diagonal finite entries of a square matrix.
fn off_diagonal(m: &[f64], n: usize) -> Option<(f64, f64)> {
    let vals: Vec<f64> = (0..n * n)
        .filter(|i| i / n < i % n)
        .map(|i| m[i])
        .filter(|x| x.is_finite())
        .collect();
    if vals.is_empty() {
        return None;
    }
    let mean = vals.iter().sum::<f64>() / vals.len() as f64;
    let min = vals.iter().copied().fold(f64::INFINITY, f64::min);
    Some((mean, min))
}

fn component_section(h: &mut Html, f: &CompareFile, ci: usize, figs: &ComponentCharts) {
    let c = &f.components[ci];
    let n_s = f.subjects.len();
    let mut headline = match off_diagonal(&c.cosine, n_s) {
        Some((mean, min)) => format!(
            "map similarity: mean cosine {}, lowest {}",
            fixed(mean, 2),
            fixed(min, 2)
        ),
        None => "map similarity: not available".to_string(),
    };
    if let Some((mean, _)) = off_diagonal(&c.transport_mm, n_s) {
        headline.push_str(&format!(
            " \u{00b7} mean transport distance {} mm",
            fixed(mean, 1)
        ));
    }
    if c.sign_flips > 0 {
        headline.push_str(&format!(" \u{00b7} {} sign vectors", c.sign_flips));
    }
    section_of(h, ci, &c.name, &headline, |h| {
        if let Some(svg) = &figs.means {
            h.element("h3", "", "Group mean");
            let caption =
                "Bars: mean share over subjects; whiskers: percentile bootstrap interval \
                 over subjects; dots: mean selection frequency.";
            figures(h, "", [(svg.as_str(), caption)]);
        }
        if !figs.cortex.is_empty() {
            h.element("h3", "", "Group mean share on the template cortex");
            let items = figs
                .cortex
                .iter()
                .map(|(img, c)| (img.as_str(), c.as_str()));
            figures(h, "cortex", items);
            let largest = c
                .mean_share
                .iter()
                .copied()
                .filter(|v| v.is_finite())
                .fold(0.0, |m: f64, v| m.max(v.abs()));
            h.element(
                "p",
                "note",
                &format!(
                    "Each region painted with its group mean share (darker is larger in size, up \
                     to the largest region's {}; negative shares, where present, in blue on a map \
                     centred at zero); regions within {} of zero are left grey; lines: region \
                     borders. {MARKS_NOTE}",
                    percent(largest, 1),
                    percent(SHOWN_SHARE, 1)
                ),
            );
        }
        region_table(h, f, c);
        if figs.shares.is_some() || figs.similarity.is_some() {
            h.element("h3", "", "Subjects");
            let items = [
                (
                    &figs.shares,
                    "Share of each region in each subject's fitted pattern.",
                ),
                (
                    &figs.similarity,
                    "Cosine similarity of the subjects' source maps after geodesic Gaussian smoothing.",
                ),
            ];
            let items = items
                .into_iter()
                .filter_map(|(svg, caption)| svg.as_deref().map(|svg| (svg, caption)));
            figures(h, "", items);
        }
    });
}

fn region_table(h: &mut Html, f: &CompareFile, c: &CompareComponent) {
    h.element("h3", "", "Regions");
    let columns = [
        ("region", ""),
        ("mean share", "num"),
        ("interval", "num"),
        ("consistency", "num"),
        ("mean selection frequency", "num"),
        ("p", "num"),
        ("p corrected", "num"),
    ];
    table(h, &columns, |h| {
        let mut hidden = 0usize;
        let mut hidden_sum = 0.0;
        for (rank, reg) in order(f, c).into_iter().enumerate() {
            if !is_shown(f, c, rank, reg) {
                hidden += 1;
                if c.mean_share[reg].is_finite() {
                    hidden_sum += c.mean_share[reg];
                }
                continue;
            }
            let cells = [
                percent(c.mean_share[reg], 1),
                interval(c.mean_low[reg], c.mean_high[reg]),
                percent(c.consistency[reg], 0),
                percent(c.mean_selection_frequency[reg], 0),
                fixed(c.p_raw[reg], 4),
                fixed(c.p_corrected[reg], 4),
            ];
            region_row(h, &f.region_names[reg], surviving(f, c, reg), &cells);
        }
        if hidden > 0 {
            let why = "not surviving the correction";
            hidden_row(h, hidden, SHOWN_SHARE, why, hidden_sum, 5);
        }
    });
    h.element(
        "p",
        "note",
        "Interval: percentile bootstrap over subjects of the group mean. Consistency: the fraction \
         of subjects whose own interval excludes zero. Highlighted rows survive the max-statistic \
         correction.",
    );
}

fn paired_section(h: &mut Html, f: &CompareFile) {
    let Some(p) = &f.paired else {
        return;
    };
    section(h, "paired", "Paired comparison of two decoders", |h| {
        h.element(
            "p",
            "headline",
            &format!(
                "{} subjects with both results: {}",
                p.subjects.len(),
                p.subjects.join(", ")
            ),
        );
        let alpha = if f.alpha.is_finite() { f.alpha } else { 0.05 };
        for (ci, pc) in p.components.iter().enumerate() {
            let name = f
                .components
                .get(ci)
                .map_or_else(|| format!("component {ci}"), |c| c.name.clone());
            h.element("h3", "", &name);
            let mut order: Vec<usize> = (0..f.region_names.len()).collect();
            let key = |r: usize| {
                let v = pc.mean_difference[r].abs();
                if v.is_nan() {
                    f64::NEG_INFINITY
                } else {
                    v
                }
            };
            order.sort_by(|&x, &y| key(y).total_cmp(&key(x)).then(x.cmp(&y)));
            let columns = [
                ("region", ""),
                ("mean difference A \u{2212} B", "num"),
                ("interval", "num"),
                ("p", "num"),
                ("p corrected", "num"),
            ];
            table(h, &columns, |h| {
                for (rank, reg) in order.into_iter().enumerate() {
                    let survives = pc.p_corrected[reg] < alpha;
                    if rank >= SHOWN_TOP && !survives && pc.mean_difference[reg].abs() < SHOWN_SHARE
                    {
                        continue;
                    }
                    let cells = [
                        percent(pc.mean_difference[reg], 1),
                        interval(pc.mean_low[reg], pc.mean_high[reg]),
                        fixed(pc.p_raw[reg], 4),
                        fixed(pc.p_corrected[reg], 4),
                    ];
                    region_row(h, &f.region_names[reg], survives, &cells);
                }
            });
        }
        if !p.null.is_empty() {
            h.element("p", "note", &format!("Null hypothesis: {}.", p.null));
        }
    });
}

fn settings(h: &mut Html, f: &CompareFile) {
    section(h, "settings", "How it was compared", |h| {
        facts(h, |h| settings_facts(h, f));
    });
}

/// The facts of the settings section.
fn settings_facts(h: &mut Html, f: &CompareFile) {
    fact(h, "subjects", &f.subjects.len().to_string());
    fact(h, "regions", &f.region_names.len().to_string());
    if f.template_vertices > 0 {
        fact(h, "template vertices", &f.template_vertices.to_string());
    }
    if f.bootstrap_resamples >= 0 {
        fact(
            h,
            "interval",
            &format!(
                "{} percentile bootstrap over subjects, {} resamples",
                percent(f.level, 0),
                f.bootstrap_resamples
            ),
        );
    }
    fact(h, "family-wise error level \u{03b1}", &alpha_text(f));
    if f.seed >= 0 {
        fact(h, "seed", &f.seed.to_string());
    }
    fact(
        h,
        "smoothing",
        &format!(
            "geodesic Gaussian, \u{03c3} = {} mm, cut at {} mm",
            fixed(f.smoothing_sigma_mm, 1),
            fixed(f.smoothing_cutoff_mm, 1)
        ),
    );
    fact(
        h,
        "transport",
        &if f.transport_epsilon_mm.is_finite() {
            format!(
                "entropic, \u{03b5} = {} mm (Cuturi 2013)",
                fixed(f.transport_epsilon_mm, 2)
            )
        } else {
            "not computed".to_string()
        },
    );
}

fn inputs(h: &mut Html, f: &CompareFile) {
    section(h, "inputs", "Inputs", |h| {
        // A paired comparison reads two results per subject: A's columns,
        // then B's.
        let paired = !f.input_results_b.is_empty();
        let mut columns = vec![("subject", "")];
        if paired {
            columns.extend([
                ("result A", ""),
                ("map A", ""),
                ("SHA-256 A", ""),
                ("result B", ""),
                ("map B", ""),
                ("SHA-256 B", ""),
            ]);
        } else {
            columns.extend([("result", ""), ("map", ""), ("SHA-256", "")]);
        }
        table(h, &columns, |h| {
            let get = |v: &[String], i: usize| v.get(i).cloned().unwrap_or_default();
            for (i, s) in f.subjects.iter().enumerate() {
                let mut cells = vec![
                    (escape(s), ""),
                    (escape(&get(&f.input_results, i)), ""),
                    (escape(&get(&f.input_mapping, i)), ""),
                    (escape(&get(&f.input_sha256, i)), "hash"),
                ];
                if paired {
                    cells.extend([
                        (escape(&get(&f.input_results_b, i)), ""),
                        (escape(&get(&f.input_mapping_b, i)), ""),
                        (escape(&get(&f.input_sha256_b, i)), "hash"),
                    ]);
                }
                h.row(&cells, true);
            }
        });
        notes(h, &f.warnings);
    });
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::io::result_file::CAUTION;

    /// Two subjects, two regions, one component; region "b" survives.
    fn tiny() -> CompareFile {
        CompareFile {
            path: "grp/compare.h5".into(),
            caution: CAUTION.to_string(),
            software: "patchwise test".into(),
            warnings: vec!["note <b>".into()],
            subjects: vec!["s<1>".into(), "s&2".into()],
            region_names: vec!["a".into(), "b\"x".into()],
            input_results: vec!["s1/result.h5".into(), "s2/result.h5".into()],
            input_sha256: vec!["ab".into(), "cd".into()],
            input_mapping: vec!["same mesh".into(); 2],
            input_results_b: Vec::new(),
            input_sha256_b: Vec::new(),
            input_mapping_b: Vec::new(),
            components: vec![CompareComponent {
                name: "c<0>".into(),
                share: vec![0.2, 0.8, 0.1, 0.9],
                consistency: vec![0.5, 1.0],
                mean_selection_frequency: vec![f64::NAN, 1.0],
                lead_fraction: None,
                mean_share: vec![0.15, 0.85],
                mean_low: vec![0.1, 0.8],
                mean_high: vec![0.2, 0.9],
                t: vec![3.0, 17.0],
                p_raw: vec![0.5, 0.01],
                p_corrected: vec![0.5, 0.01],
                sign_flips: 4,
                cosine: vec![1.0, 0.9, 0.9, 1.0],
                transport_mm: vec![f64::NAN; 4],
            }],
            group_null: "share = 0".into(),
            bootstrap_resamples: 10,
            level: 0.95,
            alpha: 0.05,
            seed: 1,
            smoothing_sigma_mm: 10.0,
            smoothing_cutoff_mm: 30.0,
            transport_epsilon_mm: f64::NAN,
            template_vertices: 7,
            paired: None,
        }
    }

    #[test]
    fn file_strings_are_escaped_and_the_survivor_is_at_a_glance() {
        let html = build_compare_report(&tiny(), &CompareReportOptions::default()).unwrap();
        for raw in ["s<1>", "c<0>", "note <b>", "b\"x"] {
            assert!(!html.contains(raw), "{raw} is not escaped");
        }
        assert!(html.contains("s&amp;2") && html.contains("c&lt;0&gt;"));
        let glance =
            &html[html.find("id=\"glance\"").unwrap()..html.find("id=\"component-0\"").unwrap()];
        assert!(glance.contains("b&quot;x") && !glance.contains("<p class=\"region\">a</p>"));
        assert!(html.contains("not computed"), "transport was skipped");
    }

    #[test]
    fn inconsistent_sizes_are_refused_by_the_reader_naming_the_dataset() {
        // The reader runs this check, so the page never sees such a file.
        use crate::io::compare_read::check_compare_layout;
        check_compare_layout(&tiny()).unwrap();
        let mut f = tiny();
        f.components[0].cosine.pop();
        let err = check_compare_layout(&f).unwrap_err();
        let text = err.to_string();
        assert!(
            text.contains("grp/compare.h5") && text.contains("/similarity/cosine"),
            "{text}"
        );
    }
}
