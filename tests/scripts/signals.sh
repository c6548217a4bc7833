#!/usr/bin/env bash
# Faults around a run: SIGINT and SIGTERM during a long run, --keep-partial, an unwritable or full
# output, permissions of the outputs, and byte-identical output from identical input.
#
# $1 = the ferrocirc command line, $2 = the source tree.
set -u
CLI=${1:?usage: signals.sh FERROCIRC SOURCE_DIR}
SRC=${2:?usage: signals.sh FERROCIRC SOURCE_DIR}
WORK=$(mktemp -d "${TMPDIR:-/tmp}/fc-sig.XXXXXX")
trap 'rm -rf "$WORK"' EXIT
fails=0
fail() { echo "FAIL $1: $2"; fails=$((fails + 1)); }
pass() { echo "ok   $1"; }

# A run of many seconds: 40 000 cycles of a 20 ms pulse through a check valve, sampled every
# 1 ms (8e5 rows), tight tolerance. About 7.5 s per 20 000 cycles on one core of the build
# machine (release build), so it is still running when the signal arrives after 1 s.
LONG="$WORK/long.json"
cat >"$LONG" <<'EOF'
{
  "format": "ferrocirc-network/1",
  "title": "long run for the signal test (invented)",
  "elements": [
    {"id": "pump", "type": "reservoir", "node": "in",
     "pressure": {"shape": "pulse", "low": 0, "high": "30 mbar", "period": "20 ms"}},
    {"id": "feed", "type": "channel", "from": "in", "to": "mid",
     "length": "10 mm", "width": "200 um", "height": "100 um"},
    {"id": "trap", "type": "chamber", "node": "mid", "compliance": "1e-13 m3/Pa"},
    {"id": "v", "type": "check_valve", "from": "mid", "to": "out", "crack_forward": "2 mbar",
     "crack_reverse": "50 mbar", "reseat_forward": "1 mbar", "open_resistance": "1e12 Pa.s/m3"},
    {"id": "outlet", "type": "reservoir", "node": "out"}
  ],
  "simulation": {"cycles": 40000, "sample_interval": "1 ms", "rel_tol": 1e-9}
}
EOF

# interrupt NAME SIGNAL EXTRA-ARGS...: start the long run in a fresh folder, signal it after 1 s.
interrupt() {
  local name=$1 sig=$2
  shift 2
  OUT="$WORK/$name"
  mkdir -p "$OUT"
  timeout -s KILL 120 "$CLI" run "$LONG" -o "$OUT/o.csv" --summary "$OUT/o.json" \
    --events "$OUT/e.csv" --quiet "$@" 2>"$OUT/stderr" &
  local pid=$!
  sleep 1
  # The run must still be going, or this test would prove nothing.
  if ! kill -0 "$pid" 2>/dev/null; then
    wait "$pid"
    fail "$name" "the long run ended (status $?) before the signal; make it longer"
    STATUS=-1
    return
  fi
  # timeout(1) forwards the signal to ferrocirc, its child.
  kill -s "$sig" "$pid"
  wait "$pid"
  STATUS=$?
}

no_temporaries() { # NAME FOLDER
  local t
  t=$(find "$2" -name '*.tmp-*')
  [ -z "$t" ] || fail "$1" "temporary files left: $t"
}

# ---- SIGINT: exit 130, no output, no temporary ----
interrupt sigint INT
if [ "$STATUS" != -1 ]; then
  [ "$STATUS" = 130 ] || fail sigint "exit status $STATUS, expected 130; stderr: $(cat "$OUT/stderr")"
  left=$(ls -A "$OUT" | grep -v '^stderr$')
  [ -z "$left" ] || fail sigint "outputs left after SIGINT without --keep-partial: $left"
  no_temporaries sigint "$OUT"
  pass "sigint (status $STATUS)"
fi

# ---- SIGTERM: the same clean-up, a failure status ----
interrupt sigterm TERM
if [ "$STATUS" != -1 ]; then
  [ "$STATUS" = 143 ] ||
    fail sigterm "exit status $STATUS, expected 143 (128 + SIGTERM, the shell convention)"
  left=$(ls -A "$OUT" | grep -v '^stderr$')
  [ -z "$left" ] || fail sigterm "outputs left after SIGTERM: $left"
  no_temporaries sigterm "$OUT"
  pass "sigterm (status $STATUS)"
fi

