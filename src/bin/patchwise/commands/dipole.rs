//! `patchwise dipole`: equivalent-dipole fits of a decoder's patterns, beside the patch fit.

use std::path::{Path, PathBuf};

use patchwise::dipole::{nearest_source, DipoleError, DipoleFit, DipoleFitter, DipoleOptions};
use patchwise::geometry::SourceSpace;
use patchwise::io::decoder_file::read_decoder;
use patchwise::io::dipole_file::{
    read_existing_result, write_dipoles_csv, write_into_result, write_new_result, DipoleRecord,
    DipoleRow, PatternsRecord,
};
use patchwise::io::result_file::CAUTION;

use patchwise::job::prepare::{check_channels, decoder_patterns};
use patchwise::job::ForwardParams;

use crate::cli_error::OrExit;
use crate::progress::Console;
use crate::CliError;
use patchwise::io::staging::Staging;

/// Residual variance below which a fit counts as dipolar (common practice;
/// see Delorme et al. 2012, PLoS One 7:e30135, from memory).
const DIPOLAR_RV: f64 = 0.15;

/// Arguments of `patchwise dipole`.
#[derive(clap::Args, Debug, Clone)]
pub struct Args {
    /// Decoder file: .npz, .h5 or .mat with `channels` and `patterns`, or `weights` + `covariance`;
    /// or a bare .npy/.csv matrix of patterns (n_ch x k) with --channels.
    #[arg(long)]
    pub decoder: PathBuf,
    /// Channel labels of a bare matrix (one a line, or a BIDS channels.tsv).
    #[arg(long)]
    pub channels: Option<PathBuf>,
    #[command(flatten)]
    pub forward: ForwardParams,
    /// Fit a symmetric pair per component (positions mirrored in x, two free moments).
    #[arg(long)]
    pub pairs: bool,
    /// Noise standard deviation per channel, in the units of the patterns (default: estimated from the residual).
    #[arg(long)]
    pub noise_sd: Option<f64>,
    /// Output folder (an existing attribution's result.h5 there gains a /dipole group).
    #[arg(long)]
    pub out: PathBuf,
    /// Beside an attribution, do not rewrite its report.html with the dipole table.
    #[arg(long)]
    pub no_report: bool,
}

fn bad(message: String) -> CliError {
    CliError::bad_input(anyhow::anyhow!(message))
}

/// Rows of the files for every fitted dipole, with the nearest cortex vertex.
fn rows(fits: &[DipoleFit], sources: &SourceSpace) -> Vec<DipoleRow> {
    let mut out = Vec::new();
    for (component, fit) in fits.iter().enumerate() {
        for (dipole, d) in fit.dipoles.iter().enumerate() {
            let (region, distance) = match nearest_source(&sources.positions, d.position) {
                Some((v, dist)) => {
                    let name = usize::try_from(sources.region.get(v).copied().unwrap_or(-1))
                        .ok()
                        .and_then(|r| sources.region_names.get(r).cloned())
                        .unwrap_or_else(|| "none".to_string());
                    (name, dist * 1e3)
                }
                None => ("none".to_string(), f64::NAN),
            };
            let cov = fit.position_covariance(dipole);
            out.push(DipoleRow {
                component,
                dipole,
                position_mm: d.position.map(|v| v * 1e3),
                moment: d.moment,
                residual_variance: fit.residual_variance,
                region,
                distance_to_cortex_mm: distance,
                ci95_radius_mm: fit.ci95_radius * 1e3,
                ci95_semi_axes_mm: fit.ci95_semi_axes.map(|v| v * 1e3),
                covariance_mm2: cov.map(|r| r.map(|v| v * 1e6)),
            });
        }
    }
    out
}

fn print_table(names: &[String], fits: &[DipoleFit], rows: &[DipoleRow], pairs: bool) {
    for (c, fit) in fits.iter().enumerate() {
        outln!();
        outln!(
            "{} — {}, residual variance {:.1} % ({}){}",
            names[c],
            if pairs {
                "symmetric pair"
            } else {
                "single dipole"
            },
            100.0 * fit.residual_variance,
            if fit.residual_variance < DIPOLAR_RV {
                "dipolar: RV < 15 %"
            } else {
                "not dipolar: RV >= 15 %"
            },
            if fit.at_boundary {
                "; at the search boundary"
            } else {
                ""
            }
        );
        outln!(
            "  {:>6} {:>22} {:>10} {:>12} {:<26} {:>10}",
            "dipole",
            "position (mm)",
            "|q| (A·m)",
            "95 % r (mm)",
            "nearest cortex region",
            "to cortex"
        );
        for r in rows.iter().filter(|r| r.component == c) {
            let q = r.moment.iter().map(|v| v * v).sum::<f64>().sqrt();
            outln!(
                "  {:>6} {:>22} {:>10.3e} {:>12.1} {:<26} {:>7.1} mm",
                r.dipole,
                format!(
                    "({:.1}, {:.1}, {:.1})",
                    r.position_mm[0], r.position_mm[1], r.position_mm[2]
                ),
                q,
                r.ci95_radius_mm,
                r.region,
                r.distance_to_cortex_mm
            );
        }
    }
}

