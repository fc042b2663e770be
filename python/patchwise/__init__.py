"""patchwise for Python: which cortical regions does a linear decoder rely on?

The same library calls as the ``patchwise`` command line, with NumPy arrays in
and a :class:`Result` with NumPy arrays out. Weights become activation patterns
by the Haufe transform, A = Σ W (Wᵀ Σ W)⁻¹ (Haufe et al. 2014, NeuroImage
87:96-110, eq. 6), computed by the same Rust code as the command line.

Caution: patchwise interprets research models. It is not a medical device and
its output is not for clinical decisions.

Units: positions in millimetres, patterns in the units given (volts for
patterns from a forward model), covariances in the square of the data's units.
"""

from __future__ import annotations

import csv
import json
import os
import shutil
import tempfile
import warnings
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Any, Dict, Iterable, List, Optional, Sequence, Tuple, Union

import numpy as np

from . import _patchwise

__all__ = [
    "CAUTION",
    "Datasets",
    "Region",
    "Result",
    "attribute",
    "compare",
    "default_options",
    "dictionary",
    "dipole",
    "from_estimator",
    "leadfield",
    "read_result",
]

__version__ = _patchwise.__version__

#: The caution every result carries: not for clinical decisions.
CAUTION: str = _patchwise.CAUTION

PathLike = Union[str, "os.PathLike[str]"]

# How the decoder given as arrays is named in messages, result.h5 and
# summary.json (it is never read from a file).
_ARRAYS_NAME = "decoder arrays given from Python"


def default_options() -> Dict[str, Any]:
    """The options of :func:`attribute` with the command line's defaults.

    The keys are those of the command line's flags with ``_`` for ``-``
    (``radii_mm``, ``lambda_rule``, ``resamples``, ...) and of a job script.
    """
    return json.loads(_patchwise.default_params())


def _options(given: Dict[str, Any], kind: str = "attribute") -> Dict[str, Any]:
    """The full option set of job ``kind``: the defaults, with ``given`` (values not None)."""
    options = json.loads(_patchwise.default_params(kind))
    for key, value in given.items():
        if value is None:
            continue
        if key not in options:
            known = ", ".join(sorted(options))
            raise TypeError(f"unknown option {key!r}; the options are: {known}")
        if isinstance(value, os.PathLike):
            value = os.fspath(value)
        elif isinstance(value, np.ndarray):
            value = value.tolist()
        elif isinstance(value, (np.integer, np.floating)):
            value = value.item()
        options[key] = value
    return options


def _float_array(name: str, value: Any, ndim: Tuple[int, ...]) -> Optional[np.ndarray]:
    """``value`` as a C-ordered float64 array of one of the dimensions ``ndim``."""
    if value is None:
        return None
    try:
        array = np.ascontiguousarray(value, dtype=np.float64)
    except (TypeError, ValueError) as e:
        raise ValueError(f"{name}: expected an array of numbers ({e})") from None
    if array.ndim not in ndim:
        shapes = " or ".join(f"{d}-D" for d in ndim)
        raise ValueError(f"{name}: has shape {array.shape}; expected a {shapes} array")
    return array


def _labels(name: str, value: Any) -> Optional[List[str]]:
    if value is None:
        return None
    if isinstance(value, str):
        raise ValueError(f"{name}: expected a list of labels, not one string")
    return [str(v) for v in value]


@dataclass(frozen=True)
class Region:
    """One row of the table of leading regions (regions.csv).

    ``share`` with its 95 % interval ``share_low``..``share_high`` (NaN
    without resamples), ``selection_frequency`` (the fraction of resamples
    that selected the region), the component's peak in mm (head coordinates:
    +x right ear, +y nose, +z up).
    """

    component: int
    component_name: str
    region: str
    share: float
    share_low: float
    share_high: float
    selection_frequency: float
    peak_x_mm: float
    peak_y_mm: float
    peak_z_mm: float


def _number(text: str) -> float:
    return float(text) if text not in ("", "n/a", "nan", "NaN") else float("nan")


