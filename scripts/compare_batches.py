"""Checks of scripts/cluster-test (issue 24), with h5py and NumPy.

    python scripts/compare_batches.py STUDY_A STUDY_B
        STUDY_*/results (the job folders, batch-summary.csv) and
        STUDY_*/comparison hold the same results: every dataset of every
        result.h5 and compare.h5 with the same names, shapes and values (floats
        within 1e-12 relative, NaN equal to NaN; strings and integers exactly,
        after replacing each study's folder by one placeholder), the same
        numbers in summary.json, job.json and regions.csv, and
        batch-summary.csv equal except its `status` column (`ran` or `reused`
        depends on which run wrote it).

    python scripts/compare_batches.py --built-once CACHE LOG
        every lead field, dictionary and boundary-element entry in CACHE (the
        entries the jobs use; the [compare] step's smoothing kernel is the
        collecting job's) was built by exactly one job of all the array tasks, whose logs are concatenated in LOG (each build writes
        one line "<job>: built and cached dictionary <path>" or
        "... computed and cached lead field <path>").

The 1e-12 tolerance is the project's rule for "same inputs, same numbers"
(common practice, no source); here the runs are bit-identical in practice.
Exit code 1 with one line per difference.
"""

import csv
import json
import math
import os
import re
import sys

import h5py
import numpy as np

RTOL = 1e-12
problems = []


def close(x, y):
    if isinstance(x, float) or isinstance(y, float):
        if (math.isnan(x) and math.isnan(y)) or x == y:
            return True
        return abs(x - y) <= RTOL * max(abs(x), abs(y))
    return x == y


def norm_text(s, root):
    return s.replace(root, "<STUDY>")


def compare_json(a, b, where, roots):
    if isinstance(a, dict) and isinstance(b, dict):
        if sorted(a) != sorted(b):
            problems.append(f"{where}: keys {sorted(a)} != {sorted(b)}")
            return
        for k in a:
            compare_json(a[k], b[k], f"{where}.{k}", roots)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            problems.append(f"{where}: length {len(a)} != {len(b)}")
            return
        for i, (x, y) in enumerate(zip(a, b)):
            compare_json(x, y, f"{where}[{i}]", roots)
    elif isinstance(a, str) and isinstance(b, str):
        if norm_text(a, roots[0]) != norm_text(b, roots[1]):
            problems.append(f"{where}: {a!r} != {b!r}")
    elif isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(a, bool):
        if not close(a, b):
            problems.append(f"{where}: {a} != {b}")
    elif a != b:
        problems.append(f"{where}: {a!r} != {b!r}")


def as_array(value, root):
    arr = np.asarray(value)
    if arr.dtype.kind in "OSU":
        flat = [v.decode() if isinstance(v, bytes) else str(v) for v in arr.ravel()]
        return np.array([norm_text(v, root) for v in flat], dtype=object).reshape(arr.shape)
    return arr


def compare_arrays(x, y, where):
    if x.shape != y.shape:
        problems.append(f"{where}: shape {x.shape} != {y.shape}")
    elif x.dtype.kind == "f" or y.dtype.kind == "f":
        x = x.astype(float)
        y = y.astype(float)
        with np.errstate(invalid="ignore"):
            # Equal infinities (a t statistic over zero spread) are equal.
            ok = (np.isnan(x) & np.isnan(y)) | (x == y) \
                | (np.abs(x - y) <= RTOL * np.maximum(np.abs(x), np.abs(y)))
            worst = np.nanmax(np.abs(x - y)[~ok]) if not ok.all() else 0.0
        if not ok.all():
            problems.append(f"{where}: {int((~ok).sum())} values differ (largest by {worst:g})")
    elif not np.array_equal(x, y):
        problems.append(f"{where}: values differ")


def compare_h5(pa, pb, roots):
    with h5py.File(pa, "r") as fa, h5py.File(pb, "r") as fb:
        items_a, items_b = {}, {}
        # visititems stops at the first callback that returns something.
        fa.visititems(lambda n, o: items_a.update({n: o}))
        fb.visititems(lambda n, o: items_b.update({n: o}))
        if sorted(items_a) != sorted(items_b):
            problems.append(f"{pa}: objects {sorted(set(items_a) ^ set(items_b))} in one file only")
            return 0
        count = 0
        for name, oa in items_a.items():
            ob = items_b[name]
            if sorted(oa.attrs) != sorted(ob.attrs):
                problems.append(f"{pa}:/{name}: attributes differ in name")
            for k in oa.attrs:
                if k in ob.attrs:
                    compare_arrays(as_array(oa.attrs[k], roots[0]), as_array(ob.attrs[k], roots[1]),
                                   f"{pa}:/{name}@{k}")
            if isinstance(oa, h5py.Dataset):
                compare_arrays(as_array(oa[()], roots[0]), as_array(ob[()], roots[1]), f"{pa}:/{name}")
                count += 1
        return count


