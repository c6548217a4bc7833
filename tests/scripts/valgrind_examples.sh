#!/usr/bin/env bash
# Every example network (networks/*.json), the built-in demo and two error paths run under
# valgrind memcheck with zero errors and no definite leaks.
#
# Under a -DFC_SANITIZE=ON build valgrind cannot run the AddressSanitizer binary; there the same
# cases run directly and AddressSanitizer/LeakSanitizer, built in, do memcheck's job (any report
# fails the case). Possible leaks inside UDUNITS-2 (its symbol trees, from tsearch) are the
# library's own and are not counted: --errors-for-leak-kinds=definite.
#
# $1 = the ferrocirc command line, $2 = the source tree. Takes about 45 s on the build machine.
set -u
CLI=${1:?usage: valgrind_examples.sh FERROCIRC SOURCE_DIR}
SRC=${2:?usage: valgrind_examples.sh FERROCIRC SOURCE_DIR}
WORK=$(mktemp -d "${TMPDIR:-/tmp}/fc-vg.XXXXXX")
trap 'rm -rf "$WORK"' EXIT
fails=0 n=0

if grep -q '__asan_init' "$CLI" 2>/dev/null; then
  MODE=asan
  export ASAN_OPTIONS="detect_leaks=1:exitcode=9"
  export UBSAN_OPTIONS="halt_on_error=1:exitcode=9"
  RUN=()
else
  MODE=valgrind
  command -v valgrind >/dev/null || { echo "FAIL: valgrind is required (apt-get install -y valgrind)"; exit 1; }
  RUN=(valgrind -q --error-exitcode=9 --leak-check=full --errors-for-leak-kinds=definite)
fi

case_run() { # NAME EXPECTED-STATUS ARGS...
  local name=$1 want=$2
  shift 2
  n=$((n + 1))
  rm -rf "$WORK/out" && mkdir "$WORK/out"
  local t0 t1
  t0=$(date +%s)
  (cd "$WORK/out" && "${RUN[@]}" "$CLI" "$@") >/dev/null 2>"$WORK/log"
  local st=$?
  t1=$(date +%s)
  if [ "$st" = "$want" ]; then
    echo "ok   $name ($((t1 - t0)) s)"
  else
    echo "FAIL $name: status $st, expected $want (9 = memory error or definite leak)"
    grep -v '^$' "$WORK/log" | head -n 60
    fails=$((fails + 1))
  fi
}

for f in "$SRC"/networks/*.json; do
  case_run "$(basename "$f")" 0 run "$f" -o o.csv --summary o.json --events e.csv --quiet
done
case_run demo 0 demo -o demo.csv
# Error paths free what they built: a bad value deep in an element, and a topology error.
case_run bad/valve-reseat-above-crack 2 run "$SRC/tests/bad/valve-reseat-above-crack.json" -o o.csv
case_run bad/two-reservoirs-one-node 2 run "$SRC/tests/bad/two-reservoirs-one-node.json" -o o.csv

echo "valgrind_examples ($MODE): $n cases, $fails failures"
[ "$n" -ge 3 ] || { echo "FAIL: no example networks found in $SRC/networks"; exit 1; }
[ "$fails" = 0 ]
