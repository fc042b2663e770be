//! The comparison report end to end: six subjects made by `attribute` on
//! noisy copies of the demo decoder (template-5k, one component), `compare`
//! writing report.html, `report` on the comparison folder, compare.h5 read
//! back and by h5py, and the page opened in headless Chromium.

use crate::support;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use crate::support::cli::patchwise;
use crate::support::cohort::{demo_decoder, subject};
use patchwise::io::compare_read::read_compare;
use patchwise::io::result_file::CAUTION;

/// The scratch folder with six subjects and `group`, the comparison
/// (made once for all tests of this file).
fn cohort() -> &'static PathBuf {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let dir = support::scratch("report_compare");
        let decoder = demo_decoder(&dir);
        let names: Vec<String> = (0..6).map(|i| format!("s{i}-A")).collect();
        for (i, n) in names.iter().enumerate() {
            subject(&dir, &decoder, n, 300 + i as u64, 0.05, 1);
        }
        // A second, noisier decoder for two subjects (the paired test).
        for i in 0..2 {
            subject(&dir, &decoder, &format!("s{i}-B"), 400 + i, 0.3, 1);
        }
        let mut args: Vec<&str> = vec!["compare"];
        args.extend(names.iter().map(|s| s.as_str()));
        args.extend(["--out", "group", "--bootstrap", "200"]);
        let started = std::time::Instant::now();
        let out = patchwise(&args, &dir);
        println!("compare with report: {:.2?}", started.elapsed());
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let stdout = String::from_utf8_lossy(&out.stdout);
        assert!(stdout.contains("report in"), "{stdout}");
        dir
    })
}

