"""The cluster run from a shell:

    python -m nervure.dask DATA --settings S.json --out G.json [--scheduler ADDRESS]
                           [--workers N] [--memory-per-worker 4GB] [--blocksize 64MB] [--no-rows]

DATA is a CSV file or glob (read in blocks, each cell by the engine's rules), or a
Parquet file or folder. With ``--scheduler`` the run goes to that Dask scheduler (for
instance one started by dask-jobqueue on a batch cluster); without it, a local cluster
of ``--workers`` worker processes is started for the run and closed after it. Each
stage's name is printed as it starts and the seconds each took at the end. The graph
file written to ``--out`` opens in the page (Open graph file).
"""

from __future__ import annotations

import argparse
import os
import sys
import time

from .. import NervureError, Settings
from . import DEFAULT_BLOCKSIZE, graph


def main(argv=None) -> int:
    p = argparse.ArgumentParser(prog="python -m nervure.dask", description="Mapper graph of a table on a Dask cluster, equal to the runner's.")
    p.add_argument("data", help="CSV file or glob, or Parquet file or folder")
    p.add_argument("--settings", required=True, help="settings document (the page's Export → Settings file)")
    p.add_argument("--out", required=True, help="graph file to write (opens in the page)")
    p.add_argument("--scheduler", help="address of a running Dask scheduler (tcp://host:8786); none: a local cluster")
    p.add_argument("--workers", type=int, default=os.cpu_count() or 2, help="worker processes of the local cluster (default: one per core)")
    p.add_argument("--memory-per-worker", default="auto", help="memory limit of each local worker (default: Dask's share of the machine)")
    p.add_argument("--blocksize", default=DEFAULT_BLOCKSIZE, help=f"bytes of CSV per partition (default {DEFAULT_BLOCKSIZE})")
    p.add_argument("--no-rows", action="store_true", help="leave each node's member rows out of the graph file")
    a = p.parse_args(argv)

    import logging

    from distributed import Client, LocalCluster

    # Dask's shuffle says at warning level when each shuffle starts and ends: not news.
    logging.getLogger("distributed.shuffle").setLevel(logging.ERROR)
    settings = Settings.load(a.settings)
    cluster = None
    if a.scheduler:
        client = Client(a.scheduler)
    else:
        cluster = LocalCluster(n_workers=a.workers, threads_per_worker=1, processes=True, memory_limit=a.memory_per_worker,
                               dashboard_address=None)
        client = Client(cluster)
    start = time.perf_counter()
    try:
        g = graph(a.data, settings, client=client, rows=not a.no_rows, blocksize=a.blocksize, out=a.out,
                  progress=lambda stage: print(f"  {stage} …", file=sys.stderr, flush=True))
    except NervureError as e:
        print(f"nervure.dask: {e}", file=sys.stderr)
        return 1
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    total = time.perf_counter() - start
    for stage, sec in g.timings.items():
        print(f"{stage:>12}  {sec:8.2f} s", file=sys.stderr)
    print(f"{'total':>12}  {total:8.2f} s", file=sys.stderr)
    s = g.summary
    print(f"{a.out}: {s['nodes']} nodes, {s['edges']} edges, {s['components']} components, {s['loops']} loops from {s['rows']} rows "
          f"(a hypothesis to check against the data, not a finding)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