def compare_csv(pa, pb, roots, skip=()):
    with open(pa, newline="") as fa, open(pb, newline="") as fb:
        ra, rb = list(csv.reader(fa)), list(csv.reader(fb))
    if len(ra) != len(rb) or not ra:
        problems.append(f"{pa}: {len(ra)} rows, {len(rb)} in the other")
        return
    header = ra[0]
    if header != rb[0]:
        problems.append(f"{pa}: header differs")
        return
    for i, (x, y) in enumerate(zip(ra[1:], rb[1:]), start=1):
        for col, p, q in zip(header, x, y):
            if col in skip:
                continue
            p, q = norm_text(p, roots[0]), norm_text(q, roots[1])
            try:
                same = close(float(p), float(q))
            except ValueError:
                same = p == q
            if not same:
                problems.append(f"{pa}: row {i} {col}: {p!r} != {q!r}")


def compare_studies(a, b):
    roots = (os.path.abspath(a), os.path.abspath(b))
    results = os.path.join(a, "results")
    jobs = sorted(d for d in os.listdir(results)
                  if not d.startswith(".") and os.path.isdir(os.path.join(results, d)))
    other = sorted(d for d in os.listdir(os.path.join(b, "results"))
                   if not d.startswith(".") and os.path.isdir(os.path.join(b, "results", d)))
    if jobs != other or not jobs:
        problems.append(f"job folders {jobs} != {other}")
        return
    datasets = 0
    for job in jobs:
        da, db = os.path.join(a, "results", job), os.path.join(b, "results", job)
        datasets += compare_h5(os.path.join(da, "result.h5"), os.path.join(db, "result.h5"), roots)
        for name in ("summary.json", "job.json"):
            with open(os.path.join(da, name)) as fa, open(os.path.join(db, name)) as fb:
                compare_json(json.load(fa), json.load(fb), f"{job}/{name}", roots)
        compare_csv(os.path.join(da, "regions.csv"), os.path.join(db, "regions.csv"), roots)
    compare_csv(os.path.join(a, "results", "batch-summary.csv"),
                os.path.join(b, "results", "batch-summary.csv"), roots, skip=("status",))
    datasets += compare_h5(os.path.join(a, "comparison", "compare.h5"),
                           os.path.join(b, "comparison", "compare.h5"), roots)
    with open(os.path.join(a, "comparison", "summary.json")) as fa, \
            open(os.path.join(b, "comparison", "summary.json")) as fb:
        compare_json(json.load(fa), json.load(fb), "comparison/summary.json", roots)
    print(f"compare_batches: {len(jobs)} job folders and the comparison, {datasets} datasets: "
          f"{'identical within 1e-12' if not problems else f'{len(problems)} difference(s)'}")


def built_once(cache, log):
    with open(log) as f:
        lines = f.read().splitlines()
    built = [l for l in lines if re.search(r": (built|computed) and cached ", l)]
    used = [l for l in lines if re.search(r": using cached ", l)]
    entries = sorted(n for n in os.listdir(cache)
                     if re.fullmatch(r"(leadfield|dictionary|bem)-[0-9a-f]+\.h5", n))
    if not entries:
        problems.append(f"{cache}: no cache entry")
    for name in entries:
        n = sum(1 for l in built if l.endswith(os.sep + name))
        if n != 1:
            problems.append(f"{name}: built {n} times")
    if len(built) != len(entries):
        problems.append(f"{len(built)} builds for {len(entries)} entries")
    print(f"compare_batches: {len(entries)} cache entries, {len(built)} builds in the task logs, "
          f"{len(used)} reads of a cached entry")


def main(argv):
    if len(argv) == 4 and argv[1] == "--built-once":
        built_once(argv[2], argv[3])
    elif len(argv) == 3:
        compare_studies(argv[1], argv[2])
    else:
        print(__doc__, file=sys.stderr)
        return 2
    for p in problems[:50]:
        print("  " + p, file=sys.stderr)
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
