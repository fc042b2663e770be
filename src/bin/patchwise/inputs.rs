//! Resolving the montage, source and head options shared by several
//! subcommands into library values.

use std::path::{Path, PathBuf};

use patchwise::geometry::{template, SourceSpace, TemplateResolution};
use patchwise::head::{HeadSpec, SphereHead};
use patchwise::io::electrodes::read_electrodes;
use patchwise::io::sources_file::{read_regions, read_sources, POINT_SOURCE_AREA_MM2};
use patchwise::montage::{fit_sphere, standard, standard_names, Montage};

use patchwise::forward::Orientation;
use patchwise::io::leadfield_file::LeadFieldFile;
use patchwise::pipeline::leadfield_for;

use crate::cli_error::OrExit;
use crate::progress::{bar, note};
use crate::CliError;

/// The forward-model options shared by `leadfield` and `attribute`.
#[derive(clap::Args, Debug, Clone)]
pub struct ForwardOptions {
    /// Montage: 10-20, 10-10, 10-05, or an electrodes file (.tsv/.csv, mm).
    #[arg(long, default_value = "10-05")]
    pub montage: String,
    /// Sources: template (about 20k vertices), template-5k, or a GIFTI/PLY/OFF surface or TSV/CSV table (mm).
    #[arg(long, default_value = "template")]
    pub sources: String,
    /// Head: default (four shells) or a TOML file.
    #[arg(long, default_value = "default")]
    pub head: String,
    /// Region label per source (GIFTI label array or one label a line).
    #[arg(long)]
    pub regions: Option<PathBuf>,
}

impl ForwardOptions {
    /// The options that name existing files (montage, sources, head,
    /// regions), as (what, path), for the checks that outputs never
    /// replace inputs.
    pub fn input_files(&self) -> Vec<(&'static str, PathBuf)> {
        let named = [
            ("montage", PathBuf::from(&self.montage)),
            ("sources", PathBuf::from(&self.sources)),
            ("head", PathBuf::from(&self.head)),
        ];
        named
            .into_iter()
            .chain(self.regions.clone().map(|r| ("regions", r)))
            .filter(|(_, p)| p.is_file())
            .collect()
    }

    /// The montage (restricted to `labels`, in their order, when given),
    /// the sources and the head.
    pub fn resolve(
        &self,
        labels: Option<&[String]>,
    ) -> Result<(Montage, SourceSpace, SphereHead), CliError> {
        let (mut montage, from_file) = load_montage(&self.montage)?;
        if let Some(labels) = labels {
            let idx = montage.select(labels).bad_input(format!(
                "matching the decoder's channels to montage {}",
                self.montage
            ))?;
            montage = montage.subset(&idx);
        }
        let sources = load_sources(&self.sources, self.regions.as_deref())?;
        let head = load_head(&self.head, &montage, from_file)?;
        Ok((montage, sources, head))
    }
}

/// The lead field, with a progress bar and the projection warnings on stderr.
pub fn compute_leadfield(
    montage: &Montage,
    sources: &SourceSpace,
    head: &SphereHead,
    orientation: Orientation,
) -> Result<LeadFieldFile, CliError> {
    let pb = bar(sources.len(), "lead field");
    let (lf, warnings) = leadfield_for(montage, sources, head, orientation, &|n| pb.inc(n as u64))
        .bad_input("computing the lead field")?;
    pb.finish_and_clear();
    for w in warnings {
        note(format!("warning: {w}"));
    }
    Ok(lf)
}

