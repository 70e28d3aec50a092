"""The scripting pipeline the benchmark compares the engine with: the same settings
document run with general-purpose libraries only (pandas, scikit-learn, NumPy, NetworkX).

What it does, stage by stage, timed:
  read     pandas.read_csv of the whole file
  filter   rows with a missing value (empty cell, NaN, or one of missing.fillValues) in a
           chosen column left out; StandardScaler (z-score, population sd, as the engine);
           PCA scores on the chosen component (sign fixed so the largest-magnitude loading
           is positive, the engine's convention)
  cover    the uniform interval cover exactly as src/cover.rs defines it (Singh, Mémoli,
           Carlsson 2007): L = (hi - lo) / (n - (n - 1) g), interval i = [lo + i L (1 - g),
           lo + i L (1 - g) + L], the last one ending at hi
  clusters sklearn.cluster.DBSCAN on each cover element
  graph    networkx.Graph: one node per cluster, an edge where two share >= minShared rows;
           components and cycle rank (E - V + C)

Not here: other lenses or clusterings than the benchmark's (principal component, DBSCAN).

    python pipeline.py DATA.csv SETTINGS.json [--out RESULT.json]

Prints one JSON line of seconds per stage; --out writes the nodes (element, 1-based data
rows, and per element the core rows) for compare.py.
"""
import argparse
import json
import sys
import time

import networkx as nx
import numpy as np
import pandas as pd
from sklearn.cluster import DBSCAN
from sklearn.decomposition import PCA
from sklearn.preprocessing import StandardScaler


def intervals(lo, hi, n, g):
    """src/cover.rs `intervals`, line for line."""
    if hi == lo:
        return [(lo, lo)]
    length = (hi - lo) / (n - (n - 1) * g)
    step = length * (1.0 - g)
    out = []
    for i in range(n):
        a = lo if i == 0 else lo + i * step
        b = hi if i == n - 1 else a + length
        out.append((a, b))
    return out


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("data")
    ap.add_argument("settings")
    ap.add_argument("--out")
    args = ap.parse_args()
    s = json.load(open(args.settings))
    cols = s["columns"]
    fills = s.get("missing", {}).get("fillValues", [])
    assert s["lens"]["kind"] == "principal" and s["clustering"]["kind"] == "dbscan", "the benchmark's settings only"
    times = {}

    t = time.perf_counter()
    df = pd.read_csv(args.data)
    times["read"] = time.perf_counter() - t

    t = time.perf_counter()
    x = df[cols].to_numpy(dtype=np.float64)
    keep = np.isfinite(x).all(axis=1)
    for f in fills:
        keep &= ~(x == f).any(axis=1)
    rows = np.nonzero(keep)[0]
    x = x[keep]
    if s.get("scaling", "zscore") == "zscore":
        x = StandardScaler().fit_transform(x)
    comp = s["lens"].get("component", 1)
    pca = PCA(n_components=comp, svd_solver="full").fit(x)
    v = pca.components_[comp - 1]
    if v[np.argmax(np.abs(v))] < 0:
        v = -v
    lens = (x - x.mean(axis=0)) @ v
    times["filter"] = time.perf_counter() - t

    t = time.perf_counter()
    n, g = s["cover"]["intervals"], s["cover"]["overlap"]
    lo, hi = float(lens.min()), float(lens.max())
    ivs = intervals(lo, hi, n, g)
    elements = [np.nonzero((lens >= a) & (lens <= b))[0] for (a, b) in ivs]
    eps, min_pts = s["clustering"]["eps"], s["clustering"]["minPoints"]
    nodes = []  # (element, point indices)
    cores = []  # per element: point indices of core points
    for e, members in enumerate(elements):
        if len(members) == 0:
            cores.append(np.array([], dtype=np.int64))
            continue
        db = DBSCAN(eps=eps, min_samples=min_pts).fit(x[members])
        cores.append(members[db.core_sample_indices_])
        labels = db.labels_
        for c in range(labels.max() + 1):
            nodes.append((e, members[labels == c]))
    times["clusters"] = time.perf_counter() - t

    t = time.perf_counter()
    min_shared = s.get("edges", {}).get("minShared", 1)
    graph = nx.Graph()
    graph.add_nodes_from(range(len(nodes)))
    # Nodes of elements i and j can share rows only when the intervals overlap: pair
    # nodes of nearby elements by their shared row count.
    by_element = {}
    for k, (e, m) in enumerate(nodes):
        by_element.setdefault(e, []).append(k)
    for k, (e, m) in enumerate(nodes):
        for e2 in range(e, len(ivs)):
            if e2 > e and ivs[e2][0] > ivs[e][1]:
                break
            for k2 in by_element.get(e2, []):
                if k2 <= k:
                    continue
                shared = len(np.intersect1d(m, nodes[k2][1], assume_unique=True))
                if shared >= min_shared:
                    graph.add_edge(k, k2, shared=shared)
    comps = nx.number_connected_components(graph)
    loops = graph.number_of_edges() - graph.number_of_nodes() + comps
    times["graph"] = time.perf_counter() - t
    times["total"] = sum(times.values())
    summary = {"rows": int(len(rows)), "nodes": graph.number_of_nodes(), "edges": graph.number_of_edges(), "components": comps, "loops": loops}
    print(json.dumps({"times": times, "summary": summary}))
    if args.out:
        with open(args.out, "w") as f:
            json.dump({
                "nodes": [{"element": e, "rows": (rows[m] + 1).tolist()} for e, m in nodes],
                "cores": [(rows[c] + 1).tolist() for c in cores],
                "elements": [(rows[m] + 1).tolist() for m in elements],
            }, f)


if __name__ == "__main__":
    sys.exit(main())
