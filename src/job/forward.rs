//! From the forward-model specs to library values: the montage (standard
//! layout or electrodes file), the sources (template or file, with
//! regions), the head (default or TOML), then the lead field and the patch
//! dictionary with their progress and notes.

use std::path::Path;

use super::bem_head::{bem_system, check_bem_sources, load_bem_head, template_bem_head, HeadModel};
use super::error::{JobError, JobResult};
use super::montage_frame::{load_bem_montage, load_montage, refuse_special_file, BemFrame};
use super::observer::{staged, JobObserver};
use super::params::{ForwardParams, PatchParams};
use super::specs::{HeadChoice, SourcesSpec};
use crate::dictionary::{Dictionary, DictionaryInfo};
use crate::forward::{LeadField, Orientation};
use crate::geometry::SourceSpace;
use crate::head::{HeadModelKind, HeadSpec, SphereHead};
use crate::io::sources_file::{read_regions, read_sources, POINT_SOURCE_AREA_MM2};
use crate::montage::{fit_sphere, Montage};
use crate::pipeline::{bem_leadfield_for, dictionary_for, leadfield_for, DistanceKind};

impl ForwardParams {
    /// The montage (restricted to `labels`, in their order, when given),
    /// the sources and the head.
    pub fn resolve(
        &self,
        labels: Option<&[String]>,
        observer: &dyn JobObserver,
    ) -> Result<(Montage, SourceSpace, HeadModel), JobError> {
        let bem = bem_spec(&self.head)?;
        let frame = match (&self.head, &bem) {
            (HeadChoice::TemplateBem, _) => Some(BemFrame::Template),
            (_, Some((spec, path))) => Some(BemFrame::File {
                path: path.clone(),
                landmarks: spec.landmarks_mm,
            }),
            _ => None,
        };
        let (mut montage, from_file) = match &frame {
            Some(frame) => load_bem_montage(&self.montage, frame, observer)?,
            None => load_montage(&self.montage)?,
        };
        if let Some(labels) = labels {
            let idx = montage.select(labels).input(format!(
                "matching the decoder's channels to montage {}",
                self.montage
            ))?;
            montage = montage.subset(&idx);
        }
        let sources = load_sources(&self.sources, self.regions.as_deref(), observer)?;
        if self.head == HeadChoice::TemplateBem {
            let head = template_bem_head(observer)?;
            check_bem_sources(&head, &sources)?;
            return Ok((montage, sources, HeadModel::Bem(head)));
        }
        if let Some((spec, path)) = bem {
            let head = load_bem_head(spec, &path, observer)?;
            check_bem_sources(&head, &sources)?;
            return Ok((montage, sources, HeadModel::Bem(head)));
        }
        let head = load_head(&self.head, &montage, from_file)?;
        check_sources_inside(&sources, &head, &montage, from_file, self)?;
        Ok((montage, sources, HeadModel::Spheres(head)))
    }
}