class Datasets:
    """The datasets of an HDF5 file patchwise wrote (result.h5, leadfield.h5,
    dictionary.h5, compare.h5), read into NumPy arrays (numbers) and lists
    (strings), by absolute path: ``d["/leadfield/gain"]``; :meth:`names`
    lists them and :attr:`attributes` holds the root attributes. Layouts:
    docs/architecture.md (positions in mm, lead fields in V/(A·m))."""

    def __init__(self, path: PathLike) -> None:
        self._path = Path(path)
        if not self._path.is_file():
            raise ValueError(f"{self._path}: not found")
        self._datasets, self._attributes = _patchwise.read_h5(os.fspath(self._path))

    def __repr__(self) -> str:
        return f"<patchwise.Datasets {self._path}: {len(self._datasets)} datasets>"

    @property
    def path(self) -> Path:
        """The HDF5 file read."""
        return self._path

    def names(self) -> List[str]:
        """The datasets, by absolute path."""
        return sorted(self._datasets)

    def __getitem__(self, name: str) -> Any:
        key = name if name.startswith("/") else "/" + name
        if key not in self._datasets:
            raise KeyError(f"{name}: no such dataset in {self._path.name}; see names()")
        return self._datasets[key]

    def __contains__(self, name: str) -> bool:
        return (name if name.startswith("/") else "/" + name) in self._datasets

    def get(self, name: str, default: Any = None) -> Any:
        """The dataset ``name``, or ``default`` when the file lacks it."""
        return self[name] if name in self else default

    @property
    def attributes(self) -> Dict[str, Any]:
        """The root attributes (input hashes, notes, caution, software)."""
        return dict(self._attributes)


