#!/usr/bin/env bash
# The cluster run's benchmark: builds the runner and the Python package (as tests/run.sh
# does), then tests/bench_dask.py on generated tables, 10 million rows by default.
# Usage: bash tests/bench-dask.sh [--rows 10000000 --rows 30000000] [--workers 2]
# Prints seconds per stage, each worker's peak memory, the runner's, and their ratio.
set -euo pipefail
cd "$(dirname "$0")/.."
source tests/setup.sh
step "command-line runner (release)"
cargo build --quiet --release --bin nervure
need_python_package
step "benchmark (tests/bench_dask.py)"
NERVURE_RUNNER="$CARGO_TARGET_DIR/release/nervure" "$HOME/.cache/nervure-venv/bin/python" tests/bench_dask.py "$@"
