#!/bin/bash
# report.statistics "tracked" reports what "all" reports, for what it keeps (ctest: $1 =
# ferrocirc CLI, $2 = source dir). "tracked" evaluates only part of the network at the interior
# points of a step (src/sim_run.c, scope_points: every node pressure, the reported flows and
# the inflows of the reported stores). The reference is the same run with "all": every value
# the tracked summary gives (node extremes everywhere; means, volumes and flow statistics of
# the listed nodes, the valve and the source) must equal it to 1e-12 relative. Circuit: benchmark
# (b) of docs/performance.md at 64 chambers, 3 beats; listed nodes c0 (a chamber) and j3 (a
# junction).
set -euo pipefail
FC=$1
SRC=$2
PY=/usr/bin/python3
W=$(mktemp -d)
trap 'rm -rf "$W"' EXIT
cd "$W"
# Two sizes: 64 chambers, and 16 384 (114 690 elements, one beat), where a "tracked" evaluation
# also leaves unstored the flows nobody reads (src/sim_run.c, QKEEP_MIN_ELEMENTS).
for case in "64 3" "16384 1"; do
set -- $case
"$PY" "$SRC/tests/bench/gen_tree.py" "$1" "$2" all.json --si --valve --pump pressure --no-trap \
  --wall-compliance 2e-16 --no-culture --short-ids > /dev/null 2>&1
"$PY" - <<'PY'
import json
d = json.load(open("all.json"))
# two reported channels: plain conductances, whose flows a "tracked" evaluation stores while it
# leaves the others' unstored (sys.h qkeep)
d["report"]["elements"] = ["roota", "j0a"]
json.dump(d, open("all.json", "w"))
d["report"].update(statistics="tracked", nodes=["c0", "j3"])
json.dump(d, open("tracked.json", "w"))
PY
for m in all tracked; do
  "$FC" run "$m.json" --quiet --summary "s-$m.json" > "out-$m.txt" 2>&1 || { cat "out-$m.txt"; exit 1; }
done
"$PY" - <<'PY'
import json, math, sys
a, t = json.load(open("s-all.json")), json.load(open("s-tracked.json"))
n = worst = 0
def same(x, y, where):
    global n, worst
    if isinstance(x, dict):
        for k in x:
            if k != "solver" and k in y:
                same(x[k], y[k], where + "." + k)
    elif isinstance(x, list) and x and isinstance(x[0], dict) and ("id" in x[0] or "name" in x[0]):
        key = "id" if "id" in x[0] else "name"
        other = {e[key]: e for e in y}
        for u in x:  # the tracked summary lists fewer elements: match them by name
            if u[key] not in other:
                sys.exit("FAIL: %s: %s missing from the full run" % (where, u[key]))
            same(u, other[u[key]], "%s[%s]" % (where, u[key]))
    elif isinstance(x, list):
        if len(x) != len(y):
            sys.exit("FAIL: %s: %d entries against %d" % (where, len(x), len(y)))
        for i, (u, v) in enumerate(zip(x, y)):
            same(u, v, "%s[%d]" % (where, i))
    elif isinstance(x, float) and isinstance(y, float) and math.isfinite(x) and math.isfinite(y):
        d = abs(x - y) / max(abs(x), abs(y), 1e-300)
        n += 1
        worst = max(worst, d)
        if d > 1e-12:
            sys.exit("FAIL: %s: tracked %.17g, all %.17g" % (where, x, y))
same(t, a, "$")
keep = {e["name"] for e in t["last_cycle_nodes"] if e.get("p_mean_Pa") is not None}
print("%d values compared, largest relative difference %.2e; means kept for %s" % (n, worst, sorted(keep)))
if not {"c0", "j3"} <= keep:
    sys.exit("FAIL: the listed nodes lost their statistics")
if n < 500:
    sys.exit("FAIL: too few values compared (%d)" % n)
print("ok")
PY
done
