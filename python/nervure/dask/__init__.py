"""Mapper on a Dask cluster: the graph of a table too big for one machine, with the same
settings document and the same result as the single-machine runner, computed with Dask's
own primitives and the Rust core on every worker.

    import dask.dataframe as dd, nervure, nervure.dask
    g = nervure.dask.graph("archive-*.csv", nervure.Settings.load("s.json"))   # or a dask DataFrame
    g.save("archive.graph.json")                                               # open it in the page

or from a shell: ``python -m nervure.dask DATA --settings S.json --out G.json
[--scheduler ADDRESS]``. Data is a CSV file or glob (read in blocks, each cell read as the
engine's reader reads it, so the table is the runner's), a Parquet file or folder, a
``dask.dataframe.DataFrame`` or an ``xarray.Dataset`` (its ``to_dask_dataframe()``), whose
columns are read as the package reads a pandas frame.

How each stage runs (the exact method of each, and why the graph is the runner's, is in
``src/parts.rs``; the plan for a batch cluster in ``docs/dask.md``):

1. **table**: the partitions' row counts (data row numbers are global: row ``i`` of the
   table is data row ``i + 1``), the column types (a column with one text anywhere is
   text, as the reader decides) and the text columns' levels in order of first appearance
   (an ordered reduction; a text column whose levels are date-times is a time column, as
   the reader types it); each partition converted once and kept on its worker.
2. **points**: the rows taking part per partition (the row condition, ``keepRows``,
   decided row by row, its counts added and checked on the totals); medians of the median policy by an
   exact selection (four reductions of 65 536-bin counts of the values' bit patterns);
   column sums, then squared deviations (z-score) as ordered folds: the running state
   (d numbers) goes from partition to partition in table order, so every addition is the
   engine's and the scaling is the same to the last bit.
3. **filter**: principal component from the means and covariance (two more folds),
   density and eccentricity from the engine's stated reference points (at most 4 000,
   gathered in order), neighbour filters on one worker (refused above
   ``max_points_one_worker``); values computed per partition.
4. **cover**: the range (a min/max reduction; the balanced cover's few order statistics by
   the same exact selection), each partition's points assigned to elements.
5. **shuffle by element**, then **clusters**: rows shuffled by element (``set_index`` on
   the element with one division per element, Dask's shuffle), each element clustered by the engine on one worker, in
   table order; an element above ``max_element_rows`` is refused before the shuffle with
   its number, interval and size. Per-node statistics of every column are made there.
6. **nerve**: the memberships shuffled by row (a group-by on row ids), node pairs and
   triples sharing rows counted per partition and summed (a reduction).
7. **graph file**: counts, loops, layout and summary by the core, as the runner makes them.

A Mapper graph depends on its settings: a loop or a flare is a hypothesis to check, not a
finding by itself.
"""

from __future__ import annotations

import json
import os
import time
from typing import Callable, Sequence

import numpy as np
import pandas as pd

from .. import _core as _raw_core
from .. import Graph, NervureError, Settings


def _aligned(x):
    """Arrays as the core reads them: C-ordered and aligned (Dask's transfers can hand a
    worker an array whose buffer is not aligned), recursively through tuples and lists."""
    if isinstance(x, np.ndarray):
        return np.require(x, requirements=["C", "A"])
    if isinstance(x, (tuple, list)):
        return type(x)(_aligned(v) for v in x)
    return x


class _Core:
    """The core's functions with every array argument aligned first."""

    def __getattr__(self, name):
        f = getattr(_raw_core, name)
        if not callable(f) or isinstance(f, type):
            return f

        def call(*args, **kwargs):
            return f(*[_aligned(a) for a in args], **{k: _aligned(v) for k, v in kwargs.items()})

        return call


_core = _Core()

__all__ = ["graph", "read", "Run"]

#: Rows a CSV block holds about (Dask's block size in bytes for ``read``).
DEFAULT_BLOCKSIZE = "64MB"
#: The neighbour filters need every point on one worker: refused above this many points.
MAX_POINTS_ONE_WORKER = 5_000_000
#: Bytes one row of an element costs a worker while it is clustered, per value it carries
#: (the shuffled frame, the points copied for the engine, the k-d tree and labels): a
#: stated allowance, measured by the benchmark (docs/dask.md).
BYTES_PER_VALUE = 40


class Source:
    """A dask DataFrame and how its cells are read: ``cells`` (text read by the engine's
    rules, as a CSV file) or as a frame's typed columns."""

    def __init__(self, frame, *, cells: bool, name: str):
        self.frame = frame
        self.cells = cells
        self.name = name


def read(data, *, blocksize=DEFAULT_BLOCKSIZE, name: str | None = None) -> Source:
    """The table behind ``data``: a CSV path or glob (cells as text, read by the engine's
    rules), a Parquet file or folder, a dask or pandas DataFrame or an xarray Dataset."""
    import dask.dataframe as dd

    if isinstance(data, Source):
        return data
    if isinstance(data, (str, os.PathLike)):
        p = os.fspath(data)
        base = os.path.basename(p.rstrip("/"))
        if p.endswith(".parquet") or os.path.isdir(p):
            return Source(dd.read_parquet(p), cells=False, name=name or base)
        frame = dd.read_csv(p, dtype=str, keep_default_na=False, na_filter=False, blocksize=blocksize)
        return Source(frame, cells=True, name=name or base)
    if hasattr(data, "to_dask_dataframe") and hasattr(data, "data_vars"):
        return Source(data.to_dask_dataframe(), cells=False, name=name or "dataset")
    if isinstance(data, pd.DataFrame):
        return Source(dd.from_pandas(data, chunksize=1_000_000), cells=False, name=name or data.attrs.get("name", "dataframe"))
    if hasattr(data, "to_delayed") and hasattr(data, "npartitions"):
        return Source(data, cells=False, name=name or "dataframe")
    raise NervureError(f"cannot read data of type {type(data).__name__}: give a CSV or Parquet path, a dask DataFrame or an xarray Dataset")


