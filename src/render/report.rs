//! The self-contained HTML report of a result: the job, the inputs and their
//! hashes, fit quality, region tables with intervals, pictures and the
//! caution, in one page that needs no other file and no network.
//!
//! The page is built as a string; writing it is the caller's business (the
//! CLI writes it with `crate::io::atomic::write_atomic`). Every string that
//! comes from a file is escaped (see [`super::report_html::escape`]), and the
//! page carries a content security policy that forbids any fetch. The frame
//! of the page (head, masthead, caution, sections, tables, footer) is the
//! skeleton of [`super::page`], shared with the comparison page.

use rayon::prelude::*;

pub use super::page::ReportError;
use super::page::{
    card, card_lead, component_section as section_of, fact, facts as fact_list, figures,
    folder_title, glance as glance_section, hidden_row, interval, notes, order_by, page,
    region_row, section, table, Frame,
};
use super::report_figures::{component_figures, ComponentFigures};
use super::report_gain::gain_views;
use super::report_html::{escape, fixed, percent, scientific, Html};
use crate::io::result_file::ResultFile;

/// Choices for the report.
#[derive(Debug, Clone, Default)]
pub struct ReportOptions {
    /// Page title; default "Region attribution" followed by the folder name.
    pub title: Option<String>,
    /// What was asked (name, value), e.g. ("decoder", "bci.npz"),
    /// ("montage", "10-10"). When empty, the `job` object of the summary
    /// is used if it has one.
    pub job: Vec<(String, String)>,
    /// Leave the pictures out (tables only).
    pub no_figures: bool,
}

/// Share at or above which a region always gets its own row in a region
/// table (smaller ones are counted in one closing line).
const SHOWN_SHARE: f64 = 0.005;
/// Selection frequency at or above which a region gets its own row.
const SHOWN_FREQUENCY: f64 = 0.05;
/// Regions always listed, whatever their share.
const SHOWN_TOP: usize = 3;

/// Build the report page of `result` (with the summary.json written beside
/// it, when available) as one HTML string.
pub fn build_report(
    result: &ResultFile,
    summary: Option<&serde_json::Value>,
    options: &ReportOptions,
) -> Result<String, ReportError> {
    let facts: Vec<ComponentFacts> = (0..result.k)
        .map(|c| ComponentFacts::new(result, summary, c))
        .collect();
    // With a time axis, only the columns at the leading regions' peak times.
    let shown_columns = super::report_time::shown_columns(result);
    let figures: Vec<ComponentFigures> = if options.no_figures {
        (0..result.k).map(|_| ComponentFigures::default()).collect()
    } else {
        (0..result.k)
            .into_par_iter()
            .map(|c| {
                if !shown_columns[c] {
                    return Ok(ComponentFigures::default());
                }
                let shown = (0..facts[c].order.len())
                    .filter(|&rank| is_shown(result, &facts[c], c, rank))
                    .count();
                let mut figs = component_figures(result, c, &facts[c].order, shown)?;
                // The filter's gain right after the source map (or why there is none).
                if let Some(g) = gain_views(result, c)? {
                    let at = figs
                        .groups
                        .iter()
                        .position(|g| g.title.starts_with("Source map"))
                        .map_or(figs.groups.len().min(1), |i| i + 1);
                    figs.groups.insert(at, g);
                }
                Ok(figs)
            })
            .collect::<Result<_, _>>()?
    };
    let title = options
        .title
        .clone()
        .unwrap_or_else(|| folder_title(&result.path, "Region attribution", "result"));
    let frame = Frame {
        title: &title,
        kicker: "patchwise \u{00b7} which cortical regions a decoder relies on",
        facts: masthead_facts(result),
        stored_caution: &result.caution,
        file_kind: "result file",
        software: &result.software,
        path: &result.path,
    };
    Ok(page(
        &frame,
        |h| {
            // Answer first (the leading regions and how well the fit explains
            // the patterns), then the evidence per component, then how it
            // was made.
            glance(h, result, &facts, &figures, &shown_columns);
            time_section_or_note(h, result);
            fit_quality(h, &facts);
            super::report_dipoles::dipole_section(h, result);
            for (c, figs) in figures.iter().enumerate() {
                if shown_columns[c] {
                    component_section(h, result, &facts[c], figs, c);
                }
            }
        },
        |h| {
            job(h, result, summary, options);
            inputs(h, result, summary);
        },
    ))
}

