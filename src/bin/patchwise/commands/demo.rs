//! `patchwise demo`: the embedded default end to end, on an invented scenario.

use std::path::PathBuf;

use patchwise::demo::{simulate, SIMULATION_SKULL};
use patchwise::geometry::{norm, sub, TemplateResolution};
use patchwise::io::{Dataset, Store};

use patchwise::io::cache::{bytes_sha256, default_cache_dir};
use patchwise::io::decoder_file::decoder_from_store;
use patchwise::job::attribute::{attribute_decoder, GivenDecoder};
use patchwise::job::{AttributeParams, MontageSpec, SourcesSpec};

use crate::cli_error::OrExit;
use patchwise::job::outputs::region_rows;

use crate::outputs::write_outputs_with;
use crate::progress::{note, Console};
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
    /// Bootstrap resamples for the intervals.
    #[arg(long, default_value_t = 30)]
    pub resamples: usize,
    /// Cache folder for lead fields and dictionaries.
    #[arg(long)]
    pub cache: Option<PathBuf>,
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
    if let Some(cache) = &args.cache {
        patchwise::io::staging::refuse_replaced_inputs(
            &args.out,
            "--out",
            None,
            &[("cache folder", cache.as_path())],
        )?;
    }
    outln!(
        "patchwise demo — an invented scenario, simulated on the {} cortex:",
        res.name()
    );
    outln!(
        "  a two-class imagined-movement decoder (right hand, left hand) and an eye-artefact-like"
    );
    outln!(
        "  component; 64 channels of the 10-10 system; data simulated with a skull conductivity of"
    );
    outln!("  {SIMULATION_SKULL} S/m, fitted with the default head's 0.02 S/m.");
    let (scenario, labels) = simulate(res).map_err(CliError::compute)?;
    let k = scenario.component_names.len();
    // The decoder is handed to the job in memory and saved beside the
    // results, under the name the job and the report give it.
    let decoder_path = args.out.join("decoder.h5");
    let mut store = Store::new();
    store.insert("/channels", Dataset::strings(labels.clone()));
    store.insert(
        "/weights",
        Dataset::f64(vec![labels.len(), k], scenario.weights.clone()),
    );
    store.insert(
        "/covariance",
        Dataset::f64(
            vec![labels.len(), labels.len()],
            scenario.covariance.clone(),
        ),
    );
    store.insert(
        "/component_names",
        Dataset::strings(scenario.component_names.clone()),
    );
    let bytes = store
        .to_hdf5_bytes(&decoder_path)
        .compute("writing the demo decoder")?;
    let given = GivenDecoder {
        decoder: decoder_from_store(&store, &decoder_path).compute("the demo decoder")?,
        path: decoder_path.clone(),
        sha256: bytes_sha256(&bytes),
    };
    // The attribute defaults, on the demo's montage, sources and decoder.
    let mut params = AttributeParams::default();
    params.inputs.decoder = Some(decoder_path);
    params.forward.montage = MontageSpec::Standard("10-10".to_string());
    params.forward.sources = SourcesSpec::Template(res);
    params.fit.resamples = args.resamples;
    let cache = args.cache.clone().unwrap_or_else(default_cache_dir);
    let a = attribute_decoder(
        &params,
        given,
        &cache,
        Some(scenario.component_names.clone()),
        &Console::default(),
    )?;
    let dir = write_outputs_with(&args.out, &a, &[("decoder.h5", &bytes)])?;
    // Did the fit find the generators?
    outln!();
    outln!("known generators:");
    let rows = region_rows(&a);
    let mut found_all = true;
    #[allow(clippy::needless_range_loop)]
    for c in 0..k {
        let truth: Vec<_> = scenario
            .generators
            .iter()
            .filter(|g| g.component == c)
            .collect();
        let top = rows[c]
            .first()
            .map(|r| r.region.clone())
            .unwrap_or_default();
        let found = truth.iter().any(|g| g.region == top);
        found_all &= found;
        let peak = a.outcome.attribution.components[c].peak_position;
        let dist = peak.map(|p| {
            truth
                .iter()
                .map(|g| norm(sub(p, g.position)) * 1e3)
                .fold(f64::INFINITY, f64::min)
        });
        outln!(
            "  {:<20} generated in {:<40} top region {:<26} {}{}",
            scenario.component_names[c],
            truth
                .iter()
                .map(|g| g.region.as_str())
                .collect::<Vec<_>>()
                .join(" + "),
            top,
            if found { "FOUND" } else { "MISSED" },
            dist.map(|d| format!(" (peak {d:.0} mm from the nearest generator seed)"))
                .unwrap_or_default()
        );
    }
    if !args.no_report {
        let mut job = params.describe();
        if let Some(entry) = job.iter_mut().find(|(name, _)| name == "decoder") {
            entry.1 = format!(
                "the demo's invented decoder (saved as {})",
                dir.join("decoder.h5").display()
            );
        }
        super::report::report_after_outputs(&dir, job)?;
    }
    note(if found_all {
        "all known generators were found as the leading region of their component"
    } else {
        "some known generators were not the leading region of their component"
    });
    outln!(
        "the demo decoder is in {}",
        dir.join("decoder.h5").display()
    );
    Ok(())
}