# ---------------------------------------------------------------- column kinds (frames)

def _kind(dtype) -> str:
    """How the package reads a frame column of this dtype (see nervure._data)."""
    if pd.api.types.is_bool_dtype(dtype):
        return "bool"
    if pd.api.types.is_numeric_dtype(dtype):
        return "number"
    if pd.api.types.is_datetime64_any_dtype(dtype):
        # As the package reads a frame: zone-aware instants were written with a zone (UTC).
        return "time-utc" if getattr(dtype, "tz", None) is not None else "time"
    return "text"


#: Source kinds read as codes into levels: a frame's texts and booleans, a CSV's text
#: columns ("cells": typed as time or text from the whole column's levels, as the reader).
_TEXT = ("text", "bool", "cells")
_TIME = ("time", "time-utc")


def _texts(s: pd.Series) -> pd.Series:
    if pd.api.types.is_bool_dtype(s.dtype):
        return s.astype("object").map(lambda v: v if pd.isna(v) else str(v))
    t = s.astype("object").map(lambda v: v if pd.isna(v) else str(v).strip())
    return t.where(t != "", None)


def _numbers(s: pd.Series, kind: str) -> np.ndarray:
    if kind in _TIME:
        t = s.dt.tz_convert("UTC") if getattr(s.dt, "tz", None) is not None else s
        ns = t.to_numpy(dtype="datetime64[ns]").astype(np.int64)
        v = ns.astype(np.float64) / 1e9
        v[t.isna().to_numpy()] = np.nan
        return v
    return np.ascontiguousarray(s.to_numpy(dtype=np.float64, na_value=np.nan))


# ---------------------------------------------------------------- worker-side steps

def _scan(frame: pd.DataFrame, cells: bool, kinds: dict, names: list) -> dict:
    """Pass 1 of a partition: its rows, its columns as they should be, and per column the
    first text (cells) or the first cell that does not fit the column's type (frames)."""
    if list(map(str, frame.columns)) != names:
        return {"n": len(frame), "columns": list(map(str, frame.columns))}
    out = {"n": len(frame), "first_text": {}, "misfit": None}
    if cells:
        cols = [(c, frame[c].tolist(), "auto") for c in frame.columns]
        _, firsts = _raw_core.Table.from_cells("part", cols, 0)
        out["first_text"] = {str(k): (r - 1, t) for k, (r, t) in firsts.items()}
        return out
    for c in frame.columns:
        want = kinds[str(c)]
        s = frame[c]
        if want in ("number",) + _TIME and _kind(s.dtype) != want:
            bad = pd.to_numeric(s, errors="coerce").isna() & s.notna() if want == "number" else s.notna()
            i = int(np.argmax(bad.to_numpy())) if bad.any() else 0
            out["misfit"] = (str(c), i, str(s.iloc[i]) if len(s) else "", str(s.dtype))
            break
    return out


def _levels_of(frame: pd.DataFrame, cells: bool, modes: dict, text_cols: list, first_row: int) -> dict:
    """The text columns' levels of one partition, in order of first appearance."""
    out = {}
    if cells:
        cols = [(c, frame[c].tolist(), modes[c]) for c in text_cols]
        table, _ = _raw_core.Table.from_cells("part", cols, first_row)
        for c in text_cols:
            out[c] = table.column(c)[1]
        return out
    for c in text_cols:
        out[c] = [str(v) for v in pd.unique(_texts(frame[c]).dropna())]
    return out


def _union(*level_maps: dict) -> dict:
    """Levels of consecutive partitions joined in order of first appearance."""
    out: dict = {}
    for m in level_maps:
        for c, levels in m.items():
            seen = out.setdefault(c, [])
            have = set(seen)
            for v in levels:
                if v not in have:
                    seen.append(v)
                    have.add(v)
    return out


def _convert(frame: pd.DataFrame, cells: bool, kinds: dict, modes: dict, levels: dict, first_row: int) -> dict:
    """A partition as typed columns with global codes: {name: float64 values} for numbers,
    {name: int64 codes into the table's levels} for texts."""
    cols = {}
    if cells:
        spec = [(c, frame[c].tolist(), modes[c] if kinds[c] == "cells" else "auto") for c in frame.columns]
        table, _ = _raw_core.Table.from_cells("part", spec, first_row)
        for c in frame.columns:
            v = table.column(c)
            if kinds[c] == "cells":
                codes, local = v
                cols[c] = _recode(codes, local, levels[c])
            else:
                cols[c] = v
        return cols
    for c in frame.columns:
        c = str(c)
        if kinds[c] in _TEXT:
            t = _texts(frame[c])
            codes = pd.Index(levels[c]).get_indexer(t.fillna("\x00missing\x00"))
            cols[c] = codes.astype(np.int64)
        else:
            cols[c] = _numbers(frame[c], kinds[c])
    return cols


def _recode(codes: np.ndarray, local: list, levels: list) -> np.ndarray:
    at = pd.Index(levels).get_indexer(local).astype(np.int64)
    out = np.full(len(codes), -1, dtype=np.int64)
    ok = codes >= 0
    out[ok] = at[codes[ok]]
    return out