/// How many patches a component's fit kept, and where that count came from.
enum Active {
    /// Patches (groups) with a non-zero block, from the summary or the path.
    Patches(usize),
    /// Without group information: atoms with a non-zero coefficient.
    Atoms(usize),
}

/// The numbers the page shows for one component.
struct ComponentFacts {
    name: String,
    explained_variance: f64,
    lambda: f64,
    ratio: f64,
    duality_gap: f64,
    iterations: i64,
    active: Active,
    /// Region indices by decreasing share.
    order: Vec<usize>,
    peak_mm: [f64; 3],
    peak_region: Option<String>,
    unassigned: f64,
}

impl ComponentFacts {
    fn new(r: &ResultFile, summary: Option<&serde_json::Value>, c: usize) -> ComponentFacts {
        let k = r.k;
        let f = &r.fit;
        let a = &r.attribution;
        let ratio = f.lambda[c] / f.lambda_max[c];
        let from_summary = summary
            .and_then(|s| s.get("components"))
            .and_then(|v| v.get(c))
            .and_then(|v| v.get("active_patches"))
            .and_then(|v| v.as_u64())
            .map(|n| n as usize);
        let from_path = f.path.as_ref().and_then(|p| {
            (0..p.n_points)
                .find(|&i| (p.ratio[i * k + c] - ratio).abs() <= 1e-9 * ratio.abs())
                .map(|i| p.active_patches[i * k + c])
                .filter(|n| n.is_finite() && *n >= 0.0)
                .map(|n| n as usize)
        });
        let active = match from_summary.or(from_path) {
            Some(n) => Active::Patches(n),
            None => Active::Atoms(
                (0..f.n_atoms)
                    .filter(|&j| f.coefficients[j * k + c] != 0.0)
                    .count(),
            ),
        };
        let order = order_by(&a.region_names, |reg| a.share[reg * k + c]);
        let peak_region = usize::try_from(a.peak_region[c])
            .ok()
            .and_then(|i| a.region_names.get(i).cloned());
        ComponentFacts {
            name: r.component_names[c].clone(),
            explained_variance: f.explained_variance[c],
            lambda: f.lambda[c],
            ratio,
            duality_gap: f.duality_gap[c],
            iterations: f.iterations[c],
            active,
            order,
            peak_mm: a.peak_mm[c],
            peak_region,
            unassigned: a.unassigned_share[c],
        }
    }
}

/// Share, interval ends and selection frequency of region `reg` in component `c`.
fn region_numbers(r: &ResultFile, reg: usize, c: usize) -> (f64, f64, f64, f64) {
    let a = &r.attribution;
    let i = reg * r.k + c;
    let pick = |v: &Option<Vec<f64>>| v.as_ref().map_or(f64::NAN, |v| v[i]);
    (
        a.share[i],
        pick(&a.share_low),
        pick(&a.share_high),
        pick(&a.selection_frequency),
    )
}

/// The fraction of resamples in which region `reg` leads component `c`
/// (NaN when the result has none).
fn lead_frequency(r: &ResultFile, reg: usize, c: usize) -> f64 {
    r.attribution
        .lead_frequency
        .as_ref()
        .map_or(f64::NAN, |v| v[reg * r.k + c])
}

/// The masthead's line of facts: the file, its channels and components, the program.
fn masthead_facts(r: &ResultFile) -> String {
    let components = if r.k == 1 {
        "1 component".to_string()
    } else {
        format!("{} components", r.k)
    };
    format!(
        "{} \u{00b7} {} channels \u{00b7} {} \u{00b7} {}",
        r.path.display(),
        r.labels.len(),
        components,
        r.software
    )
}

/// The region × time section, or a note naming the figure that failed.
fn time_section_or_note(h: &mut Html, r: &ResultFile) {
    if let Err(e) = super::report_time::time_section(h, r) {
        h.element("p", "flag", &e.to_string());
    }
}