/// A montage by standard name (on the default head's scalp sphere) or from
/// an electrodes file (BIDS TSV or CSV, mm). Returns whether it came from a
/// file.
pub fn load_montage(spec: &str) -> Result<(Montage, bool), CliError> {
    let known = standard_names()
        .iter()
        .any(|n| n.eq_ignore_ascii_case(spec))
        || spec.eq_ignore_ascii_case("10-5");
    if known {
        let radius = SphereHead::default_adult().outer_radius();
        return Ok((
            standard(spec, radius).bad_input("choosing a montage")?,
            false,
        ));
    }
    let path = Path::new(spec);
    if path.is_file() {
        let m = read_electrodes(path).bad_input("reading electrodes")?;
        return Ok((m, true));
    }
    refuse_special_file("montage", spec)?;
    Err(CliError::bad_input(anyhow::anyhow!(
        "montage {spec:?} is neither a standard layout ({}) nor an existing electrodes file",
        standard_names().join(", ")
    )))
}

/// Refuse `spec` when it names something that exists but is not a regular
/// file (a folder, pipe, socket or device): saying "no such file" there
/// would mislead, and opening a pipe would block.
fn refuse_special_file(what: &str, spec: &str) -> Result<(), CliError> {
    match std::fs::metadata(spec) {
        Ok(meta) if !meta.is_file() => Err(CliError::bad_input(anyhow::anyhow!(
            "{what} {spec:?}: not a regular file (a folder, pipe, socket or device); give a file or a built-in name"
        ))),
        _ => Ok(()),
    }
}

/// Sources: `template`, `template-5k`, or a surface/table file; regions from
/// the template's parcellation or from `regions`.
pub fn load_sources(spec: &str, regions: Option<&Path>) -> Result<SourceSpace, CliError> {
    let mut sources = if let Some(res) = TemplateResolution::from_name(spec) {
        let t = template(res);
        let mut s = SourceSpace::from_mesh(&t.mesh);
        s.region = t.region;
        s.region_names = t.region_names;
        s
    } else {
        let path = Path::new(spec);
        refuse_special_file("sources", spec)?;
        if !path.is_file() {
            return Err(CliError::bad_input(anyhow::anyhow!(
                "sources {spec:?} are neither template, template-5k nor an existing file"
            )));
        }
        let sources = read_sources(path).bad_input("reading sources")?;
        if sources.triangles.is_empty() {
            note(point_source_note(path));
        }
        sources
    };
    if let Some(r) = regions {
        let (region, names) = read_regions(r, sources.len()).bad_input("reading regions")?;
        sources.region = region;
        sources.region_names = names;
    }
    Ok(sources)
}

/// What the run assumes of sources without triangles, for a note.
pub fn point_source_note(path: &Path) -> String {
    format!(
        "note: {} has no triangles: each source is a point standing for {POINT_SOURCE_AREA_MM2} mm² of cortex (equal weights in a patch)",
        path.display()
    )
}

/// The head: `default` or a TOML file. When the montage came from a file
/// and the head gives no centre, the centre is the least-squares sphere fit
/// of the electrodes.
pub fn load_head(
    spec: &str,
    montage: &Montage,
    montage_from_file: bool,
) -> Result<SphereHead, CliError> {
    let (spec_value, name) = if spec == "default" {
        (SphereHead::default_adult().to_spec(), "default".to_string())
    } else {
        let path = Path::new(spec);
        let text = patchwise::io::input::read_input_string(path)
            .map_err(|e| CliError::bad_input(anyhow::anyhow!("{}: {e}", path.display())))?;
        let name = path.display().to_string();
        let mut s = HeadSpec::from_toml_str(&text, &name).bad_input("reading the head model")?;
        if s.center_mm.is_none() && !montage_from_file {
            s.center_mm = Some([0.0; 3]);
        }
        (s, name)
    };
    let mut spec_value = spec_value;
    let file_without_centre = spec != "default" && spec_value.center_mm.is_none();
    if montage_from_file && (spec == "default" || file_without_centre) {
        let (center, _radius) = fit_sphere(&montage.positions).bad_input(format!(
            "fitting a sphere to the electrodes for the head centre ({name})"
        ))?;
        spec_value.center_mm = Some(center.map(|v| v * 1e3));
    }
    spec_value.to_head().bad_input(format!("head model {name}"))
}
