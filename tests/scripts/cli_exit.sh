#!/bin/bash
# Command-line exit statuses and messages (ctest: $1 = ferrocirc CLI, $2 = source dir).
# Contract (issue 2, include/ferrocirc/error.h fc_error_exit_status): 0 success, 2 bad input or
# usage, 3 integrator failure, 1 anything else (I/O). Input errors print
# "ferrocirc: FILE:LINE:COL: $.PATH: MESSAGE". A failed run leaves neither its -o file nor a
# temporary ("OUT.tmp-XXXXXX", src/outfile.c) behind.
set -uo pipefail
FC=$1
W=$(mktemp -d)
trap 'rm -rf "$W"' EXIT
cd "$W"
fails=0

# expect STATUS PATTERN(ERE, on stderr) -- ARGS...
expect() {
  local want=$1 pat=$2
  shift 3
  "$FC" "$@" >out.txt 2>err.txt
  local got=$?
  if [ "$got" -ne "$want" ]; then
    echo "FAIL: ferrocirc $* exited $got, expected $want"; cat err.txt; fails=$((fails + 1))
  elif [ -n "$pat" ] && ! grep -Eq -- "$pat" err.txt; then
    echo "FAIL: ferrocirc $*: stderr lacks /$pat/:"; cat err.txt; fails=$((fails + 1))
  else
    echo "ok: ferrocirc $* -> $got"
  fi
}

# nothing but the inputs may remain after a failed run
no_leftovers() {
  local extra
  extra=$(ls -A | grep -Ev '^(good\.json|dim\.json|topo\.json|out\.txt|err\.txt)$' || true)
  if [ -n "$extra" ]; then
    echo "FAIL: left behind after $1: $extra"; fails=$((fails + 1)); rm -f $extra
  fi
}

cat > good.json <<'EOF'
{"format": "ferrocirc-network/1",
 "elements": [
  {"id": "in", "type": "reservoir", "node": "in", "pressure": "10 mbar"},
  {"id": "R", "type": "channel", "from": "in", "to": "c", "length": "10 mm", "diameter": "100 um"},
  {"id": "C", "type": "chamber", "node": "c", "compliance": 1e-14}
 ],
 "simulation": {"duration": "0.1 s"}}
EOF
# element 1's length has the dimension of a pressure (line 4, where the key's value starts)
sed 's/"length": "10 mm"/"length": "5 mbar"/' good.json > dim.json
# a node touched only by flow sources: found when the run starts, after -o was opened
cat > topo.json <<'EOF'
{"format": "ferrocirc-network/1",
 "elements": [
  {"id": "g", "type": "reservoir", "node": "g"},
  {"id": "in", "type": "flow_source", "from": "g", "to": "a", "flow": "1 uL/min"},
  {"id": "out", "type": "flow_source", "from": "a", "to": "g", "flow": "1 uL/min"}
 ],
 "simulation": {"duration": "1 s"}}
EOF

# positive control: the good network runs and writes its output
expect 0 "" -- run good.json -o ok.csv --quiet
[ -s ok.csv ] || { echo "FAIL: ok.csv not written"; fails=$((fails + 1)); }
rm -f ok.csv

# a file that does not exist: FC_EIO -> 1, naming the file
expect 1 "no_such\.json" -- run no_such.json -o out.csv
no_leftovers "a missing input"

# wrong unit dimension: 2, with file, line:col and the JSON path of the key
line=$(grep -n '5 mbar' dim.json | cut -d: -f1)
expect 2 "^ferrocirc: dim\.json:${line}:[0-9]+: \\\$\.elements\[1\]\.length: " -- run dim.json -o out.csv
grep -q "length" err.txt && grep -Eqi "dimension|length|convertible|expected" err.txt ||
  { echo "FAIL: the message does not say what was expected"; cat err.txt; fails=$((fails + 1)); }
no_leftovers "a unit error"

# topology error at run time: 2, path named, and the already opened -o output removed
expect 2 "^ferrocirc: topo\.json: \\\$\.elements: node \"a\"" -- run topo.json -o out.csv --summary s.json
no_leftovers "a topology error"

# usage errors: 2
expect 2 "unknown option --frobnicate" -- run good.json --frobnicate -o out.csv
no_leftovers "an unknown option"
expect 2 "needs a value" -- run good.json -o
expect 2 "unknown command" -- frobnicate
expect 2 "usage" --
expect 2 "" -- run good.json --pressure-unit kg -o out.csv
no_leftovers "a wrong report unit"
# numeric options are read whole: "3x" or 0 is an error, not 3 or a silent default
expect 2 'monte-carlo expects an integer from 1 to 100000000, got "3x"' -- sweep good.json --monte-carlo 3x -o out.csv
expect 2 'steps expects an integer from 1 to 1000000, got "0"' -- sweep good.json --vary 'elements[R].length=5mm..10mm' --steps 0 -o out.csv
expect 2 'jobs expects an integer from 1 to 4096, got "two"' -- sweep good.json --vary 'elements[R].length=5mm..10mm' --jobs two -o out.csv
expect 2 'seed expects a non-negative integer, got "-1"' -- sweep good.json --monte-carlo 5 --seed -1 -o out.csv
no_leftovers "bad numeric options"

# an output folder that does not exist: I/O -> 1
expect 1 "cannot create output" -- run good.json -o no_dir/out.csv
no_leftovers "an unwritable output"

# an output that is a folder: refused before the run
mkdir out_dir
expect 1 "cannot write output out_dir: it is a folder" -- run good.json -o out_dir
rmdir out_dir
no_leftovers "an output that is a folder"

# an output that exists and is not a regular file is written in place, not replaced by a
# renamed temporary (which, as root, would turn /dev/null into a plain file): a FIFO stays a
# FIFO, its reader gets the whole CSV, and no temporary is left
mkfifo out.fifo
cat out.fifo >fifo.csv &
reader=$!
expect 0 "" -- run good.json -o out.fifo --summary out.fifo.json
if [ ! -p out.fifo ]; then
  kill "$reader" 2>/dev/null; wait "$reader" 2>/dev/null # it never saw a writer
  echo "FAIL: the FIFO output was replaced"; fails=$((fails + 1))
elif ! wait "$reader"; then echo "FAIL: the FIFO reader failed"; fails=$((fails + 1))
elif ! head -1 fifo.csv | grep -q '^t \[s\],'; then echo "FAIL: the FIFO reader got no CSV header"; fails=$((fails + 1))
elif [ "$(tail -c 1 fifo.csv | od -An -c | tr -d ' ')" != '\n' ]; then echo "FAIL: the CSV through the FIFO is cut"; fails=$((fails + 1))
else echo "ok: a FIFO output is written in place ($(wc -l <fifo.csv) lines)"; fi
rm -f out.fifo fifo.csv out.fifo.json
no_leftovers "a FIFO output"

if [ "$fails" -ne 0 ]; then echo "$fails check(s) failed"; exit 1; fi
echo "all CLI exit checks passed"
