#!/usr/bin/env python3
"""Writes the reference fixtures that the Rust tests compare the engine against.

What it is for: computing, once, with pinned releases of NumPy, SciPy, scikit-learn,
NetworkX and persim (tests/reference/requirements.txt), the values that the engine's filters,
clustering and graph counts must reproduce, on data sets shipped inside those packages
(iris, wine, palmerpenguins) and on seeded synthetic samples. Each fixture carries its
input data, so `cargo test` needs no Python. What it is not: part of the build or of CI;
run it by hand after changing it, and commit its output.

    python3 -m venv /tmp/refvenv
    /tmp/refvenv/bin/pip install -r tests/reference/requirements.txt
    /tmp/refvenv/bin/python tests/reference/make_fixtures.py

Every fixture has a top-level "source" naming the library, version and function used.
Deterministic: all random draws are seeded, and the JSON is written with sorted keys.
"""

import csv
import importlib.metadata
import io
import json
import os
import re
import sys
from datetime import datetime, timedelta, timezone
import warnings

import networkx
import numpy as np
import pandas as pd
import palmerpenguins
import persim
import scipy
import sklearn
from scipy.cluster.hierarchy import linkage
from scipy.spatial.distance import cdist
from scipy.special import smirnov
from scipy.stats import chi2, chi2_contingency, gaussian_kde, ks_2samp, kstwo
from sklearn.cluster import DBSCAN
from sklearn.datasets import load_iris, load_wine, make_blobs
from sklearn.decomposition import PCA
from sklearn.neighbors import NearestNeighbors
from sklearn.preprocessing import StandardScaler

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fixtures")

V = {
    "numpy": np.__version__,
    "scipy": scipy.__version__,
    "scikit-learn": sklearn.__version__,
    "networkx": networkx.__version__,
    "palmerpenguins": getattr(palmerpenguins, "__version__", "0.1.6"),
    "persim": importlib.metadata.version("persim"),
}


def lib(name):
    return f"{name} {V[name]}"


def rows(a):
    """A 2-D array as a list of row lists of Python floats (exact repr in JSON)."""
    return [[float(x) for x in r] for r in np.asarray(a, dtype=float)]


def floats(a):
    return [float(x) for x in np.asarray(a, dtype=float).ravel()]


def write(name, doc):
    path = os.path.join(OUT, name)
    with open(path, "w", encoding="utf-8", newline="\n") as f:
        json.dump(doc, f, sort_keys=True, separators=(",", ":"))
        f.write("\n")
    print(f"{name}: {os.path.getsize(path)} bytes", file=sys.stderr)


def zscore(x):
    """StandardScaler: (x - mean) / std with ddof = 0."""
    return StandardScaler().fit_transform(x)


def iris():
    d = load_iris()
    return d.data, d.target, list(d.target_names), list(d.feature_names)


def wine():
    d = load_wine()
    return d.data, list(d.feature_names)


def pca_fixture(name, x, columns, dataset):
    z = zscore(x)
    p = PCA(n_components=3, svd_solver="full")
    scores = p.fit_transform(z)
    write(name, {
        "source": (f"{lib('scikit-learn')}: {dataset} z-scored with sklearn.preprocessing.StandardScaler "
                   "(ddof=0), then sklearn.decomposition.PCA(n_components=3, svd_solver='full')"
                   ".fit_transform; explained_variance_ uses ddof=1 (scikit-learn's convention)"),
        "dataset": dataset,
        "columns": columns,
        "data": rows(x),
        "zscored": rows(z),
        "scores": [floats(scores[:, k]) for k in range(3)],
        "explained_variance": floats(p.explained_variance_),
        "explained_variance_ratio": floats(p.explained_variance_ratio_),
        "note": "scores[k] is component k+1 (1 = largest variance); a component's sign is arbitrary",
    })


def kde_fixture(iris_z):
    rng = np.random.default_rng(11)
    a = rng.normal([0.0, 0.0], [1.0, 0.5], size=(150, 2))
    b = rng.normal([3.0, 1.0], [0.6, 1.2], size=(100, 2))
    sample = np.vstack([a, b])
    cases = []
    for label, pts in (("seeded 2-D mixture, numpy.random.default_rng(11)", sample),
                       ("iris z-scored (StandardScaler)", iris_z)):
        for bw in (None, 0.5):
            k = gaussian_kde(pts.T, bw_method=bw)
            cases.append({
                "label": label,
                "bandwidth": bw,
                "factor": float(k.factor),
                "points": rows(pts),
                "density": floats(k(pts.T)),
            })
    write("kde.json", {
        "source": (f"{lib('scipy')}: scipy.stats.gaussian_kde(points.T, bw_method=bandwidth) evaluated "
                   "at the data points; bandwidth null = Scott's rule n^(-1/(d+4)); the kernel covariance "
                   "is factor^2 times the data covariance (ddof=1); values are normalised densities"),
        "cases": cases,
    })


