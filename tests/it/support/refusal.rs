//! Checks shared by the reliability tests: a refusal (exit 2, one message
//! naming the culprit) and a quick attribution on the template-5k.

use std::path::Path;
use std::process::Output;

use super::cli::patchwise;

/// Both output streams, for assertion messages.
pub fn both(o: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}

/// Exit 2 with one `error:` line that mentions `needle`.
pub fn assert_refused(o: &Output, needle: &str) {
    assert_eq!(o.status.code(), Some(2), "{}", both(o));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains(needle), "stderr should name {needle:?}: {err}");
    assert_eq!(err.matches("error:").count(), 1, "one message: {err}");
}

/// `patchwise attribute --decoder DECODER... --out OUT EXTRA...` on the
/// template-5k with the 10-10 montage and no resamples (well under a
/// second); `decoder` may carry `--channels FILE` after the file.
pub fn attribute_5k(dir: &Path, decoder: &[&str], out: &str, extra: &[&str]) -> Output {
    let mut args = vec!["attribute", "--decoder"];
    args.extend_from_slice(decoder);
    args.extend_from_slice(&[
        "--montage",
        "10-10",
        "--sources",
        "template-5k",
        "--resamples",
        "0",
        "--out",
        out,
    ]);
    args.extend_from_slice(extra);
    patchwise(&args, dir)
}
