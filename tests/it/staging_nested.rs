//! Output folders of ours may hold the time-resolved files and the demo's
//! `time-resolved/` folder: a rerun into such a folder replaces it, a
//! foreign file inside the subfolder still blocks it (named with its path),
//! and a command that adds files to a folder (`keep_existing`) carries the
//! subfolder over. Common practice, no source: never replace what the user
//! wrote, never lose what we wrote.

use std::fs;

use patchwise::io::staging::{check_output_folder, Staging};

use crate::support::scratch;

#[test]
fn nested_time_resolved_folder_is_ours_and_survives_keep_existing() {
    let dir = scratch("staging-nested");
    let out = dir.join("demo");
    let inner = out.join("time-resolved");
    fs::create_dir_all(&inner).unwrap();
    for f in ["result.h5", "summary.json", "regions.csv"] {
        fs::write(out.join(f), f).unwrap();
    }
    for f in [
        "result.h5",
        "summary.json",
        "regions_time.csv",
        "time_ranges.csv",
        "decoder.h5",
    ] {
        fs::write(inner.join(f), f).unwrap();
    }
    check_output_folder(&out, "--out").expect("a folder of ours with its time-resolved folder");

    // Keep the existing files and the folder, add one, commit.
    let stage = Staging::new(&out).unwrap();
    fs::write(stage.file("dipoles.csv"), "new").unwrap();
    stage.keep_existing().unwrap();
    stage.commit().unwrap();
    assert_eq!(fs::read_to_string(out.join("dipoles.csv")).unwrap(), "new");
    assert_eq!(
        fs::read_to_string(inner.join("time_ranges.csv")).unwrap(),
        "time_ranges.csv"
    );

    // A file of the user's inside the subfolder blocks a replacement.
    fs::write(inner.join("notes.txt"), "mine").unwrap();
    let e = check_output_folder(&out, "--out").unwrap_err().to_string();
    assert!(e.contains("time-resolved/notes.txt"), "{e}");
    // A folder of another name is foreign as before.
    fs::remove_file(inner.join("notes.txt")).unwrap();
    fs::create_dir(out.join("plots")).unwrap();
    let e = check_output_folder(&out, "--out").unwrap_err().to_string();
    assert!(e.contains("plots/"), "{e}");
}
