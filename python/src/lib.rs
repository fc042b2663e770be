//! The native half of the Python package `patchwise` (`patchwise._patchwise`):
//! the same library calls as the command line (`patchwise::job`), arrays in,
//! result folders out. The pure-Python `patchwise/__init__.py` holds the API
//! users call; this module only converts, runs the job on a worker thread
//! with the GIL released, relays progress, and maps errors: bad input
//! (`JobError` of kind input) to `ValueError` with the command line's message,
//! a failure while computing to `RuntimeError`.

use std::path::{Path, PathBuf};

use numpy::{PyArray1, PyArrayMethods, PyReadonlyArrayDyn, PyUntypedArrayMethods};
use pyo3::exceptions::{PyRuntimeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyList};

use patchwise::io::cache::bytes_hash;
use patchwise::io::decoder_file::decoder_from_store;
use patchwise::io::staging::{check_output_folder, Staging};
use patchwise::io::store::{Array, Attr, Dataset, Store};
use patchwise::job::attribute::{attribute_decoder, GivenDecoder};
use patchwise::job::observer::interrupted;
use patchwise::job::outputs::write_attribution_files;
use patchwise::job::{AttributeParams, JobError, JobObserver};

mod stages;
mod worker;

use worker::run_job;

/// A job error as the Python exception of its kind, with the whole cause
/// chain on one line (the command line's text).
pub(crate) fn job_error(e: JobError) -> PyErr {
    if e.is_input() {
        PyValueError::new_err(e.chain_text())
    } else {
        PyRuntimeError::new_err(e.chain_text())
    }
}

/// The parameters from their JSON (the keys of `AttributeParams`, the
/// command line's flags with `_`); missing keys take the defaults.
fn attribute_params(json: &str) -> PyResult<AttributeParams> {
    serde_json::from_str(json).map_err(|e| PyValueError::new_err(format!("options: {e}")))
}

/// A NumPy array as a dataset of floats (its shape kept, values in C order).
fn float_dataset(array: &PyReadonlyArrayDyn<'_, f64>) -> Dataset {
    Dataset::f64(
        array.shape().to_vec(),
        array.as_array().iter().copied().collect(),
    )
}

/// The arrays of a decoder given from Python.
pub(crate) struct DecoderArrays<'py> {
    pub(crate) channels: Vec<String>,
    pub(crate) patterns: Option<PyReadonlyArrayDyn<'py, f64>>,
    pub(crate) weights: Option<PyReadonlyArrayDyn<'py, f64>>,
    pub(crate) covariance: Option<PyReadonlyArrayDyn<'py, f64>>,
    pub(crate) n_samples: Option<f64>,
    pub(crate) folds: Option<PyReadonlyArrayDyn<'py, f64>>,
    pub(crate) fold_covariances: Option<PyReadonlyArrayDyn<'py, f64>>,
    pub(crate) times: Option<PyReadonlyArrayDyn<'py, f64>>,
    pub(crate) component_names: Option<Vec<String>>,
}

/// The decoder as the store of a decoder file (`channels`, `patterns` or
/// `weights` + `covariance`, and the extras): read back by the same code as
/// a file, so shapes, values and extras are checked as the command line
/// checks them.
pub(crate) fn decoder_store(d: &DecoderArrays<'_>) -> Store {
    let mut store = Store::new();
    store.insert("/channels", Dataset::strings(d.channels.clone()));
    let arrays = [
        ("/patterns", &d.patterns),
        ("/weights", &d.weights),
        ("/covariance", &d.covariance),
        ("/folds", &d.folds),
        ("/fold_covariances", &d.fold_covariances),
        ("/times", &d.times),
    ];
    for (name, array) in arrays {
        if let Some(a) = array {
            store.insert(name, float_dataset(a));
        }
    }
    if let Some(n) = d.n_samples {
        store.insert("/n_samples", Dataset::f64(vec![], vec![n]));
    }
    if let Some(names) = &d.component_names {
        store.insert("/component_names", Dataset::strings(names.clone()));
    }
    store
}

/// Write the attribution's files (result.h5, regions.csv, summary.json)
/// into the folder `out`, which appears whole or not at all.
fn write_folder(out: &Path, a: &patchwise::job::Attribution) -> Result<PathBuf, JobError> {
    let stage = Staging::new(out)?;
    write_attribution_files(stage.dir(), a)?;
    Ok(stage.commit()?)
}

