//! `patchwise demo`: the embedded default end to end, on an invented scenario.

use std::path::PathBuf;

use patchwise::demo::{build, Scenario};
use patchwise::forward::Orientation;
use patchwise::geometry::{norm, sub, template, GeodesicSolver, SourceSpace, TemplateResolution};
use patchwise::head::SphereHead;
use patchwise::io::{Dataset, Store};
use patchwise::montage::standard;
use patchwise::pipeline::leadfield_for;

use patchwise::io::cache::default_cache_dir;
use patchwise::job::{attribute, AttributeParams, MontageSpec, SourcesSpec};

use crate::cli_error::OrExit;
use patchwise::job::outputs::region_rows;

use crate::outputs::write_outputs;
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

/// Skull conductivity of the simulation head (S/m); the fit assumes the
/// default head's 0.02 S/m, so the demo includes a head-model mismatch.
const SIMULATION_SKULL: f64 = 0.015;

fn simulate(res: TemplateResolution) -> Result<(Scenario, Vec<String>), CliError> {
    let t = template(res);
    let fit_head = SphereHead::default_adult();
    let mut cond = fit_head.conductivities().to_vec();
    cond[2] = SIMULATION_SKULL;
    let sim_head = SphereHead::new(fit_head.center(), fit_head.radii().to_vec(), cond)
        .compute("simulation head")?;
    let full = standard("10-10", fit_head.outer_radius()).compute("demo montage")?;
    let labels: Vec<String> = patchwise::demo::CHANNELS_64
        .iter()
        .map(|s| s.to_string())
        .collect();
    let idx = full.select(&labels).compute("demo channels")?;
    let montage = full.subset(&idx);
    let sources = SourceSpace::from_template(&t);
    let (lf, _) = leadfield_for(&montage, &sources, &sim_head, Orientation::Normal, &|_| {})
        .compute("simulation lead field")?;
    let solver = GeodesicSolver::new(&t.mesh).compute("template mesh")?;
    let oracle = |s: usize, r: f64| solver.distances_within(s, r);
    let scenario = build(
        &t.mesh,
        &t.region,
        &t.region_names,
        &lf.gain,
        lf.n_channels(),
        &oracle,
    )
    .compute("building the demo scenario")?;
    Ok((scenario, montage.labels))
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
    let (scenario, labels) = simulate(res)?;
    let k = scenario.component_names.len();
    let scratch = std::env::temp_dir().join(format!("patchwise-demo-{}", std::process::id()));
    std::fs::create_dir_all(&scratch)
        .map_err(|e| CliError::compute(anyhow::anyhow!("{}: {e}", scratch.display())))?;
    let decoder_path = scratch.join("decoder.h5");
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
    store
        .write_atomic(&decoder_path)
        .compute("writing the demo decoder")?;
    // The attribute defaults, on the demo's montage, sources and decoder.
    let mut params = AttributeParams::default();
    params.inputs.decoder = Some(decoder_path.clone());
    params.forward.montage = MontageSpec::Standard("10-10".to_string());
    params.forward.sources = SourcesSpec::Template(res);
    params.fit.resamples = args.resamples;
    let cache = args.cache.clone().unwrap_or_else(default_cache_dir);
    let result = attribute(
        &params,
        &cache,
        Some(scenario.component_names.clone()),
        &Console::default(),
    )
    .map_err(CliError::from);
    let outcome = result.and_then(|a| write_outputs(&args.out, &a).map(|dir| (a, dir)));
    let (a, dir) = match outcome {
        Ok(v) => v,
        Err(e) => {
            let _ = std::fs::remove_dir_all(&scratch);
            return Err(e);
        }
    };
    let _ = std::fs::copy(&decoder_path, dir.join("decoder.h5"));
    let _ = std::fs::remove_dir_all(&scratch);
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
