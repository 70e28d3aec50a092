#!/usr/bin/env python3
"""The benchmark's growth and first-look part: the automatic settings on tables of 300 000
rows and more, run by two builds of the runner side by side in one run (each case by one
build, then the other, so both see the same load), and the first look against the full
graph. Python 3 standard library only.

    python3 growth.py --before BIN --after BIN --first-look BIN [--page PAGE.mjs] CASE=FILE...

CASE names a case; the names `wide-300000` and `wide-1500000` give the growth line (cost
of 1 500 000 rows over the cost of 300 000). For each case and build: the whole run and
its clustering stage (seconds, from `--timings`), the graph's counts, and whether the two
builds wrote the same graph file (byte for byte: same clusters, same layout). The first
look (examples/first_look_bench.rs, the `after` build): its seconds and the full graph's,
components (all, and those holding 1 % of the rows or more) and loops of each, and the
share of random pairs of rows that both graphs put alike (one component or two). With
--page, each case also in the page (tests/bench/page.mjs with the automatic settings): the
read, the first look after the read, the full graph after the file input.
"""
import argparse
import hashlib
import json
import os
import subprocess
import sys
import tempfile


def run_cli(binary, data, out):
    """One run with the automatic settings: (timings, summary, digest of the graph file)."""
    p = subprocess.run([binary, data, "--timings", "--summary", "--out", out], capture_output=True, text=True)
    if p.returncode != 0:
        return {"failed": p.stderr.strip().splitlines()[-1:]}, {}, None
    timings = next((json.loads(l) for l in p.stderr.splitlines() if l.startswith("{") and "total" in l), {})
    summary = next((json.loads(l) for l in p.stdout.splitlines() if l.startswith("{")), {})
    with open(out, "rb") as f:
        digest = hashlib.sha256(f.read()).hexdigest()[:16]
    return timings, summary, digest


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", required=True)
    ap.add_argument("--after", required=True)
    ap.add_argument("--first-look", required=True)
    ap.add_argument("--before-name", default="before")
    ap.add_argument("--page", help="tests/bench/page.mjs: also time each case in the page")
    ap.add_argument("cases", nargs="+")
    a = ap.parse_args()
    cases = [c.split("=", 1) for c in a.cases]
    results = {}
    tmp = tempfile.mkdtemp(prefix="nervure-growth-")
    for name, data in cases:
        r = results[name] = {}
        for which, binary in (("after", a.after), ("before", a.before)):
            print(f"growth: {name}, {which}", file=sys.stderr)
            r[which] = run_cli(binary, data, os.path.join(tmp, f"{name}-{which}.json"))
        print(f"growth: {name}, first look", file=sys.stderr)
        p = subprocess.run([a.first_look, data], capture_output=True, text=True)
        r["first"] = json.loads(p.stdout.strip().splitlines()[-1]) if p.returncode == 0 and p.stdout.strip() else {"failed": p.stderr.strip()[-300:]}
        if a.page:
            print(f"growth: {name}, page", file=sys.stderr)
            p = subprocess.run(["node", a.page, data, "auto"], capture_output=True, text=True)
            r["page"] = json.loads(p.stdout.strip().splitlines()[-1]).get("auto") if p.returncode == 0 and p.stdout.strip() else {"failed": p.stderr.strip()[-300:]}
    for name, _ in cases:
        for which in ("after", "before"):
            try:
                os.remove(os.path.join(tmp, f"{name}-{which}.json"))
            except OSError:
                pass
    os.rmdir(tmp)

    def s(v):
        return "-" if v is None else f"{v:.2f}"

    head = ["case (automatic settings)", "rows", f"{a.before_name}: clustering s", "whole s", "after: clustering s", "whole s", "whole, before / after", "same graph file", "nodes, components, loops"]
    lines = [head]
    for name, _ in cases:
        (bt, bs, bd), (at, as_, ad) = results[name]["before"], results[name]["after"]
        ratio = f"{bt['total'] / at['total']:.1f}x" if bt.get("total") and at.get("total") else "-"
        counts = f"{as_.get('nodes')}, {as_.get('components')}, {as_.get('loops')}"
        if (bs.get("nodes"), bs.get("components"), bs.get("loops")) != (as_.get("nodes"), as_.get("components"), as_.get("loops")):
            counts += f" (before {bs.get('nodes')}, {bs.get('components')}, {bs.get('loops')})"
        lines.append([name, as_.get("rows", "-"), s(bt.get("clusters")), s(bt.get("total")), s(at.get("clusters")), s(at.get("total")), ratio, "yes" if bd and bd == ad else "NO", counts])
    widths = [max(len(str(r[i])) for r in lines) for i in range(len(head))]
    for r in lines:
        print(" | ".join(str(c).ljust(w) for c, w in zip(r, widths)))
    if "wide-300000" in results and "wide-1500000" in results:
        parts = []
        for which in ("before", "after"):
            small, big = results["wide-300000"][which][0], results["wide-1500000"][which][0]
            if small.get("total") and big.get("total"):
                parts.append(f"{which if which == 'after' else a.before_name} {big['total'] / small['total']:.1f} (clustering {big['clusters'] / small['clusters']:.1f})")
        print("growth, wide case, cost(1 500 000 rows) / cost(300 000 rows), whole run natively: " + "; ".join(parts) + " (5.0 would be linear)")
    for name, _ in cases:
        f = results[name]["first"]
        if f.get("failed") or not f.get("firstLook"):
            print(f"first look, {name}: {f.get('failed') or 'not made (too few rows)'}")
            continue
        fl, fu = f["firstLook"], f["full"]
        print(f"first look, {name}: {f['sampled']} of {f['rows']} rows (min points {f['firstLookClustering'].get('minPoints', '-')}) in {f['firstLookS']:.2f} s natively, the full graph in {f['fullS']:.2f} s; "
              f"components {fl['components']} vs {fu['components']} (holding 1 % of rows or more: {fl['componentsOver1pct']} vs {fu['componentsOver1pct']}), loops {fl['loops']} vs {fu['loops']}, "
              f"nodes {fl['nodes']} vs {fu['nodes']}; row pairs put alike (same component or not) {100 * f['pairsAgree']:.1f} %")

    for name, _ in cases:
        pg = results[name].get("page")
        if pg is None:
            continue
        if pg.get("failed"):
            print(f"page, {name}: failed: {pg['failed']}")
            continue
        look = f"the first look {pg['firstLookMs'] - pg['readMs']:.0f} ms after the read" if pg.get("firstLookMs") else "no first look"
        print(f"page, {name} (headless Chromium, wasm, automatic settings): read {pg['readMs']:.0f} ms; {look}; the full graph {pg['wallMs'] / 1000:.1f} s after the file input "
              f"(clustering on the pool {(pg.get('build') or {}).get('poolMs', 0) / 1000:.1f} s); tab peak {pg['peakRendererBytes'] / 1e6:.0f} MB")


if __name__ == "__main__":
    main()