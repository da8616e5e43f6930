"""Overhead of the Python package over the Rust engine alone.

    python python/bench.py [--runs 200] [--bin target/release/tidewater]

Times, as medians of --runs runs (the machine is shared: repeat it):

* the engine alone: `tidewater bench --runs N` (the reference 48 h case,
  `tidewater::reference::benchmark_plan`, checked every 2 h, no rules);
* in-process: the same case built with `tidewater.Plan` (a Python rule
  that does nothing at the same 2 h checks, which the plan needs to check
  at all), run into a `Result` (summary and DataFrame included);
* the same case as a scenario script through `tidewater.run` (text);
* spawning the command line on the same case: `tidewater demo` (prints
  sodium every 4 h), and `tidewater run --demo --out DIR` with pandas
  reading its samples.csv and summary.json (what a notebook does without
  this package);
* a rule every 15 min: the same rule in Rhai (`tidewater.run`) and in
  Python (`Plan.every`).

Compare like with like: the engine binary and the installed wheel should
be built with the same profile (`python/run_tests.sh --release` builds a
release wheel; `cargo build --release -p tidewater-cli` the binary).
Prints the figures; asserts nothing.
"""

import argparse
import json
import os
import pathlib
import re
import shutil
import statistics
import subprocess
import sys
import tempfile
import time

import pandas

HERE = pathlib.Path(__file__).resolve().parent
ROOT = HERE.parent
# The installed package, not its sources beside this file (they lack the
# compiled extension).
sys.path = [p for p in sys.path if pathlib.Path(p or ".").resolve() != HERE]

import tidewater  # noqa: E402

CASE = """
title("Reference case as a script");
patient(#{ sex: "female", age_years: 58, weight_kg: 62, na: 118, onset: "chronic", cause: "hypovolemic" });
run_for(hours(48));
for k in 0..3 {
    at(minutes(30) * k, infuse("saline_3", ml(150), minutes(20)));
}
at(hours(1.5), infuse("saline_0_9", litres(1), hours(12.5)));
"""

NOOP_EVERY_2H = 'every(hours(2), |labs| { });\n'

RHAI_RULE = """every(minutes(15), |labs| {
    if labs.na_change_24h > 12 && labs.running("saline_0_9") {
        stop("saline_0_9");
    }
});
"""


def reference_plan():
    """`tidewater::reference::benchmark_plan`, in Python."""
    patient = tidewater.Patient(
        "female", 58, 62, na=118, onset="chronic", cause="hypovolemic"
    )
    plan = tidewater.Plan(patient, hours=48)
    for k in range(3):
        plan.infuse("saline_3", volume_ml=150, duration_h=20 / 60, at_h=0.5 * k)
    return plan.infuse("saline_0_9", volume_ml=1000, duration_h=12.5, at_h=1.5)


def guard(labs):
    if labs.na_change_24h > 12 and labs.running("saline_0_9"):
        return [tidewater.stop("saline_0_9")]
    return None


def median_ms(runs, f):
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        f()
        times.append(time.perf_counter() - start)
    return statistics.median(times) * 1e3


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--runs", type=int, default=200)
    ap.add_argument("--bin", default=str(ROOT / "target" / "release" / "tidewater"))
    args = ap.parse_args()
    n = args.runs

    out = subprocess.run(
        [args.bin, "bench", "--runs", str(n)], capture_output=True, text=True, check=True
    ).stdout
    engine_ms = float(re.search(r"median ([0-9.]+) us", out).group(1)) / 1e3

    python_plan = lambda: reference_plan().every(hours=2, rule=lambda labs: None).run()
    plan_ms = median_ms(n, python_plan)
    script_ms = median_ms(n, lambda: tidewater.run(CASE + NOOP_EVERY_2H))
    spawn_runs = max(10, n // 4)
    quiet = {"stdout": subprocess.DEVNULL, "stderr": subprocess.DEVNULL, "check": True}
    spawn_ms = median_ms(spawn_runs, lambda: subprocess.run([args.bin, "demo"], **quiet))
    folder = tempfile.mkdtemp()

    def run_and_read():
        out = os.path.join(folder, "demo")
        subprocess.run([args.bin, "run", "--demo", "--out", out, "--quiet"], **quiet)
        pandas.read_csv(os.path.join(out, "samples.csv"))
        with open(os.path.join(out, "summary.json")) as f:
            json.load(f)

    files_ms = median_ms(spawn_runs, run_and_read)
    shutil.rmtree(folder)
    rhai_ms = median_ms(n, lambda: tidewater.run(CASE + RHAI_RULE))
    py_rule_ms = median_ms(n, lambda: reference_plan().every(minutes=15, rule=guard).run())
    a = tidewater.run(CASE + RHAI_RULE).samples
    b = reference_plan().every(minutes=15, rule=guard).run().samples
    same = a.equals(b)

    print(f"engine: {args.bin}; wheel: {tidewater.__file__}")
    print(f"median of {n} runs (spawning: {spawn_runs}), reference 48 h case")
    print(f"  Rust engine alone (tidewater bench)      {engine_ms:8.2f} ms")
    print(f"  tidewater.Plan(...).run() in-process     {plan_ms:8.2f} ms  ({plan_ms / engine_ms:.2f}x the engine)")
    print(f"  tidewater.run(script text) in-process    {script_ms:8.2f} ms  ({script_ms / engine_ms:.2f}x the engine)")
    print(f"  spawning `tidewater demo`                {spawn_ms:8.2f} ms  ({spawn_ms / plan_ms:.1f}x the in-process plan)")
    print(f"  `tidewater run --demo` + read its files  {files_ms:8.2f} ms  ({files_ms / plan_ms:.1f}x the in-process plan)")
    print("rule every 15 min (the same rule, the same samples: {})".format(same))
    print(f"  Rhai rule (tidewater.run)                {rhai_ms:8.2f} ms")
    print(f"  Python rule (Plan.every)                 {py_rule_ms:8.2f} ms  ({py_rule_ms / rhai_ms:.2f}x the Rhai rule)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
