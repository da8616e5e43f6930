#!/usr/bin/env bash
# The Python package's checks: build the wheel, install
# it into a virtual environment under target/ and run pytest (tests/).
#
#   python/run_tests.sh           dev-profile wheel (fast: reuses target/debug)
#   python/run_tests.sh --release release wheel (what `pip install ./python` builds)
#
# Exits non-zero when anything fails.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/.." && pwd)
export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-$root/target}
export CARGO_BUILD_JOBS=${CARGO_BUILD_JOBS:-1}
venv=$CARGO_TARGET_DIR/pyapi-venv

if [ ! -x "$venv/bin/python" ]; then
    python3 -m venv "$venv"
fi
if ! "$venv/bin/python" -c 'import maturin, numpy, pandas, pytest' 2>/dev/null; then
    "$venv/bin/pip" install --quiet "maturin>=1.5,<2" numpy pandas pytest
fi

cd "$root"
# The crate is linted by the workspace's `cargo clippy --all-targets` (it
# is a default member). The tests compare with the command line's files.
cargo build --quiet -p tidewater-cli

profile=dev
if [ "${1:-}" = "--release" ]; then
    profile=release
fi
wheels=$CARGO_TARGET_DIR/pyapi-wheels
rm -rf "$wheels"
"$venv/bin/maturin" build --quiet --profile "$profile" -m "$here/Cargo.toml" \
    --out "$wheels" -i "$venv/bin/python"
"$venv/bin/pip" install --quiet --force-reinstall --no-deps "$wheels"/tidewater-*.whl

cd "$here/tests"
TIDEWATER_BIN=$CARGO_TARGET_DIR/debug/tidewater "$venv/bin/python" -m pytest -q -p no:cacheprovider .
