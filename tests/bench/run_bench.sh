#!/bin/bash
# ferrocirc benchmark: distribution trees of N = 10, 100, 1000, 10000 culture chambers, 20 pump
# cycles each; prints wall time per simulated cycle, peak memory, CVODE counters and the fitted
# cost exponent (target: no faster than N^1.1). Builds nothing: pass the binary.
#
# Usage: tests/bench/run_bench.sh [FERROCIRC] [--big] [--repeat K] [--cycles C] [--csv-max N]
#                                 [--json OUT.json]
#   FERROCIRC  path of the ferrocirc binary (default build/ferrocirc; a Release build is the
#              meaningful one)
#   --big      also N = 65536
#   other options are passed to bench.py (see bench.py --help)
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
py=/usr/bin/python3
binary=build/ferrocirc
sizes=10,100,1000,10000
pass=()
while [ $# -gt 0 ]; do
  case "$1" in
    --big) sizes=$sizes,65536 ;;
    --repeat|--cycles|--csv-max|--json|--sizes|--gen-arg) pass+=("$1" "${2:?$1 needs a value}"); shift ;;
    -h|--help) sed -n '2,12p' "$0"; exit 0 ;;
    -*) echo "run_bench.sh: unknown option $1" >&2; exit 2 ;;
    *) binary=$1 ;;
  esac
  shift
done
if [ ! -x "$binary" ]; then
  echo "run_bench.sh: $binary: no such executable (build first, e.g. cmake --build build)" >&2
  exit 2
fi
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ *//')"
echo "binary:  $binary"
echo
exec "$py" "$here/bench.py" --binary "$binary" --sizes "$sizes" "${pass[@]}"
