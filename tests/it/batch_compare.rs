//! `patchwise batch` with a `[compare]` table (issue 6): once every job is
//! done, a plain run compares them with `patchwise compare --pair`; a shard
//! does not.

use crate::support::batch::*;
use crate::support::scratch;

#[test]
fn compare_table_runs_compare_after_the_jobs() {
    let dir = scratch("batch-compare-cli");
    write_decoders(&dir, 6);
    let mut script = DEFAULTS.to_string();
    for s in 1..=3 {
        for (i, label) in ["a", "b"].iter().enumerate() {
            script.push_str(&format!(
                "[[job]]\nname = \"s{s}-{label}\"\ndecoder = \"decoders/sub-{:02}.h5\"\n\n",
                2 * (s - 1) + i + 1
            ));
        }
    }
    script.push_str("[compare]\nout = \"cmp\"\npair = [\"a\", \"b\"]\n");
    write_script(&dir, &script);
    let shard = batch(&dir, &["jobs.toml", "--out", "out", "--shard", "1/2"]);
    assert!(shard.status.success(), "{}", text(&shard));
    assert!(!dir.join("cmp").exists());
    let full = batch(&dir, &["jobs.toml", "--out", "out"]);
    assert!(full.status.success(), "{}", text(&full));
    assert!(
        text(&full).contains("3 already done, 3 to run"),
        "{}",
        text(&full)
    );
    for f in ["compare.h5", "paired.csv"] {
        assert!(dir.join("cmp").join(f).is_file(), "{f}: {}", text(&full));
    }
}
