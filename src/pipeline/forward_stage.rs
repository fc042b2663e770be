//! Lead field and dictionary for a montage, a source space and a head.

use rayon::prelude::*;

use crate::dictionary::{build_dictionary, Dictionary, DictionaryInfo, DictionaryParams, Seeds};
use crate::forward::{
    bem_lead_field, lead_field, ForwardError, Gain, LeadField, Orientation, Reference,
};
use crate::geometry::{farthest_point_seeds, norm, sub, GeodesicSolver, SourceSpace, Vec3};
use crate::head::bem::{project_to_scalp, BemSystem, ScalpPoint};
use crate::head::SphereHead;
use crate::montage::{Montage, ProjectionWarning};

use super::PipelineError;

/// The lead field of `montage` (projected radially onto the scalp sphere)
/// for `sources` in `head`, average-referenced, as a [`LeadField`] model.
pub fn leadfield_for(
    montage: &Montage,
    sources: &SourceSpace,
    head: &SphereHead,
    orientation: Orientation,
    progress: &dyn crate::numeric::Progress,
) -> Result<(LeadField, Vec<ProjectionWarning>), PipelineError> {
    let (projected, warnings) = montage.project_to_sphere(head.center(), head.outer_radius())?;
    let lf = lead_field(
        head,
        &projected.positions,
        &sources.positions,
        &sources.normals,
        orientation,
        Reference::Average,
        progress,
    )?;
    Ok((
        average_referenced(
            projected.labels,
            projected.positions,
            sources,
            lf,
            head.head_model_json(),
        ),
        warnings,
    ))
}

/// The [`LeadField`] model of an average-referenced `gain` for electrodes
/// `labels` at `electrode_positions` (m) and `sources`, with the head
/// file's form `head_model`.
fn average_referenced(
    labels: Vec<String>,
    electrode_positions: Vec<Vec3>,
    sources: &SourceSpace,
    gain: Gain,
    head_model: String,
) -> LeadField {
    LeadField {
        labels,
        electrode_positions,
        sources: sources.clone(),
        gain: gain.gain,
        gain_xyz: gain.gain_xyz,
        reference: "average".to_string(),
        head_model,
    }
}

/// The lead field of `montage` (each electrode moved to the nearest point
/// of the scalp surface) for `sources` in a boundary-element head,
/// average-referenced, as a [`LeadField`] whose `head_model` is
/// `head_json`; with the electrodes' places on the scalp (their distances
/// are the caller's to report).
pub fn bem_leadfield_for(
    montage: &Montage,
    sources: &SourceSpace,
    (system, head_json): (&BemSystem, &str),
    orientation: Orientation,
    progress: &dyn crate::numeric::Progress,
) -> Result<(LeadField, Vec<ScalpPoint>), PipelineError> {
    let points =
        project_to_scalp(system, &montage.positions, &montage.labels).map_err(ForwardError::Bem)?;
    let transfer = system.transfer(&points);
    let lf = bem_lead_field(
        &transfer,
        &sources.positions,
        &sources.normals,
        orientation,
        Reference::Average,
        progress,
    )?;
    Ok((
        average_referenced(
            montage.labels.clone(),
            points.iter().map(|p| p.position).collect(),
            sources,
            lf,
            head_json.to_string(),
        ),
        points,
    ))
}

/// How patch distances were measured.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DistanceKind {
    /// Geodesic, by fast marching on the source mesh.
    Geodesic,
    /// Euclidean, for sources without triangles.
    Euclidean,
}

/// The patch dictionary of a lead field. Seeds: every source, or
/// farthest-point seeds at `spacing_m`. Distances are geodesic on the
/// source mesh when it has triangles, Euclidean otherwise.
pub fn dictionary_for(
    lf: &LeadField,
    params: &DictionaryParams,
    spacing_m: Option<f64>,
    progress: &dyn crate::numeric::Progress,
) -> Result<(Dictionary, DictionaryInfo, DistanceKind), PipelineError> {
    let mesh = lf.sources.mesh();
    let seeds = match spacing_m {
        Some(s) if !mesh.triangles.is_empty() => Seeds::Given(farthest_point_seeds(&mesh, s)?),
        _ => Seeds::All,
    };
    let gain_xyz = lf.gain_xyz.as_deref();
    let positions = &lf.sources.positions;
    // Point sets have no surface to measure along: Euclidean distances.
    let euclidean = |seed: usize, radius: f64| -> Vec<(u32, f64)> {
        let p = positions[seed];
        positions
            .par_iter()
            .enumerate()
            .filter_map(|(v, q)| {
                let d = norm(sub(*q, p));
                (d <= radius).then_some((v as u32, d))
            })
            .collect()
    };
    let solver = if mesh.triangles.is_empty() {
        None
    } else {
        Some(GeodesicSolver::new(&mesh)?)
    };
    let geodesic = |seed: usize, radius: f64| match &solver {
        Some(s) => s.distances_within(seed, radius),
        None => euclidean(seed, radius),
    };
    let (d, info) = build_dictionary(
        &mesh,
        &lf.gain,
        gain_xyz,
        lf.n_channels(),
        &seeds,
        &geodesic,
        params,
        progress,
    )?;
    let kind = if solver.is_some() {
        DistanceKind::Geodesic
    } else {
        DistanceKind::Euclidean
    };
    Ok((d, info, kind))
}
