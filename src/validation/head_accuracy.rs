//! The boundary-element head checked against the exact sphere series:
//! concentric icosphere meshes, dipoles at growing eccentricity, the
//! relative difference measure and the magnitude ratio of Meijs et al.
//! (1989, IEEE Trans Biomed Eng 36:1038; definitions recalled from memory).

use crate::geometry::{normalize, scale, Mesh, Vec3};
use crate::head::bem::{project_to_scalp, BemError, BemGeometry, BemSystem, BemTransfer};
use crate::head::{HeadError, SphereHead};
use crate::numeric::average_reference_columns;

/// RDM = ‖u/‖u‖ − v/‖v‖‖ and MAG = ‖u‖/‖v‖ of `test` u against `reference`
/// v, both average-referenced first (Meijs et al. 1989; from memory).
pub fn rdm_mag(test: &[f64], reference: &[f64]) -> (f64, f64) {
    let mut u = test.to_vec();
    let mut v = reference.to_vec();
    average_reference_columns(&mut u, 1);
    average_reference_columns(&mut v, 1);
    let nu = u.iter().map(|x| x * x).sum::<f64>().sqrt();
    let nv = v.iter().map(|x| x * x).sum::<f64>().sqrt();
    let rdm = u
        .iter()
        .zip(&v)
        .map(|(a, b)| (a / nu - b / nv).powi(2))
        .sum::<f64>()
        .sqrt();
    (rdm, nu / nv)
}

/// The boundary-element head of concentric icospheres of subdivision
/// `level` (10·4^level + 2 vertices each) with the `radii` (m) and
/// `conductivities` (S/m) of `sphere`, centred at its centre.
pub fn concentric_bem(
    sphere: &SphereHead,
    level: u32,
    progress: &dyn crate::numeric::Progress,
) -> Result<BemSystem, BemError> {
    let c = sphere.center();
    let surfaces: Vec<Mesh> = sphere
        .radii()
        .iter()
        .map(|&r| {
            let mut m = Mesh::icosphere(level, r);
            for v in &mut m.vertices {
                *v = [v[0] + c[0], v[1] + c[1], v[2] + c[2]];
            }
            m
        })
        .collect();
    let names = (0..surfaces.len()).map(|k| format!("sphere {k}")).collect();
    let (geometry, _) = BemGeometry::new(surfaces, names, sphere.conductivities().to_vec())?;
    BemSystem::build(geometry, progress)
}

/// Electrodes for the comparison: the vertices of a level-2 icosphere
/// (162) on the scalp sphere, turned so that they fall between the mesh
/// vertices, projected onto the scalp surface of `system`.
pub fn comparison_electrodes(
    sphere: &SphereHead,
    system: &BemSystem,
) -> Result<(Vec<Vec3>, BemTransfer), BemError> {
    let c = sphere.center();
    let radius = sphere.outer_radius();
    // A turn about an oblique axis (angles chosen freely) so no electrode
    // sits on a vertex of an icosphere.
    let (a, b) = (0.37_f64, 0.23_f64);
    let positions: Vec<Vec3> = Mesh::icosphere(2, 1.0)
        .vertices
        .iter()
        .map(|&v| {
            let x1 = v[0] * a.cos() - v[1] * a.sin();
            let y1 = v[0] * a.sin() + v[1] * a.cos();
            let y2 = y1 * b.cos() - v[2] * b.sin();
            let z2 = y1 * b.sin() + v[2] * b.cos();
            let u = normalize([x1, y2, z2]);
            [
                c[0] + radius * u[0],
                c[1] + radius * u[1],
                c[2] + radius * u[2],
            ]
        })
        .collect();
    let labels: Vec<String> = (0..positions.len()).map(|i| format!("E{i}")).collect();
    let points = project_to_scalp(system, &positions, &labels)?;
    let transfer = system.transfer(&points);
    Ok((positions, transfer))
}

/// One row of the accuracy table.
#[derive(Debug, Clone, PartialEq)]
pub struct AccuracyRow {
    /// |r₀ − centre| / inner radius.
    pub eccentricity: f64,
    /// "radial" or "tangential".
    pub orientation: &'static str,
    /// Relative difference measure (0 = same topography).
    pub rdm: f64,
    /// Magnitude ratio BEM / series (1 = same size).
    pub mag: f64,
}

/// RDM and MAG of the boundary-element head (`transfer` at `electrodes`)
/// against the sphere series of `sphere`, for a radial and a tangential
/// dipole at each of `eccentricities` (fractions of the inner radius) along
/// an oblique direction.
pub fn sphere_accuracy(
    sphere: &SphereHead,
    transfer: &BemTransfer,
    electrodes: &[Vec3],
    eccentricities: &[f64],
) -> Result<Vec<AccuracyRow>, HeadError> {
    let c = sphere.center();
    let direction = normalize([0.3, -0.5, 0.81]);
    let tangent = normalize([0.5, 0.3, 0.0]);
    let mut rows = Vec::new();
    let mut column = vec![[0.0; 3]; electrodes.len()];
    for &e in eccentricities {
        let r = scale(direction, e * sphere.inner_radius());
        let source = [c[0] + r[0], c[1] + r[1], c[2] + r[2]];
        transfer.gain_xyz(source, &mut column);
        for (orientation, q) in [("radial", direction), ("tangential", tangent)] {
            let bem: Vec<f64> = column
                .iter()
                .map(|g| g[0] * q[0] + g[1] * q[1] + g[2] * q[2])
                .collect();
            let series = electrodes
                .iter()
                .map(|&p| sphere.potential(p, source, q))
                .collect::<Result<Vec<f64>, HeadError>>()?;
            let (rdm, mag) = rdm_mag(&bem, &series);
            rows.push(AccuracyRow {
                eccentricity: e,
                orientation,
                rdm,
                mag,
            });
        }
    }
    Ok(rows)
}
