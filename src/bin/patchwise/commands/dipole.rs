//! `patchwise dipole`: equivalent-dipole fits of a decoder's patterns, beside the patch fit.
//! Parse, check the output folder, run the library job
//! (`patchwise::job::dipole`), write the staged folder, print.

use std::path::{Path, PathBuf};

use patchwise::dipole::DipoleFit;
use patchwise::io::dipole_file::DipoleRow;
use patchwise::io::result_file::CAUTION;
use patchwise::io::staging::Staging;
use patchwise::job::dipole::{dipole, write_dipole_files, DipoleParams};

use crate::progress::Console;
use crate::CliError;

/// Arguments of `patchwise dipole`.
#[derive(clap::Args, Debug, Clone)]
pub struct Args {
    #[command(flatten)]
    pub params: DipoleParams,
    /// Output folder (an existing attribution's result.h5 there gains a /dipole group).
    #[arg(long)]
    pub out: PathBuf,
    /// Beside an attribution, do not rewrite its report.html with the dipole table.
    #[arg(long)]
    pub no_report: bool,
}

fn print_table(names: &[String], fits: &[DipoleFit], rows: &[DipoleRow], pairs: bool, cut: f64) {
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
            if fit.residual_variance < cut {
                format!(
                    "under the {:.0} % cut: the model explains it well",
                    100.0 * cut
                )
            } else {
                format!("at or over the {:.0} % cut", 100.0 * cut)
            },
            if fit.at_boundary {
                "; at the search boundary"
            } else {
                ""
            }
        );
        outln!(
            "  {:>6} {:>22} {:>10} {:>12} {:<26} {:>10} {:>14}",
            "dipole",
            "position (mm)",
            "|q| (A·m)",
            "95 % r (mm)",
            "nearest cortex region",
            "to cortex",
            "to patch peak"
        );
        for r in rows.iter().filter(|r| r.component == c) {
            let q = r.moment.iter().map(|v| v * v).sum::<f64>().sqrt();
            let to_peak = if r.distance_to_patch_peak_mm.is_finite() {
                format!("{:.1} mm", r.distance_to_patch_peak_mm)
            } else {
                "n/a".to_string()
            };
            outln!(
                "  {:>6} {:>22} {:>10.3e} {:>12.1} {:<26} {:>7.1} mm {:>14}",
                r.dipole,
                format!(
                    "({:.1}, {:.1}, {:.1})",
                    r.position_mm[0], r.position_mm[1], r.position_mm[2]
                ),
                q,
                r.ci95_radius_mm,
                r.region,
                r.distance_to_cortex_mm,
                to_peak
            );
        }
    }
}

/// Run `patchwise dipole`.
pub fn exec(args: Args) -> Result<(), CliError> {
    args.params.validate()?;
    // The output folder is new, empty or ours; it gains dipoles.csv and a
    // new result.h5 (and report.html), so no input may be one of those.
    patchwise::io::staging::check_output_folder(&args.out, "--out")?;
    let inputs = args.params.input_files();
    let inputs: Vec<(&str, &Path)> = inputs.iter().map(|(w, p)| (*w, p.as_path())).collect();
    patchwise::io::staging::refuse_replaced_inputs(
        &args.out,
        "--out",
        Some(&["result.h5", "dipoles.csv", "report.html"]),
        &inputs,
    )?;
    let existing = args.out.join("result.h5");
    let beside = existing.is_file().then_some(existing.as_path());
    let d = dipole(&args.params, beside, &Console::default())?;
    let stage = Staging::new(&args.out).map_err(CliError::compute)?;
    write_dipole_files(stage.dir(), &d)?;
    // The attribution's other files (regions.csv, summary.json, the demo's
    // decoder, ...) stay beside the new ones: the folder is swapped whole.
    stage.keep_existing()?;
    let dir = stage.commit()?;
    print_table(
        &d.names,
        &d.fits,
        &d.rows,
        d.pairs,
        args.params.residual_cut,
    );
    outln!();
    outln!(
        "results in {} (dipoles.csv, result.h5 /dipole{})",
        dir.display(),
        if d.beside_attribution() {
            ", beside the attribution"
        } else {
            ""
        }
    );
    if d.beside_attribution() {
        outln!("to patch peak: distance to the peak (largest |source|) of the same component's patch fit");
    }
    outln!("caution: {CAUTION}");
    // Beside an attribution the report gains the dipole table; its job
    // comes from the attribution's summary.json.
    if d.beside_attribution() && !args.no_report {
        super::report::report_after_outputs(&dir, Vec::new())?;
    }
    Ok(())
}
