"""Shared fixtures: the command-line runner (the equality checks run it on the same
files), the open tables in $NERVURE_DATA (written by tests/data/open_tables.py from
registry packages; tests/run.sh sets it), and a synthetic circle of known topology."""

import json
import math
import os
import subprocess
from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[2]


def _runner():
    path = os.environ.get("NERVURE_RUNNER")
    if not path:
        target = os.environ.get("CARGO_TARGET_DIR", str(Path.home() / ".cache" / "nervure-target"))
        path = str(Path(target) / "release" / "nervure")
    return path


@pytest.fixture(scope="session")
def runner():
    path = _runner()
    if not os.path.exists(path):
        if os.environ.get("NERVURE_RUNNER"):
            pytest.fail(f"NERVURE_RUNNER={path} does not exist")
        pytest.skip(f"SKIPPED, not a pass: no runner at {path} (cargo build --release --bin nervure, or set NERVURE_RUNNER)")

    def run(*args, check=True):
        out = subprocess.run([path, *map(str, args), "--quiet"], capture_output=True, text=True)
        if check and out.returncode != 0:
            raise AssertionError(f"nervure {args} failed ({out.returncode}): {out.stderr}")
        return out

    def doc(*args):
        return json.loads(run(*args).stdout)

    run.doc = doc
    return run


def open_table(name):
    d = os.environ.get("NERVURE_DATA")
    if not d:
        if os.environ.get("CI"):
            pytest.fail("NERVURE_DATA is not set (tests/run.sh sets it)")
        pytest.skip(f"SKIPPED, not a pass: NERVURE_DATA is not set (tests/run.sh sets it); {name} not read")
    path = Path(d) / f"{name}.csv"
    assert path.exists(), f"{path} is missing: run tests/data/open_tables.py"
    return path


@pytest.fixture
def circle_csv(tmp_path):
    """A noisy circle (one loop; synthetic, known topology) with a text column, as CSV."""
    rng = np.random.default_rng(3)
    n = 400
    t = np.arange(n) / n * 2 * math.pi
    x = np.cos(t) + 0.05 * rng.standard_normal(n)
    y = np.sin(t) + 0.05 * rng.standard_normal(n)
    side = np.where(x > 0, "east", "west")
    path = tmp_path / "circle.csv"
    with open(path, "w") as f:
        f.write("x,y,side\n")
        for a, b, c in zip(x, y, side):
            f.write(f"{float(a)!r},{float(b)!r},{c}\n")
    return path


CIRCLE_SETTINGS = {
    "version": 1, "columns": ["x", "y"], "scaling": "none",
    "lens": {"kind": "column", "column": "x"}, "cover": {"intervals": 8, "overlap": 0.35},
    "clustering": {"kind": "dbscan", "eps": 0.25, "minPoints": 3}, "seed": 7,
}


@pytest.fixture
def circle_settings(tmp_path):
    path = tmp_path / "circle.settings.json"
    path.write_text(json.dumps(CIRCLE_SETTINGS))
    return path
