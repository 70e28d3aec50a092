# %% [markdown]
# # A Mapper graph of the Palmer penguins, from Python
#
# Notebook-style (cells marked `# %%`; run it whole with `python
# examples/penguins_from_python.py [OUT_DIR]`, or cell by cell in an editor that reads the
# marks). It builds a graph of a real open table (palmerpenguins 0.1.6, the penguins
# table: 344 birds, three species, gaps), colours it by a column, tests how solid its
# shape is, and hands it to the page as a graph file.
#
# Needs: `pip install .` from the repository (the `nervure` package), pandas; networkx
# and matplotlib are used when present. The table comes from the palmerpenguins package
# when it is installed, else from `$NERVURE_DATA/penguins.csv` (tests/data/open_tables.py).

# %%
import os
import sys
from pathlib import Path

import numpy as np
import pandas as pd

import nervure

out = Path(sys.argv[1] if len(sys.argv) > 1 else "penguins-out")
out.mkdir(parents=True, exist_ok=True)

try:
    from palmerpenguins import load_penguins

    df = load_penguins()
except ImportError:
    df = pd.read_csv(Path(os.environ.get("NERVURE_DATA", Path.home() / ".cache" / "nervure-data")) / "penguins.csv")
print(df.shape, list(df.columns))

# %% [markdown]
# ## Settings: the page's automatic ones, then our own choices
# The settings are the page's document: export them from the page, or start here.

# %%
s = nervure.Settings.automatic(df)
s["columns"] = ["bill_length_mm", "bill_depth_mm", "flipper_length_mm", "body_mass_g"]
s["scaling"] = "zscore"
s["lens"] = {"kind": "principal", "component": 1}
s["cover"] = {"intervals": 8, "overlap": 0.4}
s["clustering"] = {"kind": "dbscan", "eps": 0.7, "minPoints": 4}
g = nervure.graph(df, s)
print(g)
print(g.summary)

# %% [markdown]
# ## Colour the nodes by a column, and look at the nodes and their rows

# %%
mass = g.values("body_mass_g", "mean")          # one value per node, as the page colours
species = g.statistics()["species"]              # the most common species of each node
nodes = g.nodes.assign(body_mass_g=mass, species=species)
print(nodes.sort_values("lens").head(10))
first = g.members(int(np.argmax(nodes["size"])))  # rows of the largest node (a view)
print(df.iloc[first][["species", "island", "body_mass_g"]].describe(include="all"))

try:
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(7, 5))
    e = g.edges
    for a, b in zip(e["source"], e["target"]):
        ax.plot(nodes["x"][[a, b]], nodes["y"][[a, b]], color="0.6", lw=1, zorder=1)
    pts = ax.scatter(nodes["x"], nodes["y"], s=20 + 4 * nodes["size"], c=mass, cmap="viridis", edgecolor="white", zorder=2)
    fig.colorbar(pts, label="mean body mass (g)")
    ax.set_axis_off()
    ax.set_title("Penguins: Mapper graph coloured by body mass")
    fig.savefig(out / "penguins-graph.png", dpi=120, bbox_inches="tight")
    print("picture:", out / "penguins-graph.png")
except ImportError:
    print("matplotlib is not installed: no picture (the graph file below opens in the page)")

# %% [markdown]
# ## Test the shape
# A Mapper graph depends on its settings: a loop or a flare is a hypothesis. Three checks:
# the features' resampling test, a grid of neighbouring settings, and NetworkX's view.

# %%
r = nervure.resample(df, s, draws=50, alpha=0.05, seed=1)
print("features holding up at α = 0.05:")
print(r.features[["kind", "birth", "death", "persistence", "significant"]])

cells = nervure.grid(df, s, intervals=[6, 8, 10, 12], overlaps=[0.3, 0.4, 0.5]).cells
print(cells.pivot(index="intervals", columns="overlap", values="components"))

try:
    import networkx as nx

    G = g.to_networkx(colour="body_mass_g")
    print("components (NetworkX):", nx.number_connected_components(G), "loops:", len(nx.cycle_basis(G)))
except ImportError:
    pass

# %% [markdown]
# ## Why is a part there? And hand it on
# Rank the columns by how the rows of the heaviest node differ from the rest (the
# p-values only rank: the node was picked from the same data). Then write the graph file
# (open it in the page with Open graph…: it is coloured there by any column, without the
# table) and GraphML for other tools.

# %%
heaviest = int(np.nanargmax(mass))
why = nervure.explain(df, s, nodes=[heaviest])
print(why.columns[["name", "ks", "smd", "meanIn", "meanOut"]].head())
print(why.categories.head())
g.save(out / "penguins.graph.json")
s.save(out / "penguins.settings.json")
(out / "penguins.graphml").write_text(g.export("graphml", colour="body_mass_g"))
print("wrote", sorted(p.name for p in out.iterdir()))
