#!/usr/bin/env bash
# Run a Tidewater sweep as a Slurm array job: each array task runs one
# deterministic shard of the members; `tidewater merge` joins them into the
# same file an unsharded run writes.
#
#   sbatch --array=1-4 scenarios/sweeps/slurm_array.sh scenarios/sweeps/bolus_uncertainty.yaml runs/bolus
#   # when every task has finished:
#   tidewater merge runs/bolus/shard-*.csv --out runs/bolus/results.csv --spec scenarios/sweeps/bolus_uncertainty.yaml
#
#SBATCH --job-name=tidewater-sweep
#SBATCH --cpus-per-task=2
#SBATCH --output=tidewater-sweep-%A_%a.log
set -euo pipefail
spec="${1:?usage: slurm_array.sh SPEC OUTDIR}"
out="${2:?usage: slurm_array.sh SPEC OUTDIR}"
tidewater="${TIDEWATER:-tidewater}"
mkdir -p "$out"
# The shard (SLURM_ARRAY_TASK_ID of SLURM_ARRAY_TASK_COUNT) is read from
# the environment by `tidewater sweep`.
"$tidewater" sweep "$spec" \
    --out "$out/shard-${SLURM_ARRAY_TASK_ID}.csv" \
    --threads "${SLURM_CPUS_PER_TASK:-1}"
