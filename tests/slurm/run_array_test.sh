#!/usr/bin/env bash
# Opt-in test (needs root and Debian's Slurm packages): start a single-node
# Slurm cluster, run a small sweep as a 3-task array job with
# scenarios/sweeps/slurm_array.sh, merge the shards, and check the result is
# byte-identical to an unsharded run of the same spec.
#
#   TIDEWATER_SLURM=1 bash tests/slurm/run_array_test.sh
set -euo pipefail
cd "$(dirname "$0")/../.."
if [ "${TIDEWATER_SLURM:-0}" != "1" ]; then
    echo "skipped: set TIDEWATER_SLURM=1 to run the Slurm array test"
    exit 0
fi
bash tests/slurm/start_single_node.sh >/dev/null
cargo build --release -p tidewater-cli >/dev/null
bin="$PWD/target/release/tidewater"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
spec="scenarios/sweeps/bolus_dose_response.yaml"
"$bin" sweep "$spec" --out "$work/unsharded/results.csv" --summary false 2>/dev/null
TIDEWATER="$bin" sbatch --wait --array=1-3 --chdir="$PWD" -o "$work/task-%a.log" \
    scenarios/sweeps/slurm_array.sh "$spec" "$work/shards" >/dev/null
"$bin" merge "$work"/shards/shard-*.csv --out "$work/merged.csv" 2>/dev/null
if cmp -s "$work/unsharded/results.csv" "$work/merged.csv"; then
    rows=$(($(wc -l < "$work/merged.csv") - 1))
    echo "1 passed, 0 failed: Slurm array (3 tasks) merged equals the unsharded run ($rows members)"
else
    echo "0 passed, 1 failed: merged Slurm shards differ from the unsharded run" >&2
    diff "$work/unsharded/results.csv" "$work/merged.csv" | head >&2
    exit 1
fi
