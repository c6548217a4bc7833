#!/usr/bin/env bash
# Pictures: `ferrocirc plot` writes well-formed, self-contained SVG that renders, and
# `ferrocirc schematic` writes DOT that Graphviz accepts.
#
# Runs the demo and every networks/*.json, plots each run (whole, last cycles, chosen columns),
# draws each network's schematic; plots every valve design's field profile and a valve sweep; a
# sweep table with a failed point; a 300 000-row run with one spike (decimation: at most 2000
# points per series and the spike still drawn). Each SVG must pass `xmllint --noout` (Debian
# libxml2-utils), reference nothing external, and render to PNG with `rsvg-convert` (librsvg2-bin);
# each DOT file must pass `dot -Tsvg` (graphviz). Bad input must exit 2 naming the file (and the
# line for a CSV) and leave no output or temporary behind.
#
# $1 = the ferrocirc command line, $2 = the source tree.
set -u
CLI=${1:?usage: plot_schematic.sh FERROCIRC SOURCE_DIR}
SRC=${2:?usage: plot_schematic.sh FERROCIRC SOURCE_DIR}
CLI=$(realpath "$CLI") SRC=$(realpath "$SRC")
WORK=$(mktemp -d "${TMPDIR:-/tmp}/fc-plot.XXXXXX")
trap 'rm -rf "$WORK"' EXIT
fails=0 checks=0

LIMIT=${FC_PLOT_TIMEOUT:-120} # seconds per simulation; a hang is a failure, not a stuck test
fail() { echo "FAIL $1"; fails=$((fails + 1)); }
ok() { checks=$((checks + 1)); }

for tool in xmllint rsvg-convert dot; do
  command -v "$tool" >/dev/null || { echo "FAIL: $tool not found (apt-get install libxml2-utils librsvg2-bin graphviz)"; exit 1; }
done

# svg_ok NAME: well-formed, self-contained, renders to a PNG of the declared width.
svg_ok() {
  local svg=$1
  xmllint --noout "$svg" 2>"$WORK/xml.err" || { fail "$svg: not well-formed: $(head -3 "$WORK/xml.err")"; return; }
  if grep -qE '<script|<image|xlink:href|@import|url\(http' "$svg"; then fail "$svg: references something external"; return; fi
  rsvg-convert "$svg" -o "${svg%.svg}.png" 2>"$WORK/rsvg.err" || { fail "$svg: rsvg-convert: $(head -3 "$WORK/rsvg.err")"; return; }
  local sig; sig=$(head -c 4 "${svg%.svg}.png" | od -An -c | tr -d ' ')
  [ "$sig" = "211PNG" ] || { fail "$svg: rsvg-convert wrote no PNG"; return; }
  ok
}

# plot_ok NAME ARGS...: the command succeeds and its SVG passes svg_ok.
plot_ok() {
  local name=$1; shift
  "$CLI" plot "$@" -o "$WORK/$name.svg" 2>"$WORK/err" || { fail "$name: plot exited $?: $(cat "$WORK/err")"; return; }
  svg_ok "$WORK/$name.svg"
}

# polylines FILE: number of <polyline> elements; maxpts FILE: most points in one of them.
polylines() { grep -c '<polyline' "$1"; }
maxpts() { grep -o 'points="[^"]*"' "$1" | awk '{ if (NF > m) m = NF } END { print m + 0 }'; }

cd "$WORK" || exit 1

# --- the demo ---
timeout "$LIMIT" "$CLI" demo -o demo.csv >/dev/null 2>&1 || { fail "demo did not run (exit $?)"; echo "0 checks"; exit 1; }
plot_ok demo demo.csv
plot_ok demo_last demo.csv --cycles last:3 --period 1 --title "Demo, last three beats"
grep -q 't = 17 to 20 s' demo_last.svg && ok || fail "demo_last: window is not t = 17 to 20 s"
plot_ok demo_cols demo.csv --columns p:chamber_in,q:culture --from 5 --to 7.5
[ "$(polylines demo_cols.svg)" = 2 ] && ok || fail "demo_cols: expected 2 curves, got $(polylines demo_cols.svg)"
grep -q 'µL/min' demo.svg && ok || fail "demo: flow unit not shown as µL/min"

