#!/usr/bin/env bash
# Design studies: a grid sweep gives the same bytes for any --jobs, and 4 shards run under GNU
# parallel merge into exactly the bytes of the unsharded run; a Monte Carlo run is reproducible
# from its seed, its samples have the requested spread, and its limit probabilities are printed.
set -euo pipefail
cli=$1 src=$2
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
net=$src/networks/diaphragm-two-valves.json
vary=(--vary 'elements[v_in].crack_reverse=30mmHg..80mmHg' --steps 4
      --vary 'elements[diaphragm].compliance=2e-13..8e-13' --steps 3)
"$cli" sweep "$net" "${vary[@]}" -o "$tmp/j1.csv" --jobs 1 --quiet
"$cli" sweep "$net" "${vary[@]}" -o "$tmp/j2.csv" --jobs 2 --quiet
cmp "$tmp/j1.csv" "$tmp/j2.csv"
[ "$(wc -l < "$tmp/j1.csv")" -eq 13 ] || { echo "expected 12 points + header"; exit 1; }
grep -c ',ok$' "$tmp/j1.csv" | grep -qx 12
# The varied value must reach the element: the reverse crack column equals the grid.
/usr/bin/python3 - "$tmp/j1.csv" <<'PY'
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1])))
vals = sorted({float(r['elements[v_in].crack_reverse [mmHg]']) for r in rows})
assert [round(v, 6) for v in vals] == [30, 46.666667, 63.333333, 80], vals
PY
parallel --will-cite -j 2 "$cli" sweep "$net" "${vary[@]}" -o "$tmp/shard-{}.csv" --shard {}/4 --jobs 1 --quiet ::: 0 1 2 3
"$cli" merge "$tmp"/shard-*.csv -o "$tmp/merged.csv"
cmp "$tmp/j1.csv" "$tmp/merged.csv"
# A missing shard is an error, not a silently shorter file.
if "$cli" merge "$tmp/shard-0.csv" "$tmp/shard-1.csv" -o "$tmp/bad.csv" 2>"$tmp/err"; then
  echo "merge of incomplete shards succeeded"; exit 1; fi
grep -q "missing" "$tmp/err"; [ ! -e "$tmp/bad.csv" ]
# SLURM array variables select the shard like --shard does.
SLURM_ARRAY_TASK_ID=3 SLURM_ARRAY_TASK_COUNT=4 SLURM_ARRAY_TASK_MIN=1 \
  "$cli" sweep "$net" "${vary[@]}" -o "$tmp/slurm2.csv" --jobs 1 --quiet
cmp "$tmp/slurm2.csv" "$tmp/shard-2.csv"
# Monte Carlo: reproducible, shardable, with the spread asked for.
mc=$src/tests/data/mc-rectifier.json
"$cli" sweep "$mc" --monte-carlo 400 --seed 7 -o "$tmp/mc1.csv" --jobs 2 > "$tmp/stats.txt"
"$cli" sweep "$mc" --monte-carlo 400 --seed 7 -o "$tmp/mc2.csv" --jobs 1 --quiet
cmp "$tmp/mc1.csv" "$tmp/mc2.csv"
"$cli" sweep "$mc" --monte-carlo 400 --seed 8 -o "$tmp/mc3.csv" --quiet
! cmp -s "$tmp/mc1.csv" "$tmp/mc3.csv"
for i in 0 1; do "$cli" sweep "$mc" --monte-carlo 400 --seed 7 -o "$tmp/mcs$i.csv" --shard $i/2 --quiet; done
"$cli" merge "$tmp"/mcs*.csv -o "$tmp/mcm.csv"
cmp "$tmp/mc1.csv" "$tmp/mcm.csv"
grep -q 'P(regurgitant_fraction > 0.02)' "$tmp/stats.txt"
/usr/bin/python3 - "$tmp/mc1.csv" <<'PY'
import csv, sys, statistics as st
rows = list(csv.DictReader(open(sys.argv[1])))
cf = [float(r['$.elements[2].crack_forward [mbar]']) for r in rows]
cr = [float(r['$.elements[2].crack_reverse [mbar]']) for r in rows]
n = len(cf)
# normal, tolerance 1 mbar = 2 sigma: sample sd within 4 standard errors (se of sd ~ sigma/sqrt(2n))
sd = st.stdev(cf); assert abs(sd - 0.5) < 4 * 0.5 / (2 * n) ** 0.5, sd
assert abs(st.mean(cf) - 5) < 4 * 0.5 / n ** 0.5, st.mean(cf)
# uniform +-5 mbar: sd = 5/sqrt(3), all inside the range
assert min(cr) >= 20 and max(cr) <= 30
assert abs(st.stdev(cr) - 5 / 3 ** 0.5) < 0.25, st.stdev(cr)
PY
echo "sweep_shards: ok"
