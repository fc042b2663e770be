//! `patchwise batch` (issue 6): a run killed with SIGKILL at a random point
//! and rerun gives the same numbers as an uninterrupted run, with no partial
//! folder left; parallel jobs give the numbers of one job at a time; a
//! changed option redoes only its job.

use crate::support::batch::*;
use crate::support::scratch;

fn names(n: usize) -> Vec<String> {
    (1..=n).map(|s| format!("s-sub-{s:02}")).collect()
}

fn six_jobs(dir: &std::path::Path) {
    write_decoders(dir, 6);
    write_script(
        dir,
        &format!("{DEFAULTS}[[job]]\nname = \"s\"\ndecoder = \"decoders/sub-*.h5\"\n"),
    );
}

/// An uninterrupted run with one job at a time, then a run with two jobs at
/// a time in another folder: every dataset equal bit for bit (the library
/// promises results independent of the thread count; parallel jobs share
/// the rayon pool).
#[test]
fn parallel_jobs_match_one_at_a_time_and_reruns_skip() {
    let dir = scratch("batch-parallel");
    six_jobs(&dir);
    let one = batch(&dir, &["jobs.toml", "--out", "one", "--jobs", "1"]);
    assert!(one.status.success(), "{}", text(&one));
    assert!(
        text(&one).contains("0 already done, 6 to run"),
        "{}",
        text(&one)
    );
    let two = batch(&dir, &["jobs.toml", "--out", "two", "--jobs", "2"]);
    assert!(two.status.success(), "{}", text(&two));
    assert_eq!(job_folders(&dir.join("two")), names(6));
    assert_same_results(&dir.join("one"), &dir.join("two"), &names(6));
    let csv = std::fs::read_to_string(dir.join("two/batch-summary.csv")).unwrap();
    // One row per job and component, plus the header.
    assert_eq!(csv.lines().count(), 1 + 6 * 2, "{csv}");
    let again = batch(&dir, &["jobs.toml", "--out", "two"]);
    assert!(again.status.success(), "{}", text(&again));
    assert!(
        text(&again).contains("6 already done, 0 to run"),
        "{}",
        text(&again)
    );
}

/// splitmix64 (Steele, Lea & Flood 2014, OOPSLA), a seeded stand-in for a
/// random number generator without another dependency.
fn splitmix64(state: &mut u64) -> u64 {
    *state = state.wrapping_add(0x9e37_79b9_7f4a_7c15);
    let mut z = *state;
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// Eight jobs; SIGKILL at a seeded random moment between 0.5 and 3 s, twice, then a
/// rerun: every folder seen after a kill is complete (it has its marker),
/// no staging folder survives the rerun, and every dataset of every
/// result.h5 equals the uninterrupted run's.
#[test]
fn killed_runs_resume_to_the_uninterrupted_numbers() {
    let dir = scratch("batch-kill");
    // Eight jobs of 60 resamples: about 3 s on two idle cores, so that a
    // kill between 0.5 and 3 s lands mid-run.
    write_decoders(&dir, 8);
    write_script(
        &dir,
        &format!(
            "{}[[job]]\nname = \"s\"\ndecoder = \"decoders/sub-*.h5\"\n",
            DEFAULTS.replace("resamples = 5", "resamples = 60")
        ),
    );
    let full = batch(&dir, &["jobs.toml", "--out", "full"]);
    assert!(full.status.success(), "{}", text(&full));
    let mut rng = 20_261_202u64;
    for _ in 0..2 {
        let delay = 0.5 + 2.5 * (splitmix64(&mut rng) >> 11) as f64 / (1u64 << 53) as f64;
        let mut child = spawn(&dir, &["jobs.toml", "--out", "killed", "--jobs", "2"]);
        std::thread::sleep(std::time::Duration::from_secs_f64(delay));
        // Child::kill sends SIGKILL on Unix: no handler runs.
        let _ = child.kill();
        child.wait().unwrap();
        if dir.join("killed").is_dir() {
            // What the kill left, for the log: whole folders and staging ones.
            eprintln!(
                "killed at {delay:.2} s: {} done, hidden {:?}",
                job_folders(&dir.join("killed")).len(),
                hidden_entries(&dir.join("killed"))
            );
            for job in job_folders(&dir.join("killed")) {
                let d = dir.join("killed").join(&job);
                for f in [
                    "job.json",
                    "result.h5",
                    "regions.csv",
                    "summary.json",
                    "report.html",
                ] {
                    assert!(
                        d.join(f).is_file(),
                        "{job}/{f} missing after the kill at {delay:.2} s"
                    );
                }
            }
        }
    }
    // A kill can also land while the summary's temporary file is open: the
    // rerun removes such a file of a process that no longer exists (a pid
    // above any kernel's pid_max stands for one).
    std::fs::create_dir_all(dir.join("killed")).unwrap();
    std::fs::write(
        dir.join(format!(
            "killed/.batch-summary.csv.{}.999999999.0.tmp",
            patchwise::io::atomic::host_tag()
        )),
        "partial",
    )
    .unwrap();
    let rerun = batch(&dir, &["jobs.toml", "--out", "killed"]);
    assert!(rerun.status.success(), "{}", text(&rerun));
    assert_eq!(job_folders(&dir.join("killed")), names(8));
    assert!(
        hidden_entries(&dir.join("killed")).is_empty(),
        "{:?}",
        hidden_entries(&dir.join("killed"))
    );
    assert_same_results(&dir.join("full"), &dir.join("killed"), &names(8));
}
