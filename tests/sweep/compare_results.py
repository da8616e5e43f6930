#!/usr/bin/env python3
"""Compare two sweep result files (results.csv) member by member.

    python3 tests/sweep/compare_results.py BEFORE.csv AFTER.csv [--na-tol 0.01]

Used to show that a change to the engine's speed leaves a sweep's results
as they were: the same header, the same members in the same order, the
same status and error of every member, the same flag columns
(limit_crossed, caution_crossed, limits_crossed), and every sodium column
(the columns ending in _mmol_l: sodium at the asked times, the largest
rises, the band times) within --na-tol mmol/L (default 0.01). Other
numeric columns (design cells, the brain index, the balance residual) are
reported by their largest difference but do not fail the check, save the
design cells, which must be equal. Exits 1 on a difference beyond these
bounds, printing the first few; prints the largest difference per column.
Reads with Python's csv module only.
"""

import argparse
import csv
import sys

FLAG_COLUMNS = ("status", "limit_crossed", "caution_crossed", "limits_crossed", "error")


def read(path):
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    if not rows:
        sys.exit(f"{path}: empty file")
    return rows[0], rows[1:]


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("before")
    ap.add_argument("after")
    ap.add_argument("--na-tol", type=float, default=0.01)
    args = ap.parse_args()
    h1, r1 = read(args.before)
    h2, r2 = read(args.after)
    if h1 != h2:
        sys.exit(f"headers differ:\n  {h1}\n  {h2}")
    if len(r1) != len(r2):
        sys.exit(f"{len(r1)} rows against {len(r2)}")
    try:
        first_output = h1.index("status")
    except ValueError:
        sys.exit("no status column: not a sweep result file")
    design = set(range(first_output))
    sodium = {i for i, name in enumerate(h1) if name.endswith("_mmol_l")}
    flags = {i for i, name in enumerate(h1) if name in FLAG_COLUMNS}
    largest = {}
    problems = []
    for a, b in zip(r1, r2):
        if len(a) != len(h1) or len(b) != len(h1):
            problems.append(f"member {a[0]}: a row of the wrong length")
            continue
        for i, (x, y) in enumerate(zip(a, b)):
            name = h1[i]
            if i in flags or i in design:
                if x != y:
                    problems.append(f"member {a[0]}: {name} {x!r} -> {y!r}")
                continue
            if x == "" or y == "":
                if x != y:
                    problems.append(f"member {a[0]}: {name} {x!r} -> {y!r}")
                continue
            d = abs(float(x) - float(y))
            largest[name] = max(largest.get(name, 0.0), d)
            if i in sodium and d > args.na_tol:
                problems.append(f"member {a[0]}: {name} {x} -> {y} (|diff| {d:.3g} > {args.na_tol})")
    print(f"{len(r1)} members, {len(h1)} columns compared")
    for name in h1:
        if name in largest:
            mark = " (sodium)" if h1.index(name) in sodium else ""
            print(f"  {name}: largest |diff| {largest[name]:.3g}{mark}")
    flips = sum(1 for p in problems if any(c in p for c in FLAG_COLUMNS))
    if problems:
        print(f"{len(problems)} difference(s) beyond the bounds ({flips} in status/flags); first ones:")
        for p in problems[:20]:
            print("  " + p)
        sys.exit(1)
    print(f"equivalent: no status or flag changed, sodium within {args.na_tol} mmol/L")


if __name__ == "__main__":
    main()
