#!/usr/bin/env bash
# The automatic settings' measured panel (issue 15): the first graph of each real open
# table (tests/data/open_tables.py; packages and versions pinned in
# tests/data/requirements.txt) and of shapes of known topology (tests/common/shapes.rs),
# one Markdown table on standard output. Slow (the 336 776-row table); not in tests/run.sh.
#
#   bash tests/bench/auto-panel.sh               this checkout's rule
#   bash tests/bench/auto-panel.sh --before REV  the same panel run against the library of
#                                                commit REV (for instance main), to compare
set -euo pipefail
cd "$(dirname "$0")/../.."
source tests/setup.sh
need_open_tables
# The panel's timings need an optimised build, but not the release profile's whole-program
# optimisation (minutes of linking for a few percent).
export CARGO_PROFILE_PANEL_INHERITS=release CARGO_PROFILE_PANEL_LTO=false CARGO_PROFILE_PANEL_CODEGEN_UNITS=16
if [ "${1:-}" = "--before" ]; then
  rev="${2:?--before needs a commit, e.g. main}"
  dir=$(mktemp -d)
  trap 'rm -rf "$dir"' EXIT
  git archive "$rev" | tar -x -C "$dir"
  mkdir -p "$dir/examples" "$dir/tests/common"
  cp examples/auto_panel.rs "$dir/examples/"
  cp tests/common/shapes.rs tests/common/panel.rs "$dir/tests/common/"
  cd "$dir"
  # A build folder of its own: the archive's files carry the commit's times, older than
  # this checkout's build, and cargo would take that build as up to date for them.
  export CARGO_TARGET_DIR="${CARGO_TARGET_DIR}/panel-before"
fi
cargo run --quiet --profile panel --example auto_panel
