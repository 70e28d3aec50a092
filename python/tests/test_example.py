"""The notebook-style example runs start to end on the real table and writes the files
it promises; the graph file it writes reads back."""

import subprocess
import sys
from pathlib import Path

import nervure
from conftest import ROOT, open_table


def test_the_example_runs(tmp_path):
    open_table("penguins")
    out = subprocess.run([sys.executable, str(ROOT / "examples" / "penguins_from_python.py"), str(tmp_path)], capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    assert "features holding up" in out.stdout
    g = nervure.read_graph(tmp_path / "penguins.graph.json")
    assert g.summary["nodes"] > 3
    assert nervure.Settings.load(tmp_path / "penguins.settings.json") == g.settings
    assert "body_mass_g" in (tmp_path / "penguins.graphml").read_text()
