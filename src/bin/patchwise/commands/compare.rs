//! `patchwise compare`: compare attributions across subjects on one template
//! cortex. Parse, check the output folder and the inputs, run the library
//! job (`patchwise::job::compare`), write the staged folder, print.

use std::path::{Path, PathBuf};

use patchwise::cohort::{Comparison as GroupStats, PairedComparison};
use patchwise::io::result_file::CAUTION;
use patchwise::job::cache_folder::CacheOptions;
use patchwise::job::compare_outputs::write_comparison_files;
use patchwise::job::outputs::fmt;
use patchwise::job::{compare, CompareParams};

use crate::progress::Console;
use crate::CliError;
use patchwise::io::staging::Staging;

/// Arguments of `patchwise compare`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Result folders (each holding result.h5 from `attribute` or `demo`).
    #[arg(required = true, value_name = "RESULT_DIR")]
    pub results: Vec<PathBuf>,
    /// Output folder.
    #[arg(long)]
    pub out: PathBuf,
    #[command(flatten)]
    pub params: CompareParams,
    /// Do not write report.html into the output folder.
    #[arg(long)]
    pub no_report: bool,
    #[command(flatten)]
    pub cache: CacheOptions,
}

fn print_table(c: &GroupStats, alpha: f64) {
    for comp in &c.components {
        outln!();
        outln!(
            "{} — {} subjects, {} sign flips{}",
            comp.name,
            c.subjects.len(),
            comp.test.n_flips,
            if comp.test.exact { " (exact)" } else { "" }
        );
        // Where each subject's largest share lies, most common first.
        let n_s = c.subjects.len();
        let leaders = patchwise::attribution::leaders(&comp.lead_fraction);
        if !leaders.is_empty() {
            let list: Vec<String> = leaders
                .iter()
                .take(3)
                .map(|&r| {
                    format!(
                        "{} ({} of {n_s})",
                        c.region_names[r],
                        (comp.lead_fraction[r] * n_s as f64).round()
                    )
                })
                .collect();
            outln!("  leading region of the subjects: {}", list.join(", "));
        }
        let mut rows: Vec<usize> = (0..c.region_names.len())
            .filter(|&r| comp.test.p_corrected[r] < alpha)
            .collect();
        if rows.is_empty() {
            outln!("  no region survives the correction at α = {alpha}");
            continue;
        }
        rows.sort_by(|&x, &y| comp.mean_share[y].total_cmp(&comp.mean_share[x]));
        outln!(
            "  {:<28} {:>10} {:>17} {:>11} {:>9} {:>11}",
            "region",
            "mean share",
            "interval",
            "consistent",
            "p",
            "p corrected"
        );
        for r in rows {
            outln!(
                "  {:<28} {:>10} {:>17} {:>11} {:>9} {:>11}",
                c.region_names[r],
                fmt(comp.mean_share[r], 3),
                format!(
                    "[{}, {}]",
                    fmt(comp.mean_low[r], 3),
                    fmt(comp.mean_high[r], 3)
                ),
                if comp.consistency[r].is_finite() {
                    format!("{:.0} %", 100.0 * comp.consistency[r])
                } else {
                    "n/a".to_string()
                },
                fmt(comp.test.p_raw[r], 4),
                fmt(comp.test.p_corrected[r], 4)
            );
        }
    }
}

fn print_paired(p: &PairedComparison, alpha: f64, a: &str, b: &str) {
    for comp in &p.components {
        outln!();
        outln!(
            "{} — paired {a} − {b}, {} subjects",
            comp.name,
            p.pairs.len()
        );
        let rows: Vec<usize> = (0..p.region_names.len())
            .filter(|&r| comp.test.p_corrected[r] < alpha)
            .collect();
        if rows.is_empty() {
            outln!("  no region differs after the correction at α = {alpha}");
        }
        for r in rows {
            outln!(
                "  {:<28} {:>8} [{}, {}]  p corrected {}",
                p.region_names[r],
                fmt(comp.mean_difference[r], 3),
                fmt(comp.mean_low[r], 3),
                fmt(comp.mean_high[r], 3),
                fmt(comp.test.p_corrected[r], 4)
            );
        }
    }
}

/// Compare `results` into `out` (the batch's `[compare]` table runs this
/// too): check the options, the result folders and the output folder, run
/// the job, write the staged folder, print the tables and the report.
pub fn run(
    results: &[PathBuf],
    params: &CompareParams,
    out: &Path,
    cache: &CacheOptions,
    no_report: bool,
) -> Result<(), CliError> {
    let checked = params.validate(results)?;
    // The output folder is new, empty or ours, and neither a result folder,
    // inside one, nor holding one, nor holding a --map file: it is replaced
    // as a whole.
    patchwise::io::staging::check_output_folder(out, "--out")?;
    let mut inputs: Vec<(&str, &Path)> = results
        .iter()
        .map(|r| ("result folder", r.as_path()))
        .collect();
    inputs.extend(cache.given_folder().map(|c| ("cache folder", c)));
    inputs.extend(checked.map_files());
    patchwise::io::staging::refuse_replaced_inputs(out, "--out", None, &inputs)?;
    let cache = cache.open()?;
    let comparison = compare(results, params, cache.path(), &Console::default())?;
    let stage = Staging::new(out)?;
    let written = write_comparison_files(stage.dir(), &comparison)?;
    let dir = stage.commit()?;
    print_table(&comparison.group, params.alpha);
    if let Some((p, a, b)) = &comparison.paired {
        print_paired(p, params.alpha, a, b);
    }
    outln!();
    outln!(
        "{} in {} ({})",
        comparison.counted(),
        dir.display(),
        written.join(", ")
    );
    outln!("caution: {CAUTION}");
    if !no_report {
        super::report::compare_report_after_outputs(&dir)?;
    }
    Ok(())
}

/// Run `patchwise compare`.
pub fn exec(args: Args) -> Result<(), CliError> {
    run(
        &args.results,
        &args.params,
        &args.out,
        &args.cache,
        args.no_report,
    )
}
