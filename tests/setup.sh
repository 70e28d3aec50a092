# Sourced by tests/run.sh and www/open.sh: installs what building and testing need,
# each step skipped when already done. Safe to run again.
set -euo pipefail
export CARGO_TARGET_DIR="${CARGO_TARGET_DIR:-$HOME/.cache/nervure-target}"

step() { printf '\n== %s\n' "$*"; }

need_wasm_target() {
  if ! rustup target list --installed | grep -qx wasm32-unknown-unknown; then
    step "adding the wasm32-unknown-unknown target"
    rustup target add wasm32-unknown-unknown
  fi
}

need_chromium() {
  if ! command -v chromium >/dev/null 2>&1; then
    step "installing Chromium from Debian's packages"
    if [ "$(id -u)" = 0 ]; then SUDO=""; else SUDO="sudo"; fi
    $SUDO apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq chromium >/dev/null
  fi
}

need_node_modules() {
  if [ ! -d node_modules/playwright-core ]; then
    step "installing the browser-test driver (npm ci)"
    npm ci --no-audit --no-fund --loglevel=error
  fi
}

build_page() {
  step "building dist/nervure.html"
  cargo run --quiet --release --features page-builder --bin nervure-build
}
