#!/bin/bash
# Side-by-side benchmark of issue 7: ferrocirc vs ngspice (electrical analogue) vs SciPy BDF on
# circuits (a) pump loops with two check valves, (b) a valve-fed distribution tree, (c) a grid of
# compliant nodes, and (d) the valve model alone; compared at matched accuracy. Not run by CI.
#
# Usage: tests/bench/run_suite.sh [FERROCIRC] [--quick] [--json OUT.json] [--circuits a,b,c,d]
#                                 [--repeat K] [--sizes "b=16,128;c=16"] [--beats B]
#                                 [--fc-only TOL]
#   FERROCIRC  the ferrocirc binary (default build/ferrocirc; use a Release build)
#   --quick    smallest size of each circuit, short runs, one run each (a smoke test, < 3 min)
#   --fc-only  ferrocirc alone at rel_tol TOL at every size (scaling runs to N = 65536)
#   --circuits a,b,c,d (default all four)
# Full run: over 40 min on 2 cores (docs/performance.md). Needs ngspice, /usr/bin/time and
# /usr/bin/python3 with SciPy.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
binary=build/ferrocirc
pass=()
while [ $# -gt 0 ]; do
  case "$1" in
    --quick) pass+=(--quick) ;;
    --json|--circuits|--repeat|--sizes|--beats|--fc-only) pass+=("$1" "${2:?$1 needs a value}"); shift ;;
    -h|--help) sed -n '2,15p' "$0"; exit 0 ;;
    -*) echo "run_suite.sh: unknown option $1" >&2; exit 2 ;;
    *) binary=$1 ;;
  esac
  shift
done
[ -x "$binary" ] || { echo "run_suite.sh: $binary: no such executable (build first)" >&2; exit 2; }
command -v ngspice >/dev/null || { echo "run_suite.sh: ngspice not installed" >&2; exit 2; }
[ -x /usr/bin/time ] || { echo "run_suite.sh: /usr/bin/time (package time) missing" >&2; exit 2; }
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ *//')"
echo "binary:  $binary; ngspice: $(ngspice --version 2>/dev/null | grep -m1 -o 'ngspice-[0-9]*')"
exec /usr/bin/python3 "$here/suite.py" --binary "$binary" "${pass[@]}"
