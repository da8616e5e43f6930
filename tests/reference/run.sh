#!/usr/bin/env bash
# Cross-check of the engine against SciPy (see README.md in this folder).
#
#   tests/reference/run.sh          build the export, run it, run pytest
#   tests/reference/run.sh --bench  also time both and print the speed ratio
#
# Exits non-zero when anything fails.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
export CARGO_TARGET_DIR=${CARGO_TARGET_DIR:-$root/target}
export CARGO_BUILD_JOBS=${CARGO_BUILD_JOBS:-1}
venv=$CARGO_TARGET_DIR/pyref-venv

if [ ! -x "$venv/bin/python" ]; then
    python3 -m venv "$venv"
fi
if ! "$venv/bin/python" -c 'import numpy, scipy, pytest' 2>/dev/null; then
    "$venv/bin/pip" install --quiet -r "$here/requirements.txt"
fi

cd "$root"
# The comparison needs no release build (dependencies are optimised in the
# test profile too); the speed comparison (--bench) does.
if [ "${1:-}" = "--bench" ]; then
    profile=release
    cargo build --quiet --release -p tidewater-engine --example crosscheck_export
else
    profile=debug
    cargo build --quiet -p tidewater-engine --example crosscheck_export
fi
out=$CARGO_TARGET_DIR/crosscheck
rm -rf "$out"
"$CARGO_TARGET_DIR/$profile/examples/crosscheck_export" "$out"

TIDEWATER_XCHECK_DIR=$out "$venv/bin/python" -m pytest -q -p no:cacheprovider \
    "$here/test_crosscheck.py"
"$venv/bin/python" "$here/report.py" "$out"

if [ "${1:-}" = "--bench" ]; then
    "$venv/bin/python" "$here/bench_speed.py"
fi