/// Run `attribute` on a decoder given as arrays (or, without arrays, on the
/// decoder file the parameters name) and write its folder to `out`.
#[pyfunction]
#[pyo3(signature = (params_json, out, cache, progress, decoder_name, channels=None, patterns=None, weights=None, covariance=None, n_samples=None, folds=None, fold_covariances=None, times=None, component_names=None))]
#[allow(clippy::too_many_arguments)]
fn attribute<'py>(
    py: Python<'py>,
    params_json: &str,
    out: PathBuf,
    cache: PathBuf,
    progress: bool,
    decoder_name: PathBuf,
    channels: Option<Vec<String>>,
    patterns: Option<PyReadonlyArrayDyn<'py, f64>>,
    weights: Option<PyReadonlyArrayDyn<'py, f64>>,
    covariance: Option<PyReadonlyArrayDyn<'py, f64>>,
    n_samples: Option<f64>,
    folds: Option<PyReadonlyArrayDyn<'py, f64>>,
    fold_covariances: Option<PyReadonlyArrayDyn<'py, f64>>,
    times: Option<PyReadonlyArrayDyn<'py, f64>>,
    component_names: Option<Vec<String>>,
) -> PyResult<PathBuf> {
    let mut params = attribute_params(params_json)?;
    check_output_folder(&out, "folder").map_err(|e| job_error(e.into()))?;
    let given = match channels {
        Some(channels) => {
            let arrays = DecoderArrays {
                channels,
                patterns,
                weights,
                covariance,
                n_samples,
                folds,
                fold_covariances,
                times,
                component_names,
            };
            let store = decoder_store(&arrays);
            // The decoder's hash in result.h5 is that of the decoder file
            // these arrays would make, as for the demo's decoder.
            let bytes = store
                .to_hdf5_bytes(&decoder_name)
                .map_err(|e| PyValueError::new_err(format!("{}: {e}", decoder_name.display())))?;
            let decoder = decoder_from_store(&store, &decoder_name).map_err(|e| {
                job_error(JobError::wrap(
                    patchwise::job::ErrorKind::Input,
                    "reading the decoder",
                    e,
                ))
            })?;
            params.inputs.decoder = Some(decoder_name.clone());
            Some(GivenDecoder {
                decoder,
                path: decoder_name,
                content_hash: bytes_hash(&bytes),
            })
        }
        None => None,
    };
    run_job(py, progress, move |observer: &dyn JobObserver| {
        let a = match given {
            Some(given) => attribute_decoder(&params, given, &cache, None, observer)?,
            None => patchwise::job::attribute(&params, &cache, None, observer)?,
        };
        interrupted(observer)?;
        write_folder(&out, &a)
    })
}

/// The default parameters of a job as JSON (the command line's): `kind` is
/// `attribute`, `compare`, `forward` (montage, sources, head, regions) or
/// `patches` (the dictionary's options).
#[pyfunction]
#[pyo3(signature = (kind="attribute"))]
fn default_params(kind: &str) -> PyResult<String> {
    let value = match kind {
        "attribute" => serde_json::to_string(&AttributeParams::default()),
        "compare" => serde_json::to_string(&patchwise::job::CompareParams::default()),
        "forward" => serde_json::to_string(&patchwise::job::ForwardParams::default()),
        "patches" => serde_json::to_string(&patchwise::job::PatchParams::default()),
        other => return Err(PyValueError::new_err(format!("no job {other:?}"))),
    };
    value.map_err(|e| PyRuntimeError::new_err(e.to_string()))
}

/// Check parameters given as JSON (every value, as the command line does);
/// raises `ValueError` naming the option.
#[pyfunction]
fn check_params(params_json: &str) -> PyResult<()> {
    let mut params = attribute_params(params_json)?;
    if params.inputs.decoder.is_none() && params.inputs.patterns.is_none() {
        params.inputs.decoder = Some(PathBuf::from("arrays"));
    }
    params.validate().map(|_| ()).map_err(job_error)
}

/// A group attribute as a Python value.
fn attr_value<'py>(py: Python<'py>, a: &Attr) -> PyResult<Bound<'py, PyAny>> {
    Ok(match a {
        Attr::Str(s) => s.into_pyobject(py)?.into_any(),
        Attr::F64(x) => x.into_pyobject(py)?.into_any(),
        Attr::I64(x) => x.into_pyobject(py)?.into_any(),
        Attr::StrArray(v) => PyList::new(py, v)?.into_any(),
        Attr::F64Array(v) => PyList::new(py, v)?.into_any(),
        Attr::I64Array(v) => PyList::new(py, v)?.into_any(),
    })
}

