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
import sys
import warnings

import networkx
import numpy as np
import palmerpenguins
import persim
import scipy
import sklearn
from scipy.cluster.hierarchy import linkage
from scipy.spatial.distance import cdist
from scipy.stats import gaussian_kde
from sklearn.cluster import DBSCAN
from sklearn.datasets import load_iris, load_wine, make_blobs
from sklearn.decomposition import PCA
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
    bottleneck_fixture()


if __name__ == "__main__":
    main()
