//! `patchwise batch` with `head = "template-bem"` in the job script: the
//! template head's boundary-element system built once and shared by the
//! jobs through the cache, its results apart from a sphere job's on the
//! same decoder, and a rerun that skips every job (issue 21).

use crate::support::batch::*;
use crate::support::scratch;

#[test]
fn a_job_script_runs_jobs_on_the_template_bem_head() {
    let dir = scratch("batch-template-bem");
    write_decoders(&dir, 2);
    write_script(
        &dir,
        &format!(
            "{DEFAULTS}[[job]]\nname = \"bem\"\ndecoder = \"decoders/sub-*.h5\"\nhead = \"template-bem\"\n\n[[job]]\nname = \"sphere\"\ndecoder = \"decoders/sub-01.h5\"\n"
        ),
    );
    let o = batch(&dir, &["jobs.toml", "--out", "out", "--jobs", "2"]);
    let said = text(&o);
    assert!(o.status.success(), "{said}");
    assert_eq!(
        job_folders(&dir.join("out")),
        ["bem-sub-01", "bem-sub-02", "sphere"]
    );
    // Built once, by one of the bem jobs (the cache entry's build lock
    // makes the other wait and reuse it: sub-02 has the same forward
    // inputs, so it reads the cached dictionary and needs no system), never
    // by the sphere job.
    let built: Vec<&str> = said
        .lines()
        .filter(|l| l.contains("built and cached boundary-element system"))
        .collect();
    assert_eq!(built.len(), 1, "{said}");
    assert!(built[0].starts_with("bem-sub-0"), "{said}");
    let other = if built[0].starts_with("bem-sub-01") {
        "bem-sub-02"
    } else {
        "bem-sub-01"
    };
    assert!(said.contains(&format!("{other}: using cached")), "{said}");
    // The two heads see the same decoder differently: the region tables
    // of sub-01 under the template head and under the spheres differ.
    let regions =
        |job: &str| std::fs::read_to_string(dir.join("out").join(job).join("regions.csv")).unwrap();
    assert_ne!(regions("bem-sub-01"), regions("sphere"));
    // The job records say which head they used.
    let summary = |job: &str| {
        std::fs::read_to_string(dir.join("out").join(job).join("summary.json")).unwrap()
    };
    assert!(
        summary("bem-sub-02").contains("template-bem"),
        "{}",
        summary("bem-sub-02")
    );
    assert!(
        !summary("sphere").contains("template-bem"),
        "{}",
        summary("sphere")
    );
    // Nothing changed: the rerun skips all three.
    let again = batch(&dir, &["jobs.toml", "--out", "out"]);
    assert!(again.status.success(), "{}", text(&again));
    assert!(
        text(&again).contains("3 already done, 0 to run"),
        "{}",
        text(&again)
    );
}
