#!/bin/bash
# `ferrocirc valve calibrate` end to end (ctest: $1 = ferrocirc CLI, $2 = source dir).
# Synthetic bench data are made with `ferrocirc valve --json` itself at known "true" values
# (effective Ms 15.61 kA/m = 70 % of nominal, plug volume 45 uL) and no noise, on a coarse grid
# to keep the run short; the fit must return those values, write a calibrated design that loads
# and reproduces the data, and bad inputs must exit 2 with a message naming file and line.
set -uo pipefail
FC=$1
SRC=$2
W=$(mktemp -d)
trap 'rm -rf "$W"' EXIT
cd "$W"
fails=0
PY=/usr/bin/python3

# the one-magnet example with a coarse grid
$PY - "$SRC/networks/valves/one-magnet-step.json" > v.json <<'EOF'
import json, sys
t = json.load(open(sys.argv[1]))
t["numerics"] = {"points": 401, "paths": 3}
json.dump(t, sys.stdout, indent=1)
EOF
# truth: the design with the true values and a gap; prints forward and reverse crack in mmHg
truth() {
  $PY - "$1" > t.json <<'EOF'
import json, sys
t = json.load(open("v.json"))
t["ferrofluid"]["saturation_magnetization"] = "15.61 kA/m"
t["ferrofluid"]["volume"] = "45 uL"
t["magnets"][0]["gap"] = sys.argv[1]
json.dump(t, open("t.json", "w"))
EOF
  "$FC" valve t.json --json | $PY -c 'import json,sys; r=json.load(sys.stdin); \
print("%.6f %.6f" % (r["crack_forward_Pa"]/133.322387415, r["crack_reverse_Pa"]/133.322387415))'
}
{
  echo "# synthetic, noise-free"
  echo "design,override,direction,crack [mmHg],sigma [mmHg]"
  for g in "0.75 mm" "1 mm" "1.5 mm" "2 mm"; do
    read -r f r < <(truth "$g")
    echo "v.json,magnets[0].gap=$g,forward,$f,0.1"
    echo "v.json,magnets[0].gap=$g,reverse,$r,0.1"
  done
} > m.csv

check() { # check DESCRIPTION COMMAND...
  local what=$1; shift
  if "$@"; then echo "ok: $what"; else echo "FAIL: $what"; fails=$((fails + 1)); fi
}

"$FC" valve calibrate m.csv --fit ferrofluid.saturation_magnetization,ferrofluid.volume \
  --cross-validate -o cal.json > rep.txt 2> err.txt
check "positive run exits 0" test $? -eq 0
cat rep.txt err.txt
check "report has chi-square" grep -q "reduced chi-square" rep.txt
check "report has leave-one-out" grep -q "rms leave-one-out prediction error" rep.txt
# column 4 of a parameter line of the report is the fitted value, in the design's unit
fitted() { awk -v p="$1" '$2 == p { print $4 }' rep.txt; }
near() { $PY -c "import sys; sys.exit(not abs(float('$1') - $2) <= $3)" 2>/dev/null; }
check "fitted Ms is 15.61 kA/m ($(fitted ferrofluid.saturation_magnetization))" \
  near "$(fitted ferrofluid.saturation_magnetization)" 15.61 1e-3
check "fitted volume is 45 uL ($(fitted ferrofluid.volume))" near "$(fitted ferrofluid.volume)" 45 1e-3
check "calibrated design written" test -s cal.json
"$FC" valve cal.json --json > c.json
check "calibrated design loads" test $? -eq 0
check "calibration block present" grep -q '"calibration"' cal.json
check "toleranced Ms" grep -Eq '"tolerance": "±[0-9.e-]+ kA/m"' cal.json
# the calibrated design reproduces the 1 mm row to the data's 6 decimals
read -r f1 r1 < <(sed -n 's/^v.json,magnets\[0\].gap=1 mm,forward,\([0-9.]*\),.*/\1 x/p' m.csv)
got=$($PY -c 'import json; print("%.4f" % (json.load(open("c.json"))["crack_forward_Pa"]/133.322387415))')
check "calibrated crack forward = data ($got vs $f1)" $PY -c "import sys; sys.exit(abs($got-$f1) > 2e-3)"

# expect STATUS PATTERN -- ARGS...: exit status and message on stderr; no file left behind
expect() {
  local want=$1 pat=$2
  shift 3
  rm -f out.json
  "$FC" "$@" > out.txt 2> err.txt
  local got=$?
  if [ "$got" -ne "$want" ]; then
    echo "FAIL: ferrocirc $* exited $got, expected $want"; cat err.txt; fails=$((fails + 1))
  elif ! grep -Eq -- "$pat" err.txt; then
    echo "FAIL: ferrocirc $*: stderr lacks /$pat/:"; cat err.txt; fails=$((fails + 1))
  elif [ -e out.json ] || ls out.json.tmp* >/dev/null 2>&1; then
    echo "FAIL: ferrocirc $* left out.json behind"; fails=$((fails + 1))
  else
    echo "ok: ferrocirc $* -> $got: $(head -c 160 err.txt)"
  fi
}
FIT=ferrofluid.saturation_magnetization
printf 'design,crack [mmHg]\nv.json,4\n' > nodir.csv
printf 'design,direction,crack [mm]\nv.json,forward,4\n' > unit.csv
printf 'design,direction,crack [mmHg]\nv.json,forward,4\nv.json,reverse,-8\n' > neg.csv
printf 'design,direction,crack [mmHg],reseat [mmHg]\nv.json,forward,4,3.9\n' > one.csv
printf 'design,direction,crack [mmHg]\nv.json,forward,4\nv.json,forward,4.1\nv.json,forward,4.2\n' > rep.csv
expect 2 'nodir.csv:1:1: missing column "direction"' -- valve calibrate nodir.csv --fit $FIT -o out.json
expect 2 'unit.csv:1:3: .*"mm" is not a pressure unit' -- valve calibrate unit.csv --fit $FIT -o out.json
expect 2 'neg.csv:3:3: crack must be >= 0' -- valve calibrate neg.csv --fit $FIT -o out.json
expect 2 'm.csv:3:1: ferrofluid.saturation_magnetisation: .*no such value' -- valve calibrate m.csv --fit ferrofluid.saturation_magnetisation -o out.json
expect 2 '1 row for 2 fitted parameters' -- valve calibrate one.csv --fit $FIT,ferrofluid.volume -o out.json
expect 2 'not identifiable' -- valve calibrate rep.csv --fit $FIT,magnets[0].gap -o out.json
expect 2 'usage' -- valve calibrate m.csv
expect 2 'is not a --fit path' -- valve calibrate m.csv --fit $FIT --bounds ferrofluid.volume=1..2
expect 1 'absent.csv' -- valve calibrate absent.csv --fit $FIT

echo "$fails failure(s)"
exit $((fails > 0))
