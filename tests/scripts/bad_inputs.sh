#!/usr/bin/env bash
# Bad input never crashes, hangs or leaves a file behind.
#
# Every tests/bad/NAME.json is run as `ferrocirc run NAME.json -o OUT/o.csv --summary OUT/o.json`
# in an empty folder OUT; NAME.expect gives the expected exit status (line 1) and substrings that
# must all appear in stderr (lines 2..). Each case must also name the input file in stderr and
# leave OUT empty (no output, no *.tmp-* temporary). Valve designs in tests/bad/valve/ are run as
# `ferrocirc valve FILE`; while that command is not built in, through a network whose
# ferrofluid_valve loads the design file (the same loader, fc_valve_design_load).
# Cases too big to commit (a 50 MB file, 10 000 levels of nesting, a table of 10^6 + 1 points)
# are generated here, in a temporary folder.
#
# $1 = the ferrocirc command line, $2 = the source tree.
set -u
CLI=${1:?usage: bad_inputs.sh FERROCIRC SOURCE_DIR}
SRC=${2:?usage: bad_inputs.sh FERROCIRC SOURCE_DIR}
BAD="$SRC/tests/bad"
WORK=$(mktemp -d "${TMPDIR:-/tmp}/fc-bad.XXXXXX")
trap 'rm -rf "$WORK"' EXIT
LIMIT=${FC_BAD_TIMEOUT:-60} # seconds per case; a hang is a failure
fails=0 cases=0

fail() { echo "FAIL $1: $2"; fails=$((fails + 1)); }

# check NAME FILE-NAMED STATUS-EXPECTED EXPECT-LINES... -- COMMAND...
# Runs COMMAND with stderr to $WORK/err in a fresh $WORK/out, then checks everything.
check() {
  local name=$1 named=$2 want=$3
  shift 3
  local subs=()
  while [ "$1" != "--" ]; do subs+=("$1"); shift; done
  shift
  cases=$((cases + 1))
  rm -rf "$WORK/out" && mkdir "$WORK/out"
  timeout "$LIMIT" "$@" >"$WORK/stdout" 2>"$WORK/err"
  local got=$?
  local err
  err=$(cat "$WORK/err")
  if [ "$got" = 124 ]; then fail "$name" "no answer within $LIMIT s"; return; fi
  if [ "$got" -ge 128 ]; then fail "$name" "killed by signal $((got - 128)): $err"; return; fi
  [ "$got" = "$want" ] || fail "$name" "exit status $got, expected $want; stderr: $err"
  grep -qF -- "$named" "$WORK/err" || fail "$name" "stderr does not name the file $named: $err"
  for s in "${subs[@]}"; do
    grep -qF -- "$s" "$WORK/err" || fail "$name" "stderr lacks \"$s\"; got: $err"
  done
  local left
  left=$(ls -A "$WORK/out")
  [ -z "$left" ] || fail "$name" "left files behind in the output folder: $left"
}

run_net() { # NAME FILE STATUS SUBSTRINGS...
  local name=$1 file=$2 want=$3
  shift 3
  check "$name" "$file" "$want" "$@" -- "$CLI" run "$file" -o "$WORK/out/o.csv" --summary "$WORK/out/o.json"
}