/// Run `patchwise dipole`.
pub fn exec(args: Args) -> Result<(), CliError> {
    if let Some(s) = args.noise_sd {
        if !(s.is_finite() && s > 0.0) {
            return Err(bad(format!("--noise-sd {s}: expected a positive number")));
        }
    }
    // The output folder is new, empty or ours; it gains dipoles.csv and a
    // new result.h5 (and report.html), so no input may be one of those.
    patchwise::io::staging::check_output_folder(&args.out, "--out")?;
    let mut inputs = vec![("decoder", args.decoder.clone())];
    inputs.extend(args.channels.clone().map(|c| ("channel list", c)));
    inputs.extend(args.forward.input_files());
    let inputs: Vec<(&str, &Path)> = inputs.iter().map(|(w, p)| (*w, p.as_path())).collect();
    patchwise::io::staging::refuse_replaced_inputs(
        &args.out,
        "--out",
        Some(&["result.h5", "dipoles.csv", "report.html"]),
        &inputs,
    )?;
    // Inputs first: every bad input is found before anything is written.
    let decoder =
        read_decoder(&args.decoder, args.channels.as_deref()).bad_input("reading the decoder")?;
    check_channels(&decoder.channels, &args.decoder)?;
    let patterns = decoder_patterns(&decoder, &args.decoder, true)?;
    let k = decoder.k;
    let (montage, sources, head) = args
        .forward
        .resolve(Some(&decoder.channels), &Console::default())?;
    let existing_path = args.out.join("result.h5");
    let existing = if existing_path.is_file() {
        Some(
            read_existing_result(&existing_path, &decoder.channels, k)
                .bad_input("adding the dipoles to the attribution already in --out")?,
        )
    } else {
        None
    };
    let options = DipoleOptions {
        pairs: args.pairs,
        noise_sd: args.noise_sd,
        ..DipoleOptions::default()
    };
    let fitter =
        DipoleFitter::new(&head, &montage.positions, &options).bad_input("setting up the fit")?;
    let fits = fitter.fit(&patterns, k).map_err(|e| match e {
        DipoleError::FlatPattern { .. }
        | DipoleError::NotFinite { .. }
        | DipoleError::Shape { .. } => {
            CliError::bad_input(anyhow::Error::new(e).context(args.decoder.display().to_string()))
        }
        other => CliError::compute(anyhow::Error::new(other).context("fitting dipoles")),
    })?;
    let rows = rows(&fits, &sources);
    let names = existing
        .as_ref()
        .and_then(|e| e.component_names.clone())
        .unwrap_or_else(|| (0..k).map(|c| format!("component {c}")).collect());
    let rv: Vec<f64> = fits.iter().map(|f| f.residual_variance).collect();
    let noise: Vec<f64> = fits.iter().map(|f| f.noise_sd).collect();
    let record = DipoleRecord {
        rows: &rows,
        k,
        residual_variance: &rv,
        noise_sd: &noise,
        noise_sd_estimated: args.noise_sd.is_none(),
        model: if args.pairs {
            "symmetric-pair"
        } else {
            "single"
        },
        margin_mm: options.margin * 1e3,
        grid_spacing_mm: options.grid_spacing * 1e3,
    };
    let stage = Staging::new(&args.out).map_err(CliError::compute)?;
    match &existing {
        Some(e) => write_into_result(&stage.file("result.h5"), e, &record),
        None => write_new_result(
            &stage.file("result.h5"),
            &PatternsRecord {
                labels: &decoder.channels,
                values: &patterns,
                source: decoder.source_kind(),
                component_names: &names,
            },
            &record,
        ),
    }
    .compute("writing result.h5")?;
    write_dipoles_csv(&stage.file("dipoles.csv"), &rows, args.pairs)
        .compute("writing dipoles.csv")?;
    // The attribution's other files (regions.csv, summary.json, the demo's
    // decoder, ...) stay beside the new ones: the folder is swapped whole.
    stage.keep_existing()?;
    let dir = stage.commit()?;
    print_table(&names, &fits, &rows, args.pairs);
    outln!();
    outln!(
        "results in {} (dipoles.csv, result.h5 /dipole{})",
        dir.display(),
        if existing.as_ref().is_some_and(|e| e.peaks_mm.is_some()) {
            ", beside the attribution"
        } else {
            ""
        }
    );
    outln!("caution: {CAUTION}");
    // Beside an attribution the report gains the dipole table; its job
    // comes from the attribution's summary.json.
    if existing.as_ref().is_some_and(|e| e.peaks_mm.is_some()) && !args.no_report {
        super::report::report_after_outputs(&dir, Vec::new())?;
    }
    Ok(())
}