/// Refuse sources that reach out of the head's inner sphere, saying why
/// (once, before any lead field): when the electrodes file set the head
/// centre, the usual cause is electrodes in another frame or unit, so the
/// message compares the electrodes' fitted sphere with the sources'.
fn check_sources_inside(
    sources: &SourceSpace,
    head: &SphereHead,
    montage: &Montage,
    montage_from_file: bool,
    params: &ForwardParams,
) -> Result<(), JobError> {
    let center = head.center();
    let inner = head.inner_radius();
    let distance = |p: &[f64; 3]| {
        ((p[0] - center[0]).powi(2) + (p[1] - center[1]).powi(2) + (p[2] - center[2]).powi(2))
            .sqrt()
    };
    let outside = sources
        .positions
        .iter()
        .filter(|p| p.iter().all(|c| c.is_finite()) && distance(p) >= inner)
        .count();
    let Some((index, far)) = sources
        .positions
        .iter()
        .enumerate()
        .filter(|(_, p)| p.iter().all(|c| c.is_finite()))
        .map(|(i, p)| (i, distance(p)))
        .max_by(|a, b| a.1.total_cmp(&b.1))
    else {
        return Ok(());
    };
    if far < inner {
        return Ok(());
    }
    let n = sources.positions.len().max(1) as f64;
    let mut mean = [0.0; 3];
    for p in &sources.positions {
        for (m, c) in mean.iter_mut().zip(p) {
            *m += c / n;
        }
    }
    // Rounded before printing, and + 0.0 so that -0.3 mm reads "0", not "-0".
    let mm = |v: [f64; 3]| {
        let r = v.map(|c| (c * 1e3).round() + 0.0);
        format!("({}, {}, {}) mm", r[0], r[1], r[2])
    };
    let what = format!(
        "{outside} of {} sources lie outside the head's inner sphere (centre {}, radius {:.0} mm; \
         the farthest, source {index}, is {:.1} mm from the centre); the sources' mean position is {}",
        sources.positions.len(),
        mm(center),
        inner * 1e3,
        far * 1e3,
        mm(mean)
    );
    let message = if montage_from_file {
        let radius = fit_sphere(&montage.positions)
            .map(|(_, r)| {
                format!(
                    ", radius {:.0} mm (the head's scalp sphere: {:.0} mm)",
                    r * 1e3,
                    head.outer_radius() * 1e3
                )
            })
            .unwrap_or_default();
        format!(
            "the electrodes of {} do not sit around the sources: {what}. The head centre is the centre \
             of a sphere fitted to the electrodes, {}{radius}, {:.0} mm from the sources' mean; \
             the electrodes are probably in another frame or unit. Positions must be in mm, in head \
             coordinates (origin at the head centre, +x toward the right ear, +y toward the nose, \
             +z up): check the file's units (metres or cm read as mm), move the positions so the \
             nasion and the ears sit around the origin (remove a shift), or give a head file with \
             center_mm (--head)",
            params.montage,
            mm(center),
            distance(&mean) * 1e3
        )
    } else {
        format!(
            "the sources do not fit inside the head: {what}. Check the sources' units (mm) and \
             frame (origin at the head centre), or the head's center_mm and radii_mm (--head)"
        )
    };
    Err(JobError::input(message))
}

/// The lead field, with its progress and the projection warnings as notes.
/// A boundary-element head's system comes from `cache` when it holds one
/// for the same surfaces (and is cached there when built).
pub fn compute_leadfield(
    montage: &Montage,
    sources: &SourceSpace,
    head: &HeadModel,
    orientation: Orientation,
    cache: Option<&Path>,
    observer: &dyn JobObserver,
) -> Result<LeadField, JobError> {
    let head = match head {
        HeadModel::Spheres(h) => h,
        HeadModel::Bem(b) => {
            let system = bem_system(b, cache, observer)?;
            let json = b.spec.to_json();
            let (lf, points) = staged(observer, "lead field", sources.len(), |progress| {
                bem_leadfield_for(montage, sources, (&system, &json), orientation, progress)
            })
            .input("computing the lead field")?;
            if let Some((i, far)) = points
                .iter()
                .enumerate()
                .max_by(|a, b| a.1.distance.total_cmp(&b.1.distance))
            {
                let mean = points.iter().map(|p| p.distance).sum::<f64>() / points.len() as f64;
                observer.note(&format!(
                    "note: electrodes moved onto the scalp surface by {:.1} mm on average, at most {:.1} mm ({})",
                    mean * 1e3,
                    far.distance * 1e3,
                    montage.labels.get(i).map_or("", String::as_str)
                ));
                if far.distance > 0.010 {
                    observer.note(&format!(
                        "warning: electrode {} is {:.1} mm from the scalp surface (more than 10 mm): check the electrodes' frame and units",
                        montage.labels.get(i).map_or("", String::as_str),
                        far.distance * 1e3
                    ));
                }
            }
            return Ok(lf);
        }
    };
    let (lf, warnings) = staged(observer, "lead field", sources.len(), |progress| {
        leadfield_for(montage, sources, head, orientation, progress)
    })
    .input("computing the lead field")?;
    for w in warnings {
        observer.note(&format!("warning: {w}"));
    }
    Ok(lf)
}

