#!/usr/bin/python3
"""Write testdata/ref/elnino_values.json from statsmodels' own elnino loader.

Run from the repository root with Debian's Python:

    /usr/bin/python3 testdata/ref/elnino_values.py

It reads the dataset through statsmodels.api.datasets.elnino.load_pandas()
(not through our copy in testdata/elnino/elnino.csv), flattens the 61 x 12
table into 732 monthly values in time order and records what statsmodels read,
so the Go CSV reader can be checked against an independent reader of the same
file. It also checks that our copy is byte-identical to the packaged file.
"""

import hashlib
import json
import math
import os
import sys

import statsmodels
import statsmodels.api as sm
import pandas as pd

OUT = os.path.join("testdata", "ref", "elnino_values.json")
COPY = os.path.join("testdata", "elnino", "elnino.csv")
MONTHS = ["JAN", "FEB", "MAR", "APR", "MAY", "JUN",
          "JUL", "AUG", "SEP", "OCT", "NOV", "DEC"]


def main():
    if not os.path.isdir(os.path.join("testdata", "ref")):
        sys.exit("run from the repository root (testdata/ref not found)")

    ds = sm.datasets.elnino.load_pandas()
    df = ds.data
    names = list(ds.names)
    columns = [str(c) for c in df.columns]
    if columns[0] != "YEAR" or columns[1:] != MONTHS:
        sys.exit("unexpected columns: %r" % columns)

    packaged = os.path.join(os.path.dirname(sm.datasets.elnino.__file__),
                            "elnino.csv")
    with open(packaged, "rb") as f:
        packaged_sha = hashlib.sha256(f.read()).hexdigest()
    with open(COPY, "rb") as f:
        copy_sha = hashlib.sha256(f.read()).hexdigest()
    if packaged_sha != copy_sha:
        sys.exit("%s differs from %s" % (COPY, packaged))

    values = []
    for _, row in df.iterrows():
        year = int(row["YEAR"])
        for m, col in enumerate(MONTHS, start=1):
            v = float(row[col])
            if math.isnan(v):
                sys.exit("unexpected missing value %d-%02d" % (year, m))
            values.append({
                "year": year,
                "month": m,
                # decimal time at mid-month, the project's convention
                "t": year + (m - 0.5) / 12.0,
                "value": v,
            })

    out = {
        "source": "statsmodels.api.datasets.elnino.load_pandas()",
        "generator": "testdata/ref/elnino_values.py",
        "statsmodels_version": statsmodels.__version__,
        "pandas_version": pd.__version__,
        "python_version": sys.version.split()[0],
        "packaged_csv": packaged,
        "csv_sha256": packaged_sha,
        "columns": columns,
        "names": names,
        "n_years": int(len(df)),
        "first_year": int(df["YEAR"].iloc[0]),
        "last_year": int(df["YEAR"].iloc[-1]),
        "n": len(values),
        "values": values,
    }
    with open(OUT, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print("wrote %s: %d values, %d-%d" % (OUT, len(values),
                                          out["first_year"], out["last_year"]))


if __name__ == "__main__":
    main()
