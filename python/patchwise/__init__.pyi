"""Type stubs of patchwise (the pure-Python API over the native module)."""

import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Dict, Iterable, List, Optional, Sequence, Tuple, Union

import numpy as np
import numpy.typing as npt

__version__: str
CAUTION: str

PathLike = Union[str, os.PathLike[str]]
ArrayLike = npt.ArrayLike

def default_options() -> Dict[str, Any]: ...

@dataclass(frozen=True)
class Region:
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

class Datasets:
    def __init__(self, path: PathLike) -> None: ...
    @property
    def path(self) -> Path: ...
    def names(self) -> List[str]: ...
    def __getitem__(self, name: str) -> Any: ...
    def __contains__(self, name: str) -> bool: ...
    def get(self, name: str, default: Any = ...) -> Any: ...
    @property
    def attributes(self) -> Dict[str, Any]: ...

class Result(Datasets):
    def __init__(self, folder: PathLike, _keep: Any = ...) -> None: ...
    @property
    def summary(self) -> Dict[str, Any]: ...
    @property
    def folder(self) -> Path: ...
    @property
    def channels(self) -> List[str]: ...
    @property
    def component_names(self) -> List[str]: ...
    @property
    def region_names(self) -> List[str]: ...
    @property
    def patterns(self) -> npt.NDArray[np.float64]: ...
    @property
    def shares(self) -> npt.NDArray[np.float64]: ...
    @property
    def intervals(self) -> Tuple[npt.NDArray[np.float64], npt.NDArray[np.float64]]: ...
    @property
    def selection_frequency(self) -> npt.NDArray[np.float64]: ...
    @property
    def lead_frequency(self) -> npt.NDArray[np.float64]: ...
    @property
    def leader_probability(self) -> npt.NDArray[np.float64]: ...
    @property
    def source_map(self) -> npt.NDArray[np.float64]: ...
    @property
    def explained_variance(self) -> npt.NDArray[np.float64]: ...
    @property
    def flags(self) -> List[str]: ...
    @property
    def lambdas(self) -> npt.NDArray[np.float64]: ...
    @property
    def lambda_path(self) -> npt.NDArray[np.float64]: ...
    @property
    def coefficients(self) -> npt.NDArray[np.float64]: ...
    @property
    def peak_mm(self) -> npt.NDArray[np.float64]: ...
    @property
    def filter_gain(self) -> Optional[npt.NDArray[np.float64]]: ...
    @property
    def filter_gain_normalised(self) -> Optional[npt.NDArray[np.float64]]: ...
    @property
    def region_gain(
        self,
    ) -> Optional[Tuple[npt.NDArray[np.float64], npt.NDArray[np.float64]]]: ...
    @property
    def times(self) -> Optional[npt.NDArray[np.float64]]: ...
    @property
    def share_time(self) -> Optional[npt.NDArray[np.float64]]: ...
    @property
    def share_time_intervals(
        self,
    ) -> Optional[Tuple[npt.NDArray[np.float64], npt.NDArray[np.float64]]]: ...
    def time_ranges(self) -> List[Dict[str, Any]]: ...
    def table(self, top: Optional[int] = ...) -> List[Region]: ...
    def to_pandas(self, top: Optional[int] = ...) -> Any: ...
    def save(self, folder: PathLike) -> Path: ...
    def report(self, path: PathLike) -> Path: ...

def read_result(folder_or_file: PathLike) -> Result: ...
def attribute(
    patterns: Optional[ArrayLike] = ...,
    weights: Optional[ArrayLike] = ...,
    covariance: Optional[ArrayLike] = ...,
    channels: Optional[Sequence[str]] = ...,
    *,
    folds: Optional[ArrayLike] = ...,
    fold_covariances: Optional[ArrayLike] = ...,
    n_samples: Optional[float] = ...,
    noise_covariance: Union[ArrayLike, PathLike, None] = ...,
    times: Optional[ArrayLike] = ...,
    component_names: Optional[Sequence[str]] = ...,
    decoder: Optional[PathLike] = ...,
    montage: Union[str, PathLike, ArrayLike, None] = ...,
    montage_labels: Optional[Sequence[str]] = ...,
    cache: Optional[PathLike] = ...,
    progress: bool = ...,
    sources: Optional[Union[str, PathLike]] = ...,
    head: Optional[Union[str, PathLike]] = ...,
    regions: Optional[PathLike] = ...,
    dictionary: Optional[PathLike] = ...,
    radii_mm: Optional[Sequence[float]] = ...,
    spacing_mm: Optional[float] = ...,
    profile: Optional[str] = ...,
    atom_orientation: Optional[str] = ...,
    reference: Optional[str] = ...,
    joint: Optional[bool] = ...,
    lambda_rule: Optional[str] = ...,
    noise_sd: Optional[float] = ...,
    lambda_ratio: Optional[float] = ...,
    lambda_: Optional[float] = ...,
    tol: Optional[float] = ...,
    resamples: Optional[int] = ...,
    seed: Optional[int] = ...,
    forward_perturbations: Optional[int] = ...,
    no_refit: Optional[bool] = ...,
    time_window: Optional[float] = ...,
) -> Result: ...
def from_estimator(
    estimator: Any,
    X: ArrayLike,
    channels: Sequence[str],
    *,
    per_component: Optional[bool] = ...,
    **options: Any,
) -> Result: ...
def leadfield(
    out: PathLike,
    *,
    montage: Union[str, PathLike, None] = ...,
    sources: Optional[PathLike] = ...,
    head: Optional[PathLike] = ...,
    regions: Optional[PathLike] = ...,
    free_orientation: bool = ...,
    progress: bool = ...,
) -> Datasets: ...
def dictionary(
    leadfield: PathLike,
    out: PathLike,
    *,
    progress: bool = ...,
    radii_mm: Optional[Sequence[float]] = ...,
    spacing_mm: Optional[float] = ...,
    profile: Optional[str] = ...,
    atom_orientation: Optional[str] = ...,
) -> Datasets: ...
def dipole(
    patterns: Optional[ArrayLike] = ...,
    weights: Optional[ArrayLike] = ...,
    covariance: Optional[ArrayLike] = ...,
    channels: Optional[Sequence[str]] = ...,
    *,
    out: PathLike,
    decoder: Optional[PathLike] = ...,
    pairs: bool = ...,
    noise_sd: Optional[float] = ...,
    montage: Union[str, PathLike, None] = ...,
    sources: Optional[PathLike] = ...,
    head: Optional[PathLike] = ...,
    regions: Optional[PathLike] = ...,
    progress: bool = ...,
) -> Datasets: ...
def compare(
    results: Iterable[Union[Result, PathLike]],
    out: PathLike,
    *,
    cache: Optional[PathLike] = ...,
    progress: bool = ...,
    **options: Any,
) -> Datasets: ...
