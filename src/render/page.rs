//! The skeleton both report pages share (the result page, `report.rs`, and
//! the comparison page, `compare_report.rs`):
//! the page head with its content security policy, the masthead, the
//! caution, the "at a glance" cards, sections, figure rows, tables with
//! their region rows, the provenance columns, the notes and the footer.
//!
//! A page is built by [`page`] from a [`Frame`] (what the masthead, caution
//! and footer say) and two closures that write the body and the provenance
//! columns; the pieces in between are the functions of this file.

use std::path::{Path, PathBuf};

use super::report_html::{percent, Html};
use super::report_style::STYLE;
use crate::io::result_file::CAUTION;

/// What can go wrong while building a report page.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum ReportError {
    /// A picture could not be drawn.
    #[error("{}: drawing {figure}: {message}", path.display())]
    Figure {
        /// The result or comparison file.
        path: PathBuf,
        /// Which picture (e.g. `cortex views of component 1`).
        figure: String,
        /// What the picture maker reported.
        message: String,
    },
}

impl ReportError {
    /// The picture `figure` of the page made from `path` failed with `e`.
    pub(crate) fn figure(path: &Path, figure: String, e: impl std::fmt::Display) -> ReportError {
        ReportError::Figure {
            path: path.to_path_buf(),
            figure,
            message: e.to_string(),
        }
    }
}

/// The page's content security policy (W3C Content Security Policy Level 3):
/// no fetches of any kind except inline styles and `data:` images.
const CONTENT_SECURITY_POLICY: &str = "<meta http-equiv=\"Content-Security-Policy\" \
     content=\"default-src 'none'; img-src data:; style-src 'unsafe-inline'; base-uri 'none'; form-action 'none'\"/>\n";

/// What the frame of a page says: its title, the masthead's kicker and
/// facts line, the caution stored in the file, and the file it was made from.
pub(crate) struct Frame<'a> {
    /// The page title (head and masthead).
    pub title: &'a str,
    /// The line above the title.
    pub kicker: &'a str,
    /// The line of facts below the title.
    pub facts: String,
    /// The caution stored in the file (shown when it differs from [`CAUTION`]).
    pub stored_caution: &'a str,
    /// What the file is, in words (e.g. "result file").
    pub file_kind: &'a str,
    /// The program that wrote the file.
    pub software: &'a str,
    /// The file the page was made from.
    pub path: &'a Path,
}

/// A whole page: head, masthead, caution, the `body`, the provenance
/// columns written by `provenance`, the footer.
pub(crate) fn page(
    frame: &Frame,
    body: impl FnOnce(&mut Html),
    provenance: impl FnOnce(&mut Html),
) -> String {
    let mut h = Html::new();
    page_start(&mut h, frame.title);
    masthead(&mut h, frame.kicker, frame.title, &frame.facts);
    caution_box(&mut h, frame.stored_caution, frame.file_kind);
    body(&mut h);
    h.raw("<div class=\"columns provenance\">\n");
    provenance(&mut h);
    h.raw("</div>\n");
    footer(&mut h, frame.software, frame.path);
    h.raw("</main>\n</body>\n</html>\n");
    h.finish()
}

/// The page's head (character set, viewport, content security policy,
/// title, inline style sheet) and the opening of its body and main element.
fn page_start(h: &mut Html, title: &str) {
    h.raw("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n");
    h.raw("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n");
    // The page declares that it loads nothing: pictures are data URIs or
    // inline SVG and the style sheet is inline, so a browser blocks (and
    // reports on its console) anything else, whatever a file string held.
    h.raw(CONTENT_SECURITY_POLICY);
    h.element("title", "", title);
    h.raw("<style>")
        .raw(STYLE)
        .raw("</style>\n</head>\n<body>\n<main>\n");
}

/// "KIND — FOLDER" for the file at `path` (the folder holding it), or
/// "KIND — FALLBACK" when the path has no folder name.
pub(crate) fn folder_title(path: &Path, kind: &str, fallback: &str) -> String {
    let folder = path
        .parent()
        .and_then(|p| p.file_name())
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| fallback.to_string());
    format!("{kind} \u{2014} {folder}")
}

/// The page head: a kicker line, the title and one line of facts.
fn masthead(h: &mut Html, kicker: &str, title: &str, facts: &str) {
    h.raw("<header class=\"masthead\">\n");
    h.element("p", "kicker", kicker);
    h.element("h1", "", title);
    h.element("p", "sub", facts);
    h.raw("</header>\n");
}

/// The caution box: [`CAUTION`], plus the caution `stored` in the file
/// when it says something else (`what` names the file).
fn caution_box(h: &mut Html, stored: &str, what: &str) {
    h.raw("<aside class=\"caution\" role=\"note\"><strong>Caution.</strong>");
    h.text(CAUTION);
    if !stored.is_empty() && stored != CAUTION {
        h.raw(&format!(" <em>The {what} adds:</em> "));
        h.text(stored);
    }
    h.raw("</aside>\n");
}

/// The footer: who made the page from which file, and the caution.
fn footer(h: &mut Html, software: &str, path: &Path) {
    h.raw("<footer>\n");
    h.element(
        "p",
        "",
        &format!(
            "Made by {software} from {}. The page is self-contained: pictures are embedded and nothing is fetched.",
            path.display()
        ),
    );
    h.element("p", "", CAUTION);
    h.raw("</footer>\n");
}

/// A `<section id="ID">` headed `title`, its content written by `body`.
pub(crate) fn section(h: &mut Html, id: &str, title: &str, body: impl FnOnce(&mut Html)) {
    h.raw(&format!("<section id=\"{id}\">\n"));
    h.element("h2", "", title);
    body(h);
    h.raw("</section>\n");
}