fn read(path: &Path) -> String {
    std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The text of the page's at-a-glance section.
fn glance(html: &str) -> &str {
    let start = html.find("<section id=\"glance\">").unwrap();
    let end = start + html[start..].find("</section>").unwrap();
    &html[start..end]
}

#[test]
fn compare_writes_a_self_contained_report_naming_the_shared_region() {
    let dir = cohort();
    let page_path = dir.join("group/report.html");
    let html = read(&page_path);
    println!("report.html: {} bytes", html.len());
    let page = support::page::parse(&html);
    let (n_png, n_svg) = support::page::check_pictures(&page);
    // One component: the group mean chart and two heatmaps (each an inline
    // SVG; a heatmap of at most 2500 cells draws rectangles, no PNG) and six
    // cortex views of the group mean on template-5k (PNGs).
    assert!(n_svg >= 3, "only {n_svg} inline SVGs");
    assert!(n_png >= 6, "only {n_png} embedded PNGs");
    support::page::assert_self_contained(&html);
    assert!(page.text.contains(CAUTION), "the caution is missing");
    // The demo's first component is generated in the left precentral
    // region (src/demo); six subjects give 64 sign vectors, so the
    // smallest one-sided corrected p is 1/64 < 0.05 (Nichols & Holmes 2002), and
    // summary.json must list it as surviving, as must the page.
    let summary: serde_json::Value =
        serde_json::from_str(&read(&dir.join("group/summary.json"))).unwrap();
    let surviving: Vec<String> = summary["components"][0]["regions_surviving_correction"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["region"].as_str().unwrap().to_string())
        .collect();
    assert!(
        surviving.iter().any(|r| r == "left-precentral"),
        "summary.json: {surviving:?}"
    );
    let glance = glance(&html);
    for r in &surviving {
        assert!(glance.contains(r.as_str()), "{r} missing from at a glance");
    }
    // Every subject's SHA-256 (summary.json) is on the page.
    for input in summary["inputs"].as_array().unwrap() {
        assert!(html.contains(input["sha256"].as_str().unwrap()));
    }
}

#[test]
fn report_command_detects_the_folder_kind() {
    let dir = cohort();
    let out = patchwise(&["report", "group", "--out", "again.html"], dir);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // The page is built from compare.h5 alone, so both runs agree byte for byte.
    assert_eq!(
        read(&dir.join("again.html")),
        read(&dir.join("group/report.html"))
    );
    // A result folder still gets the result report.
    let out = patchwise(&["report", "s0-A", "--out", "s0.html"], dir);
    assert!(out.status.success());
    assert!(read(&dir.join("s0.html")).contains("Region attribution"));
    // Neither file: exit 2 naming both.
    std::fs::create_dir_all(dir.join("empty")).unwrap();
    let out = patchwise(&["report", "empty"], dir);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("result.h5") && err.contains("compare.h5"),
        "{err}"
    );
    // --no-report leaves report.html out.
    let out = patchwise(
        &[
            "compare",
            "s0-A",
            "s1-A",
            "--out",
            "two",
            "--bootstrap",
            "20",
            "--no-report",
        ],
        dir,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(dir.join("two/compare.h5").is_file());
    assert!(!dir.join("two/report.html").exists());
}

// The brief's rule: outputs identical whatever the rayon thread count
// (the page is built from the file alone, so byte for byte).
#[test]
fn page_is_the_same_on_one_and_two_threads() {
    let dir = cohort();
    let mut pages = Vec::new();
    for threads in ["1", "2"] {
        let out = dir.join(format!("threads-{threads}.html"));
        let started = std::time::Instant::now();
        let run = std::process::Command::new(env!("CARGO_BIN_EXE_patchwise"))
            .args(["report", "group", "--out", out.to_str().unwrap()])
            .current_dir(dir)
            .env("RAYON_NUM_THREADS", threads)
            .output()
            .unwrap();
        println!("report on {threads} thread(s): {:.2?}", started.elapsed());
        assert!(
            run.status.success(),
            "{}",
            String::from_utf8_lossy(&run.stderr)
        );
        pages.push(std::fs::read(&out).unwrap());
    }
    assert!(
        pages[0] == pages[1],
        "the page differs between 1 and 2 threads"
    );
}

#[test]
fn paired_comparison_has_its_section() {
    let dir = cohort();
    let out = patchwise(
        &[
            "compare",
            "s0-A",
            "s0-B",
            "s1-A",
            "s1-B",
            "--pair",
            "A",
            "B",
            "--out",
            "paired",
            "--bootstrap",
            "20",
        ],
        dir,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let html = read(&dir.join("paired/report.html"));
    let page = support::page::parse(&html);
    support::page::check_pictures(&page);
    let start = html
        .find("<section id=\"paired\">")
        .expect("no paired section");
    let section = &html[start..start + html[start..].find("</section>").unwrap()];
    // Both pairs are named, and the region with the largest |mean
    // difference| in paired.csv heads the table.
    assert!(section.contains("s0, s1"), "{section}");
    let table = patchwise::io::table::read_table(&dir.join("paired/paired.csv")).unwrap();
    let (ri, di) = (
        table.column(&["region"]).unwrap(),
        table.column(&["mean_difference"]).unwrap(),
    );
    let top = table
        .rows
        .iter()
        .max_by(|a, b| {
            let x: f64 = a.fields[di].parse().unwrap_or(0.0);
            let y: f64 = b.fields[di].parse().unwrap_or(0.0);
            x.abs().total_cmp(&y.abs())
        })
        .unwrap();
    let first_row = &section[section.find("<tbody>").unwrap()..];
    let first_row = &first_row[..first_row.find("</tr>").unwrap()];
    assert!(
        first_row.contains(top.fields[ri].as_str()),
        "{first_row} vs {}",
        top.fields[ri]
    );
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn compare_h5_reads_back_and_agrees_with_h5py() {
    let dir = cohort();
    let path = dir.join("group/compare.h5");
    let f = read_compare(&path).unwrap();
    assert_eq!(f.subjects.len(), 6);
    assert_eq!(f.components.len(), 1);
    let python = support::python::python();
    // h5py 3.16.0 (tests/reference/requirements.txt) reads /group/mean_share
    // and /subjects; the values must match read_compare bit for bit (both
    // read the same IEEE-754 doubles, no tolerance). Python's repr is the
    // shortest string that round-trips and Rust's parse rounds correctly,
    // so the text passes the bits unchanged.
    let script = format!(
        "import h5py, json\nf = h5py.File({:?}, 'r')\nprint(json.dumps({{'mean': [repr(float(x)) for x in f['/group/mean_share'][0]], 'subjects': [s.decode() if isinstance(s, bytes) else s for s in f['/subjects'][()]], 'sigma': float(f['/similarity'].attrs['smoothing_sigma_mm'])}}))\n",
        path.to_str().unwrap()
    );
    let out = std::process::Command::new(python)
        .args(["-c", &script])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let mean: Vec<f64> = v["mean"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_str().unwrap().parse::<f64>().unwrap())
        .collect();
    assert_eq!(mean.len(), f.region_names.len());
    for (a, b) in mean.iter().zip(&f.components[0].mean_share) {
        assert!(
            a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan()),
            "{a} vs {b}"
        );
    }
    let subjects: Vec<String> = serde_json::from_value(v["subjects"].clone()).unwrap();
    assert_eq!(subjects, f.subjects);
    assert_eq!(v["sigma"].as_f64().unwrap(), f.smoothing_sigma_mm);
}

#[test]
#[cfg_attr(no_browser, ignore = "no chromium here: browser check not run")]
fn compare_report_renders_in_a_headless_browser() {
    let browser = support::browser::chromium();
    let dir = cohort();
    let page = dir.join("group/report.html");
    let (log, dom) = support::browser::run_browser(
        &browser,
        &page,
        &dir.join("profile-compare"),
        &["--dump-dom".to_string()],
    );
    let found = support::browser::faults(&log, &page);
    assert!(found.is_empty(), "browser faults:\n{}", found.join("\n"));
    assert!(
        log.contains("FileURLLoader::Start: file://"),
        "the browser log shows no page load:\n{log}"
    );
    let dom = String::from_utf8_lossy(&dom);
    assert!(
        dom.contains("presurgical planning"),
        "the loaded page lacks the caution"
    );
    assert!(dom.contains("</footer>"), "the loaded page ends early");
}
