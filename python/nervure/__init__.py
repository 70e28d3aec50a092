"""Nervure for notebooks and scripts: the shape of large tables as Mapper graphs, computed by
the same Rust core as the Nervure page and the ``nervure`` command-line runner, driven by
the same settings document.

    import nervure, pandas as pd
    df = pd.read_csv("penguins.csv")
    s = nervure.Settings.automatic(df)
    g = nervure.graph(df, s)
    g.nodes, g.edges, g.summary, g.statistics("mean"), g.to_networkx()

Data is a pandas DataFrame, a 2-D NumPy array with ``columns=[names]``, a CSV (or ICARTT,
or .xlsx) path, a list of paths (stacked, as the page stacks dropped files) or a
:class:`Table`. Results come back as NumPy arrays and pandas frames; each result also
keeps ``.document``, the very JSON document the runner writes for the same table and
settings. Errors raise :class:`NervureError` with the engine's message.

A Mapper graph depends on its settings (filter, intervals, overlap, clustering scale):
a loop or a flare is a hypothesis about the data to check, not a finding by itself.
"""

from __future__ import annotations

import json
import os
from typing import Any, Iterable, Sequence

import numpy as np

from . import _core
from ._core import NervureError
from ._data import Table, as_table

__all__ = [
    "NervureError", "Settings", "Table", "Graph", "graph", "diagram", "resample", "grid",
    "suggest", "compare", "explain", "read_graph", "as_table", "stages",
]

GRAPH_FILE_VERSION = _core.GRAPH_FILE_VERSION
SETTINGS_VERSION = _core.SETTINGS_VERSION


class Settings:
    """The settings document (the page's Export → Settings file), checked by the engine.

    Item access reads and changes the document (``s["cover"]["intervals"] = 12``); the
    engine checks it again whenever it is used.
    """

    def __init__(self, document: dict | str):
        text = document if isinstance(document, str) else json.dumps(document)
        self._doc = json.loads(_core.check_settings(text))

    @classmethod
    def automatic(cls, data, *, columns: Sequence[str] | None = None) -> "Settings":
        """The page's automatic first settings for ``data``."""
        bench = _core.Bench(as_table(data, columns=columns))
        return cls(bench.auto_settings())

    @classmethod
    def load(cls, path: str | os.PathLike) -> "Settings":
        """Reads a settings file as the page does (messages name the file)."""
        with open(path, encoding="utf-8") as f:
            text = f.read()
        return cls(_core.read_settings(text, os.path.basename(os.fspath(path))))

    def save(self, path: str | os.PathLike) -> None:
        with open(path, "w", encoding="utf-8") as f:
            f.write(self.to_json() + "\n")

    def to_json(self) -> str:
        return _core.check_settings(json.dumps(self._doc))

    def to_dict(self) -> dict:
        return json.loads(self.to_json())

    def copy(self) -> "Settings":
        return Settings(self.to_json())

    def __getitem__(self, key: str) -> Any:
        return self._doc[key]

    def __setitem__(self, key: str, value: Any) -> None:
        self._doc[key] = value

    def __contains__(self, key: str) -> bool:
        return key in self._doc

    def __eq__(self, other: object) -> bool:
        return isinstance(other, Settings) and self.to_dict() == other.to_dict()

    def __repr__(self) -> str:
        return "Settings(" + json.dumps(self._doc) + ")"


def _settings(settings, table: Table) -> str:
    if settings is None:
        return _core.Bench(table).auto_settings()
    if isinstance(settings, Settings):
        return settings.to_json()
    return Settings(settings).to_json()