class Result(Datasets):
    """An attribution: the folder the command line writes (result.h5,
    regions.csv, summary.json), read into NumPy arrays.

    Every dataset of result.h5 is reachable by name, ``result["/attribution/share"]``
    (see :meth:`names`); the properties name the common ones. Shapes are
    those of result.h5 (docs/architecture.md): ``n_regions x k`` for shares,
    ``n_src x k`` for the source map, ``n_path x k`` for the λ path.
    """

    def __init__(self, folder: PathLike, _keep: Any = None) -> None:
        self._folder = Path(folder)
        self._keep = _keep  # the temporary folder a fresh result lives in
        path = self._folder / "result.h5"
        if not path.is_file():
            raise ValueError(
                f"{path}: not found (a result folder holds the result.h5 that "
                "`patchwise attribute` or patchwise.attribute writes)"
            )
        super().__init__(path)
        summary = self._folder / "summary.json"
        self._summary: Dict[str, Any] = (
            json.loads(summary.read_text(encoding="utf-8")) if summary.is_file() else {}
        )

    def __repr__(self) -> str:
        return (
            f"<patchwise.Result: {len(self.component_names)} component(s), "
            f"{len(self.region_names)} regions, {len(self.channels)} channels>"
        )

    @property
    def summary(self) -> Dict[str, Any]:
        """summary.json as a dict (empty when the folder has none)."""
        return self._summary

    @property
    def folder(self) -> Path:
        """Where the files are (a temporary folder until :meth:`save`)."""
        return self._folder

    # Named datasets.
    @property
    def channels(self) -> List[str]:
        """Channel labels, in the decoder's order."""
        return list(self["/patterns/labels"])

    @property
    def component_names(self) -> List[str]:
        return list(self["/patterns/component_names"])

    @property
    def region_names(self) -> List[str]:
        return list(self.get("/attribution/region_names", []))

    @property
    def patterns(self) -> np.ndarray:
        """The patterns fitted (n_ch x k), after referencing, before whitening."""
        return self["/patterns/values"]

    @property
    def shares(self) -> np.ndarray:
        """Region shares (n_regions x k)."""
        return self["/attribution/share"]

    @property
    def intervals(self) -> Tuple[np.ndarray, np.ndarray]:
        """The 95 % intervals of the shares: (low, high), each n_regions x k."""
        return self["/attribution/share_low"], self["/attribution/share_high"]

    @property
    def selection_frequency(self) -> np.ndarray:
        return self["/attribution/selection_frequency"]

    @property
    def lead_frequency(self) -> np.ndarray:
        """How often each region had its component's largest share in the resamples."""
        return self["/attribution/lead_frequency"]

    @property
    def leader_probability(self) -> np.ndarray:
        """Per component (k), the probability that the leading region is right: its lead
        frequency calibrated on simulated cases (docs/validation.md, table 13); NaN where no
        region leads."""
        return self["/attribution/leader_probability"]

    @property
    def source_map(self) -> np.ndarray:
        """Source amplitudes (n_src x k)."""
        return self["/attribution/source_map"]

    @property
    def explained_variance(self) -> np.ndarray:
        """Fit quality: the fraction of each pattern's variance explained (k)."""
        return self["/fit/explained_variance"]

    @property
    def flags(self) -> List[str]:
        """Why each component needs care ("" when it does not)."""
        return list(self["/fit/flags"])

    @property
    def lambdas(self) -> np.ndarray:
        """λ of each component's fit (k)."""
        return self["/fit/lambda"]

    @property
    def lambda_path(self) -> np.ndarray:
        """The λ/λ_max searched (n_path x k; NaN where a block searched fewer)."""
        return self["/fit/path/ratio"]

    @property
    def coefficients(self) -> np.ndarray:
        """Atom coefficients (n_atoms x k)."""
        return self["/fit/coefficients"]

    @property
    def peak_mm(self) -> np.ndarray:
        """Each component's peak source position in mm (k x 3)."""
        return self["/attribution/peak_mm"]

    @property
    def filter_gain(self) -> Optional[np.ndarray]:
        """Where each filter listens: its gain |w^T l_j| at every source
        (n_src x k, filter output per A*m); None when the decoder gave no
        weights (summary["filter_gain"] says why)."""
        return self.get("/filter_gain/source")

    @property
    def filter_gain_normalised(self) -> Optional[np.ndarray]:
        """The gain divided by each source's lead-field norm (n_src x k), so
        deep sources are not at a disadvantage; None without weights."""
        return self.get("/filter_gain/source_normalised")

    @property
    def region_gain(self) -> Optional[Tuple[np.ndarray, np.ndarray]]:
        """(area-weighted mean, maximum) gain of each region (n_regions x k,
        regions as region_names); None without weights."""
        mean = self.get("/filter_gain/region_mean")
        if mean is None:
            return None
        return mean, self["/filter_gain/region_max"]

    # A decoder with a time axis (docs/time_resolved.md).
    @property
    def times(self) -> Optional[np.ndarray]:
        """The decoder's time points in seconds (n_times); None for a decoder
        without a time axis."""
        return self.get("/attribution/times")

    @property
    def share_time(self) -> Optional[np.ndarray]:
        """Region x time shares (n_components x n_regions x n_times, fractions):
        ``share_time[c]`` is one component's region x time picture; None
        without a time axis."""
        return self.get("/attribution/share_time")

    @property
    def share_time_intervals(self) -> Optional[Tuple[np.ndarray, np.ndarray]]:
        """The 95 % intervals of :attr:`share_time`: (low, high), same shape
        (NaN without resamples); None without a time axis."""
        low = self.get("/attribution/share_time_low")
        if low is None:
            return None
        return low, self["/attribution/share_time_high"]

    def time_ranges(self) -> List[Dict[str, Any]]:
        """The time range of each leading region of each component
        (time_ranges.csv): dicts with ``component`` and ``region`` (names),
        ``onset_s``, ``peak_s``, ``offset_s`` and their 2.5-97.5 % ends
        (``onset_low_s`` ...; seconds, NaN without resamples), ``peak_share``
        and ``held_frequency`` (fractions). Empty without a time axis."""
        base = "/attribution/time_range/"
        if base + "component" not in self:
            return []
        columns = {
            name: np.asarray(self[base + name])
            for name in ("component", "region", "onset_s", "onset_low_s", "onset_high_s",
                         "peak_s", "peak_low_s", "peak_high_s", "offset_s", "offset_low_s",
                         "offset_high_s", "peak_share", "held_frequency")
        }
        components, regions = self.component_names, self.region_names
        rows: List[Dict[str, Any]] = []
        for i in range(len(columns["component"])):
            row: Dict[str, Any] = {k: float(v[i]) for k, v in columns.items()}
            row["component"] = components[int(columns["component"][i])]
            row["region"] = regions[int(columns["region"][i])]
            rows.append(row)
        return rows

    def table(self, top: Optional[int] = None) -> List[Region]:
        """The leading regions of each component (regions.csv), largest
        share first within a component; ``top`` keeps that many per component."""
        rows: List[Region] = []
        path = self._folder / "regions.csv"
        if not path.is_file():
            return rows
        kept: Dict[int, int] = {}
        with path.open(newline="", encoding="utf-8") as f:
            for r in csv.DictReader(f):
                c = int(r["component"])
                if top is not None and kept.get(c, 0) >= top:
                    continue
                kept[c] = kept.get(c, 0) + 1
                rows.append(
                    Region(
                        component=c,
                        component_name=r["component_name"],
                        region=r["region"],
                        share=_number(r["share"]),
                        share_low=_number(r["share_low"]),
                        share_high=_number(r["share_high"]),
                        selection_frequency=_number(r["selection_frequency"]),
                        peak_x_mm=_number(r["peak_x_mm"]),
                        peak_y_mm=_number(r["peak_y_mm"]),
                        peak_z_mm=_number(r["peak_z_mm"]),
                    )
                )
        return rows

    def to_pandas(self, top: Optional[int] = None) -> Any:
        """:meth:`table` as a pandas DataFrame (needs pandas, not a dependency)."""
        try:
            import pandas
        except ImportError:
            raise ImportError("to_pandas needs pandas; install it or use Result.table()") from None
        return pandas.DataFrame([asdict(r) for r in self.table(top)])

    def save(self, folder: PathLike) -> Path:
        """Write result.h5, regions.csv and summary.json (the command line's
        files, byte for byte) into ``folder``: new, empty, or one patchwise
        wrote; it appears whole or not at all. Returns the folder."""
        out = Path(_patchwise.copy_folder(os.fspath(self._folder), os.fspath(folder)))
        return out

    def report(self, path: PathLike) -> Path:
        """Write the self-contained HTML report (scalp maps, cortex views,
        charts) to the file ``path``."""
        return Path(_patchwise.report(os.fspath(self._folder), os.fspath(path)))


