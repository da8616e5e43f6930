#!/usr/bin/env python3
"""Speed of the Tidewater engine next to SciPy on identical equations.

Both solve the same plan (default: the reference plan) at the engine's
default tolerances (rtol 1e-6, atol 1e-8 x each state's scale, as stated in
docs/equations.md):
* Tidewater: the `crosscheck_export` example, `Simulation::run` only
  (median of repeated runs, from <plan>.timing.json);
* SciPy: `scipy.integrate.solve_ivp` with BDF and with LSODA on the
  equations of tidewater_ref.py, segment by segment; only the time inside
  solve_ivp is counted (median of repeated runs).
Then the whole process: wall time of the export binary for that plan (start,
run, write dump and samples, exit) against the Python reference script end
to end (interpreter start, imports, integration, observations, CSV).

Usage: python bench_speed.py [--plan NAME] [--repeat N] [--outdir DIR]
(expects the release example to be built: run.sh builds it.)

Caution: Tidewater is a simulation for planning and teaching, not a medical
device.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent.parent
sys.path.insert(0, str(HERE))

import tidewater_ref as ref  # noqa: E402

RTOL = 1e-6          # the engine's default plan tolerance
ATOL_FRACTION = 1e-8  # the engine's default absolute tolerance fraction


def wall(cmd) -> float:
    start = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL)
    return time.perf_counter() - start


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--plan", default="reference")
    ap.add_argument("--repeat", type=int, default=3, help="repeats of the SciPy runs")
    target = Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target"))
    ap.add_argument("--outdir", default=str(target / "crosscheck-bench"))
    args = ap.parse_args()
    exe = target / "release" / "examples" / "crosscheck_export"
    if not exe.is_file():
        print(f"bench_speed: {exe} not found; build it with "
              "`cargo build --release -p tidewater-engine --example crosscheck_export`",
              file=sys.stderr)
        return 1
    out = Path(args.outdir)
    out.mkdir(parents=True, exist_ok=True)
    base = [str(exe), "--rtol", str(RTOL), "--plan", args.plan]

    # Engine only: median of 21 runs of Simulation::run.
    subprocess.run(base + ["--repeat", "21", str(out)], check=True, stdout=subprocess.DEVNULL)
    timing = json.loads((out / f"{args.plan}.timing.json").read_text())
    rust_run = timing["run_median_s"]
    # Whole process: one run, write dump and samples, exit (median of 5).
    rust_wall = statistics.median(wall(base + ["--repeat", "0", str(out)]) for _ in range(5))

    dump_path = out / f"{args.plan}.dump.json"
    dump = ref.load_dump(str(dump_path))
    engine = ref.read_csv(str(out / f"{args.plan}.samples.csv"))
    rows = []
    for method in ("BDF", "LSODA"):
        solve, stats = [], None
        for _ in range(args.repeat):
            model = ref.Model(dump)
            cols, stats = model.samples(method, RTOL, ATOL_FRACTION)
            solve.append(stats["solve_s"])
        na_diff = float(np.max(np.abs(cols["na_mmol_l"] - engine["na_mmol_l"])))
        py_wall = statistics.median(
            wall([sys.executable, str(HERE / "tidewater_ref.py"), str(dump_path),
                  "--method", method, "--rtol", str(RTOL), "--atol-fraction", str(ATOL_FRACTION),
                  "--out", str(out / f"{args.plan}.{method}.ref.csv")])
            for _ in range(args.repeat))
        rows.append((method, statistics.median(solve), py_wall, stats["nfev"], na_diff))

    print(f"plan {args.plan}: rtol {RTOL:g}, atol {ATOL_FRACTION:g} x state scale; "
          f"{timing['samples']} samples over {dump['sample_times_h'][-1]:g} h")
    print(f"Tidewater: Simulation::run median {rust_run * 1e3:.2f} ms "
          f"({timing['stats']['steps']} steps, {timing['stats']['rhs_calls']} rhs calls); "
          f"whole process {rust_wall * 1e3:.1f} ms")
    print()
    print("| SciPy method | solve_ivp s | ratio (engine only) | script s | ratio (whole process) "
          "| rhs calls | max |Na diff| mmol/L |")
    print("|---|---|---|---|---|---|---|")
    result = {"plan": args.plan, "rtol": RTOL, "atol_fraction": ATOL_FRACTION,
              "tidewater_run_s": rust_run, "tidewater_process_s": rust_wall, "scipy": {}}
    for method, solve_s, py_wall, nfev, na_diff in rows:
        print(f"| {method} | {solve_s:.3f} | {solve_s / rust_run:.0f}x | {py_wall:.3f} | "
              f"{py_wall / rust_wall:.0f}x | {nfev} | {na_diff:.1e} |")
        result["scipy"][method] = {"solve_s": solve_s, "script_s": py_wall, "nfev": nfev,
                                   "ratio_engine": solve_s / rust_run,
                                   "ratio_process": py_wall / rust_wall,
                                   "max_abs_na_diff": na_diff}
    (out / "bench.json").write_text(json.dumps(result, indent=2))
    return 0


if __name__ == "__main__":
    sys.exit(main())