fn glance(
    h: &mut Html,
    r: &ResultFile,
    facts: &[ComponentFacts],
    figures: &[ComponentFigures],
    shown: &[bool],
) {
    let cards = |h: &mut Html| {
        for (c, f) in facts.iter().enumerate() {
            if shown[c] {
                card(h, &f.name, |h| glance_card(h, r, f, &figures[c], c));
            }
        }
    };
    let note = "Share: the part of the fitted pattern that the patches of a region explain (patch \
         contributions projected on the fitted pattern, split over regions by the patch \
         profiles); shares and the unassigned part sum to 100 %. A negative share means the \
         region's patches cancel part of the fitted pattern. Intervals are 95 % bootstrap \
         intervals (resamples of the noise and of the head model) that hold the share and the \
         range of the resampled shares.";
    let note = (!r.attribution.region_names.is_empty()).then_some(note);
    glance_section(h, cards, note);
}

/// The card of component `c`: its thumbnail, leading region with its
/// interval and frequencies, explained variance and flag.
fn glance_card(
    h: &mut Html,
    r: &ResultFile,
    f: &ComponentFacts,
    figs: &ComponentFigures,
    c: usize,
) {
    if let Some(thumb) = &figs.thumbnail {
        h.raw("<div class=\"thumb\">")
            .raw(&thumb.markup)
            .raw("</div>");
    }
    match f.order.first() {
        Some(&reg) => {
            let (share, low, high, freq) = region_numbers(r, reg, c);
            card_lead(h, share, &r.attribution.region_names[reg]);
            let mut detail: Vec<String> = Vec::new();
            if low.is_finite() {
                detail.push(format!("95\u{2009}% interval {}", interval(low, high)));
            }
            if freq.is_finite() {
                detail.push(format!("selected in {}", percent(freq, 0)));
            }
            let lead = lead_frequency(r, reg, c);
            if lead.is_finite() {
                detail.push(format!("leads in {}", percent(lead, 0)));
            }
            let probability = r
                .attribution
                .leader_probability
                .as_ref()
                .and_then(|p| p.get(c).copied())
                .filter(|p| p.is_finite() && r.attribution.share[reg * r.k + c] > 0.0);
            if let Some(p) = probability {
                detail.push(format!(
                    "probability it truly leads {p:.2} (lead frequency calibrated on simulated cases)"
                ));
            }
            if !detail.is_empty() {
                h.element("p", "small", &detail.join(" \u{00b7} "));
            }
        }
        None => {
            h.element(
                "p",
                "region",
                "no region table (the dictionary had no source space)",
            );
        }
    }
    h.element(
        "p",
        "small",
        &format!("explained variance {}", percent(f.explained_variance, 1)),
    );
    if let Some(flag) = r.flags.get(c).filter(|f| !f.is_empty()) {
        h.element("p", "flag", flag);
    }
}

/// The value of a summary.json entry as plain text.
fn json_text(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::String(s) => s.clone(),
        serde_json::Value::Null => "\u{2013}".to_string(),
        serde_json::Value::Array(items) => {
            items.iter().map(json_text).collect::<Vec<_>>().join(", ")
        }
        other => other.to_string(),
    }
}

/// The λ rule as the fit applied it, read from the result.
fn lambda_rule(r: &ResultFile) -> String {
    let k = r.k;
    if let Some(p) = &r.fit.path {
        let ratios: Vec<f64> = (0..p.n_points * k)
            .map(|i| p.ratio[i])
            .filter(|x| x.is_finite())
            .collect();
        if !ratios.is_empty() {
            let lo = ratios.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = ratios.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            return format!(
                "minimum BIC along a path of {} values of \u{03bb}/\u{03bb}max from {} to {}",
                p.n_points,
                fixed(hi, 2),
                fixed(lo, 2)
            );
        }
    }
    let ratios: Vec<f64> = (0..k)
        .map(|c| r.fit.lambda[c] / r.fit.lambda_max[c])
        .collect();
    let same = ratios
        .windows(2)
        .all(|w| (w[0] - w[1]).abs() <= 1e-9 * w[0].abs().max(w[1].abs()));
    match ratios.first() {
        Some(x) if same => format!("fixed: \u{03bb} = {} \u{00b7} \u{03bb}max", fixed(*x, 4)),
        Some(_) => "fixed \u{03bb} per component (see the fit table)".to_string(),
        None => "\u{2013}".to_string(),
    }
}

fn job(h: &mut Html, r: &ResultFile, summary: Option<&serde_json::Value>, o: &ReportOptions) {
    section(h, "job", "The job", |h| job_facts(h, r, summary, o));
}

