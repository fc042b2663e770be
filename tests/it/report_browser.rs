//! The report of a small result opened in headless Chromium: the page draws
//! something that is not blank, the browser logs no console message, and it
//! loads no file but the page itself.
//!
//! How the console is checked: with `--enable-logging=stderr` Chromium
//! writes every console message of the page to stderr as a line holding
//! `:CONSOLE` (its level is not shown), and the page carries a content
//! security policy that blocks any fetch and reports the attempt on the
//! console. The page has no script, so any console line at all is a fault.
//! File loads are seen through `--vmodule=file_url_loader_factory=1`, which
//! logs `FileURLLoader::Start: <url>` for every file the browser reads.
//!
//! With CI=true a missing browser fails the test; otherwise it says so and
//! returns.

use crate::support;
use std::collections::HashSet;

use crate::support::browser::{chromium, faults, run_browser};

#[test]
#[cfg_attr(no_browser, ignore = "no chromium here: browser check not run")]
fn report_renders_in_a_headless_browser() {
    let browser = chromium();
    let root = support::scratch("report_browser");
    let result = support::report::demo_result(&root);
    let page = result.join("report.html");
    let shot = root.join("report.png");

    let (log, _) = run_browser(
        &browser,
        &page,
        &root.join("profile-shot"),
        &[
            format!("--screenshot={}", shot.display()),
            "--window-size=1200,2000".to_string(),
        ],
    );
    let found = faults(&log, &page);
    assert!(
        found.is_empty(),
        "browser faults while taking the screenshot:\n{}",
        found.join("\n")
    );
    // The log must show the page itself being read, or the check above saw nothing.
    assert!(
        log.contains("FileURLLoader::Start: file://"),
        "the browser log shows no page load:\n{log}"
    );

    // The screenshot: a 1200 x 2000 PNG with text, tables and pictures. A
    // blank or failed page has one or two colours and almost no ink; the
    // bounds (at least 64 distinct colours, at least 3 % of pixels not
    // white) are common practice, no source: a page of plain text alone
    // gives anti-aliased greys, the coloured figures and the header add more.
    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&shot).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0u8; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!((info.width, info.height), (1200, 2000));
    let channels = info.color_type.samples();
    let pixels = &buf[..info.buffer_size()];
    let mut colours = HashSet::new();
    let mut ink = 0usize;
    for px in pixels.chunks_exact(channels) {
        let rgb = [px[0], px[1 % channels], px[2 % channels]];
        colours.insert(rgb);
        if rgb.iter().any(|&v| v < 235) {
            ink += 1;
        }
    }
    let n = pixels.len() / channels;
    assert!(
        colours.len() >= 64,
        "screenshot has only {} colours",
        colours.len()
    );
    assert!(
        ink * 100 >= 3 * n,
        "screenshot is nearly blank: {ink} of {n} pixels inked"
    );

    // The detector itself: the same page with an outside image and a
    // stylesheet beside it must produce faults (the policy blocks and logs them).
    let bad = root.join("bad.html");
    let html = std::fs::read_to_string(&page).unwrap().replacen(
        "</main>",
        "<img src=\"http://example.invalid/x.png\" alt=\"\"/><link rel=\"stylesheet\" href=\"x.css\"/></main>",
        1,
    );
    std::fs::write(&bad, html).unwrap();
    let (log, _) = run_browser(
        &browser,
        &bad,
        &root.join("profile-bad"),
        &["--dump-dom".to_string()],
    );
    assert!(
        faults(&log, &bad).len() >= 2,
        "the fault check did not see a blocked outside image and style sheet:\n{log}"
    );

    // The DOM after loading: the browser parsed the whole page, caution included.
    let (log, dom) = run_browser(
        &browser,
        &page,
        &root.join("profile-dom"),
        &["--dump-dom".to_string()],
    );
    let found = faults(&log, &page);
    assert!(
        found.is_empty(),
        "browser faults while loading the page:\n{}",
        found.join("\n")
    );
    let dom = String::from_utf8_lossy(&dom);
    assert!(
        dom.contains("presurgical planning"),
        "the loaded page lacks the caution"
    );
    assert!(dom.contains("</footer>"), "the loaded page ends early");
}
