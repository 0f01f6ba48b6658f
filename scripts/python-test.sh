#!/bin/sh
# Builds the Python package (crates/python + python/kzero) into a local
# virtual environment and runs its tests (python/tests) with pytest.
#
# * The virtual environment is .venv-test in the checkout (override with
#   KZERO_VENV); maturin, pytest and mpmath come from the package index.
# * The Rust build shares the cargo target directory (CARGO_TARGET_DIR, or
#   target/), so after `cargo test --release` only the module itself compiles.
# * The wheel that `pip install .` would build is built and installed, then
#   pytest runs from the checkout against the installed package.
# * pytest exits 5 when it collects no test; that fails this script like any
#   other non-zero exit, so a run without tests cannot pass.
set -e
cd "$(dirname "$0")/.."
PYTHON="${PYTHON:-python3}"
VENV="${KZERO_VENV:-.venv-test}"

if [ ! -x "$VENV/bin/python" ]; then
    "$PYTHON" -m venv "$VENV"
fi
"$VENV/bin/python" -m pip install --quiet --disable-pip-version-check \
    "maturin>=1.9,<2" "pytest>=7" "mpmath>=1.3"

WHEELS="$VENV/wheels"
rm -rf "$WHEELS"
"$VENV/bin/maturin" build --release --quiet --interpreter "$VENV/bin/python" --out "$WHEELS"
"$VENV/bin/python" -m pip install --quiet --disable-pip-version-check \
    --force-reinstall --no-deps "$WHEELS"/kzero-*.whl

# The binary's JSON is compared with the package's in the tests; point them at
# the binary of this build (cargo builds it with the tests).
if [ -z "$KZERO_BIN" ]; then
    KZERO_BIN="${CARGO_TARGET_DIR:-target}/release/kzero"
    export KZERO_BIN
fi
# Arguments go to pytest (default: every test in python/tests).
if [ $# -eq 0 ]; then
    set -- python/tests
fi
exec "$VENV/bin/python" -m pytest -q "$@"