def read_result(folder_or_file: PathLike) -> Result:
    """Read a result folder (or its result.h5) written by the command line or :meth:`Result.save`."""
    path = Path(folder_or_file)
    if path.is_file():
        path = path.parent
    return Result(path)


def _default_cache() -> str:
    for variable in ("PATCHWISE_CACHE", "XDG_CACHE_HOME"):
        value = os.environ.get(variable)
        if value:
            return value if variable == "PATCHWISE_CACHE" else os.path.join(value, "patchwise")
    return os.path.join(os.path.expanduser("~"), ".cache", "patchwise")


def _write_electrodes(folder: Path, positions_mm: Any, labels: Sequence[str]) -> Path:
    """An (n, 3) array of positions in mm with its labels, as electrodes.tsv."""
    positions = _float_array("montage", positions_mm, (2,))
    assert positions is not None
    if positions.shape[1:] != (3,) or positions.shape[0] != len(labels):
        raise ValueError(
            f"montage: has shape {positions.shape}; expected ({len(labels)}, 3), "
            "one row of x, y, z in mm per label"
        )
    path = folder / "electrodes.tsv"
    with path.open("w", encoding="utf-8") as f:
        f.write("name\tx\ty\tz\n")
        for label, (x, y, z) in zip(labels, positions):
            f.write(f"{label}\t{float(x)!r}\t{float(y)!r}\t{float(z)!r}\n")
    return path


