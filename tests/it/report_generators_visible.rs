//! Issue 23, "done when": the demo report's cortex views, opened in headless
//! Chromium, show each demo generator and name it. For each component of
//! the demo (template-5k), the thumbnail of its "At a glance" card (the
//! best view of its source map, as the report draws it) is cut out with
//! the report's own style sheet and screenshotted; the screenshot must hold
//! a painted patch (at least 150 coloured pixels: the cortex, its region
//! lines and the orientation letters are grey, so only the source map is
//! coloured), and the card must name, as its leading region, a region that
//! holds one of the component's generators (the demo's simulated truth,
//! src/demo/mod.rs).
//!
//! "Coloured": the largest minus the smallest of R, G, B at least 40 (grey
//! and the slate text colour stay below 30): common practice, no source.
//! With CI=true a missing browser fails the test.

use crate::support;
use crate::support::browser::{chromium, faults, run_browser};

/// Each demo component and the regions of its generators.
const TRUTH: [(&str, &[&str]); 3] = [
    ("right-hand imagery", &["left-precentral"]),
    ("left-hand imagery", &["right-precentral"]),
    (
        "eye-artefact-like",
        &["left-frontal-pole", "right-frontal-pole"],
    ),
];

/// The text between `start` (included) and the matching `</div>` of a
/// `<div ...>` opened at `start` (nested divs counted).
fn div_at(html: &str, start: usize) -> &str {
    let mut depth = 0usize;
    let mut i = start;
    loop {
        let open = html[i..].find("<div").map(|p| p + i);
        let close = html[i..]
            .find("</div>")
            .map(|p| p + i)
            .expect("a closing div");
        match open {
            Some(o) if o < close => {
                depth += 1;
                i = o + 4;
            }
            _ => {
                depth -= 1;
                i = close + 6;
                if depth == 0 {
                    return &html[start..i];
                }
            }
        }
    }
}

fn coloured_pixels(png_path: &std::path::Path) -> usize {
    let decoder = png::Decoder::new(std::io::BufReader::new(
        std::fs::File::open(png_path).unwrap(),
    ));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0u8; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    let channels = info.color_type.samples();
    buf[..info.buffer_size()]
        .chunks_exact(channels)
        .filter(|px| {
            let (r, g, b) = (px[0], px[1 % channels], px[2 % channels]);
            r.max(g).max(b) - r.min(g).min(b) >= 40
        })
        .count()
}

#[test]
#[cfg_attr(no_browser, ignore = "no chromium here: browser check not run")]
fn each_demo_generator_is_painted_and_named_in_the_report() {
    let browser = chromium();
    let root = support::scratch("report_generators_visible");
    let result = support::report::demo_result(&root);
    let page = std::fs::read_to_string(result.join("report.html")).unwrap();
    let head = &page[..page.find("<body").expect("a body")];
    let mut cards = Vec::new();
    let mut from = 0;
    while let Some(p) = page[from..].find("<div class=\"card\">") {
        let card = div_at(&page, from + p);
        from += p + card.len();
        cards.push(card);
    }
    assert!(cards.len() >= TRUTH.len(), "{} cards", cards.len());
    for (c, (name, regions)) in TRUTH.iter().enumerate() {
        let card = cards[c];
        assert!(card.contains(name), "card {c} is not {name}");
        // Named: the card's leading region holds a generator.
        let lead = card
            .split("<p class=\"region\">")
            .nth(1)
            .and_then(|r| r.split("</p>").next())
            .expect("a leading region");
        assert!(regions.contains(&lead), "{name}: card names {lead}");
        // Painted: the thumbnail alone, with the report's style sheet.
        let thumb_at = card.find("<div class=\"thumb\">").expect("a thumbnail");
        let thumb = div_at(card, thumb_at);
        let file = root.join(format!("thumb{c}.html"));
        std::fs::write(
            &file,
            format!("{head}<body><main style=\"width:420px\">{thumb}</main></body></html>"),
        )
        .unwrap();
        let shot = root.join(format!("thumb{c}.png"));
        let (log, _) = run_browser(
            &browser,
            &file,
            &root.join(format!("profile{c}")),
            &[
                format!("--screenshot={}", shot.display()),
                "--window-size=480,420".to_string(),
            ],
        );
        let found = faults(&log, &file);
        assert!(found.is_empty(), "browser faults: {}", found.join("\n"));
        let painted = coloured_pixels(&shot);
        eprintln!("{name}: {lead}, {painted} coloured pixels");
        assert!(painted >= 150, "{name}: only {painted} coloured pixels");
    }
    // The control: the last thumbnail without its picture (letters and
    // frame only) has next to no coloured pixels, so the count above comes
    // from the painted map.
    let last = root.join(format!("thumb{}.html", TRUTH.len() - 1));
    let html = std::fs::read_to_string(&last).unwrap();
    let start = html.find("<img ").expect("the thumbnail is an <img>");
    let end = start + html[start..].find('>').unwrap() + 1;
    let bare = root.join("bare.html");
    std::fs::write(&bare, format!("{}{}", &html[..start], &html[end..])).unwrap();
    let shot = root.join("bare.png");
    run_browser(
        &browser,
        &bare,
        &root.join("profile-bare"),
        &[
            format!("--screenshot={}", shot.display()),
            "--window-size=480,420".to_string(),
        ],
    );
    let control = coloured_pixels(&shot);
    assert!(control < 20, "{control} coloured pixels without the map");
}
