"""Data in: pandas frames, NumPy arrays with column names, file paths, turned into the
engine's table (typed columns: numbers with NaN for missing, texts as codes into levels).

Numbers are copied once, into the engine's table, and shared from there by every graph
built on it. A float64 column of a frame is read where it stands (no intermediate copy);
a column of a C-ordered 2-D array is strided and is made contiguous first (a Fortran-ordered
array's columns are not). Texts keep the order of first appearance, as the engine's CSV
reader does. Date-times become seconds since 1970 (UTC), the engine's time unit.
"""

from __future__ import annotations

import os
from typing import Sequence

import numpy as np

from . import _core

Table = _core.Table


def _is_path(x) -> bool:
    return isinstance(x, (str, os.PathLike))


def as_table(data, *, columns: Sequence[str] | None = None, name: str | None = None) -> "_core.Table":
    """The engine's table of ``data``: a :class:`Table`; a path or a list of paths (CSV
    or other delimited text, ICARTT, .xlsx, read as the page reads them; several are
    stacked with a ``source_file`` column); a pandas DataFrame; a 2-D NumPy array with
    ``columns`` naming its columns; or a dict of 1-D arrays."""
    if isinstance(data, _core.Table):
        return data
    if _is_path(data):
        return _core.Table.read([os.fspath(data)])
    if isinstance(data, (list, tuple)) and data and all(_is_path(p) for p in data):
        return _core.Table.read([os.fspath(p) for p in data])
    if isinstance(data, np.ndarray):
        if data.ndim != 2:
            raise _core.NervureError(f"a NumPy array of data is 2-D (rows × columns); this one has {data.ndim} dimensions")
        if columns is None or len(columns) != data.shape[1]:
            raise _core.NervureError(f"name the array's {data.shape[1]} columns: columns=[...]")
        if not np.issubdtype(data.dtype, np.number):
            raise _core.NervureError(f"the array holds {data.dtype}, not numbers; use a pandas DataFrame for text columns")
        cols = [(str(c), np.ascontiguousarray(data[:, j], dtype=np.float64), None) for j, c in enumerate(columns)]
        return _core.Table.from_columns(name or "array", cols)
    if isinstance(data, dict):
        import pandas as pd

        return _from_frame(pd.DataFrame(data), name or "data")
    try:
        import pandas as pd
    except ImportError:  # pragma: no cover - pandas is a dependency
        pd = None
    if pd is not None and isinstance(data, pd.DataFrame):
        if columns is not None:
            data = data[list(columns)]
        return _from_frame(data, name or data.attrs.get("name", "dataframe"))
    raise _core.NervureError(
        f"cannot read data of type {type(data).__name__}: give a pandas DataFrame, a 2-D NumPy array with columns=[...], a file path or a list of paths"
    )


def _from_frame(df, name: str) -> "_core.Table":
    import pandas as pd

    seen = set()
    cols = []
    for c in df.columns:
        key = str(c)
        if key in seen:
            raise _core.NervureError(f"column '{key}' is in the frame twice; give each column its own name")
        seen.add(key)
        s = df[c]
        dt = s.dtype
        if pd.api.types.is_bool_dtype(dt):
            # As a CSV of the frame reads: the texts True and False.
            codes, levels = pd.factorize(s.astype("object").map(lambda v: v if pd.isna(v) else str(v)), sort=False)
            cols.append((key, codes.astype(np.int64, copy=False), [str(v) for v in levels]))
        elif pd.api.types.is_numeric_dtype(dt):
            values = s.to_numpy(dtype=np.float64, na_value=np.nan)
            cols.append((key, np.ascontiguousarray(values), None))
        elif pd.api.types.is_datetime64_any_dtype(dt):
            t = s.dt.tz_convert("UTC") if getattr(s.dt, "tz", None) is not None else s
            ns = t.to_numpy(dtype="datetime64[ns]").astype(np.int64)
            values = ns.astype(np.float64) / 1e9
            values[t.isna().to_numpy()] = np.nan
            # A time column, as the reader types date-time text: zone-aware frames were
            # written with a zone (kept as UTC), naive ones without.
            cols.append((key, values, "time-utc" if getattr(s.dt, "tz", None) is not None else "time"))
        else:
            text = s.astype("object").map(lambda v: v if pd.isna(v) else str(v).strip())
            text = text.where(text != "", None)
            codes, levels = pd.factorize(text, sort=False, use_na_sentinel=True)
            cols.append((key, codes.astype(np.int64, copy=False), [str(v) for v in levels]))
    return _core.Table.from_columns(str(name), cols)