def attribute(
    patterns: Any = None,
    weights: Any = None,
    covariance: Any = None,
    channels: Optional[Sequence[str]] = None,
    *,
    folds: Any = None,
    fold_covariances: Any = None,
    n_samples: Optional[float] = None,
    noise_covariance: Any = None,
    times: Any = None,
    component_names: Optional[Sequence[str]] = None,
    decoder: Optional[PathLike] = None,
    montage: Any = None,
    montage_labels: Optional[Sequence[str]] = None,
    cache: Optional[PathLike] = None,
    progress: bool = False,
    **options: Any,
) -> Result:
    """Which cortical regions does a decoder rely on? One call of the
    command line's ``attribute``.

    Give ``patterns`` (n_ch x k: ICA mixing columns, CSP patterns), or
    ``weights`` (n_ch x k) with ``covariance`` (n_ch x n_ch), and ``channels``
    (n_ch labels); or ``decoder``, a decoder file. ``folds`` (n_folds x n_ch x k,
    the decoders of your cross-validation, of the same kind) with
    ``fold_covariances`` (n_folds x n_ch x n_ch) or ``n_samples`` (trials
    behind the covariance) give the noise level. ``noise_covariance``
    (n_ch x n_ch) whitens the fit.

    A decoder with a time axis (docs/time_resolved.md) gives ``times``
    (n_times, seconds, increasing) and either one discriminant over
    channel x time features, ``weights`` n_ch x n_times with ``covariance``
    of the flattened features ((n_ch*n_times) square, channel-major:
    ``epochs.reshape(n_trials, -1)``), or one decoder per time point,
    ``patterns``/``weights`` n_times x n_ch x k with one shared covariance
    (n_ch x n_ch) or one per time point (n_times x n_ch x n_ch). The
    result then has :attr:`Result.times`, :attr:`Result.share_time` and
    :meth:`Result.time_ranges`. Its ``folds`` are n_folds x the decoder's
    layout (n_folds x n_ch x n_times, or n_folds x n_times x n_ch x k) with
    ``fold_covariances`` n_folds x the covariance's layout (or n_folds x
    n_ch x n_ch for decoders per time point): each time point then gets its
    noise level from the folds.

    ``montage`` is a name (``"10-20"``,
    ``"10-10"``, ``"10-5"``), an electrodes file, or an (n, 3) array of
    positions in mm with ``montage_labels`` (default ``channels``).

    Every other option of the command line is a keyword with its flag's
    name (``sources``, ``head``, ``radii_mm``, ``lambda_rule``,
    ``lambda_ratio``, ``lambda_`` for ``--lambda``, ``resamples``, ``seed``,
    ``joint``, ``forward_perturbations``, ...; see :func:`default_options`).
    Lead fields and dictionaries are cached under ``cache`` (default:
    ``$PATCHWISE_CACHE``, else the user cache folder). ``progress=True``
    prints each stage's progress to ``sys.stderr``; Ctrl-C stops the job.

    Raises ``ValueError`` for bad input (the command line's message) and
    ``RuntimeError`` for a failure while computing. The job's warnings (for
    example a time axis that looks like milliseconds) are issued as
    ``UserWarning``.
    """
    if "lambda_" in options:
        options["lambda"] = options.pop("lambda_")
    # The result lives in a temporary folder as long as its Result does
    # (TemporaryDirectory removes it when collected, or at exit).
    work = tempfile.TemporaryDirectory(prefix="patchwise-")
    folder = Path(work.name)
    given: Dict[str, Any] = dict(options)
    labels = _labels("channels", channels)
    if montage is not None and not isinstance(montage, (str, os.PathLike)):
        names = _labels("montage_labels", montage_labels) or labels
        if names is None:
            raise ValueError("montage: an array of positions needs montage_labels or channels")
        montage = _write_electrodes(folder, montage, names)
    given["montage"] = montage
    if noise_covariance is not None and not isinstance(noise_covariance, (str, os.PathLike)):
        array = _float_array("noise_covariance", noise_covariance, (2,))
        np.save(folder / "noise_covariance.npy", array)
        noise_covariance = folder / "noise_covariance.npy"
    given["noise_covariance"] = noise_covariance
    arrays = dict(
        patterns=_float_array("patterns", patterns, (1, 2, 3) if times is not None else (1, 2)),
        weights=_float_array("weights", weights, (1, 2, 3) if times is not None else (1, 2)),
        covariance=_float_array("covariance", covariance, (2, 3) if times is not None else (2,)),
        folds=_float_array("folds", folds, (3, 4) if times is not None else (3,)),
        fold_covariances=_float_array(
            "fold_covariances", fold_covariances, (3, 4) if times is not None else (3,)
        ),
        times=_float_array("times", times, (1,)),
    )
    if decoder is not None:
        if any(a is not None for a in arrays.values()):
            raise ValueError("decoder: give a decoder file or arrays, not both")
        given["decoder"] = decoder
        if labels is not None:
            raise ValueError("channels: a decoder file holds its own labels; leave channels out")
    else:
        if arrays["patterns"] is None and arrays["weights"] is None:
            raise ValueError("give patterns, or weights with covariance (or a decoder file)")
        if arrays["patterns"] is not None and arrays["weights"] is not None:
            raise ValueError("give patterns or weights, not both")
        if arrays["weights"] is not None and arrays["covariance"] is None:
            raise ValueError("weights: need the data covariance (n_ch x n_ch) to become patterns")
        if labels is None:
            raise ValueError("channels: the decoder's channel labels are needed (one per row)")
        main = arrays["patterns"] if arrays["patterns"] is not None else arrays["weights"]
        if len(labels) == 0 or main.size == 0:
            raise ValueError("the decoder holds no channels or no components")
    params = json.dumps(_options(given), allow_nan=False)
    out = folder / "result"
    _patchwise.attribute(
        params,
        os.fspath(out),
        os.fspath(cache) if cache is not None else _default_cache(),
        bool(progress),
        _ARRAYS_NAME,
        channels=labels if decoder is None else None,
        n_samples=None if n_samples is None else float(n_samples),
        component_names=_labels("component_names", component_names),
        **arrays,
    )
    result = Result(out, _keep=work)
    # The job's warnings (kept in summary.json's notes) reach Python's warnings
    # machinery, so a notebook shows them without progress=True.
    for note in result.summary.get("notes", []):
        if isinstance(note, str) and note.startswith("warning: "):
            warnings.warn(note[len("warning: "):], UserWarning, stacklevel=2)
    return result


