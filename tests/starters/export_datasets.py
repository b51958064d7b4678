#!/usr/bin/env python3
"""Export the three open data sets the `crescendo new` tests use.

They are copied out of the data sets that the Python package statsmodels
(0.15.0 on PyPI, BSD-3-Clause) ships inside itself, under
statsmodels/datasets/. All three are public domain by the package's own
COPYRIGHT note ("This is public domain."). To keep the files small, some
columns of the macro data are left out; rows and values are unchanged.

Standard library only. Either with statsmodels installed:
    python3 tests/starters/export_datasets.py
or from its wheel, without installing it (pip download --no-deps statsmodels):
    python3 tests/starters/export_datasets.py statsmodels-0.15.0-*.whl
"""
import csv
import importlib.util
import io
import sys
import zipfile
from pathlib import Path

OUT = Path(__file__).resolve().parent

# (file in statsmodels/datasets/, file written here, columns kept or None for all)
SETS = [
    (
        "macrodata/macrodata.csv",
        "macrodata.csv",
        ["year", "quarter", "realgdp", "cpi", "unemp", "infl", "realint"],
    ),
    ("grunfeld/grunfeld.csv", "grunfeld.csv", None),
    ("longley/longley.csv", "longley.csv", None),
]


def reader():
    if len(sys.argv) > 1:
        wheel = zipfile.ZipFile(sys.argv[1])
        return lambda name: wheel.read("statsmodels/datasets/" + name).decode()
    spec = importlib.util.find_spec("statsmodels")
    if spec is None or not spec.submodule_search_locations:
        sys.exit("statsmodels is not installed; pass the path of its wheel")
    root = Path(list(spec.submodule_search_locations)[0]) / "datasets"
    return lambda name: (root / name).read_text()


def main():
    read = reader()
    for src, dst, keep in SETS:
        rows = list(csv.reader(io.StringIO(read(src))))
        header = rows[0]
        index = [header.index(c) for c in keep] if keep else range(len(header))
        with open(OUT / dst, "w", newline="") as f:
            w = csv.writer(f, lineterminator="\n")
            for r in rows:
                w.writerow([r[i] for i in index])


if __name__ == "__main__":
    main()