def dbscan_case(label, pts, eps, min_samples):
    m = DBSCAN(eps=eps, min_samples=min_samples).fit(pts)
    d = cdist(pts, pts)
    ties = int(np.sum(np.abs(d - eps) < 1e-9) // 2)
    return {
        "label": label,
        "eps": eps,
        "min_samples": min_samples,
        "points": rows(pts),
        "labels": [int(v) for v in m.labels_],
        "core_sample_indices": [int(v) for v in m.core_sample_indices_],
        "pairs_within_1e-9_of_eps": ties,
    }


def dbscan_fixture(iris_z):
    blobs, _ = make_blobs(n_samples=300, centers=3, cluster_std=0.9, random_state=7)
    # Two touching blobs and a large min_samples: several border points lie within eps of
    # core points of two clusters, so the border-point rule is exercised.
    touching, _ = make_blobs(n_samples=300, centers=[[0.0, 0.0], [2.2, 0.0]], cluster_std=0.6, random_state=7)
    cases = [
        dbscan_case("iris z-scored (StandardScaler)", iris_z, 0.5, 5),
        dbscan_case("iris z-scored (StandardScaler)", iris_z, 0.8, 5),
        dbscan_case("make_blobs(n_samples=300, centers=3, cluster_std=0.9, random_state=7)", blobs, 0.6, 5),
        dbscan_case("make_blobs(n_samples=300, centers=[[0, 0], [2.2, 0]], cluster_std=0.6, random_state=7)",
                    touching, 0.3, 12),
    ]
    write("dbscan.json", {
        "source": (f"{lib('scikit-learn')}: sklearn.cluster.DBSCAN(eps, min_samples).fit(points); "
                   "labels_ (-1 = noise) and core_sample_indices_; min_samples counts the point itself, "
                   "a neighbour is within distance <= eps (Euclidean)"),
        "cases": cases,
    })


def linkage_fixture(iris_z):
    rng = np.random.default_rng(23)
    sample = rng.normal(size=(120, 3)) * [1.0, 2.0, 0.5]
    cases = []
    for label, pts in (("iris z-scored (StandardScaler)", iris_z),
                       ("numpy.random.default_rng(23).normal(size=(120, 3)) * [1, 2, 0.5]", sample)):
        z = linkage(pts, method="single", metric="euclidean")
        cases.append({"label": label, "points": rows(pts), "merge_heights": floats(z[:, 2])})
    write("linkage.json", {
        "source": (f"{lib('scipy')}: scipy.cluster.hierarchy.linkage(points, method='single', "
                   "metric='euclidean'), column 2 (merge heights, non-decreasing for single linkage)"),
        "cases": cases,
    })


def graphs_fixture():
    cases = []
    for n, m, seed in ((30, 25, 1), (50, 49, 2), (100, 150, 3), (200, 180, 4),
                       (20, 0, 5), (60, 300, 6), (12, 66, 7), (1, 0, 8), (400, 420, 9)):
        g = networkx.gnm_random_graph(n, m, seed=seed)
        c = networkx.number_connected_components(g)
        e, v = g.number_of_edges(), g.number_of_nodes()
        cases.append({
            "n": n, "m": m, "seed": seed,
            "edges": [[int(a), int(b)] for a, b in sorted(g.edges())],
            "components": c,
            "cycle_rank": e - v + c,
        })
    write("graphs.json", {
        "source": (f"{lib('networkx')}: networkx.gnm_random_graph(n, m, seed); "
                   "networkx.number_connected_components; cycle rank = E - V + C"),
        "cases": cases,
    })


def eccentricity_fixture(iris_z):
    d = cdist(iris_z, iris_z)
    n = d.shape[0]
    write("eccentricity.json", {
        "source": (f"{lib('numpy')} and {lib('scipy')}: d = scipy.spatial.distance.cdist(points, points); "
                   "eccentricity E_p(x) = (sum over all N points x' of d(x, x')^p / N)^(1/p) "
                   "(Singh, Memoli, Carlsson 2007), the sum including x itself: mean p=1, rms p=2, "
                   "max p=infinity"),
        "label": "iris z-scored (StandardScaler)",
        "points": rows(iris_z),
        "mean": floats(d.sum(axis=1) / n),
        "rms": floats(np.sqrt((d ** 2).sum(axis=1) / n)),
        "max": floats(d.max(axis=1)),
    })


def iris_species_fixture(x, target, names, columns):
    z = zscore(x)
    setosa = target == 0
    gap = float(cdist(z[setosa], z[~setosa]).min())
    write("iris_species.json", {
        "source": (f"{lib('scikit-learn')}: sklearn.datasets.load_iris (Fisher 1936), data, target, "
                   "target_names; setosa_gap_zscored = min distance between a setosa row and any other "
                   "row after StandardScaler, from scipy.spatial.distance.cdist"),
        "columns": columns,
        "data": rows(x),
        "species": [names[t] for t in target],
        "setosa_gap_zscored": gap,
    })


def penguins_fixture():
    path = os.path.join(os.path.dirname(palmerpenguins.__file__), "data", "penguins.csv")
    with open(path, encoding="utf-8", newline="") as f:
        text = f.read()
    recs = list(csv.reader(io.StringIO(text)))
    header, body = recs[0], recs[1:]
    numeric = ["bill_length_mm", "bill_depth_mm", "flipper_length_mm", "body_mass_g", "year"]
    stats = {}
    for name in numeric:
        j = header.index(name)
        vals = np.array([float(r[j]) for r in body if r[j] != "NA"])
        stats[name] = {
            "missing": sum(1 for r in body if r[j] == "NA"),
            "min": float(vals.min()), "max": float(vals.max()), "mean": float(vals.mean()),
        }
    cats = {}
    for name in ("species", "island", "sex"):
        j = header.index(name)
        cats[name] = {
            "missing": sum(1 for r in body if r[j] == "NA"),
            "levels": sorted({r[j] for r in body if r[j] != "NA"}),
        }
    with open(os.path.join(OUT, "penguins.csv"), "w", encoding="utf-8", newline="") as f:
        f.write(text)
    write("penguins.json", {
        "source": (f"palmerpenguins {V['palmerpenguins']}: the package's data/penguins.csv, copied "
                   "byte for byte to penguins.csv; summaries with Python csv and "
                   f"{lib('numpy')} (missing = cells 'NA')"),
        "csv": "penguins.csv",
        "rows": len(body),
        "columns": header,
        "numbers": stats,
        "categories": cats,
    })


def times_fixture():
    """Date-time text and what Python's datetime makes of it."""
    rng = np.random.default_rng(31)
    offsets = [0, 3600, -18000, 19800, -34200, 45900, 7200]
    cases = []

    def expect(text, dt):
        aware = dt if dt.tzinfo is not None else dt.replace(tzinfo=timezone.utc)
        cases.append({
            "text": text,
            "seconds": aware.timestamp(),
            "hour": dt.hour + dt.minute / 60 + (dt.second + dt.microsecond / 1e6) / 3600,
            "doy": dt.timetuple().tm_yday,
        })

    fixed = ["2024-07-15T00:00", "2024-07-15", "2000-02-29T23:59:59", "1900-03-01 12:00",
             "1969-12-31T23:59:59.5", "2024-12-31T23:59:59.999999", "1970-01-01T00:00Z",
             "2024-07-15T10:00+02:00", "2024-07-15T10:00:00-0530", "2024-07-15 10:00:00.25+02",
             "0001-01-01T00:00", "9999-12-31T23:59:59"]
    for t in fixed:
        expect(t, datetime.fromisoformat(t))
    for k in range(120):
        secs = int(rng.integers(-2_000_000_000, 4_000_000_000))
        off = offsets[k % len(offsets)]
        micro = int(rng.integers(0, 1_000_000)) if k % 3 == 0 else 0
        tz = timezone(timedelta(seconds=off))
        dt = datetime.fromtimestamp(secs, tz) + timedelta(microseconds=micro)
        form = k % 6
        if form == 0:
            text = dt.strftime("%Y-%m-%dT%H:%M:%S.%f") + dt.strftime("%z")[:3] + ":" + dt.strftime("%z")[3:]
            expect(text, datetime.fromisoformat(text))
        elif form == 1:
            text = dt.strftime("%Y-%m-%d %H:%M")
            expect(text, datetime.fromisoformat(text))
        elif form == 2:
            text = dt.strftime("%Y-%m-%dT%H:%M:%S") + ("Z" if off == 0 else dt.strftime("%z"))
            expect(text, datetime.fromisoformat(text))
        elif form == 3:
            text = dt.strftime("%Y/%m/%d %H:%M")
            expect(text, datetime.strptime(text, "%Y/%m/%d %H:%M"))
        elif form == 4:
            text = dt.strftime("%d.%m.%Y %H:%M:%S")
            expect(text, datetime.strptime(text, "%d.%m.%Y %H:%M:%S"))
        else:
            text = dt.strftime("%d.%m.%Y")
            expect(text, datetime.strptime(text, "%d.%m.%Y"))
    columns = []
    for values, fmt in ((["01/02/2024 08:00", "13/02/2024 09:30", "28/12/1999 23:59"], "%d/%m/%Y %H:%M"),
                        (["01/02/2024", "02/13/2024", "12/31/1999"], "%m/%d/%Y"),
                        (["01/02/2024", "03/04/2024"], None),
                        (["13/02/2024", "02/13/2024"], None)):
        parsed = None
        if fmt is not None:
            parsed = [datetime.strptime(v, fmt).replace(tzinfo=timezone.utc).timestamp() for v in values]
        columns.append({"values": values, "format": fmt, "seconds": parsed})
    refused = ["2023-02-29", "2024-04-31", "2024-13-01", "2024-00-10", "2024-01-01T24:00",
               "2024-01-01T10:60", "2024-01-01T10:00:60", "1900-02-29", "0000-01-01", "2024-1-01"]
    for t in refused:
        try:
            datetime.fromisoformat(t)
        except ValueError:
            continue
        raise SystemExit(f"Python accepts {t!r}; it cannot stand as a refused example")
    write("times.json", {
        "source": ("Python " + sys.version.split()[0] + " datetime: ISO forms parsed with "
                   "datetime.fromisoformat, others with datetime.strptime (formats as in 'format'); "
                   "a value without offset is taken as UTC; seconds = aware.timestamp(), "
                   "hour = dt.hour + dt.minute/60 + (dt.second + dt.microsecond/1e6)/3600 (clock as "
                   "written), doy = dt.timetuple().tm_yday; random instants from "
                   "numpy.random.default_rng(31); 'refused' are values fromisoformat raises ValueError on; "
                   "'typed' are whole columns as pandas " + pd.__version__ + " reads them: "
                   "pandas.to_datetime(Series) with its defaults ('default': 'ok' or the error it raises), "
                   "seconds from the same call (or with utc=True, or dayfirst=True, as 'how' says) as "
                   "Timestamp.timestamp() (a naive value taken as UTC), and each value written back by "
                   "datetime.isoformat(timespec=...) of the value as written (date().isoformat() for 'date')"),
        "cases": cases,
        "columns": columns,
        "refused": refused,
        "typed": typed_columns(),
    })


def typed_columns():
    """Whole text columns through pandas.to_datetime: accepted or refused by its defaults,
    the instants, and each value written back in ISO 8601 at each precision."""
    import pandas as pd
    cols = [
        ("iso with Z, seconds", ["2013-01-01T06:00:00Z", "2013-01-01T07:00:00Z", "2013-12-30T23:00:00Z"], {}),
        ("iso, minutes, no zone", ["2024-07-15T00:00", "2024-07-15T01:00", "2024-09-01T23:00"], {}),
        ("dates", ["2007-11-11", "2007-11-09", "2009-12-01"], {}),
        ("dates with a gap", ["2024-07-15", None, "2024-07-17"], {}),
        ("year first, slashes", ["2012/01/01", "2012/01/02", "2015/12/31"], {}),
        ("year first, slashes, minutes", ["2010/01/01 00:00", "2010/01/01 01:00", "2010/12/31 23:00"], {}),
        ("day first, dots", ["15.07.2024 08:30:00", "01.02.2024 10:00:00", "31.12.1999 23:59:59"], {"dayfirst": True}),
        ("one offset", ["2024-07-15T10:00+02:00", "2024-07-15T11:30+02:00", "2024-12-31T23:59+02:00"], {}),
        ("negative offset, seconds", ["2024-07-15T10:00:00-05:30", "2024-07-15T10:00:15-05:30"], {}),
        ("offsets differ by row", ["2024-03-30T12:00+01:00", "2024-03-31T12:00+02:00", "2024-10-27T12:00+01:00"], {"utc": True}),
        ("fractions of a second", ["2024-07-15T10:00:00.25", "2024-07-15T10:00:01.5", "2024-07-15T10:00:02"], {"format": "ISO8601"}),
        ("slash dates settled day first", ["01/02/2024 08:00", "13/02/2024 09:30", "28/12/1999 23:59"], {"dayfirst": True}),
        ("slash dates both ways", ["01/02/2024", "03/04/2024"], {}),
        ("mixed forms", ["2024-07-15", "2024/07/16", "2024-07-17"], None),
        ("with and without an offset", ["2024-07-15T10:00", "2024-07-15T11:00Z"], None),
        ("a date and a date-time", ["2020-01-01", "2020-01-01 03:00"], {"format": "ISO8601"}),
        ("dates and a word", ["2024-07-15", "2024-07-16", "soon"], None),
    ]
    out = []
    for name, values, how in cols:
        series = pd.Series(values, dtype="object")
        try:
            pd.to_datetime(series)
            default = "ok"
        except (ValueError, TypeError) as e:
            default = type(e).__name__ + ": " + str(e).split("\n")[0][:120]
        seconds = iso = None
        if how is not None:
            parsed = pd.to_datetime(series, **how)
            seconds = [None if pd.isna(t) else t.timestamp() for t in parsed]
            written = []
            for v in values:
                if v is None:
                    written.append(None)
                    continue
                dt = pd.to_datetime(v, **{k: w for k, w in how.items() if k != "utc"}).to_pydatetime()
                written.append({
                    "date": dt.date().isoformat(),
                    "minutes": dt.isoformat(timespec="minutes"),
                    "seconds": dt.isoformat(timespec="seconds"),
                    "microseconds": dt.isoformat(timespec="microseconds"),
                })
            iso = written
        out.append({"name": name, "values": values, "how": how, "default": default, "seconds": seconds, "iso": iso})
    return out


def ks_fixture():
    """Two-sample KS (scipy.stats.ks_2samp, method='auto') and Cohen's d (NumPy)."""
    rng = np.random.default_rng(41)

    def r3(x):
        return np.round(x, 3)

    pairs = [
        ("normal 8 vs 8, shift 1", r3(rng.normal(0, 1, 8)), r3(rng.normal(1, 1, 8))),
        ("normal 7 vs 13, shift 0.5", r3(rng.normal(0, 1, 7)), r3(rng.normal(0.5, 1, 13))),
        ("integers 0-9, 50 vs 30 (ties)", rng.integers(0, 10, 50).astype(float), rng.integers(2, 12, 30).astype(float)),
        ("normal 200 vs 150, shift 0.2", r3(rng.normal(0, 1, 200)), r3(rng.normal(0.2, 1, 150))),
        ("same distribution 1000 vs 1000", r3(rng.normal(0, 1, 1000)), r3(rng.normal(0, 1, 1000))),
        ("exponential 3000 vs 20", r3(rng.exponential(1, 3000)), r3(rng.exponential(1.6, 20))),
        ("levels 0-2, 40 vs 60 (heavy ties)", rng.integers(0, 3, 40).astype(float), rng.integers(0, 3, 60).astype(float)),
        ("identical samples", np.array([1.0, 2.0, 2.0, 3.0, 5.0]), np.array([5.0, 3.0, 2.0, 2.0, 1.0])),
        ("fully separated 10 vs 12", r3(rng.uniform(0, 1, 10)), r3(rng.uniform(2, 3, 12))),
        ("normal 10001 vs 40, shift 0.6 (asymptotic, N <= 140)", r3(rng.normal(0, 1, 10001)), r3(rng.normal(0.6, 1, 40))),
        ("normal 12000 vs 500, shift 0.15 (asymptotic)", r3(rng.normal(0, 1, 12000)), r3(rng.normal(0.15, 1, 500))),
        ("same distribution 10100 vs 3000 (asymptotic, small D)", r3(rng.normal(0, 1, 10100)), r3(rng.normal(0, 1, 3000))),
        ("integers 0-5, 10500 vs 10500 (asymptotic, ties)", rng.integers(0, 6, 10500).astype(float), rng.integers(0, 6, 10500).astype(float)),
        ("normal 9000 vs 7000, shift 0.05", r3(rng.normal(0, 1, 9000)), r3(rng.normal(0.05, 1, 7000))),
    ]
    cases = []
    for label, a, b in pairs:
        r = ks_2samp(a, b, method="auto")
        na, nb = len(a), len(b)
        sp = np.sqrt(((na - 1) * a.var(ddof=1) + (nb - 1) * b.var(ddof=1)) / (na + nb - 2))
        cases.append({
            "label": label,
            "a": floats(a),
            "b": floats(b),
            "statistic": float(r.statistic),
            "pvalue": float(r.pvalue),
            "exact": bool(max(na, nb) <= 10000),
            "smd": float((a.mean() - b.mean()) / sp) if sp > 0 else None,
        })
    grid = []
    for n in (5, 30, 100, 140, 141, 500, 5000, 50000, 200000):
        for nx2 in (0.3, 0.7, 1.0, 2.0, 3.0, 5.0, 20.0, 100.0, 400.0):
            x = float(np.sqrt(nx2 / n))
            if x < 1:
                grid.append({"n": n, "x": x, "sf": float(kstwo.sf(x, n))})
        for x in (0.6 / n, 0.9 / n, 0.55, 1 - 0.5 / n):
            grid.append({"n": n, "x": float(x), "sf": float(kstwo.sf(x, n))})
    one_sided = []
    for n in (1, 2, 10, 141, 1000, 20000, 200000):
        for nx2 in (0.5, 2.2, 10.0, 50.0, 300.0):
            x = float(np.sqrt(nx2 / n))
            if x < 1:
                one_sided.append({"n": n, "x": x, "sf": float(smirnov(n, x))})
    write("ks.json", {
        "source": (f"{lib('scipy')}: scipy.stats.ks_2samp(a, b, alternative='two-sided', method='auto') "
                   "statistic and pvalue (exact when max(len(a), len(b)) <= 10000); "
                   "kstwo_sf = scipy.stats.kstwo.sf(x, n); smirnov = scipy.special.smirnov(n, x); "
                   f"smd with {lib('numpy')}: (a.mean() - b.mean()) / sqrt(((na-1) a.var(ddof=1) + "
                   "(nb-1) b.var(ddof=1)) / (na+nb-2)) (Cohen's d, pooled sd); samples from "
                   "numpy.random.default_rng(41), rounded to 3 decimals"),
        "cases": cases,
        "kstwo_sf": grid,
        "smirnov": one_sided,
    })


def chi2_fixture():
    """Chi-squared tail (scipy.stats.chi2.sf) and Pearson's test of independence on 2 x k
    tables (scipy.stats.chi2_contingency, correction=False), with the total variation
    distance and the most over-represented level computed with NumPy."""
    tail = []
    for dof in (1, 2, 3, 4, 5, 7, 10, 19, 30, 99, 100, 101, 500, 1000, 5000, 20000):
        xs = [dof * f for f in (0.01, 0.2, 0.5, 0.9, 1.0, 1.1, 1.5, 2.0, 3.0, 5.0)]
        xs += [dof + 2.0, dof + 1.999]  # either side of the switch at x/2 = dof/2 + 1
        if dof <= 10:
            xs += [50.0, 200.0, 700.0, 1300.0]  # tails down to about 1e-280
        for x in xs:
            tail.append({"x": float(x), "dof": dof, "sf": float(chi2.sf(x, dof))})
    rng = np.random.default_rng(53)

    def draw(n_in, n_out, p_in, p_out):
        return rng.multinomial(n_in, p_in).tolist(), rng.multinomial(n_out, p_out).tolist()

    many = rng.dirichlet(np.ones(60))
    sparse = rng.dirichlet(np.full(200, 0.3))
    tables = [
        ("2 levels, small", [3, 1], [1, 3]),
        ("2 levels, hand-checkable", [10, 20], [30, 40]),
        ("3 levels, zero cells on one side", [0, 2, 5], [4, 1, 0]),
        ("4 levels, one with no row on either side (dropped)", [5, 0, 7, 2], [3, 0, 1, 9]),
        ("identical shares", [2, 4], [3, 6]),
        ("one level with rows (dof 0)", [0, 4, 0], [0, 9, 0]),
        ("tiny p-value", [900, 100], [100, 900]),
        ("p-value below the smallest double", [5000, 0], [0, 5000]),
        ("5 levels, large counts",
         *draw(20000, 50000, [0.3, 0.25, 0.2, 0.15, 0.1], [0.28, 0.26, 0.2, 0.16, 0.1])),
        ("60 levels, 800 vs 5000", *draw(800, 5000, many[::-1], many)),
        ("200 levels, sparse, 300 vs 2000", *draw(300, 2000, sparse, sparse)),
        ("12 levels, group from 3 levels", *draw(400, 3000, [0.0] * 9 + [0.5, 0.3, 0.2], [1 / 12] * 12)),
    ]
    cases = []
    for label, a, b in tables:
        a, b = np.array(a), np.array(b)
        keep = (a + b) > 0
        res = chi2_contingency(np.array([a[keep], b[keep]]), correction=False)
        pa, pb = a / a.sum(), b / b.sum()
        diff = pa - pb
        top = int(np.argmax(diff)) if diff.max() > 0 else None
        cases.append({
            "label": label,
            "in": [int(x) for x in a],
            "out": [int(x) for x in b],
            "statistic": float(res.statistic),
            "pvalue": float(res.pvalue),
            "dof": int(res.dof),
            "min_expected": float(res.expected_freq.min()),
            "tv": float(0.5 * np.abs(diff).sum()),
            "top": top,
            "top_share_in": float(pa[top]) if top is not None else None,
            "top_share_out": float(pb[top]) if top is not None else None,
        })
    write("chi2.json", {
        "source": (f"{lib('scipy')}: sf = scipy.stats.chi2.sf(x, dof); cases: "
                   "scipy.stats.chi2_contingency([in, out] with levels of no row on either side "
                   "dropped, correction=False) statistic, pvalue, dof, expected_freq.min(); "
                   f"{lib('numpy')}: tv = 0.5 * sum |in/in.sum() - out/out.sum()|, top = "
                   "argmax of that difference (None when no level is larger in the group); "
                   "random tables numpy.random.default_rng(53) multinomial and dirichlet"),
        "sf": tail,
        "cases": cases,
    })


def bottleneck_fixture():
    rng = np.random.default_rng(31)

    def diagram(k, grid):
        birth = rng.uniform(0.0, 10.0, size=k)
        death = birth + rng.exponential(1.5, size=k)
        d = np.stack([birth, death], axis=1) if k else np.zeros((0, 2))
        # Integer grids give many ties among candidate distances.
        return np.round(d) if grid else d

    cases = []
    for k1, k2, grid in ((0, 4, False), (3, 3, False), (5, 8, False), (1, 1, False), (20, 25, False),
                         (60, 50, False), (150, 120, False), (12, 12, True), (40, 30, True)):
        a, b = diagram(k1, grid), diagram(k2, grid)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            dist = persim.bottleneck(a, b)
        cases.append({"a": rows(a), "b": rows(b), "grid": grid, "distance": float(dist)})
    write("bottleneck.json", {
        "source": (f"{lib('persim')} with {lib('numpy')}: persim.bottleneck(a, b), exact bottleneck distance "
                   "(binary search over candidate distances with a maximum bipartite matching), L-infinity "
                   "between points, (death - birth) / 2 to the diagonal; diagrams drawn with "
                   "numpy.random.default_rng(31): birth uniform on [0, 10], death = birth + exponential(1.5), "
                   "rounded to integers where grid is true"),
        "cases": cases,
    })


def neighbours_fixture(iris_z):
    """k nearest distances with the query points being the fitted points, so each
    point's first neighbour is itself (distance 0). From them: distance to a measure
    (Chazal, Cohen-Steiner, Merigot 2011) d(x) = sqrt(mean of the k squared distances),
    and the k-th distance."""
    rng = np.random.default_rng(43)
    blob = rng.normal(size=(300, 2))
    # Ten exact duplicates, so that ties at distance 0 are covered.
    blob = np.vstack([blob, blob[:10]])
    cases = []
    for label, pts in [("iris z-scored (StandardScaler)", iris_z),
                       ("numpy.random.default_rng(43) normal 300 x 2, rows 0-9 repeated", blob)]:
        for k in (1, 2, 5, 16):
            dist, _ = NearestNeighbors(n_neighbors=k).fit(pts).kneighbors(pts)
            cases.append({
                "label": label,
                "points": rows(pts),
                "k": k,
                "dtm": floats(np.sqrt((dist ** 2).mean(axis=1))),
                "kth": floats(dist[:, -1]),
            })
    write("neighbours.json", {
        "source": (f"{lib('scikit-learn')}: sklearn.neighbors.NearestNeighbors(n_neighbors=k).fit(X).kneighbors(X) "
                   "(the query points are the fitted points, so each point is its own first neighbour); "
                   f"{lib('numpy')}: dtm = sqrt(mean(dist ** 2, axis=1)), kth = dist[:, -1]"),
        "cases": cases,
    })


def denoise_fixture():
    """The rows the denoising stage sets aside on palmerpenguins' penguins.csv (the copy in
    fixtures/): the four body measurements, rows with an 'NA' in any of them left out,
    z-scored with the population spread (StandardScaler); each row's distance to a measure
    (Chazal, Cohen-Steiner, Merigot 2011) or k-th neighbour distance from scikit-learn's
    NearestNeighbors (each row its own first neighbour); the rows whose value lies
    strictly above numpy.quantile(values, q) (linear interpolation) are set aside."""
    with open(os.path.join(OUT, "penguins.csv"), encoding="utf-8", newline="") as f:
        recs = list(csv.reader(f))
    header, body = recs[0], recs[1:]
    cols = ["bill_length_mm", "bill_depth_mm", "flipper_length_mm", "body_mass_g"]
    idx = [header.index(c) for c in cols]
    keep = [i for i, r in enumerate(body) if all(r[j] != "NA" for j in idx)]
    x = np.array([[float(body[i][j]) for j in idx] for i in keep])
    z = zscore(x)
    cases = []
    for measure in ("distanceToMeasure", "neighbourDistance"):
        for k, q in ((5, 0.9), (10, 0.95), (20, 0.8)):
            dist, _ = NearestNeighbors(n_neighbors=k).fit(z).kneighbors(z)
            v = np.sqrt((dist ** 2).mean(axis=1)) if measure == "distanceToMeasure" else dist[:, -1]
            cut = float(np.quantile(v, q))
            out = [keep[i] + 1 for i in range(len(keep)) if v[i] > cut]
            gap = float(np.min(np.abs(v - cut)))
            cases.append({"measure": measure, "k": k, "quantile": q, "threshold": cut,
                          "nearest_to_threshold": gap, "set_aside_data_rows": out})
    write("denoise.json", {
        "source": (f"palmerpenguins {V['palmerpenguins']} penguins.csv (fixtures copy), columns {cols}; "
                   f"{lib('scikit-learn')}: NearestNeighbors(n_neighbors=k).fit(Z).kneighbors(Z) on Z z-scored "
                   f"(population spread); {lib('numpy')}: dtm = sqrt(mean(dist ** 2, axis=1)), kth = dist[:, -1], "
                   "threshold = numpy.quantile(values, q); rows with value > threshold set aside (1-based data rows)"),
        "columns": cols,
        "cases": cases,
    })


def rank_intervals(n, g):
    """The uniform cover of [0, 1] with the same floating-point steps as the engine's
    cover::intervals: len = 1 / (n - (n - 1) g), start i * len * (1 - g), end start + len,
    the last end 1 exactly."""
    length = 1.0 / (n - (n - 1) * g)
    step = length * (1 - g)
    out = []
    for i in range(n):
        a = 0.0 if i == 0 else 0.0 + i * step
        b = 1.0 if i == n - 1 else a + length
        out.append((a, b))
    return out


def quantiles_fixture():
    """Balanced cover edges (numpy.quantile, method 'linear'), how many values each
    closed interval holds, numpy.histogram counts and edges, and node statistics
    (numpy.median, numpy.std with ddof 0, share above a threshold)."""
    x, target, _, _ = iris()
    rng = np.random.default_rng(47)
    samples = [
        ("iris petal length (cm), many ties", x[:, 2]),
        ("numpy.random.default_rng(47) lognormal 501", rng.lognormal(size=501)),
        ("eight values", np.array([3.0, 1.0, 4.0, 1.0, 5.0, 9.0, 2.0, 6.0])),
    ]
    covers = []
    for label, v in samples:
        for n, g in ((1, 0.0), (4, 0.25), (10, 0.3), (7, 0.5), (5, 0.0)):
            ps = rank_intervals(n, g)
            lo = np.quantile(v, [a for a, _ in ps])
            hi = np.quantile(v, [b for _, b in ps])
            counts = [int(np.sum((v >= a) & (v <= b))) for a, b in zip(lo, hi)]
            covers.append({"label": label, "values": floats(v), "intervals": n, "overlap": g,
                           "p": [a for a, _ in ps], "q": [b for _, b in ps],
                           "lo": floats(lo), "hi": floats(hi), "rows": counts})
    histograms = []
    for label, v in samples + [("constant", np.full(5, 2.5))]:
        for bins in (1, 7, 20):
            counts, edges = np.histogram(v, bins=bins)
            histograms.append({"label": label, "values": floats(v), "bins": bins,
                               "counts": [int(c) for c in counts], "edges": floats(edges)})
    stats = []
    for species in range(3):
        for col in range(4):
            v = x[target == species, col]
            t = float(np.mean(x[:, col]))
            stats.append({"label": f"iris species {species} column {col}", "values": floats(v),
                          "mean": float(np.mean(v)), "median": float(np.median(v)),
                          "spread": float(np.std(v)), "threshold": t,
                          "shareAbove": float(np.mean(v > t))})
    write("quantiles.json", {
        "source": (f"{lib('numpy')}: numpy.quantile(values, p) (method 'linear') at the rank-space cover "
                   "p_i = i L (1 - g), q_i = p_i + L, L = 1 / (n - (n - 1) g); rows = count of a <= v <= b; "
                   "numpy.histogram(values, bins); numpy.median, numpy.std (ddof 0), numpy.mean(v > threshold); "
                   "iris from sklearn.datasets.load_iris"),
        "covers": covers,
        "histograms": histograms,
        "stats": stats,
    })


def align_fixture():
    """Nearest-in-time matching per group (pandas.merge_asof) and linear interpolation in
    time per group (numpy.interp with left=right=NaN: missing outside the model's range)."""
    import pandas as pd

    def vec(a):
        return [float(x) for x in a]

    rng = np.random.default_rng(41)
    # Integer times so that exact matches, equal distances (ties) and equal model times occur.
    left_t = np.sort(rng.integers(0, 120, size=80)).astype(float)
    left_site = rng.choice(["a", "b", "c"], size=80)
    right_t = (rng.integers(0, 30, size=40) * 4).astype(float)
    right_site = rng.choice(["a", "b"], size=40)
    right_v = np.round(rng.normal(10.0, 3.0, size=40), 6)
    order = np.argsort(right_t, kind="stable")
    right_t, right_site, right_v = right_t[order], right_site[order], right_v[order]
    left = pd.DataFrame({"t": left_t, "site": left_site})
    right = pd.DataFrame({"t": right_t, "site": right_site, "ridx": np.arange(40), "v": right_v})
    nearest = []
    for tol in [None, 3.0, 0.0, 1.5]:
        kw = {} if tol is None else {"tolerance": tol}
        for by in [True, False]:
            m = pd.merge_asof(left, right.drop(columns=[] if by else ["site"]), on="t", by="site" if by else None,
                              direction="nearest", **kw)
            nearest.append({
                "tolerance": tol,
                "by": by,
                "ridx": [None if np.isnan(x) else int(x) for x in m["ridx"].to_numpy(dtype=float)],
            })
    linear = []
    # Per site, model rows with distinct times (numpy.interp needs increasing xp).
    for site in ["a", "b"]:
        sel = right[right["site"] == site].drop_duplicates("t", keep="first")
        lsel = left[left["site"] == site]
        y = np.interp(lsel["t"].to_numpy(), sel["t"].to_numpy(), sel["v"].to_numpy(), left=np.nan, right=np.nan)
        y_edge = np.interp(lsel["t"].to_numpy(), sel["t"].to_numpy(), sel["v"].to_numpy())
        linear.append({"site": site, "xp": vec(sel["t"].to_numpy()), "fp": vec(sel["v"].to_numpy()),
                       "x": vec(lsel["t"].to_numpy()), "y": [None if np.isnan(v) else float(v) for v in y],
                       "yEdge": vec(y_edge)})
    write("align.json", {
        "source": (f"pandas {pd.__version__}: pandas.merge_asof(left, right, on='t', by='site' or none, "
                   f"direction='nearest', tolerance=...) (ridx: the matched right row); {lib('numpy')}: "
                   "numpy.interp(x, xp, fp, left=nan, right=nan) per site, and without left/right (yEdge, "
                   "numpy's edge repetition); times drawn with numpy.random.default_rng(41)"),
        "left": {"t": vec(left_t), "site": [str(x) for x in left_site]},
        "right": {"t": vec(right_t), "site": [str(x) for x in right_site], "v": vec(right_v)},
        "nearest": nearest,
        "linear": linear,
    })


def xlsx_fixture():
    """A small workbook written by openpyxl (numbers, text, an empty cell, date-times, a
    second sheet), and the values written, for the spreadsheet reader's test."""
    import zipfile
    import openpyxl
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "stations"
    header = ["when", "station", "water_temp_c", "flow"]
    data = [
        [datetime(2024, 7, 15, 8, 30, 0), "up", 18.25, 3],
        [datetime(2024, 7, 15, 9, 0, 0), "up", 18.5, None],
        [datetime(2024, 7, 16, 0, 0, 0), "down", -0.125, 12],
        [datetime(1999, 12, 31, 23, 59, 59), "down", 1e-3, 7],
    ]
    ws.append(header)
    for r in data:
        ws.append(r)
    ws2 = wb.create_sheet("notes")
    ws2.append(["k", "v"])
    ws2.append(["a", 1.5])
    wb.properties.created = datetime(2024, 1, 1)
    wb.properties.modified = datetime(2024, 1, 1)
    buf = io.BytesIO()
    wb.save(buf)
    # Rewrite the archive with fixed entry times so the file is the same on every run.
    src = zipfile.ZipFile(io.BytesIO(buf.getvalue()))
    path = os.path.join(OUT, "sheet.xlsx")
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as out:
        for info in src.infolist():
            fixed = zipfile.ZipInfo(info.filename, date_time=(2024, 1, 1, 0, 0, 0))
            fixed.compress_type = zipfile.ZIP_DEFLATED
            body = src.read(info.filename)
            if info.filename == "docProps/core.xml":
                # openpyxl stamps the save time as "modified"; fix it too.
                body = re.sub(rb"(<dcterms:modified[^>]*>)[^<]*", rb"\g<1>2024-01-01T00:00:00Z", body)
            out.writestr(fixed, body)
    write("sheet.json", {
        "source": f"openpyxl {openpyxl.__version__}: Workbook(), ws.append(rows), wb.save(); sheet.xlsx holds these values",
        "sheets": ["stations", "notes"],
        "header": header,
        "when_iso": [r[0].isoformat() for r in data],
        "when_seconds": [r[0].replace(tzinfo=timezone.utc).timestamp() for r in data],
        "station": [r[1] for r in data],
        "water_temp_c": [r[2] for r in data],
        "flow": [r[3] for r in data],
    })


def main():
    os.makedirs(OUT, exist_ok=True)
    x, target, names, columns = iris()
    iris_z = zscore(x)
    pca_fixture("pca_iris.json", x, columns, "iris (sklearn.datasets.load_iris)")
    wx, wcols = wine()
    pca_fixture("pca_wine.json", wx, wcols, "wine (sklearn.datasets.load_wine)")
    kde_fixture(iris_z)
    dbscan_fixture(iris_z)
    linkage_fixture(iris_z)
    graphs_fixture()
    eccentricity_fixture(iris_z)
    iris_species_fixture(x, target, names, columns)
    penguins_fixture()
    times_fixture()
    ks_fixture()
    chi2_fixture()
    bottleneck_fixture()
    align_fixture()
    xlsx_fixture()
    neighbours_fixture(iris_z)
    quantiles_fixture()
    denoise_fixture()


if __name__ == "__main__":
    main()
