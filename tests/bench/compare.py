"""Compares the engine's graph (graph JSON from `nervure --out`) with the scripting
pipeline's nodes (pipeline.py --out) on the same data and settings.

DBSCAN (Ester et al. 1996) fixes which rows are core and how core rows group into
clusters; a border row (not core, within eps of a core row) joins one of the clusters
whose core rows reach it, and which one depends on the visiting order. So, per cover
element:
  - the element's rows must be the same (same cover);
  - the clusters restricted to core rows must be the same sets (exactly);
  - every other row must be in a cluster in both or in none (noise in both);
  - a border row may sit in different clusters only if it is within eps of core rows of
    two or more clusters ("contested"): that is computed here, from the points, with
    scikit-learn's radius neighbours, and counted.

    python compare.py ENGINE_GRAPH.json PIPELINE.json DATA.csv SETTINGS.json

Prints one JSON line; exits 1 on any difference not allowed above.
"""
import json
import sys

import numpy as np
import pandas as pd
from sklearn.neighbors import NearestNeighbors
from sklearn.preprocessing import StandardScaler


def main():
    eng_path, py_path, data, settings = sys.argv[1:5]
    eng = json.load(open(eng_path))
    py = json.load(open(py_path))
    s = json.load(open(settings))
    eps = s["clustering"]["eps"]

    # Points by 1-based data row, for the contested-border check.
    df = pd.read_csv(data, usecols=s["columns"])
    x = df[s["columns"]].to_numpy(dtype=np.float64)
    keep = np.isfinite(x).all(axis=1)
    for f in s.get("missing", {}).get("fillValues", []):
        keep &= ~(x == f).any(axis=1)
    rows = np.nonzero(keep)[0] + 1
    pts = StandardScaler().fit_transform(x[keep]) if s.get("scaling", "zscore") == "zscore" else x[keep]
    point_of_row = {int(r): i for i, r in enumerate(rows)}

    def by_element(nodes):
        out = {}
        for n in nodes:
            out.setdefault(n["element"], []).append(n["rows"])
        return out

    eng_el, py_el = by_element(eng["nodes"]), by_element(py["nodes"])
    report = {"elements": len(py["elements"]), "coreRows": 0, "borderRows": 0, "contestedBorderRows": 0,
              "borderRowsInOtherCluster": 0, "problems": []}
    for e, members in enumerate(py["elements"]):
        core = set(py["cores"][e])
        report["coreRows"] += len(core)
        a = eng_el.get(e, [])
        b = py_el.get(e, [])
        # Clusters as sets of core rows, and each row's cluster in each result.
        core_a = sorted(sorted(set(c) & core) for c in a)
        core_b = sorted(sorted(set(c) & core) for c in b)
        if core_a != core_b:
            report["problems"].append(f"element {e}: core rows group differently ({len(a)} vs {len(b)} clusters)")
            continue
        name = {tuple(c): k for k, c in enumerate(core_b)}
        label_a, label_b = {}, {}
        for c in a:
            k = name[tuple(sorted(set(c) & core))]
            for r in c:
                label_a[r] = k
        for c in b:
            k = name[tuple(sorted(set(c) & core))]
            for r in c:
                label_b[r] = k
        if set(label_a) != set(label_b):
            diff = set(label_a) ^ set(label_b)
            report["problems"].append(f"element {e}: {len(diff)} rows in a cluster in one result and noise in the other, e.g. data row {min(diff)}")
        border = [r for r in label_b if r not in core]
        report["borderRows"] += len(border)
        if not border:
            continue
        core_list = sorted(core)
        nn = NearestNeighbors(radius=eps).fit(pts[[point_of_row[r] for r in core_list]])
        near = nn.radius_neighbors(pts[[point_of_row[r] for r in border]], return_distance=False)
        for r, idx in zip(border, near):
            clusters = {label_b[core_list[i]] for i in idx}
            contested = len(clusters) >= 2
            report["contestedBorderRows"] += contested
            if label_a.get(r) != label_b.get(r):
                report["borderRowsInOtherCluster"] += 1
                if not contested:
                    report["problems"].append(f"element {e}: border data row {r} is in different clusters but only one cluster's core rows reach it")

    report["ok"] = not report["problems"]
    report["problems"] = report["problems"][:10]
    print(json.dumps(report))
    return 0 if report["ok"] else 1


if __name__ == "__main__":
    sys.exit(main())
