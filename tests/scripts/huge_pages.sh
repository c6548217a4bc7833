#!/bin/bash
# Large networks run with glibc's huge-page tunable (src/main.c): `run` of a network file of
# 1 MiB or more re-executes ferrocirc once with GLIBC_TUNABLES=glibc.malloc.hugetlb=1; a
# smaller file does not; a GLIBC_TUNABLES the user set is left as it is; and the results do
# not depend on it. ($1 = ferrocirc CLI, $2 = source dir.) The environment of the running
# process is read from /proc/PID/environ (the PID survives exec).
set -uo pipefail
FC=$1
W=$(mktemp -d)
trap 'rm -rf "$W"' EXIT
cd "$W"
fails=0

cat > small.json <<'JSON'
{"format": "ferrocirc-network/1",
 "title": "invented: a sine-driven chamber behind a check valve (huge-page test)",
 "simulation": {"cycles": 5000},
 "elements": [
  {"id": "P", "type": "pressure_source", "from": "g", "to": "a",
   "pressure": {"shape": "sine", "mean": "5 mbar", "amplitude": "20 mbar", "frequency": "1 Hz"}},
  {"id": "G", "type": "reservoir", "node": "g"},
  {"id": "R", "type": "resistor", "from": "a", "to": "b", "resistance": 1e12},
  {"id": "V", "type": "check_valve", "from": "b", "to": "c", "crack_forward": "2 mbar",
   "reseat_forward": "1 mbar", "crack_reverse": "100 mbar", "open_resistance": 1e12},
  {"id": "C", "type": "chamber", "node": "c", "compliance": 1e-13},
  {"id": "W", "type": "resistor", "from": "c", "to": "g", "resistance": 5e12}]}
JSON
# the same network in a file of 1 MiB and more: JSON allows any amount of whitespace
{ cat small.json; head -c 1100000 /dev/zero | tr '\0' ' '; echo; } > large.json

# seen CASE FILE: runs FILE in the background and prints the GLIBC_TUNABLES the process ends up
# with ("none" if unset), read while it runs; its summary goes to sum_CASE.json
seen() {
  "$FC" run "$2" --quiet --summary "sum_$1.json" &
  local pid=$! val="" n
  for n in $(seq 300); do
    val=$( (tr '\0' '\n' < "/proc/$pid/environ") 2>/dev/null | grep '^GLIBC_TUNABLES=' || true)
    [ -n "$val" ] && break
    kill -0 "$pid" 2>/dev/null || break
    sleep 0.01
  done
  wait "$pid" || { echo "FAIL: ferrocirc run $2 failed"; fails=$((fails + 1)); }
  echo "${val:-none}"
}

check() { # check WHAT GOT WANT
  if [ "$2" = "$3" ]; then echo "ok: $1: $2"; else echo "FAIL: $1: got $2, want $3"; fails=$((fails + 1)); fi
}

unset GLIBC_TUNABLES
check "a 1 MiB network file" "$(seen large large.json)" "GLIBC_TUNABLES=glibc.malloc.hugetlb=1"
check "a small network file" "$(seen small small.json)" "none"
export GLIBC_TUNABLES=glibc.malloc.perturb=0
check "the user's GLIBC_TUNABLES" "$(seen user large.json)" "GLIBC_TUNABLES=glibc.malloc.perturb=0"
unset GLIBC_TUNABLES

# the results are the same (the run's wall time aside)
for c in large user; do
  if diff <(grep -v wall_seconds sum_small.json) <(grep -v wall_seconds "sum_$c.json") >/dev/null; then
    echo "ok: the summary of the $c run equals that of the small file"
  else
    echo "FAIL: the summary of the $c run differs"; fails=$((fails + 1))
  fi
done

if [ "$fails" -ne 0 ]; then echo "$fails check(s) failed"; exit 1; fi
echo "all huge-page checks passed"