expect_lines() { # FILE.expect -> status on line 1, substrings after
  mapfile -t EXP <"$1"
  EXP_STATUS=${EXP[0]}
  EXP_SUBS=()
  for ((k = 1; k < ${#EXP[@]}; k++)); do [ -n "${EXP[k]}" ] && EXP_SUBS+=("${EXP[k]}"); done
}

# ---- committed network cases ----
n_net=0
for f in "$BAD"/*.json; do
  name=$(basename "$f" .json)
  if [ ! -f "$BAD/$name.expect" ]; then fail "$name" "no $name.expect beside it"; continue; fi
  expect_lines "$BAD/$name.expect"
  run_net "$name" "$f" "$EXP_STATUS" "${EXP_SUBS[@]}"
  n_net=$((n_net + 1))
done
[ "$n_net" -ge 60 ] || fail "tests/bad" "only $n_net network cases, expected at least 60"

# ---- committed valve-design cases ----
have_valve=1
"$CLI" valve 2>&1 | grep -q 'unknown command "valve"' && have_valve=0
n_valve=0
for f in "$BAD"/valve/*.json; do
  [ -e "$f" ] || continue
  name=valve/$(basename "$f" .json)
  expect_lines "${f%.json}.expect"
  if [ "$have_valve" = 1 ]; then
    check "$name" "$f" "$EXP_STATUS" "${EXP_SUBS[@]}" -- "$CLI" valve "$f"
  else
    w="$WORK/wrap.json"
    abs=$(cd "$(dirname "$f")" && pwd)/$(basename "$f")
    cat >"$w" <<EOF
{"format": "ferrocirc-network/1", "elements": [
  {"id": "a", "type": "reservoir", "node": "a", "pressure": "10 mbar"},
  {"id": "v", "type": "ferrofluid_valve", "from": "a", "to": "b", "design": {"file": "$abs"}},
  {"id": "b", "type": "reservoir", "node": "b"}], "simulation": {"duration": "0.1 s"}}
EOF
    check "$name" "$f" "$EXP_STATUS" "${EXP_SUBS[@]}" -- "$CLI" run "$w" -o "$WORK/out/o.csv" --summary "$WORK/out/o.json"
  fi
  n_valve=$((n_valve + 1))
done

# ---- generated cases ----
head_json='{"format": "ferrocirc-network/1", "elements": [
  {"id": "a", "type": "reservoir", "node": "a", "pressure": "10 mbar"},
  {"id": "r", "type": "resistor", "from": "a", "to": "b", "resistance": "1e12 Pa.s/m3"},
  {"id": "b", "type": "reservoir", "node": "b"}], "simulation": {"duration": "1 s"},'

# 50 MB (52 428 800 bytes): refused from its size, before it is read. The limit is the one in
# include/ferrocirc/network.h, FC_NET_MAX_FILE_BYTES, written there as a product like (40u * 1024u * 1024u).
limit_expr=$(sed -n 's/^#define FC_NET_MAX_FILE_BYTES *\(([0-9u* ]*)\).*/\1/p' "$SRC/include/ferrocirc/network.h" | tr -d 'u')
max_bytes=$((limit_expr))
big="$WORK/big-50MB.json"
{ printf '%s\n "description": "' "$head_json"; head -c 52428700 /dev/zero | tr '\0' 'x'; printf '"}\n'; } >"$big"
size=$(stat -c %s "$big")
if [ -z "$limit_expr" ] || [ "$size" -le "$max_bytes" ]; then
  fail generated/big-50MB "cannot read FC_NET_MAX_FILE_BYTES (\"$limit_expr\") or it is not below $size bytes; update this test"
else
  run_net generated/big-50MB "$big" 2 "file is $size bytes; the limit is $max_bytes bytes"
fi
rm -f "$big"

# 10 000 levels of nesting: refused before cJSON recurses.
deep="$WORK/deep-10000.json"
{ printf '%s\n "description": ' "$head_json"; head -c 10000 /dev/zero | tr '\0' '['
  head -c 10000 /dev/zero | tr '\0' ']'; printf '}\n'; } >"$deep"
run_net generated/deep-10000 "$deep" 2 "JSON nested deeper than 64 levels" "deep-10000.json:5:"
rm -f "$deep"

# A table of 10^6 + 1 points (about 11 MB, below the file limit): the table limit answers.
table="$WORK/table-1000001.json"
{ printf '{"format": "ferrocirc-network/1", "elements": [\n'
  printf '  {"id": "a", "type": "reservoir", "node": "a", "pressure": {"shape": "table", "points": ['
  awk 'BEGIN { for (i = 0; i <= 1000000; i++) printf "%s[%d,0]", (i ? "," : ""), i }'
  printf ']}},\n  {"id": "r", "type": "resistor", "from": "a", "to": "b", "resistance": 1e12},\n'
  printf '  {"id": "b", "type": "reservoir", "node": "b"}], "simulation": {"duration": "1 s"}}\n'; } >"$table"
run_net generated/table-1000001 "$table" 2 '$.elements[0].pressure.points[1000000]: more than 1000000 samples'
rm -f "$table"

# An input that does not exist, and a folder given as the input: exit 1, named.
run_net generated/missing-input "$WORK/no-such-network.json" 1 "cannot open"
mkdir -p "$WORK/a-folder.json"
run_net generated/folder-input "$WORK/a-folder.json" 1 "is a directory"

echo "bad_inputs: $cases cases ($n_net network files, $n_valve valve designs" \
  "$([ "$have_valve" = 1 ] && echo "via 'ferrocirc valve'" || echo "via a wrapping network"), 5 generated), $fails failures"
[ "$fails" = 0 ]
