#!/usr/bin/env bash
# Runs every test: the engine's native tests (unit, reference fixtures, known shapes),
# then builds the page and drives it in headless Chromium from file://.
# Usage: bash tests/run.sh      (from the repository's top folder or anywhere)
set -euo pipefail
cd "$(dirname "$0")/.."
source tests/setup.sh

need_wasm_target
need_chromium
need_node_modules
need_python_reader
need_open_tables

# The logs of this run in a folder of its own: several checkouts on one machine run this
# script at the same time, and one shared file let one run count another's results.
logs="$(mktemp -d "${TMPDIR:-/tmp}/nervure-run.XXXXXX")"
echo "logs of this run: $logs"

step "native tests (cargo test)"
cargo test --quiet 2>&1 | tee "$logs/cargo-test.log"
build_page
step "command-line runner for the browser tests' comparisons"
cargo build --quiet --release --bin nervure

need_python_package
step "Python package tests (pytest, against the runner and NetworkX, pandas, SciPy)"
NERVURE_RUNNER="$CARGO_TARGET_DIR/release/nervure" "$HOME/.cache/nervure-venv/bin/python" -m pytest python/tests -q -p no:cacheprovider 2>&1 | tee "$logs/pytest.log"

step "browser tests (node --test, headless Chromium, file://)"
node --test --test-reporter=spec tests/browser/ 2>&1 | tee "$logs/browser-test.log"

rust_passed=$(grep -aEo '[0-9]+ passed' "$logs/cargo-test.log" | awk '{s+=$1} END {print s+0}')
rust_failed=$(grep -aEo '[0-9]+ failed' "$logs/cargo-test.log" | awk '{s+=$1} END {print s+0}')
web_passed=$(grep -aEo '^ℹ pass [0-9]+' "$logs/browser-test.log" | awk '{s+=$3} END {print s+0}')
web_failed=$(grep -aEo '^ℹ fail [0-9]+' "$logs/browser-test.log" | awk '{s+=$3} END {print s+0}')
# pytest's closing line names only the outcomes that happened ("29 passed in 7.6s").
py_passed=$(tail -n 3 "$logs/pytest.log" | awk '{for (i = 2; i <= NF; i++) if ($i ~ /^passed/) s += $(i-1)} END {print s+0}')
py_failed=$(tail -n 3 "$logs/pytest.log" | awk '{for (i = 2; i <= NF; i++) if ($i ~ /^(failed|errors?)/) s += $(i-1)} END {print s+0}')
echo
echo "all: $((rust_passed + py_passed + web_passed)) passed, $((rust_failed + py_failed + web_failed)) failed"