/// The words of a key of summary.json's `job` (an identifier, e.g.
/// `stopping_rule`) as the page shows them.
fn asked_label(key: &str) -> String {
    match key {
        "lambda_rule_asked" => "\u{03bb} rule (asked)".to_string(),
        other => other.replace('_', " "),
    }
}

/// The facts of the job section: what was asked, then what the fit records.
fn job_facts(h: &mut Html, r: &ResultFile, summary: Option<&serde_json::Value>, o: &ReportOptions) {
    h.raw("<dl class=\"facts\">\n");
    let mut asked: Vec<(String, String)> = o.job.clone();
    if asked.is_empty() {
        if let Some(obj) = summary
            .and_then(|s| s.get("job"))
            .and_then(|j| j.as_object())
        {
            asked = obj.iter().map(|(k, v)| (k.clone(), json_text(v))).collect();
        }
    }
    for (name, value) in &asked {
        fact(h, &asked_label(name), value);
    }
    fact(h, "\u{03bb} rule (as fitted)", &lambda_rule(r));
    let joint = summary
        .and_then(|s| s.get("joint_fit"))
        .and_then(|v| v.as_bool())
        .filter(|_| asked.is_empty());
    if let Some(joint) = joint {
        fact(
            h,
            "components",
            if joint {
                "fitted jointly (one shared set of patches)"
            } else {
                "fitted one by one"
            },
        );
    }
    if let Some(w) = summary
        .and_then(|s| s.get("whitened"))
        .and_then(|v| v.as_bool())
    {
        fact(
            h,
            "whitening",
            if w {
                "by the given noise covariance"
            } else {
                "none (white sensor noise assumed)"
            },
        );
    }
    let resamples = summary
        .and_then(|s| s.get("resamples"))
        .and_then(|v| v.as_u64());
    match resamples {
        Some(0) | None if r.attribution.share_low.is_none() => {
            fact(h, "intervals", "none (no resampling)")
        }
        Some(n) => fact(
            h,
            "intervals",
            &format!("95 % percentile intervals over {n} bootstrap resamples"),
        ),
        None => fact(
            h,
            "intervals",
            "95 % percentile intervals over bootstrap resamples",
        ),
    }
    h.raw("</dl>\n");
    if asked.is_empty() {
        h.element(
            "p",
            "note",
            "The result folder does not record the command-line choices; the entries above are read from the fit itself.",
        );
    }
}

fn inputs(h: &mut Html, r: &ResultFile, summary: Option<&serde_json::Value>) {
    section(h, "inputs", "Inputs", |h| {
        fact_list(h, |h| {
            fact(h, "patterns", &r.patterns_source);
            fact(h, "channels", &r.labels.len().to_string());
            fact(h, "components", &r.k.to_string());
            fact(h, "dictionary atoms", &r.fit.n_atoms.to_string());
            if let Some(s) = &r.sources {
                fact(
                    h,
                    "cortical sources",
                    &format!("{} ({} triangles)", s.len(), s.triangles.len()),
                );
            }
            fact(h, "regions", &r.attribution.region_names.len().to_string());
            if let Some(n) = summary
                .and_then(|s| s.get("channels"))
                .and_then(|v| v.as_u64())
            {
                if n as usize != r.labels.len() {
                    fact(h, "channels (summary.json)", &n.to_string());
                }
            }
        });
        if !r.hashes.is_empty() {
            h.element("h3", "", "SHA-256 of the inputs");
            table(h, &[("input", ""), ("hash", "")], |h| {
                for (name, hash) in &r.hashes {
                    h.row(&[(escape(name), ""), (escape(hash), "hash")], true);
                }
            });
        }
        h.element("h3", "", "Channels, in fit order");
        h.element("p", "labels", &r.labels.join(" \u{00b7} "));
        notes(h, &r.notes);
    });
}

