//! A check that cannot run here must be listed as not run, never as
//! passed: every test that needs the Python reference or the browser
//! carries the `cfg_attr(..., ignore)` that `build.rs` switches on where the
//! tool is missing, so the harness counts it under "ignored".

use std::path::Path;

/// The tests (name, attributes, body) of one test file.
fn tests_of(text: &str) -> Vec<(String, String, String)> {
    let lines: Vec<&str> = text.lines().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < lines.len() {
        if lines[i] == "#[test]" {
            let mut j = i + 1;
            while j < lines.len() && !lines[j].starts_with("fn ") {
                j += 1;
            }
            let mut k = j;
            while k < lines.len() && lines[k] != "}" {
                k += 1;
            }
            let name = lines.get(j).copied().unwrap_or("").to_string();
            // Attributes without white space (rustfmt may wrap them).
            let attrs: String = lines[i..j].concat().split_whitespace().collect();
            out.push((name, attrs, lines[j..k].join("\n")));
            i = k;
        }
        i += 1;
    }
    out
}

#[test]
fn checks_needing_python_or_a_browser_are_ignored_where_they_cannot_run() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/it");
    let mut missing = Vec::new();
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "rs"))
        // This file names the patterns it looks for.
        .filter(|p| !p.ends_with("harness_honesty.rs"))
        .collect();
    files.sort();
    let mut counted = 0;
    for path in files {
        let text = std::fs::read_to_string(&path).unwrap();
        // Helpers in the same file that need Python count as needing it.
        let helpers = ["check_sign_flip("];
        for (name, attrs, body) in tests_of(&text) {
            let python =
                body.contains("python::python()") || helpers.iter().any(|h| body.contains(h));
            let browser = body.contains("chromium()");
            if python {
                counted += 1;
                if !attrs.contains("cfg_attr(no_reference_python,ignore") {
                    missing.push(format!("{}: {name} (python)", path.display()));
                }
            }
            if browser && !attrs.contains("cfg_attr(no_browser,ignore") {
                missing.push(format!("{}: {name} (browser)", path.display()));
            }
        }
    }
    assert!(
        missing.is_empty(),
        "tests lacking their ignore switch:\n{}",
        missing.join("\n")
    );
    // The scan itself must find the reference checks (at least the 17 there
    // are today), or it checks nothing.
    assert!(counted >= 17, "found only {counted} reference checks");
}