# ---- SIGINT with --keep-partial: o.csv.partial ends with a note of the time reached ----
interrupt keep-partial INT --keep-partial
if [ "$STATUS" != -1 ]; then
  [ "$STATUS" = 130 ] || fail keep-partial "exit status $STATUS, expected 130"
  P="$OUT/o.csv.partial"
  if [ ! -f "$P" ]; then
    fail keep-partial "no $P; folder has: $(ls -A "$OUT")"
  else
    last=$(tail -n 1 "$P")
    case "$last" in
      "# partial: interrupted, last time reached t = "*" s") ;;
      *) fail keep-partial "last line is not the note of the time reached: $last" ;;
    esac
    t_note=${last##*t = }
    t_note=${t_note% s}
    t_row=$(grep -v '^#' "$P" | tail -n 1 | cut -d, -f1)
    # The last sample written lies at or before the time reached, and the run got somewhere.
    awk -v a="$t_row" -v b="$t_note" 'BEGIN { exit !(a + 0 > 0 && a + 0 <= b + 1e-12) }' ||
      fail keep-partial "last row t = $t_row s does not fit the note t = $t_note s"
    [ -f "$OUT/e.csv.partial" ] || fail keep-partial "no partial events file e.csv.partial"
    tail -n 1 "$OUT/e.csv.partial" | grep -q '^# partial: interrupted' ||
      fail keep-partial "e.csv.partial does not end with the note"
    pass "keep-partial (status $STATUS, last row t = $t_row s, note t = $t_note s)"
  fi
  [ ! -e "$OUT/o.csv" ] || fail keep-partial "a complete-looking o.csv exists beside the partial one"
  [ ! -e "$OUT/o.json" ] || fail keep-partial "a summary was written for an interrupted run"
  no_temporaries keep-partial "$OUT"
fi

# A short network (the same circuit, 5 cycles) for the remaining cases.
SHORT="$WORK/short.json"
sed 's/"cycles": 40000/"cycles": 5/' "$LONG" >"$SHORT"

# ---- unwritable outputs: exit 1, reported, nothing written ----
unwritable() { # NAME EXPECTED-SUBSTRING ARGS...
  local name=$1 want=$2
  shift 2
  OUT="$WORK/$name"
  mkdir -p "$OUT"
  (cd "$OUT" && "$CLI" run "$SHORT" --quiet "$@") >/dev/null 2>"$WORK/$name.err"
  local st=$? before=$fails
  [ "$st" = 1 ] || fail "$name" "exit status $st, expected 1; stderr: $(cat "$WORK/$name.err")"
  grep -qF -- "$want" "$WORK/$name.err" || fail "$name" "stderr lacks \"$want\": $(cat "$WORK/$name.err")"
  left=$(ls -A "$OUT")
  [ -z "$left" ] || fail "$name" "files written although the run failed: $left"
  [ "$fails" = "$before" ] && pass "$name"
}
unwritable csv-missing-folder "$WORK/no-such-folder/o.csv" -o "$WORK/no-such-folder/o.csv"
[ ! -e "$WORK/no-such-folder" ] || fail csv-missing-folder "the missing folder was created"
unwritable csv-in-proc "/proc/ferrocirc-test.csv" -o /proc/ferrocirc-test.csv
unwritable events-missing-folder "$WORK/no-such-folder/e.csv" -o o.csv --events "$WORK/no-such-folder/e.csv"
# The summary is the last output written: an unwritable summary path must still fail the run
# without leaving the other outputs behind.
unwritable summary-missing-folder "$WORK/no-such-folder/s.json" -o o.csv --summary "$WORK/no-such-folder/s.json"

# ---- a full disk: RLIMIT_FSIZE makes writes fail with EFBIG (SIGXFSZ ignored), like ENOSPC ----
OUT="$WORK/disk-full"
mkdir -p "$OUT"
timeout -s KILL 60 bash -c 'trap "" XFSZ; ulimit -f 64; cd "$1" && exec "$2" run "$3" -o o.csv --quiet' \
  _ "$OUT" "$CLI" "$LONG" >/dev/null 2>"$WORK/disk-full.err"
st=$? before=$fails
[ "$st" = 1 ] || fail disk-full "exit status $st, expected 1; stderr: $(cat "$WORK/disk-full.err")"
grep -q 'o\.csv' "$WORK/disk-full.err" || fail disk-full "stderr does not name the output o.csv: $(cat "$WORK/disk-full.err")"
left=$(ls -A "$OUT")
[ -z "$left" ] || fail disk-full "files left after a failed write: $left"
[ "$fails" = "$before" ] && pass "disk-full (status $st: $(cut -c1-100 "$WORK/disk-full.err"))"

# ---- outputs get the usual permissions (0666 minus umask), not mkstemp's 0600 ----
OUT="$WORK/mode"
mkdir -p "$OUT"
(umask 022 && cd "$OUT" && "$CLI" run "$SHORT" -o o.csv --summary o.json --events e.csv --quiet)
before=$fails
for f in o.csv o.json e.csv; do
  m=$(stat -c %a "$OUT/$f" 2>/dev/null)
  [ "$m" = 644 ] || fail mode "$f has mode ${m:-(missing)}, expected 644 under umask 022"
done
[ "$fails" = "$before" ] && pass "mode (644 under umask 022)"

# ---- determinism: the same input twice gives byte-identical CSV and events ----
for k in 1 2; do
  mkdir -p "$WORK/det$k"
  (cd "$WORK/det$k" && "$CLI" run "$SRC/networks/diaphragm-two-valves.json" -o o.csv \
     --events e.csv --summary s.json --quiet) || fail determinism "run $k failed"
done
if cmp "$WORK/det1/o.csv" "$WORK/det2/o.csv" && cmp "$WORK/det1/e.csv" "$WORK/det2/e.csv"; then
  pass "determinism ($(wc -l <"$WORK/det1/o.csv") CSV lines, $(wc -l <"$WORK/det1/e.csv") event lines identical)"
else
  fail determinism "two runs of networks/diaphragm-two-valves.json differ"
fi
[ "$(wc -l <"$WORK/det1/o.csv")" -gt 100 ] || fail determinism "suspiciously short CSV"

echo "signals: $fails failures"
[ "$fails" = 0 ]
