//! Running the real binary in a test folder.

use std::path::Path;
use std::process::{Command, Output};

/// Run `patchwise ARGS` in `cwd` and return its output. The default cache
/// folder is `cwd/cache` (a `--cache` argument still moves it), so no test
/// writes into the user's cache.
pub fn patchwise(args: &[&str], cwd: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_patchwise"))
        .args(args)
        .current_dir(cwd)
        .env("PATCHWISE_CACHE", cwd.join("cache"))
        .output()
        .unwrap_or_else(|e| panic!("running patchwise: {e}"))
}
