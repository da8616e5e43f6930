#!/usr/bin/env python3
"""Summarise the cross-check: the largest relative difference per column
between the engine and SciPy's solve_ivp (BDF and LSODA), over every plan and
sample, from the <plan>.<method>.diff.tsv files that test_crosscheck.py
writes into the export folder.

Usage: python report.py EXPORT_DIR
"""

from __future__ import annotations

import sys
from pathlib import Path


def main() -> int:
    if len(sys.argv) != 2:
        print("usage: report.py EXPORT_DIR", file=sys.stderr)
        return 2
    out = Path(sys.argv[1])
    files = sorted(out.glob("*.diff.tsv"))
    if not files:
        print(f"report.py: no *.diff.tsv in {out} (run the tests first)", file=sys.stderr)
        return 1
    worst: dict = {}
    methods = set()
    for f in files:
        plan, method = f.name.split(".")[:2]
        methods.add(method)
        for line in f.read_text(encoding="utf-8").splitlines()[1:]:
            col, d, at, on_page = line.split("\t")
            key = (col, method)
            if key not in worst or float(d) > worst[key][0]:
                worst[key] = (float(d), plan, at, on_page == "True")
    methods = sorted(methods)
    cols = []
    for col, _ in worst:
        if col not in cols:
            cols.append(col)
    head = " | ".join(f"{m}: max rel diff (plan, h)" for m in methods)
    print(f"| column | on page | {head} |")
    print("|---|---|" + "---|" * len(methods))
    for col in cols:
        cells = []
        for m in methods:
            d, plan, at, on_page = worst[(col, m)]
            cells.append(f"{d:.1e} ({plan}, {at})")
        print(f"| {col} | {'yes' if worst[(col, methods[0])][3] else 'no'} | {' | '.join(cells)} |")
    return 0


if __name__ == "__main__":
    sys.exit(main())
