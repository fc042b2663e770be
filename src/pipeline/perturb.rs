//! What the fit does not know about the head: the same patch dictionary
//! under perturbed forward models, for the resamples to draw from.
//!
//! The bootstrap from the residual measures the noise of the pattern, but
//! not the error of the forward model the atoms come from: electrodes sit a
//! few millimetres from where the montage says (common practice, no source;
//! 5 mm is the jitter of our recovery benchmark), and skull conductivity is
//! uncertain by about a factor of two across heads and studies (McCann,
//! Pisano & Beltrachini 2019, Brain Topogr 32:825, report a wide spread of
//! published skull values around 0.02 S/m). Each perturbed model jitters
//! every electrode by a Gaussian step of `electrode_sd_m` per coordinate
//! (moved back onto the scalp sphere; the default 6 mm moves an electrode
//! by 7.5 mm on average, within the several millimetres to about a
//! centimetre that manual cap placement is usually said to err by, from
//! memory; docs/validation.md table 11 is the sweep that chose it) and multiplies each shell's
//! conductivity by exp(N(0, s²)), s = `skull_log_sd` for the least
//! conducting shell (the skull) and `other_log_sd` for the others. The atoms
//! are recomputed from the dictionary's own profiles, so the atom order,
//! groups and region masses stay those of the fit.

use sprs::CsMat;

use crate::dictionary::{atoms_for_channels, AtomComponent, DEFAULT_DROP_RELATIVE_NORM};
use crate::forward::{lead_field, Orientation, Reference};
use crate::geometry::{norm, Vec3};
use crate::head::SphereHead;
use crate::numeric::SplitMix64;

use super::PipelineError;

/// How the forward model is perturbed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ForwardPerturbation {
    /// Number of perturbed models (0 = none).
    pub count: usize,
    /// Electrode position jitter, standard deviation per coordinate (m).
    pub electrode_sd_m: f64,
    /// Log-normal spread of the skull (least conducting shell) conductivity.
    pub skull_log_sd: f64,
    /// Log-normal spread of the other shells' conductivities.
    pub other_log_sd: f64,
    /// Seed of the perturbations.
    pub seed: u64,
}

impl Default for ForwardPerturbation {
    fn default() -> Self {
        ForwardPerturbation {
            count: 4,
            electrode_sd_m: 6e-3,
            skull_log_sd: 0.5,
            other_log_sd: 0.1,
            seed: 0x6f77_6172,
        }
    }
}

/// The perturbed head and electrodes of model `index`.
pub fn perturbed_model(
    head: &SphereHead,
    electrodes: &[Vec3],
    spec: &ForwardPerturbation,
    index: usize,
) -> Result<(SphereHead, Vec<Vec3>), PipelineError> {
    let mut rng = SplitMix64::new(spec.seed, index as u64);
    let c = head.center();
    let radius = head.outer_radius();
    let moved: Vec<Vec3> = electrodes
        .iter()
        .map(|e| {
            let p = [
                e[0] - c[0] + spec.electrode_sd_m * rng.normal(),
                e[1] - c[1] + spec.electrode_sd_m * rng.normal(),
                e[2] - c[2] + spec.electrode_sd_m * rng.normal(),
            ];
            let r = norm(p).max(f64::MIN_POSITIVE);
            [
                c[0] + radius * p[0] / r,
                c[1] + radius * p[1] / r,
                c[2] + radius * p[2] / r,
            ]
        })
        .collect();
    let sigma = head.conductivities();
    let skull = (0..sigma.len())
        .min_by(|&a, &b| sigma[a].total_cmp(&sigma[b]))
        .unwrap_or(0);
    let drawn: Vec<f64> = sigma
        .iter()
        .enumerate()
        .map(|(k, &s)| {
            let sd = if k == skull {
                spec.skull_log_sd
            } else {
                spec.other_log_sd
            };
            s * (sd * rng.normal()).exp()
        })
        .collect();
    let perturbed = SphereHead::new(c, head.radii().to_vec(), drawn)
        .map_err(|e| PipelineError::Inconsistent(format!("perturbed head: {e}")))?;
    Ok((perturbed, moved))
}