class Graph:
    """A built graph: nodes, edges and summary as arrays and frames, per-node statistics
    of every column, and views for NetworkX. ``members(i)`` is a view into one array of
    all memberships (no copy)."""

    def __init__(self, bench: "_core.Bench", table: Table | None):
        self._bench = bench
        self._table = table
        a = bench.arrays()
        self._arrays = a
        self.summary: dict = json.loads(bench.summary())
        self.settings = Settings(bench.settings())
        self.member_offsets: np.ndarray = a["offsets"]
        self.member_rows: np.ndarray = a["rows"]
        self.rows_known: bool = a["rows_known"]

    @property
    def nodes(self):
        """One row per node: size, cover element, mean filter value(s), layout x and y and disc radius r."""
        import pandas as pd

        a = self._arrays
        cols = {"size": a["size"], "element": a["element"], "lens": a["lens"]}
        if a["lens2"] is not None:
            cols["lens2"] = a["lens2"]
        cols["x"], cols["y"], cols["r"] = a["x"], a["y"], a["r"]
        df = pd.DataFrame(cols, copy=False)
        df.index.name = "node"
        return df

    @property
    def edges(self):
        """One row per edge (source < target) with the number of rows the nodes share."""
        import pandas as pd

        a = self._arrays
        return pd.DataFrame({"source": a["source"], "target": a["target"], "shared": a["shared"]}, copy=False)

    def members(self, node: int) -> np.ndarray:
        """The 0-based table rows of ``node`` (a view, not a copy)."""
        if not self.rows_known:
            raise NervureError("this graph file was written without its member rows")
        o = self.member_offsets
        return self.member_rows[o[node]:o[node + 1]]

    def values(self, column: str, stat: str | dict = "mean") -> np.ndarray:
        """One value per node, as the page colours by ``column``: ``stat`` is "mean",
        "median", "spread" or {"kind": "shareAbove", "threshold": t}; for a text column,
        the share of the node's most common value."""
        return self._bench.node_values(column, json.dumps(stat))

    def statistics(self, stat: str = "mean"):
        """A frame of ``stat`` per node (rows) and number column (columns), as the graph
        file carries them; text columns give the most common value."""
        import pandas as pd

        out = {}
        for c in json.loads(self._bench.statistics()):
            if c["kind"] == "number":
                out[c["name"]] = np.array([np.nan if v is None else v for v in c[stat]], dtype=float)
            else:
                out[c["name"]] = pd.Series([None if k is None else c["levels"][k] for k in c["top"]], dtype="object")
        df = pd.DataFrame(out)
        df.index.name = "node"
        return df

    def column_statistics(self) -> list[dict]:
        """Every column's per-node statistics, as in the graph file (see docs/graph-file.md)."""
        return json.loads(self._bench.statistics())

    def detail(self, node: int) -> dict:
        """What the page's inspector shows for one node."""
        return json.loads(self._bench.node_detail(node))

    def diagram(self):
        """The extended persistence diagram (see :func:`diagram`)."""
        return _Diagram(json.loads(self._bench.diagram()))

    def explain(self, nodes: Iterable[int] | None = None, *, rows_where: str | None = None):
        """How the rows of ``nodes``, or the rows where ``rows_where`` holds, differ from
        all other rows (see :func:`explain`)."""
        if (nodes is None) == (rows_where is None):
            raise NervureError("explain takes nodes=[...] or rows_where=\"...\", one of the two")
        if rows_where is not None:
            return _Explanation(json.loads(self._bench.explain_where(str(rows_where))))
        return _Explanation(json.loads(self._bench.explain([int(n) for n in nodes])))

    def file(self, rows: bool = True) -> dict:
        """The graph file as a dict (see docs/graph-file.md)."""
        return json.loads(self._bench.graph_file(rows))

    def save(self, path: str | os.PathLike, rows: bool = True) -> None:
        """Writes the graph file the page opens (Open graph…); ``rows=False`` leaves out
        the member rows (for tables of many millions of rows)."""
        with open(path, "w", encoding="utf-8") as f:
            f.write(self._bench.graph_file(rows))

    def export(self, fmt: str, colour: str | None = None, stat: str | dict = "mean") -> str:
        """The page's other exports as text: "graphml" (coloured by ``colour``),
        "memberships" (CSV), "report"."""
        name = self._table.name if self._table is not None else ""
        return self._bench.export(fmt, colour, json.dumps(stat), name)

    def to_networkx(self, colour: str | None = None, stat: str | dict = "mean"):
        """An undirected NetworkX graph: nodes with size, element, lens, x, y (and the
        colouring values under ``colour``), edges with ``shared``."""
        import networkx as nx

        a = self._arrays
        g = nx.Graph(settings=self.settings.to_json())
        values = self.values(colour, stat) if colour else None
        for i in range(len(a["size"])):
            attrs = {"size": int(a["size"][i]), "element": int(a["element"][i]), "lens": float(a["lens"][i]),
                     "x": float(a["x"][i]), "y": float(a["y"][i])}
            if values is not None:
                attrs[colour] = float(values[i])
            g.add_node(i, **attrs)
        g.add_weighted_edges_from(zip(a["source"].tolist(), a["target"].tolist(), a["shared"].tolist()), weight="shared")
        return g

    @property
    def table(self) -> Table:
        """The table the graph was built on, with the settings' derived columns."""
        return self._bench.table()

    def __repr__(self) -> str:
        s = self.summary
        return f"<nervure.Graph: {s['nodes']} nodes, {s['edges']} edges, {s['components']} components, {s['loops']} loops>"