fn fit_quality(h: &mut Html, facts: &[ComponentFacts]) {
    section(h, "fit", "Fit quality", |h| {
        let mut any_atoms = false;
        let columns = [
            ("component", ""),
            ("explained variance", "num"),
            ("\u{03bb}/\u{03bb}max", "num"),
            ("\u{03bb}", "num"),
            ("relative duality gap", "num"),
            ("iterations", "num"),
            ("active patches", "num"),
            ("unassigned share", "num"),
        ];
        table(h, &columns, |h| {
            for f in facts {
                let active = match f.active {
                    Active::Patches(n) => n.to_string(),
                    Active::Atoms(n) => {
                        any_atoms = true;
                        format!("{n} atoms*")
                    }
                };
                h.row(
                    &[
                        (escape(&f.name), ""),
                        (percent(f.explained_variance, 1), "num"),
                        (fixed(f.ratio, 4), "num"),
                        (scientific(f.lambda, 2), "num"),
                        (scientific(f.duality_gap, 1), "num"),
                        (f.iterations.to_string(), "num"),
                        (active, "num"),
                        (percent(f.unassigned, 1), "num"),
                    ],
                    true,
                );
            }
        });
        h.element(
            "p",
            "note",
            "Explained variance: 1 \u{2212} \u{2016}y \u{2212} \u{0177}\u{2016}\u{00b2} / \u{2016}y\u{2016}\u{00b2} of the \
             pattern y and its fit \u{0177}. The duality gap is relative to \u{00bd}\u{2016}y\u{2016}\u{00b2}; it bounds \
             how far the objective is from its minimum. \u{03bb} is in the units of the (whitened) patterns.",
        );
        if any_atoms {
            h.element(
                "p",
                "note",
                "* Without the patch groups, the count is of atoms with a non-zero coefficient.",
            );
        }
    });
}

fn component_section(
    h: &mut Html,
    r: &ResultFile,
    f: &ComponentFacts,
    figs: &ComponentFigures,
    c: usize,
) {
    let mut headline = format!("explained variance {}", percent(f.explained_variance, 1));
    if f.peak_mm.iter().all(|x| x.is_finite()) {
        headline.push_str(&format!(
            " \u{00b7} peak of the source map (its largest |source|) at ({:.0}, {:.0}, {:.0}) mm",
            f.peak_mm[0], f.peak_mm[1], f.peak_mm[2]
        ));
        if let Some(name) = &f.peak_region {
            headline.push_str(&format!(" in {name}"));
        }
    }
    section_of(h, c, &f.name, &headline, |h| {
        for group in &figs.groups {
            h.element("h3", "", &group.title);
            let items = group
                .figures
                .iter()
                .map(|fig| (fig.markup.as_str(), fig.caption.as_str()));
            if !group.figures.is_empty() {
                figures(h, group.layout, items);
            }
            if !group.note.is_empty() {
                h.element("p", "note", &group.note);
            }
        }
        region_table(h, r, f, c);
    });
}

/// Whether the region of rank `rank` in component `c` gets its own row.
fn is_shown(r: &ResultFile, f: &ComponentFacts, c: usize, rank: usize) -> bool {
    let (share, _, _, freq) = region_numbers(r, f.order[rank], c);
    rank < SHOWN_TOP || share.abs() >= SHOWN_SHARE || (freq.is_finite() && freq >= SHOWN_FREQUENCY)
}