/// The dictionary's atoms under each perturbed model: row-major
/// n_ch × n_atoms, unit columns, average-referenced like the fit's (an
/// atom the nominal model keeps but a perturbed one drops stays zero).
#[allow(clippy::too_many_arguments)]
pub fn perturbed_atoms(
    head: &SphereHead,
    electrodes: &[Vec3],
    source_positions: &[Vec3],
    source_normals: &[Vec3],
    profile: &CsMat<f64>,
    component: &[AtomComponent],
    spec: &ForwardPerturbation,
) -> Result<Vec<Vec<f64>>, PipelineError> {
    let free = component.iter().any(|c| *c != AtomComponent::Normal);
    let orientation = if free {
        Orientation::Free
    } else {
        Orientation::Normal
    };
    (0..spec.count)
        .map(|i| {
            let (h, e) = perturbed_model(head, electrodes, spec, i)?;
            let lf = lead_field(
                &h,
                &e,
                source_positions,
                source_normals,
                orientation,
                Reference::Average,
                &|_| {},
            )?;
            let (atoms, _) = atoms_for_channels(
                profile,
                component,
                &lf.gain,
                lf.gain_xyz.as_deref(),
                e.len(),
                true,
                DEFAULT_DROP_RELATIVE_NORM,
            )?;
            Ok(atoms)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    /// Twelve sources on a 60 mm sphere inside the default head, pointing
    /// outwards, each its own atom (an identity profile).
    fn sources() -> (Vec<Vec3>, Vec<Vec3>, CsMat<f64>) {
        let mesh = crate::geometry::Mesh::icosphere(0, 0.06);
        let positions: Vec<Vec3> = mesh.vertices.clone();
        let normals: Vec<Vec3> = positions
            .iter()
            .map(|p| {
                let r = norm(*p);
                [p[0] / r, p[1] / r, p[2] / r]
            })
            .collect();
        let n = positions.len();
        let profile = CsMat::new_csc((n, n), (0..=n).collect(), (0..n).collect(), vec![1.0; n]);
        (positions, normals, profile)
    }

    // With no perturbation the atoms are the nominal ones (the same lead
    // field and normalisation, electrodes only re-projected onto the
    // sphere they already lie on): equal to rounding, 1e-12.
    #[test]
    fn zero_perturbation_gives_the_nominal_atoms() {
        let head = SphereHead::default_adult();
        let montage = crate::montage::standard("10-20", head.outer_radius()).unwrap();
        let (pos, nrm, profile) = sources();
        let component = vec![AtomComponent::Normal; pos.len()];
        let none = ForwardPerturbation {
            count: 1,
            electrode_sd_m: 0.0,
            skull_log_sd: 0.0,
            other_log_sd: 0.0,
            seed: 1,
        };
        let perturbed = perturbed_atoms(
            &head,
            &montage.positions,
            &pos,
            &nrm,
            &profile,
            &component,
            &none,
        )
        .unwrap();
        let lf = lead_field(
            &head,
            &montage.positions,
            &pos,
            &nrm,
            Orientation::Normal,
            Reference::Average,
            &|_| {},
        )
        .unwrap();
        let (nominal, _) = atoms_for_channels(
            &profile,
            &component,
            &lf.gain,
            None,
            montage.positions.len(),
            true,
            DEFAULT_DROP_RELATIVE_NORM,
        )
        .unwrap();
        for (a, b) in perturbed[0].iter().zip(&nominal) {
            assert!((a - b).abs() < 1e-12, "{a} {b}");
        }
    }

    // Moved electrodes stay on the scalp sphere (to 1e-12 m), move by about
    // the stated spread (the tangential part of a 3-D Gaussian step of
    // s per coordinate has a mean length s √(π/2), 7.5 mm for the default
    // 6 mm: the Rayleigh mean, common practice, no source), and the models
    // differ from each other.
    #[test]
    fn perturbed_electrodes_stay_on_the_scalp() {
        let head = SphereHead::default_adult();
        let montage = crate::montage::standard("10-10", head.outer_radius()).unwrap();
        let spec = ForwardPerturbation::default();
        let (h0, e0) = perturbed_model(&head, &montage.positions, &spec, 0).unwrap();
        let (h1, _) = perturbed_model(&head, &montage.positions, &spec, 1).unwrap();
        assert_ne!(h0.conductivities(), h1.conductivities());
        let c = head.center();
        let mut total = 0.0;
        for (moved, nominal) in e0.iter().zip(&montage.positions) {
            let r = norm([moved[0] - c[0], moved[1] - c[1], moved[2] - c[2]]);
            assert!((r - head.outer_radius()).abs() < 1e-12);
            total += norm([
                moved[0] - nominal[0],
                moved[1] - nominal[1],
                moved[2] - nominal[2],
            ]);
        }
        let mean = total / e0.len() as f64;
        let expected = spec.electrode_sd_m * (std::f64::consts::PI / 2.0).sqrt();
        assert!(
            mean > 0.6 * expected && mean < 1.4 * expected,
            "mean displacement {mean} m, expected about {expected} m"
        );
    }
}
