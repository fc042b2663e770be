//! The equivalent dipoles drawn on the report's cortex views: after
//! `patchwise dipole` into a demo folder, each component's dipole appears as
//! a ring on the views of its hemisphere and on the top, front and back
//! views, on the correct side of the picture.

use crate::support::report::run_demo;
use crate::support::scratch;

/// (view caption, ring centre x, ring centre y) of every overlay ring on
/// the page, in page order. Each view is `<span class="view"><img … alt="…"/>
/// <svg class="overlay" …><circle cx=".." cy=".." …` (our own markup).
fn rings(html: &str) -> Vec<(String, f64, f64)> {
    let mut out = Vec::new();
    for view in html.split("<span class=\"view\">").skip(1) {
        let view = view.split("</span>").next().unwrap_or("");
        let alt = view
            .split("alt=\"")
            .nth(1)
            .and_then(|s| s.split('"').next())
            .unwrap_or("")
            .to_string();
        for circle in view.split("<circle ").skip(1) {
            let num = |key: &str| -> f64 {
                circle
                    .split(&format!("{key}=\""))
                    .nth(1)
                    .and_then(|s| s.split('"').next())
                    .and_then(|s| s.parse().ok())
                    .unwrap()
            };
            out.push((alt.clone(), num("cx"), num("cy")));
        }
    }
    out
}

#[test]
fn dipoles_are_ringed_on_the_views_of_their_side() {
    let dir = scratch("report-dipole-marks");
    let demo = run_demo(&dir, "demo", &["--resamples", "0"]);
    let before = std::fs::read_to_string(demo.join("report.html")).unwrap();
    assert!(rings(&before).is_empty(), "rings before any dipole fit");
    let run = crate::support::report::dipole_on_demo(&dir, &["--out", "demo"]);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let html = std::fs::read_to_string(demo.join("report.html")).unwrap();
    // The components' own sections (after the cards at the top, whose
    // pictures repeat one view each).
    let sections = html
        .split("id=\"component-0\"")
        .nth(1)
        .expect("component sections");
    let all = rings(sections);
    // Three components with one dipole each: five views each (its
    // hemisphere's lateral and medial, top, front, back).
    assert_eq!(all.len(), 15, "{all:?}");
    assert_eq!(rings(&html).len(), 18, "the three cards repeat a view each");
    // The demo's right-hand component is generated in the left precentral
    // region, the left-hand one in the right (the scenario, src/demo). In the
    // top view (nose up, the subject's right on the right, design.md) their
    // rings lie left and right of the picture's middle (150 of 300).
    let top: Vec<f64> = all
        .iter()
        .filter(|(alt, _, _)| alt == "top")
        .map(|r| r.1)
        .collect();
    assert!(top.len() >= 2, "top view rings {top:?}");
    assert!(top[0] < 150.0, "right-hand dipole at x = {}", top[0]);
    assert!(top[1] > 150.0, "left-hand dipole at x = {}", top[1]);
    // Lateral views show their hemisphere's dipoles only: the right-hand
    // component's (x < 0) on the left view, the left-hand and the eye-like
    // components' (x ≥ 0 in this fit: 42 and 0.1 mm) on the right view.
    let on = |caption: &str| all.iter().filter(|(alt, _, _)| alt == caption).count();
    assert_eq!(on("left hemisphere, lateral"), 1, "{all:?}");
    assert_eq!(on("right hemisphere, lateral"), 2, "{all:?}");
}
