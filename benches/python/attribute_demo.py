"""`attribute` from Python on the demo's decoder, for the comparison with the
command line in docs/benchmarks.md ("Python package").

    patchwise demo --out DEMO                      # writes DEMO/decoder.h5
    python benches/python/attribute_demo.py DEMO/decoder.h5 OUT
    patchwise attribute --decoder DEMO/decoder.h5 --montage 10-10 --no-report --out OUT2

The decoder's arrays are read with h5py and handed over as NumPy arrays; the
result is saved as the command line saves it (result.h5, regions.csv,
summary.json), with the command line's defaults but the demo's montage.
"""

import sys

import h5py
import numpy as np

import patchwise


def main(decoder: str, out: str) -> None:
    with h5py.File(decoder, "r") as f:
        channels = [c.decode() if isinstance(c, bytes) else c for c in f["channels"][()]]
        weights = np.asarray(f["weights"][()])
        covariance = np.asarray(f["covariance"][()])
        names = [c.decode() if isinstance(c, bytes) else c for c in f["component_names"][()]]
    result = patchwise.attribute(weights=weights, covariance=covariance, channels=channels,
                                 component_names=names, montage="10-10")
    result.save(out)


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