# --- every example network: run, plot, schematic ---
for net in "$SRC"/networks/*.json; do
  name=$(basename "$net" .json)
  if ! timeout "$LIMIT" "$CLI" run "$net" -o "$name.csv" --quiet >/dev/null 2>"$WORK/err"; then
    fail "$name: run failed: $(head -3 "$WORK/err")"; continue
  fi
  plot_ok "$name" "$name.csv"
  if head -1 "$name.csv" | grep -q 'state:'; then
    grep -q 'open</text>' "$name.svg" && ok || fail "$name: valves but no valve-open legend"
    grep -q 'fill-opacity="0.16"/>' "$name.svg" && ok || fail "$name: valves but no shaded span"
  fi
  "$CLI" schematic "$net" -o "$name.dot" 2>"$WORK/err" || { fail "$name: schematic: $(cat "$WORK/err")"; continue; }
  dot -Tsvg "$name.dot" -o "$name.dot.svg" 2>"$WORK/err" || { fail "$name: dot rejected the schematic: $(head -3 "$WORK/err")"; continue; }
  [ -s "$WORK/err" ] && fail "$name: dot warned: $(head -3 "$WORK/err")"
  svg_ok "$name.dot.svg"
  for id in $(/usr/bin/python3 -c 'import json,sys; print(" ".join(e["id"] for e in json.load(open(sys.argv[1]))["elements"]))' "$net"); do
    grep -q "<b>$id</b>" "$name.dot" || fail "$name: element $id missing from the schematic"
  done
  ok
done

# --- valve field profiles and a valve sweep ---
for design in "$SRC"/networks/valves/*.json; do
  name=profile_$(basename "$design" .json)
  "$CLI" valve "$design" --profile "$name.csv" >/dev/null 2>"$WORK/err" || { fail "$name: valve --profile: $(head -3 "$WORK/err")"; continue; }
  plot_ok "$name" "$name.csv"
  grep -q 'magnetic pressure' "$name.svg" && grep -q '|B| \[mT\]' "$name.svg" && ok || fail "$name: profile panels missing"
done
taper="$SRC/networks/valves/taper.json"
if "$CLI" valve "$taper" --vary 'magnets[0].gap=0.5mm..2mm' --steps 6 -o vary.csv >/dev/null 2>"$WORK/err"; then
  plot_ok valve_sweep vary.csv --x 'magnets[0].gap' --y crack_forward,crack_reverse,ratio
  [ "$(grep -c '<circle' valve_sweep.svg)" -ge 18 ] && ok || fail "valve_sweep: expected 18 point markers"
else
  fail "valve --vary: $(head -3 "$WORK/err")"
fi

# --- a sweep table with a failed point ---
cat > sweep.csv <<'EOF'
gap [mm],flow [uL/min],backflow [%],error
0.5,12.5,1.2,
0.75,13.1,1.6,
1.0,13.8,2.1,
1.25,nan,nan,"integrator failed at t = 3.2 s, step too small"
1.5,14.6,3.5,
EOF
plot_ok sweep sweep.csv --x gap --y 'flow,backflow [%]'
# one cross per panel (2) plus one per legend (2)
[ "$(grep -c 'stroke="#C00000"' sweep.svg)" = 4 ] && ok || fail "sweep: the failed point is not marked in both panels"

# --- a real `ferrocirc sweep` table: the "status" column ("ok" or the error) is not a number ---
if "$CLI" sweep "$SRC/networks/diaphragm-one-magnet.json" --vary 'elements[diaphragm].backing_pressure.peak=20mbar..30mbar' \
     --steps 3 --jobs 1 --quiet -o real_sweep.csv >/dev/null 2>"$WORK/err"; then
  ycol=$(head -1 real_sweep.csv | tr ',' '\n' | grep -m1 '^rf:')
  plot_ok real_sweep real_sweep.csv --x 'elements[diaphragm].backing_pressure.peak [mbar]' --y "$ycol"
  [ "$(grep -c '<circle' real_sweep.svg)" -ge 3 ] && ok || fail "real_sweep: expected 3 point markers"
else
  fail "sweep for the plot: $(head -3 "$WORK/err")"
fi

# --- a long run: decimation keeps the spike and bounds the points ---
awk 'BEGIN { print "t [s],p:a [mbar],q:b [uL/min]";
  for (i = 0; i < 300000; i++) { p = sin(i / 500.0); if (i == 123457) p = 1000; printf "%.6f,%.6f,%.6f\n", i * 1e-3, p, -p } }' > long.csv
start=$(date +%s%N)
plot_ok long long.csv
elapsed_ms=$(( ($(date +%s%N) - start) / 1000000 ))
[ "$(maxpts long.svg)" -le 2000 ] && ok || fail "long: a series has $(maxpts long.svg) points (limit 2000)"
grep -q '>1000</text>' long.svg && ok || fail "long: the spike to 1000 mbar was lost (no 1000 tick)"
echo "long.csv (300000 rows): plotted in ${elapsed_ms} ms, largest series $(maxpts long.svg) points"

# --- bad input: exit 2, the file (and line) named, nothing written ---
mkdir -p out
bad() { # NAME STATUS SUBSTRING ARGS...
  local name=$1 want=$2 sub=$3; shift 3
  "$CLI" "$@" 2>"$WORK/err" >/dev/null; local st=$?
  [ "$st" = "$want" ] || fail "$name: exit $st, expected $want ($(head -2 "$WORK/err"))"
  grep -qF -- "$sub" "$WORK/err" || fail "$name: stderr lacks \"$sub\": $(head -2 "$WORK/err")"
  [ -z "$(ls -A out)" ] || { fail "$name: left $(ls -A out) behind"; rm -f out/*; }
  ok
}
printf 't [s],p:x [mbar]\n0,1\n0.1,oops\n' > badnum.csv
printf 't [s],p:x [mbar]\n0,1\n0.1\n' > short.csv
printf 't [s],p:x [mbar]\n0,1\n-1,2\n' > backwards.csv
bad cycles_no_period 2 "--period" plot demo.csv --cycles last:3 -o out/a.svg
bad bad_cycles 2 "last:N" plot demo.csv --cycles 3 --period 1 -o out/a.svg
bad bad_number 2 "badnum.csv:3:" plot badnum.csv -o out/a.svg
bad short_row 2 "short.csv:3:" plot short.csv -o out/a.svg
bad backwards 2 "backwards.csv:3:" plot backwards.csv -o out/a.svg
bad no_column 2 "p:nowhere" plot demo.csv --columns p:nowhere -o out/a.svg
bad sweep_no_x 2 "--x" plot sweep.csv -o out/a.svg
bad sweep_bad_y 2 "no column \"speed\"" plot sweep.csv --x gap --y speed -o out/a.svg
bad trace_with_x 2 "sweep tables" plot demo.csv --x t --y p:waste -o out/a.svg
bad empty_window 2 "empty" plot demo.csv --from 30 --to 40 -o out/a.svg
bad no_output 2 "-o OUT.svg" plot demo.csv
bad missing_csv 1 "nothere.csv" plot nothere.csv -o out/a.svg
printf '{"format": "ferrocirc-network/1", "elements": [{"id": "r", "type": "resistor", "from": "a"}]}\n' > badnet.json
bad bad_network 2 "badnet.json" schematic badnet.json -o out/a.dot

echo "$checks checks, $fails failures"
[ "$fails" = 0 ]