/// The section of component `index`: its name, a headline, then `body`.
pub(crate) fn component_section(
    h: &mut Html,
    index: usize,
    name: &str,
    headline: &str,
    body: impl FnOnce(&mut Html),
) {
    h.raw(&format!(
        "<section class=\"component\" id=\"component-{index}\">\n"
    ));
    h.element("h2", "", name);
    h.element("p", "headline", headline);
    body(h);
    h.raw("</section>\n");
}

/// The "at a glance" section: the cards written by `cards`, then `note`
/// when there is one.
pub(crate) fn glance(h: &mut Html, cards: impl FnOnce(&mut Html), note: Option<&str>) {
    section(h, "glance", "At a glance", |h| {
        h.raw("<div class=\"glance\">\n");
        cards(h);
        h.raw("</div>\n");
        if let Some(note) = note {
            h.element("p", "note", note);
        }
    });
}

/// One card of the glance section headed by `name`, its content written by `body`.
pub(crate) fn card(h: &mut Html, name: &str, body: impl FnOnce(&mut Html)) {
    h.raw("<div class=\"card\">");
    h.element("p", "name", name);
    body(h);
    h.raw("</div>\n");
}

/// The leading number (a share, as a whole percentage) and region of a card.
pub(crate) fn card_lead(h: &mut Html, share: f64, region: &str) {
    h.raw(&format!("<p class=\"lead\">{}</p>", percent(share, 0)));
    h.element("p", "region", region);
}

/// A row of figures (`<div class="figures LAYOUT">`), each its markup and
/// a caption (none when empty).
pub(crate) fn figures<'a>(
    h: &mut Html,
    layout: &str,
    items: impl IntoIterator<Item = (&'a str, &'a str)>,
) {
    if layout.is_empty() {
        h.raw("<div class=\"figures\">\n");
    } else {
        h.raw(&format!("<div class=\"figures {layout}\">\n"));
    }
    for (markup, caption) in items {
        h.raw("<figure>").raw(markup);
        if !caption.is_empty() {
            h.element("figcaption", "", caption);
        }
        h.raw("</figure>\n");
    }
    h.raw("</div>\n");
}

/// One name–value pair of a facts list (`<dl class="facts">`).
pub(crate) fn fact(h: &mut Html, name: &str, value: &str) {
    h.element("dt", "", name);
    h.element("dd", "", value);
}

/// A facts list whose pairs `body` writes with [`fact`].
pub(crate) fn facts(h: &mut Html, body: impl FnOnce(&mut Html)) {
    h.raw("<dl class=\"facts\">\n");
    body(h);
    h.raw("</dl>\n");
}

/// An interval of two fractions as "low – high" percentages (one decimal),
/// or an en dash when an end is not finite.
pub(crate) fn interval(low: f64, high: f64) -> String {
    if low.is_finite() && high.is_finite() {
        format!("{} \u{2013} {}", percent(low, 1), percent(high, 1))
    } else {
        "\u{2013}".to_string()
    }
}

/// A table with the head row `columns` (name, class); `body` writes the rows.
pub(crate) fn table(h: &mut Html, columns: &[(&str, &str)], body: impl FnOnce(&mut Html)) {
    h.raw("<table>\n");
    h.head_row(columns);
    h.raw("<tbody>\n");
    body(h);
    h.raw("</tbody></table>\n");
}

/// A region row: the region `name` as row header (the row highlighted
/// when `lead`), then number cells holding the markup `cells`.
pub(crate) fn region_row(h: &mut Html, name: &str, lead: bool, cells: &[String]) {
    let class = if lead { "lead-row" } else { "" };
    h.raw(&format!("<tr class=\"{class}\">"));
    h.element("th", "", name);
    for cell in cells {
        h.raw(&format!("<td class=\"num\">{cell}</td>"));
    }
    h.raw("</tr>\n");
}

/// The faint closing row of a region table counting the `hidden` regions
/// that got no row of their own ("N more regions, each below BELOW and
/// WHY"), with their summed share and `empty` empty cells after it.
pub(crate) fn hidden_row(
    h: &mut Html,
    hidden: usize,
    below: f64,
    why: &str,
    sum: f64,
    empty: usize,
) {
    h.raw("<tr class=\"faint\">");
    h.element(
        "th",
        "",
        &format!(
            "{hidden} more region{}, each below {} and {why}",
            if hidden == 1 { "" } else { "s" },
            percent(below, 1)
        ),
    );
    h.raw(&format!("<td class=\"num\">{}</td>", percent(sum, 1)));
    for _ in 0..empty {
        h.raw("<td class=\"num\"></td>");
    }
    h.raw("</tr>\n");
}

/// The notes of a file as a list headed "Notes" (nothing when there are none).
pub(crate) fn notes(h: &mut Html, notes: &[String]) {
    if notes.is_empty() {
        return;
    }
    h.element("h3", "", "Notes");
    h.raw("<ul class=\"notes\">");
    for n in notes {
        h.element("li", "", n);
    }
    h.raw("</ul>\n");
}

/// Region indices sorted by decreasing `key` (compared with `total_cmp`),
/// ties by region name.
pub(crate) fn order_by(names: &[String], key: impl Fn(usize) -> f64) -> Vec<usize> {
    let mut order: Vec<usize> = (0..names.len()).collect();
    order.sort_by(|&x, &y| key(y).total_cmp(&key(x)).then(names[x].cmp(&names[y])));
    order
}