def _component_names_of(estimator: Any, k: int) -> Optional[List[str]]:
    classes = getattr(estimator, "classes_", None)
    if classes is None:
        return None
    classes = [str(c) for c in classes]
    if k == 1 and len(classes) == 2:
        return [f"{classes[1]} vs {classes[0]}"]
    if len(classes) == k:
        return classes
    return None


def from_estimator(
    estimator: Any,
    X: Any,
    channels: Sequence[str],
    *,
    per_component: Optional[bool] = None,
    **options: Any,
) -> Result:
    """Attribute a fitted linear model on channels, or spatial filters.

    ``estimator`` is any fitted model with ``coef_`` (scikit-learn's
    convention: ``(1, n_ch)`` for two classes, ``(n_classes, n_ch)`` for
    more), or a matrix of spatial filters (n_ch x k). ``X`` is the training
    data (n_samples x n_ch): its covariance Σ (``np.cov``, n_samples - 1 in
    the denominator) turns the weights W into patterns by the Haufe transform
    A = Σ W (Wᵀ Σ W)⁻¹ (Haufe et al. 2014, eq. 6), in the same code as the
    command line, and its row count is ``n_samples``.

    The weights of a multinomial model (a softmax over classes) sum to zero
    over the classes, so Wᵀ Σ W is singular and the joint transform does not
    exist; then (or with ``per_component=True``) each column is taken as a
    decoder of its own, A_c = Σ w_c / (w_cᵀ Σ w_c), the same equation with
    one column, computed here in NumPy and handed over as patterns. The other
    keywords are those of :func:`attribute`.
    """
    coef = getattr(estimator, "coef_", None)
    names = None
    if coef is not None:
        weights = _float_array("coef_", coef, (1, 2))
        weights = np.atleast_2d(weights).T.copy()
        names = _component_names_of(estimator, weights.shape[1])
    else:
        weights = _float_array("filters", estimator, (1, 2))
        if weights.ndim == 1:
            weights = weights[:, None]
    data = _float_array("X", X, (2,))
    if data.shape[1] != weights.shape[0]:
        raise ValueError(
            f"X: has shape {data.shape}; expected (n_samples, {weights.shape[0]}), "
            "one column per channel of the weights"
        )
    if data.shape[0] < 2:
        raise ValueError(f"X: has {data.shape[0]} rows; expected at least 2 samples for a covariance")
    if not np.all(np.isfinite(data)):
        raise ValueError("X: holds NaN or infinite values; expected finite numbers")
    if not np.all(np.isfinite(weights)):
        raise ValueError("coef_: holds NaN or infinite values; expected finite numbers")
    covariance = np.atleast_2d(np.cov(data, rowvar=False))
    options.setdefault("component_names", names)
    if per_component is None:
        # The command line refuses Wᵀ Σ W with a condition number above 1e12;
        # a margin below that picks the per-column transform instead.
        gram = weights.T @ covariance @ weights
        per_component = weights.shape[1] > 1 and np.linalg.cond(gram) > 1e10
    if per_component:
        variances = np.einsum("ik,ij,jk->k", weights, covariance, weights)
        if np.any(variances <= 0):
            raise ValueError("coef_: a column has zero variance on X (wᵀ Σ w = 0); nothing to attribute")
        patterns = covariance @ weights / variances
        return attribute(patterns=patterns, channels=channels, **options)
    return attribute(
        weights=weights,
        covariance=covariance,
        channels=channels,
        n_samples=data.shape[0],
        **options,
    )


def _folder_of(result: Union[Result, PathLike]) -> str:
    return os.fspath(result.folder if isinstance(result, Result) else result)


