//! `patchwise demo`: the embedded default end to end, on an invented
//! scenario (the job is `patchwise::job::demo`).

use std::path::PathBuf;

use patchwise::geometry::TemplateResolution;
use patchwise::job::cache_folder::CacheOptions;
use patchwise::job::demo::{demo, scenario_lines, VERDICT_LEGEND};
use patchwise::job::demo_time::PEAK_TOLERANCE_S;

/// The subfolder of the demo's time-resolved decoder.
const TIME_FOLDER: &str = "time-resolved";

use crate::outputs::write_outputs_nested;
use crate::progress::Console;
use crate::CliError;

/// Arguments of `patchwise demo`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Output folder.
    #[arg(long, default_value = "patchwise-demo")]
    pub out: PathBuf,
    /// Sources: template (about 20k vertices) or template-5k (faster).
    #[arg(long, default_value = "template")]
    pub sources: String,
    /// Bootstrap resamples for the intervals. Fewer than attribute's 100 so that the demo is
    /// a quick first look; give --resamples 100 for attribute's intervals.
    #[arg(long, default_value_t = 30)]
    pub resamples: usize,
    #[command(flatten)]
    pub cache: CacheOptions,
    /// Do not write report.html into the output folder.
    #[arg(long)]
    pub no_report: bool,
}

/// Run `patchwise demo`.
pub fn exec(args: Args) -> Result<(), CliError> {
    let res = TemplateResolution::from_name(&args.sources).ok_or_else(|| {
        CliError::bad_input(anyhow::anyhow!(
            "--sources {:?}: the demo runs on template or template-5k",
            args.sources
        ))
    })?;
    patchwise::io::staging::check_output_folder(&args.out, "--out")?;
    if let Some(cache) = args.cache.given_folder() {
        patchwise::io::staging::refuse_replaced_inputs(
            &args.out,
            "--out",
            None,
            &[("cache folder", cache)],
        )?;
    }
    let cache = args.cache.open()?;
    for line in scenario_lines(res) {
        outln!("{line}");
    }
    // The decoder is handed to the job in memory and saved beside the
    // results, under the name the job and the report give it.
    let time_dir = args.out.join(TIME_FOLDER);
    let run = demo(
        res,
        args.resamples,
        [&args.out.join("decoder.h5"), &time_dir.join("decoder.h5")],
        cache.path(),
        &Console::default(),
    )?;
    let a = &run.attribution;
    let dir = write_outputs_nested(
        &args.out,
        a,
        &[("decoder.h5", &run.decoder_bytes)],
        Some((
            TIME_FOLDER,
            &run.time.attribution,
            &[("decoder.h5", &run.time.decoder_bytes)],
        )),
    )?;
    outln!();
    outln!("known generators:");
    for c in &run.checks {
        outln!(
            "  {:<20} generated in {:<40} top region {:<26} {}",
            c.component,
            c.generated_in.join(" + "),
            c.leader,
            if c.found { "FOUND" } else { "MISSED" },
        );
        if let Some(d) = c.peak_distance_mm {
            outln!(
                "  {:<20} peak in {}, {d:.0} mm from the nearest generator seed",
                "",
                c.peak_region.as_deref().unwrap_or("no region"),
            );
        }
    }
    outln!("{VERDICT_LEGEND}");
    outln!();
    outln!(
        "known generators of the sliding decoder ({TIME_FOLDER}/, {} resamples):",
        run.time.params.fit.resamples
    );
    for c in &run.time.checks {
        let ms = |s: f64| format!("{:.0}", s * 1e3);
        outln!(
            "  {:<32} in {:<18} active {}-{} ms, peak {} ms; attribution: {}  {}",
            c.label,
            c.region,
            ms(c.true_active_s.0),
            ms(c.true_active_s.1),
            ms(c.true_peak_s),
            c.found_range_s
                .map_or("the region never leads".to_string(), |(on, peak, off)| {
                    format!("{}-{} ms, peak {} ms", ms(on), ms(off), ms(peak))
                }),
            if c.found { "FOUND" } else { "MISSED" },
        );
    }
    outln!(
        "FOUND here: the region leads over a time range whose peak lies within {:.0} ms of the generator's",
        PEAK_TOLERANCE_S * 1e3
    );
    outln!(
        "spatial decoder: {}",
        if run.found_all() {
            "all known generators were found as the leading region of their component"
        } else {
            "some known generators were not the leading region of their component"
        }
    );
    let (found, of) = run.found_in_time();
    outln!(
        "sliding decoder: {found} of {of} generators found in their time range (a region leads when its share reaches {:.0} % and its part of the fitted pattern stands above that time point's noise)",
        100.0 * patchwise::pipeline::LEADING_SHARE
    );
    if !args.no_report {
        // The job record as summary.json keeps it, so `patchwise report
        // DIR` remakes this page; the decoder is the one saved in DIR.
        let job = run.params.describe();
        super::report::report_after_outputs(&dir, job)?;
        let job = run.time.params.describe();
        super::report::report_after_outputs(&dir.join(TIME_FOLDER), job)?;
    }
    outln!(
        "the demo decoder is in {}",
        dir.join("decoder.h5").display()
    );
    Ok(())
}