def _table(cols: dict, names: list, kinds: dict, levels: dict, first_text: dict, settings: str):
    """The core's table of a converted partition, with the settings' derived columns."""
    spec = []
    for c in names:
        if kinds[c] in _TEXT:
            spec.append((c, cols[c], levels[c]))
        elif kinds[c] in _TIME:
            spec.append((c, cols[c], kinds[c]))
        else:
            spec.append((c, cols[c], None))
    as_read = any(kinds[c] == "cells" for c in names)
    t = _raw_core.Table.from_columns("part", _aligned(spec), {c: first_text[c] for c in first_text if c in names}, as_read)
    return _core.part_derived(t, settings)


def _present(cols, names, kinds, levels, first_text, settings, column) -> np.ndarray:
    return _core.part_present(_table(cols, names, kinds, levels, first_text, settings), column, settings)


def _choose(cols, names, kinds, levels, first_text, settings, first_row, medians, part_no, n_rows) -> dict:
    """Pass 2 of a partition: the rows taking part, their values, and every column at
    those rows (for the statistics)."""
    t = _table(cols, names, kinds, levels, first_text, settings)
    try:
        rows, raw, lens_cols, counts = _core.part_choose(t, settings, first_row, medians)
    except NervureError as e:
        raise NervureError(f"partition {part_no} (data rows {first_row + 1} to {first_row + n_rows}): {e}") from None
    local = (rows - first_row).astype(np.int64)
    stats = {}
    for c in _all_columns(t):
        v = t.column(c)
        stats[c] = v[local] if isinstance(v, np.ndarray) else v[0][local]
    return {"rows": rows, "raw": raw, "lens_columns": lens_cols, "counts": counts, "stats": stats}


def _all_columns(t) -> list:
    return [c["name"] for c in json.loads(_core.table_info(t, "", 0))["columns"]]


def _column_kinds(t) -> list:
    """(name, kind) of every column of a part's table as the engine typed it: "number",
    "time" or "category" (derived columns included)."""
    return [(c["name"], c["kind"]) for c in json.loads(_core.table_info(t, "", 0))["columns"]]


# Small steps sent to the workers: module functions (a closure would carry the run
# itself, and with it the caller's progress function, to every worker).

def _field(d: dict, key: str):
    return d[key]


def _head(result: dict) -> tuple:
    return result["element"], result["nodes"]


def _slice(values, lo: int, hi: int):
    return values[lo:hi]


def _widest(*ranges) -> tuple:
    return min(r[0] for r in ranges), max(r[1] for r in ranges)


def _kinds_of_part(cols, names, kinds, levels, first_text, settings) -> list:
    return _column_kinds(_table(cols, names, kinds, levels, first_text, settings))


def _info_of_part(cols, names, kinds, levels, first_text, settings, name, n_rows, ranges) -> str:
    return _core.table_info(_table(cols, names, kinds, levels, first_text, settings), name, n_rows, ranges)


def _time_ranges(cols, names, kinds, levels, first_text, settings) -> str:
    return _core.time_ranges(_table(cols, names, kinds, levels, first_text, settings))


def _add_sums(state, chosen):
    count, s, lo, hi = state
    return _core.add_sums(count, s, lo, hi, chosen["raw"])


def _add_squares(state, chosen):
    means, sq = state
    return means, _core.add_squares(means, sq, chosen["raw"])


def _scaled(chosen, scales):
    return _core.scale_rows(chosen["raw"], scales)


def _add_point_sums(state, points):
    count, s, lo, hi = state
    return _core.add_sums(count, s, lo, hi, points)


def _add_cross(state, points):
    mu, c, count = state
    c, count = _core.add_cross(mu, c, count, points)
    return mu, c, count


def _add_norms(total, points):
    return _core.add_norms(total, points)


def _pick(points, start, wanted, transform=None):
    """The rows of this partition's points whose global point index is in ``wanted``
    (sorted), in that order."""
    lo, hi = np.searchsorted(wanted, [start, start + len(points)])
    got = points[(wanted[lo:hi] - start).astype(np.int64)]
    return transform(got) if transform is not None and len(got) else got


def _lens(settings, which, plan, points, chosen, extra):
    return _core.part_lens(settings, which, plan, points, chosen["rows"], chosen["lens_columns"], **extra)


def _minmax(values):
    return (float(values.min()), float(values.max())) if len(values) else (np.inf, -np.inf)


def _element_frame(chosen, points, lens1, lens2, iv1, iv2, slots, names) -> pd.DataFrame:
    """This partition's points assigned to cover elements: one row per (element, point)
    with the element's slot (its output partition), the table row, the point, the filter
    values and every column at that row."""
    if lens2 is None:
        elements, at = _core.part_assign(lens1, iv1)
    else:
        elements, at = _core.part_assign(lens1, iv1, lens2, iv2)
    at = at.astype(np.int64)
    data = {"slot": slots[elements], "element": elements.astype(np.int64), "row": chosen["rows"][at].astype(np.int64)}
    for j in range(points.shape[1]):
        data[f"p{j}"] = points[at, j]
    data["lens"] = lens1[at]
    if lens2 is not None:
        data["lens2"] = lens2[at]
    for k, (c, _) in enumerate(names):
        data[f"c{k}"] = chosen["stats"][c][at]
    return pd.DataFrame(data)


def _element_counts(lens1, lens2, iv1, iv2, n_elements: int) -> np.ndarray:
    elements, _ = _core.part_assign(lens1, iv1) if lens2 is None else _core.part_assign(lens1, iv1, lens2, iv2)
    return np.bincount(elements.astype(np.int64), minlength=n_elements)


