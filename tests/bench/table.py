"""Prints the benchmark's one table from the JSON files tests/bench.sh wrote.

    python3 table.py ROWS OUT_DIR SCRIPT_TIMEOUT UPTIME
"""
import json
import os
import sys

rows, out, timeout, uptime = sys.argv[1], sys.argv[2], float(sys.argv[3]), sys.argv[4]


def load(name):
    try:
        with open(os.path.join(out, name)) as f:
            return json.loads(f.read().strip().splitlines()[-1])
    except (OSError, ValueError, IndexError):
        return {}


def load_lines(name):
    try:
        with open(os.path.join(out, name)) as f:
            return [json.loads(l) for l in f.read().strip().splitlines() if l.startswith("{")]
    except (OSError, ValueError):
        return []


eng_lines = load_lines("engine-timings.json")
eng = next((l for l in eng_lines if "rerun" not in l), {})
rerun = next((l["rerun"] for l in eng_lines if "rerun" in l), None)
script = load("script-timings.json")
page = load("page.json")
cmp = load("compare.json")
ingest = load("ingest.json")


def s(v):
    return "-" if v is None else f"{v:.2f}"


def mb(v):
    return "-" if not v else f"{v / 2**20:.0f} MB"


e_total = eng.get("total")
lines = []
head = ["runner", "rows", "read s", "filter s", "cover+clusters s", "graph s", "layout s", "total s", "peak memory", "speed vs script"]
lines.append(head)
st = script.get("times", {})
s_total = st.get("total")
ratio = f"{s_total / e_total:.1f}x" if s_total and e_total else (f">= {timeout / e_total:.0f}x (script stopped at {timeout:.0f} s)" if script.get("unfinished") and e_total else "-")
lines.append(["engine (native)", rows, s(eng.get("read")), s((eng.get("points") or 0) + (eng.get("lens") or 0)), s((eng.get("cover") or 0) + (eng.get("clusters") or 0)), s(eng.get("graph")), s(eng.get("layout")), s(e_total), mb(eng.get("peakMemoryBytes")), ratio])
if st:
    lines.append(["script (pandas+sklearn+networkx)", rows, s(st.get("read")), s(st.get("filter")), s(st.get("clusters")), s(st.get("graph")), "-", s(s_total), "-", "1.0x"])
elif script.get("unfinished"):
    lines.append(["script (pandas+sklearn+networkx)", rows, "-", "-", "-", "-", "-", f"> {timeout:.0f}", "-", "1.0x"])
if page and not page.get("skipped") and not page.get("failed"):
    # File input to the first graph drawn (built with the benchmark's settings, which the
    # page took from its address); the build is what follows the read.
    read = page.get("readMs")
    total = (page.get("fileToFirstGraphMs") or 0) / 1000
    build = ((page.get("firstGraphMs") or 0) - (read or 0)) / 1000
    pr = f"{s_total / total:.1f}x" if s_total and total else "-"
    lines.append(["page (headless Chromium, wasm)", rows, s(read / 1000 if read else None), "(in build)", "(in build)", "(in build)", "(in build)", s(total) + f" (build {s(build)})", mb(page.get("peakRendererBytes")), pr])
widths = [max(len(str(r[i])) for r in lines) for i in range(len(head))]
print(f"load: {uptime.strip()}")
for r in lines:
    print(" | ".join(str(c).ljust(w) for c, w in zip(r, widths)))
if page and not page.get("skipped") and not page.get("failed"):
    print(f"page: file input to the first graph {page.get('fileToFirstGraphMs')} ms (settings from the page address; the page's own count {page.get('firstGraphMs', 0):.0f} ms, "
          f"of which reading {page.get('readMs', 0):.0f} ms); re-colour {page.get('recolourMs'):.0f} ms; "
          f"overlap change {page.get('overlapChangeMs'):.0f} ms; main-thread tasks over 100 ms: {page.get('tasksOver100ms')} (longest {page.get('longestTaskMs'):.0f} ms, "
          f"longest from the file input to the first graph {page.get('longestLoadTaskMs', 0):.0f} ms, longest while the page opened {page.get('longestStartTaskMs', 0):.0f} ms"
          + (f"; where: {', '.join(page['tasksOver100msWhere'])}" if page.get("tasksOver100msWhere") else "") + ")"
          + (f"; tab peak by the first graph {page['peakLoadRendererBytes'] / 1e6:.0f} MB" if page.get("peakLoadRendererBytes") else ""))
    if page.get("firstLookMs") and page.get("readMs"):
        print(f"page: a first look (a sample's graph) drawn {page['firstLookMs'] - page['readMs']:.0f} ms after the read, before that first graph")
    auto = page.get("auto")
    if auto:
        b = auto.get("build") or {}
        sm = auto.get("summary") or {}
        look = f"; a first look {auto['firstLookMs'] - auto['readMs']:.0f} ms after the read" if auto.get("firstLookMs") else ""
        print(f"page, automatic settings (no settings in the address): file input to the first graph {auto['wallMs']} ms (reading {auto['readMs']:.0f} ms{look}, "
              f"clustering on the pool {b.get('poolMs', 0):.0f} ms); {sm.get('nodes')} nodes; tab peak {auto['peakRendererBytes'] / 1e6:.0f} MB")
