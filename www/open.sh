#!/usr/bin/env bash
# Builds dist/nervure.html (installing the wasm target if needed) and opens it with the
# demo loaded. On a machine with no desktop it prints the address to open instead.
# Usage: bash www/open.sh
set -euo pipefail
cd "$(dirname "$0")/.."
source tests/setup.sh
need_wasm_target
build_page
url="file://$PWD/dist/nervure.html#demo"
echo
echo "The page is one file: dist/nervure.html (copy it anywhere, e.g. a shared drive)."
if [ -n "${DISPLAY:-}${WAYLAND_DISPLAY:-}" ] && command -v xdg-open >/dev/null 2>&1; then
  xdg-open "$url" >/dev/null 2>&1 &
  echo "Opened $url"
elif [ "$(uname)" = Darwin ]; then
  open "$url"
else
  echo "Open this in a browser: $url"
fi