/// The patch dictionary of a lead field, with its progress and notes.
pub fn build_dictionary(
    lf: &LeadField,
    patches: &PatchParams,
    observer: &dyn JobObserver,
) -> Result<(Dictionary, DictionaryInfo), JobError> {
    let params = patches.params()?;
    let (d, info, kind) = staged(observer, "patch dictionary", lf.n_sources(), |progress| {
        dictionary_for(lf, &params, patches.spacing_m(), progress)
    })
    .input("building the dictionary")?;
    if kind == DistanceKind::Euclidean {
        observer.note(
            "note: the sources have no triangles; patch distances are Euclidean, not geodesic",
        );
    }
    if !info.dropped.is_empty() {
        observer.note(&format!(
            "note: {} atoms with a negligible scalp field were dropped",
            info.dropped.len()
        ));
    }
    Ok((d, info))
}

/// Sources: the template or a surface/table file; regions from the
/// template's parcellation or from `regions`.
pub fn load_sources(
    spec: &SourcesSpec,
    regions: Option<&Path>,
    observer: &dyn JobObserver,
) -> Result<SourceSpace, JobError> {
    let mut sources = match spec {
        SourcesSpec::Template(res) => SourceSpace::from_template(&crate::geometry::template(*res)),
        SourcesSpec::File(path) => {
            refuse_special_file("sources", path)?;
            if !path.is_file() {
                return Err(JobError::input(format!(
                    "sources {:?} are neither template, template-5k nor an existing file",
                    path.display().to_string()
                )));
            }
            let sources = read_sources(path).input("reading sources")?;
            if sources.triangles.is_empty() {
                observer.note(&point_source_note(path));
            }
            sources
        }
    };
    if let Some(r) = regions {
        let (region, names) = read_regions(r, sources.len()).input("reading regions")?;
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

/// The spec of a bem head file and its path, or `None` for spheres (the
/// default or a spheres file).
fn bem_spec(choice: &HeadChoice) -> Result<Option<(HeadSpec, std::path::PathBuf)>, JobError> {
    let HeadChoice::File(path) = choice else {
        return Ok(None);
    };
    let text = crate::io::input::read_input_string(path)
        .map_err(|e| JobError::input(format!("{}: {e}", path.display())))?;
    let spec = HeadSpec::from_toml_str(&text, &path.display().to_string())
        .input("reading the head model")?;
    Ok((spec.model == HeadModelKind::Bem).then(|| (spec, path.clone())))
}

/// The head: default or a TOML file. When the montage came from a file and
/// the head gives no centre, the centre is the least-squares sphere fit of
/// the electrodes.
pub fn load_head(
    choice: &HeadChoice,
    montage: &Montage,
    montage_from_file: bool,
) -> Result<SphereHead, JobError> {
    let (mut spec, name) = match choice {
        HeadChoice::Default => (SphereHead::default_adult().to_spec(), "default".to_string()),
        HeadChoice::TemplateBem => {
            return Err(JobError::input(
                "the template-bem head is made of surfaces, not spheres; this step needs a sphere head (default or a spheres file)",
            ))
        }
        HeadChoice::File(path) => {
            let text = crate::io::input::read_input_string(path)
                .map_err(|e| JobError::input(format!("{}: {e}", path.display())))?;
            let name = path.display().to_string();
            let mut s = HeadSpec::from_toml_str(&text, &name).input("reading the head model")?;
            if s.center_mm.is_none() && !montage_from_file {
                s.center_mm = Some([0.0; 3]);
            }
            (s, name)
        }
    };
    let from_file_without_centre = *choice != HeadChoice::Default && spec.center_mm.is_none();
    if montage_from_file && (*choice == HeadChoice::Default || from_file_without_centre) {
        let (center, _radius) = fit_sphere(&montage.positions).input(format!(
            "fitting a sphere to the electrodes for the head centre ({name})"
        ))?;
        spec.center_mm = Some(center.map(|v| v * 1e3));
    }
    spec.to_head().input(format!("head model {name}"))
}
