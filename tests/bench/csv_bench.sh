#!/bin/bash
# CSV output speed (issue 7, "Output speed"; results in docs/performance.md): 10^6 rows of
# about 100 columns, from two invented networks:
#   tree  circuit (b) with 14 chambers (100 columns), 20 beats sampled every 20 us: a fast run
#   loops circuit (a) with 8 pump loops (107 columns), 1000 beats at rel_tol 1e-4, every 1 ms
# For each binary given: the run without a CSV, with the CSV to a file in OUTDIR, and the
# kernel's own floor for that many bytes made durable, as ferrocirc makes its outputs before
# renaming them (dd from /dev/zero, 1 MiB blocks, conv=fsync). Median of REPEAT.
# Usage: csv_bench.sh OUTDIR BIN [BIN...]   (REPEAT=3 by default)
set -eu
OUT=$1; shift
HERE=$(cd "$(dirname "$0")" && pwd)
REPEAT=${REPEAT:-3}
mkdir -p "$OUT"
W=$(mktemp -d)
trap 'rm -rf "$W"' EXIT
/usr/bin/python3 "$HERE/gen_tree.py" 14 20 "$W/tree.json" --si --valve --pump pressure --no-trap \
  --wall-compliance 2e-16 --no-culture --short-ids >/dev/null 2>&1
/usr/bin/python3 "$HERE/gen_loop.py" 8 1000 "$W/loops.json" >/dev/null 2>&1
/usr/bin/python3 - "$W" <<'PY'
import json, sys
w = sys.argv[1]
for name, upd in (("tree", {"sample_interval": "20 us"}),
                  ("loops", {"sample_interval": "1 ms", "rel_tol": 1e-4})):
    d = json.load(open("%s/%s.json" % (w, name)))
    d["simulation"].update(upd)
    json.dump(d, open("%s/%s.json" % (w, name), "w"))
PY
median() { sort -g | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }
timeit() { # prints "wall user sys" of one run of "$@"
  /usr/bin/time -f "%e %U %S" -o "$W/t" "$@" >/dev/null 2>&1
  cat "$W/t"
}
printf "| network | binary | run without CSV, s | with CSV, s (user, sys) | CSV MB | rows x columns | dd floor, s |\n"
printf "|---|---|---:|---:|---:|---|---:|\n"
for net in tree loops; do
  for bin in "$@"; do
    rm -f "$W"/*.tt
    for _ in $(seq "$REPEAT"); do
      timeit "$bin" run "$W/$net.json" --quiet | awk '{print $1}' >>"$W/a.tt"
      rm -f "$OUT/$net.csv"
      timeit "$bin" run "$W/$net.json" --quiet -o "$OUT/$net.csv" >>"$W/b.tt"
    done
    bytes=$(stat -c %s "$OUT/$net.csv")
    rows=$(($(wc -l <"$OUT/$net.csv") - 1))
    cols=$(head -1 "$OUT/$net.csv" | tr ',' '\n' | wc -l)
    for _ in $(seq "$REPEAT"); do
      rm -f "$OUT/dd.bin"
      /usr/bin/time -f "%e" -o "$W/t" dd if=/dev/zero of="$OUT/dd.bin" bs=1M conv=fsync \
        count=$(((bytes + 1048575) / 1048576)) 2>/dev/null
      cat "$W/t" >>"$W/c.tt"
    done
    rm -f "$OUT/dd.bin" "$OUT/$net.csv"
    a=$(median <"$W/a.tt")
    b=$(awk '{print $1}' "$W/b.tt" | median)
    bl=$(awk -v m="$b" '$1 == m {print $2 ", " $3; exit}' "$W/b.tt")
    c=$(median <"$W/c.tt")
    printf "| %s | %s | %s | %s (%s) | %d | %d x %d | %s |\n" "$net" "$(basename "$bin")" "$a" "$b" "$bl" \
      $((bytes / 1000000)) "$rows" "$cols" "$c"
  done
done