if rerun:
    print(f"engine: overlap change to {rerun.get('overlap')} on the cached stages {rerun.get('total', 0) * 1000:.0f} ms (cover {rerun.get('cover', 0) * 1000:.0f}, "
          f"clusters {rerun.get('clusters', 0) * 1000:.0f}, graph {rerun.get('graph', 0) * 1000:.0f}, layout {rerun.get('layout', 0) * 1000:.0f} ms)")
if page and not page.get("skipped") and not page.get("failed"):
    parts = page.get("overlapChangeParts") or {}
    if parts:
        names = [("prepareMs", "points/lens/cover"), ("poolMs", "clustering on the pool"), ("buildMs", "graph and layout"), ("graphAndColourMs", "graph out"), ("requestMs", "round trip with first rendering"), ("afterMs", "after (histogram, history)")]
        print("page: overlap change parts: " + "; ".join(f"{w} {parts[k]:.0f} ms" for k, w in names if isinstance(parts.get(k), (int, float))))
    pan = page.get("pan")
    if pan:
        print(f"page: panning a graph of {pan['nodes']} nodes and {pan['edges']} edges: frame gaps median {pan['medianFrameMs']:.1f} ms, 95th percentile {pan['p95FrameMs']:.1f} ms, "
              f"longest {pan['maxFrameMs']:.1f} ms over {pan['frames']} frames; {pan['draws']} drawings of {pan['meanDrawMs']:.2f} ms on average (the first, the whole layer drawn in slices over a few frames, {pan['firstDrawMs']:.1f} ms of drawing)")
        z = pan.get("zoom")
        if z:
            print(f"page: zooming it with the wheel: frame gaps median {z['medianFrameMs']:.1f} ms, 95th percentile {z['p95FrameMs']:.1f} ms, longest {z['maxFrameMs']:.1f} ms "
                  f"over {z['frames']} frames; {z['draws']} drawings, {z['previews']} of them stretched copies while the wheel turned")
if cmp:
    if cmp.get("skipped"):
        print(f"memberships: not compared ({cmp['skipped']})")
    else:
        print(f"memberships: {'same' if cmp.get('ok') else 'DIFFERENT'}; core rows {cmp.get('coreRows')}, border rows {cmp.get('borderRows')}, "
              f"contested border rows {cmp.get('contestedBorderRows')}, border rows in another cluster {cmp.get('borderRowsInOtherCluster')}"
              + ("; " + "; ".join(cmp.get("problems", [])) if cmp.get("problems") else ""))
if ingest and not ingest.get("skipped") and not ingest.get("failed"):
    parts = []
    for key, label in (("native", "native"), ("node", "wasm (node)"), ("chromium", "wasm (Chromium worker, FileReaderSync)")):
        t = ingest.get(key) or {}
        if t.get("totalS"):
            parts.append(f"{label} {t['totalS']:.2f} s = {t['mbPerS']:.0f} MB/s (parsing {t['parseMbPerS']:.0f} MB/s)")
    r = ingest.get("ratios", {})
    print("load path (file to table and first settings): " + "; ".join(parts)
          + f"; wasm / native, whole load path: node {r.get('nodeVsNative')}x, Chromium {r.get('chromiumVsNative')}x"
          + f"; parsing alone: node {r.get('nodeVsNativeParse')}x, Chromium {r.get('chromiumVsNativeParse')}x (fastest of {ingest.get('repeat', 1)} runs each)")
