#!/usr/bin/env bash
# Build the libFuzzer targets (fuzz_network, fuzz_valve) with clang 14 and run each for N seconds.
#
#   tests/fuzz/build_and_run.sh [SECONDS=60] [WORKDIR]
#
# The project sources are compiled directly (the same globs as CMakeLists.txt: src/*.c,
# src/*/*.c, elements/*.c, without src/main.c) with -fsanitize=fuzzer-no-link,address,undefined
# into an archive, and each target links it with -fsanitize=fuzzer,address,undefined and the
# libraries of the CMake build (SUNDIALS cvodes, nvecserial, sunlinsolspgmr, KLU, cJSON,
# UDUNITS-2, libm). The system cJSON is not instrumented, so coverage inside cJSON is not
# guided; our code, which sees every tree cJSON accepts, is.
# Seeds: networks/*.json, networks/valves/*.json, tests/bad/*.json, tests/bad/valve/*.json;
# dictionary: tests/fuzz/ferrocirc.dict; leaks inside UDUNITS-2 suppressed: tests/fuzz/lsan.supp. The two targets run at the same time (2 cores).
# Prints the executions of each target and any crash (with its input file and stack trace);
# exits 1 on a crash, leak, sanitizer report or timeout, 2 if the build fails.
# WORKDIR (default: a new temporary folder, removed unless something was found) keeps the
# build, the grown corpora and the crash inputs.
set -u
SECS=${1:-60}
SRC=$(cd "$(dirname "$0")/../.." && pwd)
CC=${CC:-clang-14}
command -v "$CC" >/dev/null || CC=clang
command -v "$CC" >/dev/null || { echo "build_and_run: clang 14 is needed (apt-get install -y clang libclang-rt-14-dev)"; exit 2; }
if [ -n "${2:-}" ]; then W=$2; mkdir -p "$W"; KEEP=1; else W=$(mktemp -d "${TMPDIR:-/tmp}/fc-fuzz.XXXXXX"); KEEP=0; fi
W=$(cd "$W" && pwd)

SAN="-fsanitize=address,undefined -fno-sanitize-recover=undefined -fno-omit-frame-pointer"
CFLAGS="-std=c11 -g -O1 $SAN -fsanitize=fuzzer-no-link -I$SRC/include -I$SRC/src -I$SRC/elements -I/usr/include/suitesparse -I/usr/include/cminpack-1"
LIBS="-lsundials_cvodes -lsundials_nvecserial -lsundials_sunlinsolspgmr -lklu -lamd -lcjson -lcminpack -ludunits2 -lm"

# ---- build ----
echo "build_and_run: compiling the project with $($CC --version | head -n 1) in $W"
mkdir -p "$W/obj"
rm -f "$W"/obj/*.o "$W/libfc.a"
# shellcheck disable=SC2086
if ! ls "$SRC"/src/*.c "$SRC"/src/*/*.c "$SRC"/elements/*.c | grep -v '/src/main\.c$' |
    xargs -P 2 -I{} sh -c 'o="$1/obj/$(echo "$2" | sed "s|^$3/||; s|/|_|g; s|\.c$|.o|")"; '"$CC"' '"$CFLAGS"' -c "$2" -o "$o" || exit 255' _ "$W" {} "$SRC"; then
  echo "build_and_run: compiling the project failed"
  exit 2
fi
ar rcs "$W/libfc.a" "$W"/obj/*.o || exit 2
for t in fuzz_network fuzz_valve; do
  # shellcheck disable=SC2086
  "$CC" $CFLAGS -fsanitize=fuzzer "$SRC/tests/fuzz/$t.c" "$W/libfc.a" $LIBS -o "$W/$t" ||
    { echo "build_and_run: linking $t failed"; exit 2; }
done

# ---- seeds ----
mkdir -p "$W/seed_network" "$W/seed_valve" "$W/corpus_network" "$W/corpus_valve" "$W/artifacts"
for f in "$SRC"/networks/*.json "$SRC"/tests/bad/*.json; do
  [ -f "$f" ] && cp "$f" "$W/seed_network/$(basename "$f")"
done
for f in "$SRC"/networks/valves/*.json "$SRC"/tests/bad/valve/*.json; do
  [ -f "$f" ] && cp "$f" "$W/seed_valve/$(basename "$f")"
done
# The network seeds with inline designs are useful to the design loader too.
cp "$SRC"/networks/*.json "$W/seed_valve/" 2>/dev/null

# ---- run ----
export ASAN_OPTIONS="detect_leaks=1:abort_on_error=0:symbolize=1:allocator_may_return_null=1"
export UBSAN_OPTIONS="print_stacktrace=1:halt_on_error=1"
export LSAN_OPTIONS="suppressions=$SRC/tests/fuzz/lsan.supp:print_suppressions=0"
run_target() { # NAME
  local t=$1 k=${1#fuzz_}
  (cd "$W" && "./$t" -max_total_time="$SECS" -timeout=25 -rss_limit_mb=2048 -max_len=16384 \
     -print_final_stats=1 -dict="$SRC/tests/fuzz/ferrocirc.dict" \
     -artifact_prefix="$W/artifacts/$k-" "corpus_$k" "seed_$k" </dev/null >"$W/$t.log" 2>&1)
  echo $? >"$W/$t.status"
}
echo "build_and_run: running fuzz_network and fuzz_valve for $SECS s each (in parallel)"
run_target fuzz_network &
run_target fuzz_valve &
wait

found=0
for t in fuzz_network fuzz_valve; do
  k=${t#fuzz_}
  st=$(cat "$W/$t.status")
  execs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$W/$t.log" | tail -n 1)
  rate=$(sed -n 's/^stat::average_exec_per_sec: *//p' "$W/$t.log" | tail -n 1)
  cov=$(grep -o 'cov: [0-9]*' "$W/$t.log" | tail -n 1)
  ncorp=$(ls "$W/corpus_$k" | wc -l)
  echo "$t: ${execs:-?} executions in $SECS s (${rate:-?}/s), $cov, corpus $ncorp inputs, status $st"
  crashes=$(ls "$W/artifacts/$k-"* 2>/dev/null)
  if [ "$st" != 0 ] || [ -n "$crashes" ]; then
    found=1
    echo "---- $t found a problem; inputs: ${crashes:-(none saved)}"
    grep -n -A 40 'ERROR: \|runtime error\|ALARM\|fuzz_[a-z]*: ' "$W/$t.log" | head -n 80
    echo "---- (full log: $W/$t.log)"
  fi
done
if [ "$found" = 1 ] || [ "$KEEP" = 1 ]; then
  echo "build_and_run: work folder kept: $W"
else
  rm -rf "$W"
fi
exit "$found"