def _cluster_slot(frame: pd.DataFrame, settings, d, names, kinds, levels, second, with_rows) -> dict:
    """One element (the shuffle's partition) clustered by the engine on this worker: its
    rows in table order, nodes, their mean filter values, statistics and memberships."""
    frame = frame.sort_values("row", kind="stable")
    out = {"element": -1, "nodes": 0, "size": [], "lens": [], "lens2": [], "offsets": None, "rows": None, "stats": None,
           "member_rows": np.zeros(0, np.int64), "member_node": np.zeros(0, np.int64)}
    if len(frame) == 0:
        return out
    element = int(frame["element"].iloc[0])
    pts = np.ascontiguousarray(frame[[f"p{j}" for j in range(d)]].to_numpy(dtype=np.float64))
    lens = np.ascontiguousarray(frame["lens"].to_numpy(dtype=np.float64))
    lens2 = np.ascontiguousarray(frame["lens2"].to_numpy(dtype=np.float64)) if second else None
    offsets, positions, node_lens, node_lens2 = _core.element_nodes(settings, pts, lens, lens2)
    spec = []
    for k, (c, kind) in enumerate(names):
        v = frame[f"c{k}"].to_numpy()
        if kind == "category":
            spec.append((c, np.ascontiguousarray(v, dtype=np.int64), levels[c]))
        else:
            # A time column's statistics are of its instants (its zone is not read there).
            spec.append((c, np.ascontiguousarray(v, dtype=np.float64), "time" if kind == "time" else None))
    mini = _raw_core.Table.from_columns("element", _aligned(spec))
    rows = frame["row"].to_numpy(dtype=np.int64)
    sizes = np.diff(offsets.astype(np.int64))
    node_of = np.repeat(np.arange(len(sizes), dtype=np.int64), sizes)
    out.update(element=element, nodes=len(sizes), size=sizes, lens=node_lens, lens2=node_lens2,
               stats=_core.element_statistics(mini, offsets, positions, settings),
               member_rows=rows[positions.astype(np.int64)], member_node=node_of)
    if with_rows:
        out["offsets"] = offsets
    return out


def _without_members(result: dict, keep_rows: bool) -> dict:
    """An element's result as the client needs it: the member rows only when kept."""
    out = dict(result)
    out.pop("member_node")
    if not keep_rows:
        out.pop("member_rows")
    return out


def _memberships(result: dict, first_node: int) -> pd.DataFrame:
    return pd.DataFrame({"row": result["member_rows"], "node": result["member_node"] + first_node})


def _count_shared(frame: pd.DataFrame) -> dict:
    """Per row (a group-by on row ids after the shuffle by row), the nodes that hold it:
    pairs and triples of them counted, and the rows held. Arrays of (a, b, count) and
    (a, b, c, count), a < b < c."""
    empty2, empty3 = np.zeros((0, 3), np.int64), np.zeros((0, 4), np.int64)
    if len(frame) == 0:
        return {"pairs": empty2, "triples": empty3, "rows": 0}
    f = frame.sort_values(["row", "node"], kind="stable")
    rows = f["row"].to_numpy()
    nodes = f["node"].to_numpy().astype(np.int64)
    new = np.r_[True, rows[1:] != rows[:-1]]
    group = np.cumsum(new) - 1
    n = len(rows)
    longest = int(np.max(np.bincount(group))) if n else 0
    pairs, triples = [empty2[:, :2]], [empty3[:, :3]]
    for d1 in range(1, longest):
        i = np.flatnonzero(group[:n - d1] == group[d1:])
        pairs.append(np.stack([nodes[i], nodes[i + d1]], axis=1))
        for d2 in range(d1 + 1, longest):
            j = i[i + d2 < n]
            j = j[group[j] == group[j + d2]]
            triples.append(np.stack([nodes[j], nodes[j + d1], nodes[j + d2]], axis=1))
    return {"pairs": _tally(np.concatenate(pairs)), "triples": _tally(np.concatenate(triples)), "rows": int(new.sum())}


def _tally(keys: np.ndarray, counts: np.ndarray | None = None) -> np.ndarray:
    """Distinct rows of ``keys`` with their (summed) counts as a last column."""
    width = keys.shape[1]
    if len(keys) == 0:
        return np.zeros((0, width + 1), np.int64)
    uniq, inverse = np.unique(keys, axis=0, return_inverse=True)
    total = np.bincount(inverse.ravel(), weights=None if counts is None else counts, minlength=len(uniq)).astype(np.int64)
    return np.concatenate([uniq, total[:, None]], axis=1)


def _add_shared(*parts: dict) -> dict:
    out = {"rows": sum(p["rows"] for p in parts)}
    for key in ("pairs", "triples"):
        allp = np.concatenate([p[key] for p in parts])
        out[key] = _tally(allp[:, :-1], allp[:, -1])
    return out


def _add_arrays(*arrays):
    return np.sum(arrays, axis=0)


# ---------------------------------------------------------------- exact order statistics

def _keys(values: np.ndarray) -> np.ndarray:
    """Unsigned keys whose order is the values' total order (f64::total_cmp)."""
    u = np.ascontiguousarray(values, dtype=np.float64).view(np.uint64)
    neg = (u >> np.uint64(63)).astype(bool)
    return np.where(neg, ~u, u | np.uint64(1 << 63))


def _from_key(k: int) -> float:
    k = np.uint64(k)
    u = (k & ~np.uint64(1 << 63)) if (k >> np.uint64(63)) else ~k
    return float(np.array([u], dtype=np.uint64).view(np.float64)[0])


