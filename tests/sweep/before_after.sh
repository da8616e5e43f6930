#!/usr/bin/env bash
# Time two tidewater binaries side by side, interleaved (before, after,
# before, after) so that the load of a shared machine falls on both alike:
# the reference run (`bench`), members/s of the bundled uncertainty sweep on
# 1 and 2 threads, peak memory (max RSS) at 10,000 and 100,000 members, a
# planner answer (plain and --uncertainty 200) and a fit with its forecast.
#
#   bash tests/sweep/before_after.sh BEFORE_BINARY AFTER_BINARY [MEMBERS]
#
# MEMBERS (default 4000) is the size of the timed sweep. Run from the
# repository's root. Needs /usr/bin/time (GNU time).
set -euo pipefail
before=$1
after=$2
members=${3:-4000}
root=$(pwd)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
spec() { # spec N -> a copy of the bundled uncertainty sweep with N members
    sed "s/^members: .*/members: $1/; s#^scenario: ../#scenario: $root/scenarios/#" \
        scenarios/sweeps/bolus_uncertainty.yaml > "$work/u$1.yaml"
    echo "$work/u$1.yaml"
}
timed() { # timed LABEL COMMAND... -> "LABEL  seconds  max RSS KB"
    local label=$1; shift
    /usr/bin/time -f "%e %M" -o "$work/t" "$@" > "$work/out" 2> "$work/err" || {
        echo "$label: failed"; cat "$work/err"; return 1; }
    read -r secs kb < "$work/t"
    printf '%-34s %8.2f s %9d KB\n' "$label" "$secs" "$kb"
}
s=$(spec "$members")
for round in 1 2; do
    for which in before after; do
        bin=${!which}
        echo "== round $round: $which ($bin)"
        "$bin" bench --runs 300 2>/dev/null | sed -n 1p
        for threads in 1 2; do
            rm -f "$work/r.csv"*
            "$bin" sweep "$s" --out "$work/r.csv" --threads "$threads" --summary false 2>&1 \
                | grep -o 'ran .* members/s)' | sed "s/^/sweep $members, $threads thread(s): /"
        done
        timed "plan (one answer)" "$bin" plan scenarios/planning_saline_rate.rhai \
            --fluid saline_3 --goal-rise 4..6 --by 24
        cp "$work/out" "$work/plan-$which.txt"
        timed "plan --uncertainty 200" "$bin" plan scenarios/planning_saline_rate.rhai \
            --fluid saline_3 --goal-rise 4..6 --by 24 --uncertainty 200
        cp "$work/out" "$work/plan-u-$which.txt"
        timed "fit with forecast" "$bin" fit scenarios/labs_settling.rhai \
            --observed scenarios/observations/settling_labs.csv --out "$work/fit-$which" --quiet
    done
done
for n in 10000 100000; do
    s=$(spec "$n")
    for which in before after; do
        bin=${!which}
        rm -f "$work/r.csv"*
        timed "$which: sweep $n, 2 threads" "$bin" sweep "$s" --out "$work/r.csv" --threads 2 --summary false
    done
done
for f in plan plan-u; do
    if cmp -s "$work/$f-before.txt" "$work/$f-after.txt"; then
        echo "$f: the same answer"
    else
        echo "$f: the answers differ:"; diff "$work/$f-before.txt" "$work/$f-after.txt" || true
    fi
done
if diff -r "$work/fit-before" "$work/fit-after" > /dev/null; then
    echo "fit: the same files"
else
    echo "fit: the files differ:"; diff -r "$work/fit-before" "$work/fit-after" | head -20 || true
fi
