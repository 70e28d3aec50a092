#!/usr/bin/env python3
"""Reads a GraphML file written by Nervure with NetworkX's reader and checks it.

What it is for: the Rust test `export::tests::graphml_reads_back_with_networkx` writes a
GraphML file for a small fixed build into a temporary folder and runs this script on it,
so the export is checked by an independent reader of the standard (networkx.read_graphml,
version pinned in requirements.txt). What it is not: a fixture generator; it writes nothing.

    python3 tests/reference/check_graphml.py FILE N_NODES N_EDGES [COLOUR_NAME [SHARED_SUM [KEEP_ROWS NOT_KEPT]]]

With KEEP_ROWS and NOT_KEPT, the graph attributes `keepRows` (the row condition) and
`rowsNotKept` must hold them.

Exits 0 and prints one line when every check holds, 1 with the reason otherwise.
"""

import json
import sys

import networkx


def fail(why):
    print(f"check_graphml: {why}", file=sys.stderr)
    sys.exit(1)


def main():
    if len(sys.argv) < 4:
        fail("usage: check_graphml.py FILE N_NODES N_EDGES [COLOUR_NAME [SHARED_SUM [KEEP_ROWS NOT_KEPT]]]")
    path, n_nodes, n_edges = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
    colour = sys.argv[4] if len(sys.argv) > 4 else None
    g = networkx.read_graphml(path)
    if g.is_directed():
        fail("the graph reads as directed; expected edgedefault='undirected'")
    if g.number_of_nodes() != n_nodes:
        fail(f"{g.number_of_nodes()} nodes, expected {n_nodes}")
    if g.number_of_edges() != n_edges:
        fail(f"{g.number_of_edges()} edges, expected {n_edges}")
    for node, attrs in g.nodes(data=True):
        if not isinstance(attrs.get("size"), int) or attrs["size"] < 1:
            fail(f"node {node}: size {attrs.get('size')!r} is not a positive int")
        if not isinstance(attrs.get("element"), int):
            fail(f"node {node}: element {attrs.get('element')!r} is not an int")
        if not isinstance(attrs.get("lens"), float):
            fail(f"node {node}: lens {attrs.get('lens')!r} is not a float")
        if colour is not None and not isinstance(attrs.get(colour), float):
            fail(f"node {node}: no float attribute named {colour!r} (has {sorted(attrs)})")
    shared = 0
    for a, b, attrs in g.edges(data=True):
        if not isinstance(attrs.get("shared"), int) or attrs["shared"] < 1:
            fail(f"edge {a}-{b}: shared {attrs.get('shared')!r} is not a positive int")
        shared += attrs["shared"]
    if len(sys.argv) > 5 and shared != int(sys.argv[5]):
        fail(f"shared counts sum to {shared}, expected {sys.argv[5]}")
    settings = json.loads(g.graph.get("settings", "null"))
    if not isinstance(settings, dict) or not isinstance(settings.get("version"), int) or settings["version"] < 1:
        fail(f"graph attribute 'settings' is not the settings JSON: {g.graph.get('settings')!r}")
    for key in ("rowsUsed", "rowsLeftOut", "rowsSetAside", "rowsNotKept"):
        if not isinstance(g.graph.get(key), int) or g.graph[key] < 0:
            fail(f"graph attribute {key!r} is {g.graph.get(key)!r}, not a count")
    kept = ""
    if len(sys.argv) > 7:
        want, not_kept = sys.argv[6], int(sys.argv[7])
        if g.graph.get("keepRows") != want or settings.get("keepRows") != want:
            fail(f"graph attribute 'keepRows' is {g.graph.get('keepRows')!r}, expected {want!r}")
        if g.graph["rowsNotKept"] != not_kept:
            fail(f"graph attribute 'rowsNotKept' is {g.graph['rowsNotKept']}, expected {not_kept}")
        kept = f", rows kept where {want} ({not_kept} not kept)"
    elif "keepRows" in g.graph:
        fail(f"graph attribute 'keepRows' is {g.graph['keepRows']!r}, but no condition was expected")
    print(f"check_graphml: networkx {networkx.__version__} read {n_nodes} nodes, {n_edges} edges, "
          f"shared sum {shared}, settings version {settings['version']}{kept}")


if __name__ == "__main__":
    main()
