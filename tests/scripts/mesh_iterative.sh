#!/bin/bash
# Iterative Newton solves (GMRES with ILU(0), src/sys_krylov.c) give the answer of an outside
# integrator on a mesh of channels (ctest: $1 = ferrocirc CLI, $2 = source dir).
# Network: benchmark circuit (c) of docs/performance.md, a 10 x 10 grid of channels with a
# chamber at every node under a pulsed reservoir, 2 beats (tests/bench/gen_grid.py).
# Reference: SciPy's Radau (solve_ivp, rtol 1e-11) on the same ODE read independently from the
# file (tests/bench/peer_scipy.py, netmodel.py). Checked: the probed node's cycle mean and peak
# and the inlet's net volume over the last beat, for simulation.linear_solver "iterative" and
# "direct" at rel_tol 1e-9, each within 1e-6 of the reference; and that "auto" keeps this small
# mesh and a 1024-chamber tree direct (KLU factors them with little fill) and takes a
# 128 x 128 mesh iterative.
set -euo pipefail
FC=$1
SRC=$2
PY=/usr/bin/python3
W=$(mktemp -d)
trap 'rm -rf "$W"' EXIT
cd "$W"
"$PY" "$SRC/tests/bench/gen_grid.py" 10 2 grid.json --probe grid.probe.json > /dev/null 2>&1
"$PY" "$SRC/tests/bench/peer_scipy.py" grid.json grid.probe.json ref.json --method Radau \
  --rtol 1e-11 > /dev/null
for ls in iterative direct auto; do
  "$PY" - "$ls" <<'PY'
import json, sys
d = json.load(open("grid.json"))
d["simulation"].update(rel_tol=1e-9, abs_tol=1e-9, abs_tol_volume=1e-24, linear_solver=sys.argv[1])
json.dump(d, open("grid-%s.json" % sys.argv[1], "w"))
PY
  "$FC" run "grid-$ls.json" --quiet --summary "s-$ls.json" --events "e-$ls.csv" > "out-$ls.txt" 2>&1 ||
    { echo "FAIL $ls: $(head -c 400 "out-$ls.txt")"; exit 1; }
done
"$PY" "$SRC/tests/bench/gen_grid.py" 128 1 big.json > /dev/null 2>&1
"$PY" "$SRC/tests/bench/gen_tree.py" 1024 1 tree.json --si --valve --pump pressure --no-trap \
  --wall-compliance 2e-16 --no-culture --short-ids > /dev/null 2>&1
for f in big tree; do
  "$PY" - "$f" <<'PY'
import json, sys
d = json.load(open(sys.argv[1] + ".json"))
d["simulation"].pop("cycles", None)
d["simulation"]["duration"] = 2e-3  # a few steps: only the solver choice is checked
json.dump(d, open(sys.argv[1] + "-short.json", "w"))
PY
  "$FC" run "$f-short.json" --quiet --summary "s-$f.json" > "out-$f.txt" 2>&1 ||
    { echo "FAIL $f: $(head -c 400 "out-$f.txt")"; exit 1; }
done
PYTHONPATH="$SRC/tests/bench" "$PY" - <<'PY'
import json, sys
import suite
probe = json.load(open("grid.probe.json"))
ref = json.load(open("ref.json"))
bad = 0
for ls in ("iterative", "direct"):
    r = suite.fc_probes("s-%s.json" % ls, "e-%s.csv" % ls, probe)
    e = suite.error(r, ref, probe["period"])
    sv = json.load(open("s-%s.json" % ls))["solver"]
    print("%-9s solver %-9s steps %d lin_iters %d fallbacks %d  errors vs Radau: %s" % (
        ls, sv["linear_solver"], sv["steps"], sv["lin_iters"], sv["lin_fallbacks"],
        ", ".join("%s %.1e" % kv for kv in e.items())))
    if sv["linear_solver"] != ls:
        print("FAIL: %s run used the %s solver" % (ls, sv["linear_solver"])); bad = 1
    if e["max"] > 1e-6:
        print("FAIL: %s differs from the reference by %.3g (> 1e-6)" % (ls, e["max"])); bad = 1
sv = json.load(open("s-iterative.json"))["solver"]
if not sv["lin_iters"] > 0 or sv["lin_fallbacks"] != 0:
    print("FAIL: the iterative run should iterate and need no direct fall-back"); bad = 1
for f, want in (("auto", "direct"), ("big", "iterative"), ("tree", "direct")):
    got = json.load(open("s-%s.json" % f))["solver"]["linear_solver"]
    print("auto on %-4s -> %s" % (f, got))
    if got != want:
        print("FAIL: auto chose %s for %s, expected %s" % (got, f, want)); bad = 1
sys.exit(bad)
PY
echo ok
