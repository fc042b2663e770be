//! The stages users may run alone from Python, each the library call of its
//! subcommand: `leadfield`, `dictionary`, `dipole`, `compare`; and the
//! decoder file a set of arrays makes (for `dipole`, which reads a file).
//! Outputs are checked and written as the command line writes them: a file
//! atomically, a folder whole or not at all.

use std::path::{Path, PathBuf};

use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;

use patchwise::forward::Orientation;
use patchwise::io::dictionary_file::write_dictionary;
use patchwise::io::leadfield_file::{read_leadfield, write_leadfield};
use patchwise::io::staging::{
    check_output_file, check_output_folder, refuse_input_as_output, refuse_replaced_inputs, Staging,
};
use patchwise::job::compare_outputs::write_comparison_files;
use patchwise::job::dipole::{dipole as dipole_job, write_dipole_files, DipoleParams};
use patchwise::job::error::JobResult;
use patchwise::job::forward::{build_dictionary, compute_leadfield};
use patchwise::job::{compare as compare_job, CompareParams, ForwardParams, PatchParams};

use crate::worker::run_job;
use crate::{job_error, DecoderArrays};

/// Parameters of type `T` from their JSON (keys as the flags, `_` for `-`).
fn from_json<T: serde::de::DeserializeOwned>(json: &str) -> PyResult<T> {
    serde_json::from_str(json).map_err(|e| PyValueError::new_err(format!("options: {e}")))
}

/// Compute a lead field (V/(A·m), average reference) and write it to `out`.
#[pyfunction]
pub fn leadfield(
    py: Python<'_>,
    forward_json: &str,
    free_orientation: bool,
    out: PathBuf,
    progress: bool,
) -> PyResult<PathBuf> {
    let forward: ForwardParams = from_json(forward_json)?;
    let check = || -> Result<(), patchwise::job::JobError> {
        check_output_file(&out, "out")?;
        let inputs = forward.input_files();
        let inputs: Vec<(&str, &Path)> = inputs.iter().map(|(w, p)| (*w, p.as_path())).collect();
        refuse_input_as_output(&out, "out", &inputs)?;
        Ok(())
    };
    check().map_err(job_error)?;
    let orientation = if free_orientation {
        Orientation::Free
    } else {
        Orientation::Normal
    };
    run_job(py, progress, move |observer| {
        let (montage, sources, head) = forward.resolve(None, observer)?;
        // A boundary-element head's system is cached where `attribute` caches.
        let cache = patchwise::io::cache::default_cache_dir();
        let lf = compute_leadfield(
            &montage,
            &sources,
            &head,
            orientation,
            Some(&cache),
            observer,
        )?;
        write_leadfield(&out, &lf).compute(format!("writing {}", out.display()))?;
        Ok(out)
    })
}

/// Build the patch dictionary of the lead-field file `leadfield` and write
/// it to `out`.
#[pyfunction]
pub fn dictionary(
    py: Python<'_>,
    leadfield: PathBuf,
    patches_json: &str,
    out: PathBuf,
    progress: bool,
) -> PyResult<PathBuf> {
    let patches: PatchParams = from_json(patches_json)?;
    let check = || -> Result<(), patchwise::job::JobError> {
        check_output_file(&out, "out")?;
        refuse_input_as_output(&out, "out", &[("lead field", leadfield.as_path())])?;
        Ok(())
    };
    check().map_err(job_error)?;
    run_job(py, progress, move |observer| {
        let lf = read_leadfield(&leadfield).input("reading the lead field")?;
        let (d, _) = build_dictionary(&lf, &patches, observer)?;
        write_dictionary(&out, &lf, &d, &patches.to_json())
            .compute(format!("writing {}", out.display()))?;
        Ok(out)
    })
}

/// Fit equivalent dipoles to the decoder file the parameters name and write
/// result.h5 and dipoles.csv into the new folder `out`.
#[pyfunction]
pub fn dipole(
    py: Python<'_>,
    params_json: &str,
    out: PathBuf,
    progress: bool,
) -> PyResult<PathBuf> {
    let params: DipoleParams = from_json(params_json)?;
    let check = || -> Result<(), patchwise::job::JobError> {
        params.validate()?;
        check_output_folder(&out, "out")?;
        let inputs = params.input_files();
        let inputs: Vec<(&str, &Path)> = inputs.iter().map(|(w, p)| (*w, p.as_path())).collect();
        refuse_replaced_inputs(&out, "out", None, &inputs)?;
        Ok(())
    };
    check().map_err(job_error)?;
    run_job(py, progress, move |observer| {
        let d = dipole_job(&params, None, observer)?;
        let stage = Staging::new(&out)?;
        write_dipole_files(stage.dir(), &d)?;
        Ok(stage.commit()?)
    })
}

/// Compare the result folders `results` on one template cortex and write
/// the comparison's files into the new folder `out`.
#[pyfunction]
pub fn compare(
    py: Python<'_>,
    results: Vec<PathBuf>,
    params_json: &str,
    out: PathBuf,
    cache: PathBuf,
    progress: bool,
) -> PyResult<PathBuf> {
    let params: CompareParams = from_json(params_json)?;
    let check = || -> Result<(), patchwise::job::JobError> {
        let checked = params.validate(&results)?;
        check_output_folder(&out, "out")?;
        let mut inputs: Vec<(&str, &Path)> = results
            .iter()
            .map(|r| ("result folder", r.as_path()))
            .collect();
        inputs.push(("cache folder", cache.as_path()));
        inputs.extend(checked.map_files());
        refuse_replaced_inputs(&out, "out", None, &inputs)?;
        Ok(())
    };
    check().map_err(job_error)?;
    run_job(py, progress, move |observer| {
        let comparison = compare_job(&results, &params, &cache, observer)?;
        let stage = Staging::new(&out)?;
        write_comparison_files(stage.dir(), &comparison)?;
        Ok(stage.commit()?)
    })
}

/// Write the decoder file (HDF5, the layout `attribute --decoder` reads)
/// that a set of arrays makes, after the checks of reading it back.
#[pyfunction]
#[pyo3(signature = (path, channels, patterns=None, weights=None, covariance=None, n_samples=None, component_names=None))]
pub fn write_decoder<'py>(
    path: PathBuf,
    channels: Vec<String>,
    patterns: Option<numpy::PyReadonlyArrayDyn<'py, f64>>,
    weights: Option<numpy::PyReadonlyArrayDyn<'py, f64>>,
    covariance: Option<numpy::PyReadonlyArrayDyn<'py, f64>>,
    n_samples: Option<f64>,
    component_names: Option<Vec<String>>,
) -> PyResult<PathBuf> {
    let arrays = DecoderArrays {
        channels,
        patterns,
        weights,
        covariance,
        n_samples,
        folds: None,
        fold_covariances: None,
        times: None,
        component_names,
    };
    let store = crate::decoder_store(&arrays);
    patchwise::io::decoder_file::decoder_from_store(&store, &path)
        .input("reading the decoder")
        .map_err(job_error)?;
    store
        .write_atomic(&path)
        .compute(format!("writing {}", path.display()))
        .map_err(job_error)?;
    Ok(path)
}
