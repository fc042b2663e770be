//! Opening a report page in headless Chromium for the browser tests: find the browser, run it offline, and pick the faults (console lines, files read other than the page) out of its log.

use std::path::{Path, PathBuf};
use std::process::Command;

/// The Chromium binary: $PATCHWISE_CHROMIUM, else /usr/bin/chromium, else
/// `chromium` on the PATH. Panics when there is none: where the build found
/// none (`build.rs` sets `no_browser`), the browser tests are listed as
/// ignored instead of calling this.
pub fn chromium() -> PathBuf {
    if let Some(p) = std::env::var_os("PATCHWISE_CHROMIUM") {
        return PathBuf::from(p);
    }
    let usual = PathBuf::from("/usr/bin/chromium");
    if usual.is_file() {
        return usual;
    }
    std::env::var_os("PATH")
        .and_then(|paths| {
            std::env::split_paths(&paths)
                .map(|d| d.join("chromium"))
                .find(|p| p.is_file())
        })
        .expect("chromium not found (Debian: apt-get install -y chromium)")
}

/// Run the browser headless and offline on `page` with `extra` flags, in a
/// fresh profile folder; return its stderr.
pub fn run_browser(
    browser: &Path,
    page: &Path,
    profile: &Path,
    extra: &[String],
) -> (String, Vec<u8>) {
    let _ = std::fs::remove_dir_all(profile);
    std::fs::create_dir_all(profile).unwrap();
    let url = format!("file://{}", page.canonicalize().unwrap().display());
    let output = Command::new(browser)
        .args([
            "--headless=new",
            "--no-sandbox",
            "--disable-gpu",
            "--no-first-run",
            "--no-default-browser-check",
            "--disable-sync",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-extensions",
            &format!("--user-data-dir={}", profile.display()),
            "--enable-logging=stderr",
            "--v=0",
            "--vmodule=file_url_loader_factory=1",
            "--virtual-time-budget=5000",
        ])
        .args(extra)
        .arg(&url)
        .output()
        .unwrap_or_else(|e| panic!("running {}: {e}", browser.display()));
    assert!(
        output.status.success(),
        "{} exited with {:?}: {}",
        browser.display(),
        output.status,
        String::from_utf8_lossy(&output.stderr)
    );
    let _ = std::fs::remove_dir_all(profile);
    (
        String::from_utf8_lossy(&output.stderr).into_owned(),
        output.stdout,
    )
}

/// Faults in a browser log: console lines, and files read other than `page`.
pub fn faults(stderr: &str, page: &Path) -> Vec<String> {
    let url = format!("file://{}", page.canonicalize().unwrap().display());
    stderr
        .lines()
        .filter(|l| {
            l.contains(":CONSOLE")
                || l.split_once("FileURLLoader::Start: ")
                    .is_some_and(|(_, loaded)| loaded.trim() != url)
        })
        .map(str::to_string)
        .collect()
}
