//! `patchwise batch` reruns (issue 6): changing one job's option redoes that
//! job only; the others keep their folders untouched.

use crate::support::batch::*;
use crate::support::scratch;

fn modified(path: &std::path::Path) -> std::time::SystemTime {
    std::fs::metadata(path).unwrap().modified().unwrap()
}

#[test]
fn changing_one_option_redoes_only_that_job() {
    let dir = scratch("batch-changes");
    write_decoders(&dir, 3);
    let script = |seed_b: u64| {
        format!(
            "{DEFAULTS}[[job]]\nname = \"a\"\ndecoder = \"decoders/sub-01.h5\"\n\n[[job]]\nname = \"b\"\ndecoder = \"decoders/sub-02.h5\"\nseed = {seed_b}\n\n[[job]]\nname = \"c\"\ndecoder = \"decoders/sub-03.h5\"\n"
        )
    };
    write_script(&dir, &script(1));
    let first = batch(&dir, &["jobs.toml", "--out", "out"]);
    assert!(first.status.success(), "{}", text(&first));
    let marker =
        |job: &str| std::fs::read_to_string(dir.join("out").join(job).join("job.json")).unwrap();
    let before: Vec<_> = ["a", "b", "c"]
        .iter()
        .map(|j| {
            (
                marker(j),
                modified(&dir.join("out").join(j).join("result.h5")),
            )
        })
        .collect();
    write_script(&dir, &script(2));
    let second = batch(&dir, &["jobs.toml", "--out", "out"]);
    assert!(second.status.success(), "{}", text(&second));
    let t = text(&second);
    assert!(t.contains("2 already done, 1 to run"), "{t}");
    assert!(t.contains("done    b") && !t.contains("done    a"), "{t}");
    for (i, j) in ["a", "b", "c"].iter().enumerate() {
        let after = (
            marker(j),
            modified(&dir.join("out").join(j).join("result.h5")),
        );
        if *j == "b" {
            assert_ne!(after.0, before[i].0, "b's marker must carry the new hash");
        } else {
            assert_eq!(after, before[i], "{j} was redone");
        }
    }
    let csv = std::fs::read_to_string(dir.join("out/batch-summary.csv")).unwrap();
    assert!(
        csv.lines().filter(|l| l.starts_with("b,ran,")).count() == 2,
        "{csv}"
    );
    assert!(
        csv.lines().filter(|l| l.starts_with("a,reused,")).count() == 2,
        "{csv}"
    );
}
