"""Benchmark of the cluster run (nervure.dask) against the single-process runner on
generated tables: seconds per stage, peak memory of each worker process and of the
runner, and the ratio of wall times measured side by side in one run. Run it through
tests/bench-dask.sh (which builds what it needs); figures go to docs/dask.md.

    python tests/bench_dask.py --rows 10000000 [--rows 30000000] [--workers 2] [--dir /tmp/...]

The table (synthetic, known topology, invented for measuring only): a noisy ring in the
first two of five number columns, three columns of noise, and a station name; written
once as Parquet (one file per million rows, the cluster run's input) and as CSV (the
runner's input). Settings: the five columns, z-score, principal-component filter, 24
intervals at 30 % overlap, DBSCAN. Machines here are small and shared: the ratio, not the
seconds, is the figure to compare.
"""

from __future__ import annotations

import argparse
import json
import logging
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

CHUNK = 1_000_000
SETTINGS = {
    "version": 3, "columns": ["a", "b", "c", "d", "e"], "scaling": "zscore",
    "missing": {"fillValues": []}, "lens": {"kind": "principal", "component": 1},
    "cover": {"intervals": 24, "overlap": 0.3}, "clustering": {"kind": "dbscan", "eps": 0.12, "minPoints": 8},
    "edges": {"minShared": 1}, "seed": 1,
}


def generate(rows: int, folder: Path) -> tuple[Path, Path]:
    """The table as a Parquet folder and a CSV file (written once per size)."""
    import pandas as pd

    pq, csv = folder / f"ring-{rows}.parquet", folder / f"ring-{rows}.csv"
    if pq.exists() and csv.exists():
        return pq, csv
    pq.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(rows)
    stations = np.array(["north", "south", "east", "west", "ridge", "coast"])
    with open(csv, "w") as f:
        f.write("a,b,c,d,e,station\n")
        for k, start in enumerate(range(0, rows, CHUNK)):
            n = min(CHUNK, rows - start)
            t = rng.uniform(0, 2 * np.pi, n)
            df = pd.DataFrame({
                "a": 10 * np.cos(t) + rng.normal(0, 0.4, n), "b": 10 * np.sin(t) + rng.normal(0, 0.4, n),
                "c": rng.normal(0, 1, n), "d": rng.normal(0, 1, n), "e": rng.normal(0, 1, n),
                "station": stations[rng.integers(0, len(stations), n)],
            })
            df.to_parquet(pq / f"part-{k:05d}.parquet", index=False)
            # Shortest round-trip digits: the CSV holds the Parquet file's values exactly.
            df.to_csv(f, header=False, index=False)
    return pq, csv


def runner_run(runner: str, csv: Path, settings: Path, out: Path) -> tuple[float, int]:
    """Wall seconds and peak memory (bytes) of the runner on the CSV file, measured by a
    small parent process of its own (this process's children include the cluster's)."""
    watch = ("import resource, subprocess, sys, time; t = time.perf_counter(); subprocess.run(sys.argv[1:], check=True); "
             "print(time.perf_counter() - t, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss * 1024)")
    got = subprocess.run([sys.executable, "-c", watch, runner, "graph", str(csv), "--settings", str(settings), "--out", str(out),
                          "--no-rows", "--quiet"], check=True, capture_output=True, text=True)
    wall, peak = got.stdout.split()
    return float(wall), int(peak)


def cluster_run(pq: Path, settings_path: Path, out: Path, workers: int, memory: str) -> tuple[float, dict, list[int]]:
    """Wall seconds, seconds per stage and each worker's peak memory (bytes) of the
    cluster run on a fresh LocalCluster of ``workers`` worker processes."""
    from distributed import Client, LocalCluster

    import nervure
    import nervure.dask

    logging.getLogger("distributed.shuffle").setLevel(logging.ERROR)
    with LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, memory_limit=memory, dashboard_address=None) as cluster, \
            Client(cluster) as client:
        client.wait_for_workers(workers)
        t = time.perf_counter()
        g = nervure.dask.graph(str(pq), nervure.Settings.load(settings_path), client=client, rows=False, out=out, name="ring.csv",
                               progress=lambda stage: print(f"    {stage} …", file=sys.stderr, flush=True))
        wall = time.perf_counter() - t
        peaks = client.run(lambda: resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024)
    return wall, g.timings, sorted(peaks.values())


def same_graph(a: Path, b: Path) -> bool:
    """Same nodes (element, size, mean filter value) and edges: the files without member
    rows (the runner's is read back without them)."""
    da, db = json.loads(a.read_text()), json.loads(b.read_text())
    key = lambda d: ([(n["element"], n["size"], n.get("lens")) for n in d["nodes"]], [(e["source"], e["target"], e["shared"]) for e in d["edges"]], d["summary"])
    return key(da) == key(db)


def main() -> int:
    p = argparse.ArgumentParser()
    p.add_argument("--rows", type=int, action="append", help="rows to generate (repeat for several sizes; default 10 000 000)")
    p.add_argument("--workers", type=int, default=2)
    p.add_argument("--memory-per-worker", default="8GB")
    p.add_argument("--dir", default=os.path.join(tempfile.gettempdir(), "nervure-bench-dask"))
    p.add_argument("--runner", default=os.environ.get("NERVURE_RUNNER", "nervure"))
    p.add_argument("--no-runner", action="store_true", help="the cluster run alone (tables too big for one process)")
    a = p.parse_args()
    folder = Path(a.dir)
    folder.mkdir(parents=True, exist_ok=True)
    sp = folder / "settings.json"
    sp.write_text(json.dumps(SETTINGS))
    rows_list = a.rows or [10_000_000]
    table = []
    for rows in rows_list:
        print(f"== {rows:,} rows: generating (once)", file=sys.stderr, flush=True)
        pq, csv = generate(rows, folder)
        print(f"== {rows:,} rows: cluster run, {a.workers} worker processes", file=sys.stderr, flush=True)
        wall, stages, peaks = cluster_run(pq, sp, folder / f"dask-{rows}.graph.json", a.workers, a.memory_per_worker)
        row = {"rows": rows, "workers": a.workers, "dask_seconds": round(wall, 1), "stages": {k: round(v, 1) for k, v in stages.items()},
               "worker_peak_gb": [round(x / 2**30, 2) for x in peaks]}
        if not a.no_runner:
            print(f"== {rows:,} rows: single-process runner", file=sys.stderr, flush=True)
            rwall, rpeak = runner_run(a.runner, csv, sp, folder / f"runner-{rows}.graph.json")
            row.update(runner_seconds=round(rwall, 1), runner_peak_gb=round(rpeak / 2**30, 2), ratio=round(wall / rwall, 2),
                       same_graph=same_graph(folder / f"dask-{rows}.graph.json", folder / f"runner-{rows}.graph.json"))
        table.append(row)
        print(json.dumps(row), flush=True)
    print()
    stages = list(table[0]["stages"])
    print("| rows | " + " | ".join(stages) + " | cluster total | worker peak (GB) | runner | runner peak (GB) | cluster / runner | same graph |")
    print("|" + "---|" * (len(stages) + 7))
    for r in table:
        print(f"| {r['rows']:,} | " + " | ".join(f"{r['stages'].get(s, 0):.1f}" for s in stages)
              + f" | {r['dask_seconds']:.1f} | {', '.join(map(str, r['worker_peak_gb']))} | {r.get('runner_seconds', '—')} | {r.get('runner_peak_gb', '—')}"
              + f" | {r.get('ratio', '—')} | {r.get('same_graph', '—')} |")
    return 0


if __name__ == "__main__":
    sys.exit(main())