/// A dataset as a NumPy array (floats, integers) or a list of strings.
fn dataset_value<'py>(py: Python<'py>, d: &Dataset) -> PyResult<Bound<'py, PyAny>> {
    Ok(match &d.data {
        Array::F64(v) => PyArray1::from_vec(py, v.clone())
            .reshape(d.shape.clone())?
            .into_any(),
        Array::I64(v) => PyArray1::from_vec(py, v.clone())
            .reshape(d.shape.clone())?
            .into_any(),
        Array::Str(v) => PyList::new(py, v)?.into_any(),
        Array::Unsupported(t) => t.into_pyobject(py)?.into_any(),
    })
}

/// Every dataset and root attribute of an HDF5 file written by patchwise:
/// `(datasets, attributes)`, datasets by absolute path (`/attribution/share`).
#[pyfunction]
fn read_h5<'py>(
    py: Python<'py>,
    path: PathBuf,
) -> PyResult<(Bound<'py, PyDict>, Bound<'py, PyDict>)> {
    let store = Store::read(&path).map_err(|e| PyValueError::new_err(e.to_string()))?;
    let datasets = PyDict::new(py);
    for (name, d) in &store.datasets {
        datasets.set_item(name, dataset_value(py, d)?)?;
    }
    let attributes = PyDict::new(py);
    if let Some(root) = store.group_attrs.get("/") {
        for (name, a) in root {
            attributes.set_item(name, attr_value(py, a)?)?;
        }
    }
    Ok((datasets, attributes))
}

/// Copy the files of the result folder `from` into the new folder `to`
/// (new, empty, or one patchwise wrote), which appears whole or not at all.
#[pyfunction]
fn copy_folder(from: PathBuf, to: PathBuf) -> PyResult<PathBuf> {
    let copy = || -> Result<PathBuf, JobError> {
        check_output_folder(&to, "folder")?;
        let stage = Staging::new(&to)?;
        let entries = std::fs::read_dir(&from)
            .map_err(|e| JobError::input(format!("{}: {e}", from.display())))?;
        for entry in entries.flatten() {
            if entry.file_type().is_ok_and(|t| t.is_file()) {
                std::fs::copy(entry.path(), stage.dir().join(entry.file_name())).map_err(|e| {
                    JobError::compute(format!("copying {}: {e}", entry.path().display()))
                })?;
            }
        }
        Ok(stage.commit()?)
    };
    copy().map_err(job_error)
}

/// Write the HTML report of the result folder `dir` to the file `out`.
#[pyfunction]
fn report(py: Python<'_>, dir: PathBuf, out: PathBuf) -> PyResult<PathBuf> {
    patchwise::io::staging::check_output_file(&out, "path").map_err(|e| job_error(e.into()))?;
    // The job's parameters in words, from summary.json's `params` when the
    // folder has them (as the command line's report after `attribute`).
    let job = std::fs::read_to_string(dir.join("summary.json"))
        .ok()
        .and_then(|t| serde_json::from_str::<serde_json::Value>(&t).ok())
        .and_then(|v| serde_json::from_value::<AttributeParams>(v.get("params")?.clone()).ok())
        .map(|p| p.describe())
        .unwrap_or_default();
    py.detach(|| patchwise::job::report::write_report(&dir, Some(&out), job))
        .map_err(job_error)
}

/// The module `patchwise._patchwise`.
#[pymodule]
fn _patchwise(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(attribute, m)?)?;
    m.add_function(wrap_pyfunction!(default_params, m)?)?;
    m.add_function(wrap_pyfunction!(check_params, m)?)?;
    m.add_function(wrap_pyfunction!(read_h5, m)?)?;
    m.add_function(wrap_pyfunction!(copy_folder, m)?)?;
    m.add_function(wrap_pyfunction!(report, m)?)?;
    m.add_function(wrap_pyfunction!(stages::leadfield, m)?)?;
    m.add_function(wrap_pyfunction!(stages::dictionary, m)?)?;
    m.add_function(wrap_pyfunction!(stages::dipole, m)?)?;
    m.add_function(wrap_pyfunction!(stages::compare, m)?)?;
    m.add_function(wrap_pyfunction!(stages::write_decoder, m)?)?;
    m.add("CAUTION", patchwise::io::result_file::CAUTION)?;
    m.add("__version__", env!("CARGO_PKG_VERSION"))?;
    Ok(())
}
