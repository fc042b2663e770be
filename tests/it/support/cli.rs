//! Running the real binary in a test folder.

use std::path::Path;
use std::process::{Command, Output};

/// Run `patchwise ARGS` in `cwd` and return its output. The default cache
/// folder is `cwd/cache` (a `--cache` argument still moves it), so no test
/// writes into the user's cache.
pub fn patchwise(args: &[&str], cwd: &Path) -> Output {
    patchwise_with_env(args, cwd, &[])
}

/// [`patchwise`] with the environment variables `env` set as well.
pub fn patchwise_with_env(args: &[&str], cwd: &Path, env: &[(&str, &str)]) -> Output {
    let mut command = Command::new(env!("CARGO_BIN_EXE_patchwise"));
    command
        .args(args)
        .current_dir(cwd)
        .env("PATCHWISE_CACHE", cwd.join("cache"));
    for (name, value) in env {
        command.env(name, value);
    }
    command
        .output()
        .unwrap_or_else(|e| panic!("running patchwise: {e}"))
}

/// `patchwise leadfield` of the template-5k sources with `head` and
/// `montage` into `out`, run in `dir` (`head` "default" for the four
/// spheres).
pub fn leadfield(dir: &Path, head: &str, montage: &str, out: &str) -> std::process::Output {
    patchwise(
        &[
            "leadfield",
            "--montage",
            montage,
            "--sources",
            "template-5k",
            "--head",
            head,
            "--out",
            out,
        ],
        dir,
    )
}
