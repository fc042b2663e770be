//! Issue 22, the demo's verdict and its page: "FOUND" is judged by the
//! leading region and the terminal says what "peak" is (item 8); the page
//! `report DIR` remakes shows the job record of the run, in the same fixed
//! order, naming the decoder saved in DIR (item 9).

use std::process::Output;

use crate::support::cli::patchwise;
use crate::support::scratch;

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// The `<section id="job" ...>` of a report page.
fn job_section(page: &str) -> &str {
    let start = page.find("id=\"job\"").expect("a job section");
    let rest = &page[start..];
    let end = rest.find("</section>").expect("the job section ends");
    &rest[..end]
}

/// Item 8: "FOUND" means the leading region (the first row of the table)
/// holds a generator, whatever the peak; the peak is named apart, with
/// what it is. Item 9: `report DIR` remakes the same job record, in the
/// same order, naming the decoder saved in DIR.
#[test]
fn demo_verdict_follows_the_leader_and_report_remakes_the_same_job() {
    let dir = scratch("first-hour-demo-verdict");
    let out = dir.join("demo");
    let cache = dir.join("cache");
    let run = patchwise(
        &[
            "demo",
            "--sources",
            "template-5k",
            "--resamples",
            "2",
            "--cache",
            cache.to_str().unwrap(),
            "--out",
            "demo",
        ],
        &dir,
    );
    assert!(run.status.success(), "{}", stderr(&run));
    let text = stdout(&run);
    let mut verdicts = 0;
    for line in text.lines().filter(|l| l.contains(" generated in ")) {
        let (_, rest) = line.split_once(" generated in ").unwrap();
        let (generated, rest) = rest.split_once(" top region ").unwrap();
        let mut words = rest.split_whitespace();
        let leader = words.next().unwrap();
        let verdict = words.next().unwrap();
        let holds = generated.split(" + ").any(|g| g.trim() == leader);
        assert_eq!(verdict == "FOUND", holds, "{line}");
        assert!(
            !line.contains("peak"),
            "the verdict line mixes in the peak: {line}"
        );
        verdicts += 1;
    }
    assert_eq!(verdicts, 3, "{text}");
    assert_eq!(
        text.matches(" mm from the nearest generator seed").count(),
        3,
        "{text}"
    );
    assert!(
        text.contains("peak: the source with the largest |source| of the map"),
        "{text}"
    );
    assert!(
        text.contains("FOUND: the component's leading region"),
        "{text}"
    );

    let first = std::fs::read_to_string(out.join("report.html")).unwrap();
    let again = patchwise(&["report", "demo", "--out", "again.html"], &dir);
    assert!(again.status.success(), "{}", stderr(&again));
    let second = std::fs::read_to_string(dir.join("again.html")).unwrap();
    assert_eq!(job_section(&first), job_section(&second));
    // The decoder named is the one saved in the folder, a path to rerun with.
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let decoder = summary["job"]["decoder"].as_str().unwrap();
    assert!(dir.join(decoder).is_file(), "{decoder}");
    assert!(job_section(&first).contains(decoder));
    // The order is fixed: decoder first, the fit's choices last.
    let section = job_section(&second);
    let at = |word: &str| section.find(word).unwrap_or_else(|| panic!("{word}"));
    assert!(at("decoder") < at("montage"));
    assert!(at("montage") < at("stopping rule"));
    assert!(at("stopping rule") < at("refit"));
}