def graph(data, settings=None, *, columns: Sequence[str] | None = None) -> Graph:
    """The Mapper graph of ``data`` under ``settings`` (automatic ones when None)."""
    table = as_table(data, columns=columns)
    bench = _core.Bench(table)
    bench.run(_settings(settings, table))
    return Graph(bench, table)


def read_graph(path: str | os.PathLike) -> Graph:
    """Opens a graph file (written by the runner, the page or :meth:`Graph.save`) with no
    table: nodes, edges, layout and per-node statistics are there; member rows only if
    the file carries them."""
    with open(path, encoding="utf-8") as f:
        text = f.read()
    return Graph(_core.Bench.open(text, os.path.basename(os.fspath(path))), None)


class _Document:
    """A result: ``.document`` is the runner's JSON document for the same computation."""

    def __init__(self, document: dict):
        self.document = document

    def __getitem__(self, key):
        return self.document[key]

    def __repr__(self) -> str:
        return f"<nervure.{type(self).__name__.lstrip('_')}: {', '.join(self.document)}>"


def _features(features: list[dict]):
    import pandas as pd

    df = pd.DataFrame(features)
    return df


class _Diagram(_Document):
    @property
    def features(self):
        """One row per feature: kind, birth, death, persistence, birthNode, deathNode, nodes."""
        return _features(self.document["features"])


class _Resampling(_Document):
    threshold = property(lambda self: self.document["threshold"])
    alpha = property(lambda self: self.document["alpha"])
    distances = property(lambda self: np.asarray(self.document["distances"], dtype=float))

    @property
    def features(self):
        """One row per feature of the graph's diagram, with ``significant``."""
        return _features(self.document["features"])


class _Comparison(_Document):
    distance = property(lambda self: self.document["distance"])
    threshold = property(lambda self: self.document["threshold"])
    differ = property(lambda self: self.document["differ"])
    a = property(lambda self: _Resampling(self.document["a"]))
    b = property(lambda self: _Resampling(self.document["b"]))


class _Grid(_Document):
    @property
    def cells(self):
        """One row per cell: intervals, overlap, eps, nodes, components, loops, and the
        significance columns when resamples were asked for."""
        import pandas as pd

        return pd.DataFrame(self.document["cells"])


class _Suggestion(_Document):
    @property
    def settings(self) -> Settings:
        return Settings(self.document["settings"])


class _Explanation(_Document):
    @property
    def columns(self):
        """Number columns, most different first (KS statistic, p-value, standardised mean difference)."""
        import pandas as pd

        return pd.DataFrame(self.document["columns"])

    @property
    def categories(self):
        """Text columns, most different first (total variation distance, chi-squared p-value)."""
        import pandas as pd

        return pd.DataFrame(self.document["categories"])