fn region_table(h: &mut Html, r: &ResultFile, f: &ComponentFacts, c: usize) {
    h.element("h3", "", "Regions");
    if f.order.is_empty() {
        h.element(
            "p",
            "note",
            "No region table: the dictionary this result was fitted with had no source space or patch profiles.",
        );
        return;
    }
    let columns = [
        ("region", ""),
        ("share", "num"),
        ("95 % interval", "num"),
        ("selected in", "num"),
        ("leads in", "num"),
    ];
    table(h, &columns, |h| {
        let mut hidden = 0usize;
        let mut hidden_sum = 0.0;
        for (rank, &reg) in f.order.iter().enumerate() {
            let (share, low, high, freq) = region_numbers(r, reg, c);
            if !is_shown(r, f, c, rank) {
                hidden += 1;
                hidden_sum += share;
                continue;
            }
            let cells = [
                percent(share, 1),
                interval(low, high),
                percent(freq, 0),
                percent(lead_frequency(r, reg, c), 0),
            ];
            region_row(h, &r.attribution.region_names[reg], rank == 0, &cells);
        }
        if f.unassigned.abs() >= SHOWN_SHARE {
            h.raw("<tr class=\"faint\"><th>sources outside every region</th>");
            h.raw(&format!(
                "<td class=\"num\">{}</td><td class=\"num\">\u{2013}</td><td class=\"num\">\u{2013}</td><td class=\"num\">\u{2013}</td></tr>\n",
                percent(f.unassigned, 1)
            ));
        }
        if hidden > 0 {
            let why = format!("selected in under {}", percent(SHOWN_FREQUENCY, 0));
            hidden_row(h, hidden, SHOWN_SHARE, &why, hidden_sum, 3);
        }
    });
    if r.attribution.share_low.is_some() {
        h.element(
            "p",
            "note",
            &format!(
                "Interval: 2.5\u{2013}97.5 % percentiles of the share over a parametric bootstrap (the fit plus \
                 resampled noise at the residual's level, refitted at the same \u{03bb}). Selected in: the percentage \
                 of resamples in which the region's share reached {:.0} %. Leads in: the percentage of resamples in which \
                 the region had the largest share; support split between regions means the data do not decide \
                 which of them leads.",
                100.0 * crate::pipeline::SELECTION_THRESHOLD
            ),
        );
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::io::result_file::{ResultAttribution, ResultFit, CAUTION};

    /// A two-channel, one-component, two-region result without pictures.
    fn tiny() -> ResultFile {
        ResultFile {
            dipoles: None,
            filter_gain: None,
            time: None,
            path: "tiny/result.h5".into(),
            hashes: vec![("decoder".into(), "ab".into())],
            caution: CAUTION.to_string(),
            software: "patchwise test".into(),
            notes: vec![],
            flags: vec![String::new()],
            labels: vec!["C3".into(), "C4".into()],
            component_names: vec!["c0".into()],
            k: 1,
            patterns: vec![1.0, -1.0],
            patterns_source: "patterns".into(),
            electrode_positions: None,
            sources: None,
            fit: ResultFit {
                n_atoms: 2,
                coefficients: vec![0.5, 0.0],
                lambda: vec![0.1],
                lambda_max: vec![1.0],
                duality_gap: vec![1e-9],
                iterations: vec![12],
                explained_variance: vec![0.9],
                residual: vec![0.1, -0.1],
                reconstruction: None,
                path: None,
            },
            attribution: ResultAttribution {
                region_names: vec!["a".into(), "b".into()],
                share: vec![0.25, 0.75],
                share_low: None,
                share_high: None,
                selection_frequency: None,
                lead_frequency: None,
                source_map: vec![],
                peak_mm: vec![[f64::NAN; 3]],
                peak_region: vec![-1],
                unassigned_share: vec![0.0],
                noise_sd: None,
                leader_probability: None,
            },
        }
    }

    #[test]
    fn regions_are_listed_by_decreasing_share() {
        let html = build_report(&tiny(), None, &ReportOptions::default()).unwrap();
        let b = html.find("<th>b</th>").unwrap();
        let a = html.find("<th>a</th>").unwrap();
        assert!(b < a, "region b (75 %) must come before a (25 %)");
        // Without groups the active count is of non-zero atoms (1 of 2).
        assert!(html.contains("1 atoms*"));
        assert!(html.contains("fixed: \u{03bb} = 0.1000"));
    }

    #[test]
    fn inconsistent_sizes_are_refused_by_the_reader_naming_the_dataset() {
        // The reader runs this check, so the page never sees such a file.
        use crate::io::result_read::check_result_layout;
        let mut r = tiny();
        r.fit.lambda.push(0.2);
        let err = check_result_layout(&r).unwrap_err();
        let text = err.to_string();
        assert!(
            text.contains("tiny/result.h5") && text.contains("/fit/lambda"),
            "{text}"
        );
        let mut r = tiny();
        r.attribution.share.pop();
        let err = check_result_layout(&r).unwrap_err();
        assert!(err.to_string().contains("/attribution/share"));
    }

    #[test]
    fn the_fixture_is_whole() {
        crate::io::result_read::check_result_layout(&tiny()).unwrap();
    }

    #[test]
    fn job_comes_from_the_options_or_the_summary() {
        let summary = serde_json::json!({"job": {"montage": "10-10 <x>"}, "resamples": 0});
        let html = build_report(&tiny(), Some(&summary), &ReportOptions::default()).unwrap();
        assert!(html.contains("<dt>montage</dt>\n<dd>10-10 &lt;x&gt;</dd>"));
        let options = ReportOptions {
            job: vec![("decoder".into(), "d.npz".into())],
            ..ReportOptions::default()
        };
        let html = build_report(&tiny(), Some(&summary), &options).unwrap();
        assert!(html.contains("d.npz") && !html.contains("10-10 &lt;x&gt;"));
    }
}
