"""The pipeline's stages one at a time, each the very function the engine runs inside a
build, for runs spread over processes or machines (a cluster run distributes the cover
elements, which are independent, and joins the nodes afterwards):

    P, rows, info = points(data, s)            # chosen columns scaled: n × d, table row of each point
    lens, lens2 = lens_values(data, s)         # filter value(s) of each point
    offsets, members, intervals = cover(s, lens, lens2)   # elements over point indices (CSR)
    labels = cluster(P[members[offsets[e]:offsets[e + 1]]], s)   # one element, -1 noise
    edges, (components, loops) = nerve(node_offsets, node_rows, node_elements, n_rows, min_shared)
    stats = statistics(data, node_offsets, node_rows, s)   # per-node statistics of every column

Nodes are each element's clusters in label order, elements in order; a node's members are
the table rows (``rows[point]``), increasing. Composed so, they give :func:`nervure.graph`'s
nodes and edges exactly (tested).
"""

from __future__ import annotations

import json

import numpy as np

from . import _core
from ._data import as_table


def _text(settings) -> str:
    from . import Settings

    return (settings if isinstance(settings, Settings) else Settings(settings)).to_json()


def points(data, settings, *, columns=None):
    """(n × d float64 points, uint32 table row of each point, info dict)."""
    p, rows, info = _core.stage_points(as_table(data, columns=columns), _text(settings))
    return p, rows, json.loads(info)


def lens_values(data, settings, *, columns=None):
    """(filter values, second filter's values or None), one per point."""
    return _core.stage_lens(as_table(data, columns=columns), _text(settings))


def cover(settings, lens, lens2=None):
    """(offsets, members, intervals): element ``e`` holds the point indices
    ``members[offsets[e]:offsets[e + 1]]``; ``intervals`` are the first filter's."""
    l2 = None if lens2 is None else np.ascontiguousarray(lens2, dtype=np.float64)
    return _core.stage_cover(_text(settings), np.ascontiguousarray(lens, dtype=np.float64), l2)


def cluster(element_points, settings_or_clustering):
    """Labels of one element's points (k × d) under the settings' clustering; -1 noise."""
    c = settings_or_clustering
    if not (isinstance(c, dict) and "kind" in c):
        c = json.loads(_text(c))["clustering"]
    return _core.stage_cluster(np.ascontiguousarray(element_points, dtype=np.float64), json.dumps(c))


def nerve(offsets, rows, elements, n_rows: int, min_shared: int = 1):
    """Edges of nodes given as CSR member rows: a frame (source, target, shared) and
    (components, loops)."""
    import pandas as pd

    a, b, s, counts = _core.stage_nerve(np.asarray(offsets, dtype=np.uint64), np.asarray(rows, dtype=np.uint32),
                                        np.asarray(elements, dtype=np.uint64), int(n_rows), int(min_shared))
    return pd.DataFrame({"source": a, "target": b, "shared": s}, copy=False), counts


def statistics(data, offsets, rows, settings, *, columns=None) -> list:
    """Per-node statistics of every column (the graph file's ``statistics``)."""
    return json.loads(_core.stage_statistics(as_table(data, columns=columns), np.asarray(offsets, dtype=np.uint64),
                                             np.asarray(rows, dtype=np.uint32), _text(settings)))
