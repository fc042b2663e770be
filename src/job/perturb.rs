//! The fit's atoms under perturbed forward models, for resamples that also
//! draw the head model's uncertainty (`pipeline::perturb`). Each perturbed
//! model is an ordinary lead field of another head, cached like any lead
//! field by the content hash of its montage, sources and head; its atoms
//! (before whitening) are cached too, keyed by the dictionary's key and the
//! perturbed lead field's, so a warm run reads them instead of multiplying
//! the profiles again (`io::atoms_file`; docs/benchmarks.md, issue 25).

use super::bem_head::HeadModel;
use super::cache::{cached_leadfield, leadfield_hash, read_cached, ForwardModel};
use super::error::{JobError, JobResult};
use super::keyed_lock::with_entry_lock;
use super::observer::JobObserver;
use super::params::FitParams;
use crate::dictionary::{
    atoms_for_channels, AtomComponent, PatchDictionary, DEFAULT_DROP_RELATIVE_NORM,
};
use crate::io::atoms_file::{read_atoms, write_atoms};
use crate::io::cache::{entry_path, ContentHash};
use crate::montage::Montage;
use crate::numeric::rescale_all_to_unit_norm;
use crate::patterns::Whitener;
use crate::pipeline::{perturbed_model, ForwardPerturbation};

/// The fit's atoms under perturbed forward models, prepared like the fit's
/// own (average-referenced, whitened when the fit is, unit columns), when
/// resamples run on a dictionary this run built; none otherwise, with a note.
pub fn perturbed_for_resamples(
    dict: &PatchDictionary,
    forward: Option<&ForwardModel>,
    average: bool,
    whitener: Option<&Whitener>,
    fit: &FitParams,
    notes: &mut Vec<String>,
    observer: &dyn JobObserver,
) -> Result<Vec<Vec<f64>>, JobError> {
    if fit.resamples == 0 || fit.forward_perturbations == 0 {
        return Ok(Vec::new());
    }
    if !average {
        notes.push("resamples draw the pattern noise only: with --reference none the perturbed atoms would not match the fit's".to_string());
        return Ok(Vec::new());
    }
    let (Some(f), Some(lf), Some(profile)) = (forward, &dict.leadfield, &dict.profile) else {
        notes.push("resamples draw the pattern noise only: the forward model of a given dictionary is not known, so it is not perturbed".to_string());
        return Ok(Vec::new());
    };
    let Some(sphere_head) = f.head.spheres() else {
        notes.push("resamples draw the pattern noise only: perturbed heads are drawn for the sphere model, not for a boundary-element head".to_string());
        return Ok(Vec::new());
    };
    if lf.labels != f.montage.labels {
        notes.push("resamples draw the pattern noise only: the dictionary's channels differ from the montage's".to_string());
        return Ok(Vec::new());
    }
    let spec = ForwardPerturbation {
        count: fit.forward_perturbations,
        ..ForwardPerturbation::default()
    };
    let component = dict
        .component
        .clone()
        .unwrap_or_else(|| vec![AtomComponent::Normal; dict.n_atoms]);
    let (n, m) = (dict.n_channels, dict.n_atoms);
    let mut models = Vec::with_capacity(spec.count);
    for i in 0..spec.count {
        let (head, electrodes) = perturbed_model(sphere_head, &f.montage.positions, &spec, i)
            .compute("perturbing the forward model")?;
        let montage =
            Montage::new(f.montage.labels.clone(), electrodes).compute("perturbed montage")?;
        let lf_hash = leadfield_hash(&montage, &f.sources, &head.head_model_json(), f.orientation);
        // The atoms depend on the dictionary's profiles (its key) and the
        // perturbed lead field (its key) only; the whitening, which depends
        // on the decoder, comes after.
        let mut key = ContentHash::new("atoms-v1");
        key.str(&f.dictionary_hash)
            .str(&lf_hash)
            .u64s(&[n as u64, m as u64])
            .f64s(&[DEFAULT_DROP_RELATIVE_NORM]);
        let path = entry_path(&f.cache, "atoms", &key.hex());
        let mut atoms = with_entry_lock(&path, || {
            if let Some(atoms) = read_cached(
                &path,
                "matrix of perturbed atoms",
                |p| read_atoms(p, n, m),
                observer,
            ) {
                return Ok(atoms);
            }
            let plf = cached_leadfield(
                &f.cache,
                &lf_hash,
                (&montage, &f.sources, &HeadModel::Spheres(head)),
                f.orientation,
                observer,
            )?;
            let (atoms, _) = atoms_for_channels(
                profile,
                &component,
                &plf.gain,
                plf.gain_xyz.as_deref(),
                n,
                true,
                DEFAULT_DROP_RELATIVE_NORM,
            )
            .compute("atoms of a perturbed forward model")?;
            // A cache that cannot be written costs the next run the product.
            if let Err(e) = write_atoms(&path, n, m, &atoms) {
                observer.note(&format!(
                    "note: could not cache the perturbed atoms in {}: {e}",
                    f.cache.display()
                ));
            }
            Ok::<_, JobError>(atoms)
        })?;
        if let Some(w) = whitener {
            atoms = w
                .apply(&atoms, m)
                .compute("whitening the perturbed atoms")?;
            rescale_all_to_unit_norm(&mut atoms, m, &mut vec![1.0; m]);
        }
        models.push(atoms);
    }
    notes.push(format!(
        "resamples also draw the forward model: {} perturbed heads (electrodes moved by {} mm per coordinate, skull conductivity x exp(N(0, {}^2)), other shells x exp(N(0, {}^2)))",
        spec.count,
        spec.electrode_sd_m * 1e3,
        spec.skull_log_sd,
        spec.other_log_sd
    ));
    Ok(models)
}