def _digit_counts(values, prefixes, shift):
    """For each prefix (the key's bits above ``shift + 16``), the counts of the next 16 bits."""
    keys = _keys(values)
    out = np.zeros((len(prefixes), 65536), dtype=np.int64)
    for i, p in enumerate(prefixes):
        sel = keys if p is None else keys[(keys >> np.uint64(shift + 16)) == np.uint64(p)]
        out[i] = np.bincount(((sel >> np.uint64(shift)) & np.uint64(0xFFFF)).astype(np.int64), minlength=65536)
    return out


# ---------------------------------------------------------------- the run

class Run:
    """One cluster run: the stages in order, with the seconds each took (``timings``)."""

    def __init__(self, source: Source, settings, *, rows: bool = True, max_element_rows: int | None = None,
                 max_points_one_worker: int = MAX_POINTS_ONE_WORKER, progress: Callable[[str], None] | None = None,
                 fan_in: int = 8):
        import dask

        self.dask = dask
        self.source = source
        s = settings if isinstance(settings, Settings) else Settings(settings)
        doc = s.to_dict()
        self.settings = s.to_json()
        _core.parts_check(self.settings)
        self.doc = doc
        self.rows = rows
        self.max_element_rows = max_element_rows
        self.max_points_one_worker = max_points_one_worker
        self.progress = progress or (lambda stage: None)
        self.fan_in = fan_in
        self.timings: dict = {}
        self._t = time.perf_counter()
        self._stage = None

    # -- helpers

    def _begin(self, stage: str):
        now = time.perf_counter()
        if self._stage is not None:
            self.timings[self._stage] = now - self._t
        self._stage, self._t = stage, now
        if stage:
            self.progress(stage)

    def _tree(self, items: list, combine):
        """A reduction: ``combine`` over ``fan_in`` neighbours at a time, in order."""
        d = self.dask.delayed(combine, pure=True)
        while len(items) > 1:
            items = [d(*items[i:i + self.fan_in]) if len(items[i:i + self.fan_in]) > 1 else items[i]
                     for i in range(0, len(items), self.fan_in)]
        return items[0]

    def _fold(self, init, step, parts: list):
        """An ordered fold: the state handed from part to part in table order."""
        d = self.dask.delayed(step, pure=True)
        acc = init
        for p in parts:
            acc = d(acc, p)
        return acc

    def _compute(self, *xs):
        return self.dask.compute(*xs)

    def _persist(self, xs: list) -> list:
        """``xs`` computed and kept on the workers; waits for them on a distributed
        cluster (where persist returns at once), so each stage's seconds are its own."""
        out = list(self.dask.persist(*xs))
        try:
            from distributed import get_client, wait

            get_client()
        except (ImportError, ValueError):
            return out
        wait(out)
        return out

    def _select(self, values: list, ranks: Sequence[int]) -> dict:
        """The values of the given ranks (0-based, in increasing order of value) among
        all of ``values`` (delayed arrays), exactly: four rounds of 16-bit digit counts."""
        d = self.dask.delayed(_digit_counts, pure=True)
        want = {int(r): [None, int(r)] for r in ranks}   # rank -> [key prefix, rank within it]
        for shift in (48, 32, 16, 0):
            prefixes = sorted({p for p, _ in want.values()}, key=lambda p: -1 if p is None else p)
            counts = self._compute(self._tree([d(v, prefixes, shift) for v in values], _add_arrays))[0]
            for r, (p, k) in want.items():
                row = counts[prefixes.index(p)]
                cum = np.cumsum(row)
                digit = int(np.searchsorted(cum, k, side="right"))
                below = int(cum[digit - 1]) if digit else 0
                want[r] = [((0 if p is None else p) << 16) | digit, k - below]
        return {r: _from_key(p) for r, (p, _) in want.items()}

    # -- the stages

    def compute(self) -> str:
        dask = self.dask
        delayed = dask.delayed
        src = self.source
        frames = src.frame.to_delayed()
        names = [str(c) for c in src.frame.columns]
        kinds = {c: ("text" if src.cells else _kind(t)) for c, t in zip(names, src.frame.dtypes)}
        if src.cells:
            kinds = {c: "cells" for c in names}
        s = self.settings

        self._begin("table")
        scans = self._compute(*[delayed(_scan, pure=True)(f, src.cells, kinds, names) for f in frames])
        offsets = np.concatenate([[0], np.cumsum([x["n"] for x in scans])]).astype(np.int64)
        n_rows = int(offsets[-1])
        if n_rows >= 2**32 - 1:
            raise NervureError(f"the table has {n_rows} rows; row numbers are 32-bit in the engine, so at most {2**32 - 2}")
        for k, x in enumerate(scans):
            if "columns" in x:
                raise NervureError(f"partition {k} (data rows {offsets[k] + 1} to {offsets[k + 1]}) has the columns {x['columns']}, "
                                   f"not the table's {names}; give every partition the same columns")
            if x.get("misfit"):
                c, i, v, dt = x["misfit"]
                raise NervureError(f"partition {k} (data rows {offsets[k] + 1} to {offsets[k + 1]}): column '{c}' holds {dt} here, "
                                   f"not the {kinds[c]}s it holds in the table; data row {offsets[k] + i + 1} holds '{v}'")
        first_text = {}   # column -> (partition, data row, text)
        for k, x in enumerate(scans):
            for c, (i, t) in x.get("first_text", {}).items():
                if c not in first_text:
                    first_text[c] = (k, int(offsets[k] + i + 1), t)
        if src.cells:
            kinds = {c: ("cells" if c in first_text else "number") for c in names}
        text_cols = [c for c in names if kinds[c] in _TEXT]

        def modes(k):
            return {c: ("auto" if first_text[c][0] == k else "numbersAsText" if k < first_text[c][0] else "text")
                    for c in first_text}

        level_parts = [delayed(_levels_of, pure=True)(f, src.cells, modes(k), text_cols, int(offsets[k])) for k, f in enumerate(frames)]
        levels = self._compute(self._tree(level_parts, _union))[0] if text_cols else {}
        ft = {c: (r, t) for c, (_, r, t) in first_text.items()}
        cols = self._persist([delayed(_convert, pure=True)(f, src.cells, kinds, modes(k), levels, int(offsets[k])) for k, f in enumerate(frames)])

        self._begin("points")
        # A column read as numbers that holds text: the engine's message, raised by the
        # partition that holds the column's first text (the one it names).
        as_numbers = set(self.doc["columns"]) | {(lens or {}).get("column") for lens in (self.doc["lens"], self.doc.get("lens2"))}
        for c in sorted(as_numbers & set(first_text), key=lambda c: first_text[c][1]):
            k = first_text[c][0]
            self._compute(delayed(_choose, pure=True)(cols[k], names, kinds, levels, ft, s, int(offsets[k]),
                                                      [(m, None) for m in _core.median_columns(s)], k, int(offsets[k + 1] - offsets[k])))
        medians = []
        for c in _core.median_columns(s):
            present = [delayed(_present, pure=True)(p, names, kinds, levels, ft, s, c) for p in cols]
            n = int(sum(self._compute(*[delayed(len)(v) for v in present])))
            if n == 0:
                medians.append((c, None))
                continue
            got = self._select(present, [n // 2] if n % 2 else [n // 2 - 1, n // 2])
            medians.append((c, got[n // 2] if n % 2 else _core.middle_of(got[n // 2 - 1], got[n // 2])))
        chosen = self._persist([delayed(_choose, pure=True)(p, names, kinds, levels, ft, s, int(offsets[k]), medians, k,
                                                           int(offsets[k + 1] - offsets[k])) for k, p in enumerate(cols)])
        counts_json = _core.total_counts(list(self._compute(*[delayed(_field, pure=True)(c, "counts") for c in chosen])), s, self.source.name)
        counts = json.loads(counts_json)
        n = counts["kept"]
        d = len(self.doc["columns"])
        zero = (0, np.zeros(d), np.full(d, np.inf), np.full(d, -np.inf))
        count, sums, lo, hi = self._compute(self._fold(zero, _add_sums, chosen))[0]
        sq = None
        if self.doc["scaling"] == "zscore":
            sq = self._compute(self._fold((sums / count, np.zeros(d)), _add_squares, chosen))[0][1]
        scales = _core.scales(s, count, sums, lo, hi, sq)
        points = self._persist([delayed(_scaled, pure=True)(c, scales) for c in chosen])
        # What later stages need of the converted partitions: the column kinds and the time
        # columns' ranges; then the workers let them go (the chosen rows carry every column).
        stat_names = self._stat_names(cols[0], names, kinds, levels, ft)
        self._time_ranges = list(self._compute(*[delayed(_time_ranges, pure=True)(p, names, kinds, levels, ft, s) for p in cols]))
        cols = cols[:1]
        per_part = self._compute(*[delayed(len)(c["rows"]) for c in chosen])
        starts = np.concatenate([[0], np.cumsum(per_part)]).astype(np.int64)

        self._begin("filter")
        lenses = [self._lens(1, points, chosen, starts, n, d)]
        if self.doc.get("lens2"):
            lenses.append(self._lens(2, points, chosen, starts, n, d))
        lenses = [self._persist(ls) for ls in lenses]

        self._begin("cover")
        axes = []
        for which, ls in enumerate(lenses, start=1):
            lo_hi = self._compute(self._tree([delayed(_minmax, pure=True)(v) for v in ls],
                                             _widest))[0]
            cover = self.doc["cover2"] if which == 2 and self.doc.get("cover2") else self.doc["cover"]
            if cover.get("kind", "uniform") == "balanced":
                ranks = [int(r) for r in _core.balanced_ranks(s, which, n)]
                got = self._select(ls, ranks)
                iv = _core.balanced_intervals(s, which, n, ranks, [got[r] for r in ranks])
            else:
                iv = _core.uniform_intervals(s, which, lo_hi[0], lo_hi[1])
            axes.append((lo_hi[0], lo_hi[1], iv))
        n1 = len(axes[0][2])
        n_elements = n1 * (len(axes[1][2]) if len(axes) > 1 else 1)
        second = len(lenses) > 1

        def frame_of(k, slots):
            return delayed(_element_frame, pure=True)(chosen[k], points[k], lenses[0][k], lenses[1][k] if second else None,
                                                      axes[0][2], axes[1][2] if second else None, slots, stat_names)
        sizes = self._compute(self._tree([delayed(_element_counts, pure=True)(lenses[0][k], lenses[1][k] if second else None, axes[0][2],
                                                                               axes[1][2] if second else None, n_elements)
                                          for k in range(len(chosen))], _add_arrays))[0]
        self._check_sizes(sizes, axes, d, len(stat_names))

        self._begin("shuffle by element")
        import dask.dataframe as dd

        nonempty = np.flatnonzero(sizes)
        slots = np.zeros(n_elements, dtype=np.int64)
        slots[nonempty] = np.arange(len(nonempty))
        meta = self._frame_meta(d, second, stat_names, kinds)
        shuffled = dd.from_delayed([frame_of(k, slots) for k in range(len(chosen))], meta=meta, verify_meta=False)
        k_slots = max(len(nonempty), 1)
        divisions = list(range(k_slots)) + [k_slots - 1]
        by_element = self._persist(shuffled.set_index("slot", divisions=divisions).to_delayed())
        self._begin("clusters")
        results = self._persist([delayed(_cluster_slot, pure=True)(f, s, d, stat_names, kinds, levels, second, self.rows)
                                 for f in by_element])
        del by_element
        heads = self._compute(*[delayed(_head, pure=True)(r) for r in results])
        order = sorted(range(len(heads)), key=lambda i: heads[i][0])
        order = [i for i in order if heads[i][1] > 0]
        first_node = {}
        total = 0
        for i in order:
            first_node[i] = total
            total += heads[i][1]

        self._begin("nerve")
        members = [delayed(_memberships, pure=True)(results[i], first_node[i]) for i in order]
        if members:
            mframe = dd.from_delayed(members, meta=pd.DataFrame({"row": np.zeros(0, np.int64), "node": np.zeros(0, np.int64)}),
                                     verify_meta=False)
            by_row = mframe.shuffle(on="row", npartitions=max(1, min(len(chosen), len(members) * 2)))
            shared = self._compute(self._tree([delayed(_count_shared, pure=True)(f) for f in by_row.to_delayed()], _add_shared))[0]
        else:
            shared = {"pairs": np.zeros((0, 3), np.int64), "triples": np.zeros((0, 4), np.int64), "rows": 0}

        self._begin("graph file")
        got = self._compute(*[delayed(_without_members, pure=True)(results[i], self.rows) for i in order]) if order else []
        text = self._file(got, counts_json, axes, sizes, shared, cols[0], names, kinds, levels, ft, n_rows)
        self._begin("")
        return text

    def _lens(self, which, points, chosen, starts, n, d) -> list:
        delayed = self.dask.delayed
        s = self.settings
        need = _core.lens_needs(s, which)
        lens = self.doc["lens" if which == 1 else "lens2"]
        plan, extra = {"column": "column"}.get(need), {}
        if need == "column":
            index = 0 if which == 1 or self.doc["lens"]["kind"] != "column" else 1
            extra = {"index": index}
        elif need in ("covariance", "norms"):
            zero = (0, np.zeros(d), np.full(d, np.inf), np.full(d, -np.inf))
            count, sums, _, _ = self._compute(self._fold(zero, _add_point_sums, points))[0]
            mu = sums / count
            if need == "norms":
                total = self._compute(self._fold(0.0, _add_norms, points))[0]
                plan, extra = "norms", {"mu": mu, "mean_sq": total / n}
            else:
                _, c, cnt = self._compute(self._fold((mu, np.zeros(d * d), 0), _add_cross, points))[0]
                if lens["kind"] == "principal":
                    v = _core.principal_axis(s, which, n, mu, c, cnt)
                    plan, extra = "principal", {"mu": mu, "v": v}
                else:
                    wanted = _core.reference_points(n, int(self.doc.get("seed", 1)))
                    whiten = _Whiten(s, which, n, mu, c, cnt)
                    refs = self._gather(points, starts, wanted, whiten)
                    plan, extra = "density", {"n": n, "mu": mu, "c": c, "count": cnt, "refs": refs}
        elif need == "references":
            wanted = _core.reference_points(n, int(self.doc.get("seed", 1)))
            plan, extra = "references", {"refs": self._gather(points, starts, wanted, None)}
        else:
            if n > self.max_points_one_worker:
                raise NervureError(f"setting '{'lens' if which == 1 else 'lens2'}': the {lens['kind']} filter needs every point's nearest "
                                   f"points among all {n} points, which this run computes on one worker up to {self.max_points_one_worker} points "
                                   f"(max_points_one_worker); choose another filter (principal, density, eccentricity) for a table this size")
            every = self._gather(points, starts, np.arange(n, dtype=np.uint64), None)
            values = delayed(_core.knn_values, pure=True)(s, which, every)
            return [delayed(_lens, pure=True)(s, which, "given", p, c, {"values": delayed(_slice, pure=True)(values, int(starts[k]), int(starts[k + 1]))})
                    for k, (p, c) in enumerate(zip(points, chosen))]
        return [delayed(_lens, pure=True)(s, which, plan, p, c, extra) for p, c in zip(points, chosen)]

    def _gather(self, points, starts, wanted, transform):
        """The points of global indices ``wanted`` (sorted), in order, from the
        partitions that hold them."""
        delayed = self.dask.delayed
        wanted = np.asarray(wanted, dtype=np.int64)
        picks = []
        for k, p in enumerate(points):
            lo, hi = np.searchsorted(wanted, [starts[k], starts[k + 1]])
            if hi > lo:
                picks.append(delayed(_pick, pure=True)(p, int(starts[k]), wanted, transform))
        got = self._compute(*picks)
        return np.ascontiguousarray(np.concatenate(got, axis=0))

    def _stat_names(self, cols0, names, kinds, levels, ft) -> list:
        """(name, kind) of every column as the engine typed it (derived ones too)."""
        got = self._compute(self.dask.delayed(_kinds_of_part, pure=True)(cols0, names, kinds, levels, ft, self.settings))[0]
        for c, kind in got:
            if kind == "category" and c not in levels:
                raise NervureError(f"derived column '{c}' holds text; a cluster run keeps a text column's levels in the order the whole "
                                   f"table first shows them, which it does not know for a derived text column: derive it before the run "
                                   f"(a column of the data) or build this graph on one machine")
        return got

    def _frame_meta(self, d, second, stat_names, kinds) -> pd.DataFrame:
        data = {"slot": np.zeros(0, np.int64), "element": np.zeros(0, np.int64), "row": np.zeros(0, np.int64)}
        for j in range(d):
            data[f"p{j}"] = np.zeros(0)
        data["lens"] = np.zeros(0)
        if second:
            data["lens2"] = np.zeros(0)
        for k, (c, kind) in enumerate(stat_names):
            data[f"c{k}"] = np.zeros(0, np.int64) if kind == "category" else np.zeros(0)
        return pd.DataFrame(data)

    def _check_sizes(self, sizes, axes, d, n_columns):
        limit = self.max_element_rows
        if limit is None:
            limit = _default_element_limit(d + n_columns + 4)
        big = int(np.argmax(sizes))
        if sizes[big] > limit:
            n2 = len(axes[1][2]) if len(axes) > 1 else 1
            iv = axes[0][2][big // n2]
            where = f"filter interval [{iv[0]:.6g}, {iv[1]:.6g}]"
            if n2 > 1:
                iv2 = axes[1][2][big % n2]
                where += f" × second filter interval [{iv2[0]:.6g}, {iv2[1]:.6g}]"
            raise NervureError(f"cover element {big} ({where}) holds {int(sizes[big])} rows, more than one worker clusters "
                               f"(at most {limit}, max_element_rows); use more intervals, or give the workers more memory")

    def _file(self, got, counts_json, axes, sizes, shared, cols0, names, kinds, levels, ft, n_rows) -> str:
        s = self.settings
        # Each time column's first and last instant and precision joined over the parts.
        ranges = self._time_ranges
        info = self._compute(self.dask.delayed(_info_of_part, pure=True)(cols0, names, kinds, levels, ft, s, self.source.name, n_rows, ranges))[0]
        node_element = np.concatenate([np.full(r["nodes"], r["element"], dtype=np.uint64) for r in got]) if got else np.zeros(0, np.uint64)
        node_size = np.concatenate([np.asarray(r["size"], dtype=np.uint64) for r in got]) if got else np.zeros(0, np.uint64)
        node_lens = np.concatenate([np.asarray(r["lens"], dtype=np.float64) for r in got]) if got else np.zeros(0)
        second = len(axes) > 1
        node_lens2 = (np.concatenate([np.asarray(r["lens2"], dtype=np.float64) for r in got]) if got else np.zeros(0)) if second else None
        node_rows = None
        if self.rows:
            offsets = [np.zeros(1, np.uint64)]
            rows = []
            at = 0
            for r in got:
                rows.append(r["member_rows"].astype(np.uint32))
                offsets.append(np.asarray(r["offsets"][1:], dtype=np.uint64) + at)
                at += len(r["member_rows"])
            node_rows = (np.concatenate(offsets), np.concatenate(rows) if rows else np.zeros(0, np.uint32))
        stats = _core.join_statistics([r["stats"] for r in got]) if got else "[]"
        if not got:
            stats = json.dumps([])
        pairs, triples = shared["pairs"], shared["triples"]
        pa = tuple(np.ascontiguousarray(pairs[:, i], dtype=np.uint32) for i in range(3))
        tr = tuple(np.ascontiguousarray(triples[:, i], dtype=np.uint32) for i in range(4))
        axis2 = (axes[1][0], axes[1][1], axes[1][2]) if second else None
        return _core.graph_file_of_parts(s, info, counts_json, axes[0][0], axes[0][1], axes[0][2], axis2, int(np.count_nonzero(sizes)),
                                         node_element, node_size, node_lens, node_lens2, node_rows, pa, tr, int(shared["rows"]), stats)


class _Whiten:
    """Whitens points by a density filter's kernel (made again on each worker from the
    covariance sums: the same Cholesky factor)."""

    def __init__(self, settings, which, n, mu, c, count):
        self.args = (settings, which, n, mu, c, count)

    def __call__(self, points):
        return _core.density_whiten(*self.args, np.ascontiguousarray(points))


def _default_element_limit(values_per_row: int) -> int:
    """Rows of one element a worker can cluster: half of the smallest worker's memory
    limit at ``BYTES_PER_VALUE`` per value (all of the machine's memory without a cluster)."""
    memory = None
    try:
        from distributed import get_client

        info = get_client().scheduler_info()
        limits = [w.get("memory_limit") or 0 for w in info.get("workers", {}).values()]
        memory = min(limits) if limits and min(limits) > 0 else None
    except (ImportError, ValueError):
        pass
    if memory is None:
        import psutil

        memory = psutil.virtual_memory().total
    return int(memory // 2 // (BYTES_PER_VALUE * max(values_per_row, 1)))


def graph(data, settings, *, client=None, rows: bool = True, max_element_rows: int | None = None,
          max_points_one_worker: int = MAX_POINTS_ONE_WORKER, blocksize=DEFAULT_BLOCKSIZE, name: str | None = None,
          progress: Callable[[str], None] | None = None, out: str | os.PathLike | None = None) -> Graph:
    """The Mapper graph of ``data`` under ``settings`` computed on the Dask cluster of
    ``client`` (the current one when None; Dask's default scheduler when there is none).
    ``rows=False`` leaves the member rows out of the graph file (tables of hundreds of
    millions of rows). ``out`` writes the graph file. The graph equals
    :func:`nervure.graph`'s on the same table and settings."""
    src = read(data, blocksize=blocksize, name=name)
    run = Run(src, settings, rows=rows, max_element_rows=max_element_rows, max_points_one_worker=max_points_one_worker, progress=progress)
    if client is not None:
        with client.as_current():
            text = run.compute()
    else:
        text = run.compute()
    g = Graph(_raw_core.Bench.open(text, src.name), None)
    g.timings = run.timings
    if out is not None:
        with open(out, "w", encoding="utf-8") as f:
            f.write(text)
    g.document_text = text
    return g