def leadfield(
    out: PathLike,
    *,
    montage: Any = None,
    sources: Optional[PathLike] = None,
    head: Optional[PathLike] = None,
    regions: Optional[PathLike] = None,
    free_orientation: bool = False,
    progress: bool = False,
) -> Datasets:
    """The stage ``patchwise leadfield``: the lead field of a montage
    (name or electrodes file) and a source space in a head, written to the
    file ``out`` (leadfield.h5: gain in V/(A·m), average reference, positions
    in mm). Returns its datasets (``/leadfield/gain`` is n_ch x n_src)."""
    given = dict(montage=montage, sources=sources, head=head, regions=regions)
    params = json.dumps(_options(given, "forward"), allow_nan=False)
    path = _patchwise.leadfield(params, bool(free_orientation), os.fspath(out), bool(progress))
    return Datasets(path)


def dictionary(
    leadfield: PathLike,
    out: PathLike,
    *,
    progress: bool = False,
    **options: Any,
) -> Datasets:
    """The stage ``patchwise dictionary``: the multi-scale patch dictionary
    of the lead-field file ``leadfield``, written to the file ``out``.
    Options: ``radii_mm``, ``spacing_mm``, ``profile``, ``atom_orientation``
    (the flags of the command). Returns its datasets (``/dictionary/atoms``
    is n_ch x n_atoms, unit-norm columns)."""
    params = json.dumps(_options(options, "patches"), allow_nan=False)
    path = _patchwise.dictionary(os.fspath(leadfield), params, os.fspath(out), bool(progress))
    return Datasets(path)


def dipole(
    patterns: Any = None,
    weights: Any = None,
    covariance: Any = None,
    channels: Optional[Sequence[str]] = None,
    *,
    out: PathLike,
    decoder: Optional[PathLike] = None,
    pairs: bool = False,
    noise_sd: Optional[float] = None,
    montage: Any = None,
    sources: Optional[PathLike] = None,
    head: Optional[PathLike] = None,
    regions: Optional[PathLike] = None,
    progress: bool = False,
) -> Datasets:
    """The stage ``patchwise dipole``: one equivalent dipole (or a symmetric
    pair, ``pairs=True``) per component pattern, in the same head. The
    decoder is given as for :func:`attribute` (arrays with ``channels``, or
    ``decoder``, a file). Writes result.h5 (``/dipole/...``) and dipoles.csv
    into the new folder ``out``; returns result.h5's datasets."""
    work = tempfile.TemporaryDirectory(prefix="patchwise-")
    try:
        if decoder is None:
            labels = _labels("channels", channels)
            if labels is None:
                raise ValueError("channels: the decoder's channel labels are needed (one per row)")
            decoder = _patchwise.write_decoder(
                os.path.join(work.name, "decoder.h5"),
                labels,
                patterns=_float_array("patterns", patterns, (1, 2)),
                weights=_float_array("weights", weights, (1, 2)),
                covariance=_float_array("covariance", covariance, (2,)),
            )
        params = dict(decoder=os.fspath(decoder), pairs=bool(pairs))
        for key, value in dict(noise_sd=noise_sd, montage=montage, sources=sources,
                               head=head, regions=regions).items():
            if value is not None:
                params[key] = os.fspath(value) if isinstance(value, os.PathLike) else value
        folder = _patchwise.dipole(json.dumps(params, allow_nan=False), os.fspath(out),
                                   bool(progress))
    finally:
        work.cleanup()
    return Datasets(Path(folder) / "result.h5")


def compare(
    results: Iterable[Union[Result, PathLike]],
    out: PathLike,
    *,
    cache: Optional[PathLike] = None,
    progress: bool = False,
    **options: Any,
) -> Datasets:
    """The stage ``patchwise compare``: attributions of several subjects
    (saved result folders, or :class:`Result` objects; a folder's name names
    its subject) compared on one template cortex. Options are the flags of
    the command (``smoothing_mm``, ``bootstrap``, ``sign_flips``, ``alpha``,
    ``seed``, ``pair``, ...). Writes compare.h5 and its tables into the new
    folder ``out``; returns compare.h5's datasets (arrays lead with the
    component axis)."""
    params = json.dumps(_options(options, "compare"), allow_nan=False)
    folders = [_folder_of(r) for r in results]
    folder = _patchwise.compare(
        folders,
        params,
        os.fspath(out),
        os.fspath(cache) if cache is not None else _default_cache(),
        bool(progress),
    )
    return Datasets(Path(folder) / "compare.h5")
