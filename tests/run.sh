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

step "browser tests (node --test, headless Chromium, file://)"
node --test --test-reporter=spec tests/browser/ 2>&1 | tee "$logs/browser-test.log"

rust_passed=$(grep -Eo '[0-9]+ passed' "$logs/cargo-test.log" | awk '{s+=$1} END {print s+0}')
rust_failed=$(grep -Eo '[0-9]+ failed' "$logs/cargo-test.log" | awk '{s+=$1} END {print s+0}')
web_passed=$(grep -Eo '^ℹ pass [0-9]+' "$logs/browser-test.log" | awk '{s+=$3} END {print s+0}')
web_failed=$(grep -Eo '^ℹ fail [0-9]+' "$logs/browser-test.log" | awk '{s+=$3} END {print s+0}')
echo
echo "all: $((rust_passed + web_passed)) passed, $((rust_failed + web_failed)) failed"