def _built(data, settings, columns):
    """The table (with the settings' derived columns made) and the settings' JSON."""
    table = as_table(data, columns=columns)
    text = _settings(settings, table)
    bench = _core.Bench(table)
    bench.run(text)
    return bench, text


def diagram(data, settings=None, *, columns=None) -> _Diagram:
    """The extended persistence diagram of the graph, with the nodes carrying each feature
    (a :class:`Graph` may be given as ``data``)."""
    if isinstance(data, Graph):
        return data.diagram()
    bench, _ = _built(data, settings, columns)
    return _Diagram(json.loads(bench.diagram()))


def resample(data, settings=None, *, draws: int = 100, alpha: float = 0.05, seed: int = 1, columns=None) -> _Resampling:
    """The resampling test of each feature (the page's "How solid is this shape?")."""
    bench, text = _built(data, settings, columns)
    return _Resampling(json.loads(_core.resample(bench.table(), text, int(draws), float(alpha), int(seed))))


def grid(data, settings=None, *, intervals: Sequence[int], overlaps: Sequence[float], eps: Sequence[float] = (),
         draws: int = 0, alpha: float = 0.05, seed: int = 1, columns=None) -> _Grid:
    """Every combination of interval counts × overlaps (× DBSCAN eps)."""
    bench, text = _built(data, settings, columns)
    g = json.dumps({"intervals": [int(k) for k in intervals], "overlaps": [float(x) for x in overlaps], "eps": [float(x) for x in eps]})
    return _Grid(json.loads(_core.grid(bench.table(), text, g, int(draws), float(alpha), int(seed))))


def suggest(data, settings=None, *, seed: int = 1, columns=None) -> _Suggestion:
    """Settings suggested by the parameter rule from the data, with the rule's values."""
    table = as_table(data, columns=columns)
    text = _settings(settings, table)
    if json.loads(text).get("derived"):
        bench = _core.Bench(table)
        bench.run(text)
        table = bench.table()
    return _Suggestion(json.loads(_core.suggest(table, text, int(seed))))


def compare(data, settings=None, *, other=None, swap: dict | None = None, draws: int = 100, alpha: float = 0.05,
            seed: int = 1, columns=None) -> _Comparison:
    """The shapes of two tables under the same settings: ``other`` data, or ``swap``
    {column: other_column} (the column takes the other column's values)."""
    if (other is None) == (swap is None):
        raise NervureError("compare needs one second table: other=DATA, or swap={column: other_column}")
    table = as_table(data, columns=columns)
    text = _settings(settings, table)
    a = _core.Bench(table)
    a.run(text)
    if swap is not None:
        second = table.swapped([(src, dst) for dst, src in swap.items()], text)
    else:
        second = as_table(other, columns=columns)
    b = _core.Bench(second)
    try:
        b.run(text)
    except NervureError as e:
        raise NervureError("second table: " + str(e)) from None
    return _Comparison(json.loads(_core.compare(a.table(), b.table(), text, int(draws), float(alpha), int(seed))))


def explain(data, settings=None, *, nodes: Iterable[int] | None = None, rows_where: str | None = None, columns=None) -> _Explanation:
    """How the rows of ``nodes``, or the rows where the condition ``rows_where`` holds
    (``"origin == 'JFK' and hour(time_hour) < 6"``, the language of the settings'
    ``keepRows``), differ from all other rows the graph uses: every column ranked. The
    p-values only rank the columns: nodes picked by looking at the graph were chosen from
    the same data."""
    if (nodes is None) == (rows_where is None):
        raise NervureError("explain takes nodes=[...] or rows_where=\"...\", one of the two")
    bench, _ = _built(data, settings, columns)
    if rows_where is not None:
        return _Explanation(json.loads(bench.explain_where(str(rows_where))))
    return _Explanation(json.loads(bench.explain([int(n) for n in nodes])))


from . import stages  # noqa: E402  (the per-stage entry points)
