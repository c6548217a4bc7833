#!/bin/bash
# Every example network (networks/*.json, invented scenarios) passes `check`, runs with `run`
# (exit 0) into a temporary directory, and writes a summary JSON with the expected keys; then a
# few behaviour checks per example. $1 = ferrocirc CLI, $2 = source dir.
#
# Networks whose valves take their thresholds from a valve design ("design": {"file":
# "valves/X.json"}) are run only when `ferrocirc valve networks/valves/X.json` works, i.e. once
# the valve model's command is in the build; otherwise they are reported as SKIP.
#
# Results measured when this script was written (last complete cycle):
#   diaphragm-two-valves      net 0.975 uL/beat; RF v_in 1e-6, v_out 2e-5; PI q(culture) 5.47
#   diaphragm-one-magnet      one-magnet-step valves (crack 690 / 1398 Pa, blowout 2833 Pa), 25 mbar
#                             drive: net 0.124 uL/beat; RF v_in 0.320, v_out 0.0004;
#                             blowout margin 0.48; PI q(culture) 7.51
#   diaphragm-two-magnets     two-magnet-step valves (crack 6729 / 6791 Pa, blowout 7428 Pa),
#                             70 mbar drive: net 0.0021 uL/beat; RF v_in 87 (more back than
#                             forward); margin 0.91 (an 80 mbar drive blows v_in out)
#   peristaltic-bubble-trap   pump PI 2.80 (sine 50 +- 70 uL/min: 2 x 70/50), culture flow PI
#                             0.570, trap pressure PI 0.570
#   peristaltic-bubble-trap-valve  culture flow PI 0.459 (the valve stays open: the trap keeps
#                             it above its reseat pressure; its open resistance adds damping)
set -euo pipefail
CLI=$1
SRC=$2
PY=/usr/bin/python3
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
fail=0
ran=0
cd "$SRC/networks"
for net in *.json; do
  name=${net%.json}
  skip=""
  for d in $(grep -o '"valves/[^"]*\.json"' "$net" | tr -d '"' | sort -u); do
    if ! "$CLI" valve "$d" >/dev/null 2>&1; then skip="$d"; fi
  done
  if [ -n "$skip" ]; then
    echo "SKIP $net: \`ferrocirc valve $skip\` does not work in this build"
    continue
  fi
  if ! "$CLI" check "$net" >"$T/$name.check" 2>&1; then
    echo "FAIL check $net:"; cat "$T/$name.check"; fail=1; continue
  fi
  if ! "$CLI" run "$net" -o "$T/$name.csv" --summary "$T/$name.json" --events "$T/$name.events.csv" \
       >"$T/$name.txt" 2>&1; then
    echo "FAIL run $net:"; tail -20 "$T/$name.txt"; fail=1; continue
  fi
  ran=$((ran + 1))
  if ! "$PY" - "$T/$name.json" "$name" <<'EOF'
import json, sys
path, name = sys.argv[1], sys.argv[2]
s = json.load(open(path))
need = ["format", "title", "t_end_s", "cycle_period_s", "cycles", "elements", "nodes", "solver",
        "tracked", "periodic_cycle", "chatter_holds", "last_cycle_nodes", "last_cycle_elements"]
missing = [k for k in need if k not in s]
if missing:
    sys.exit(f"{name}: summary lacks {missing}")
if s["format"] != "ferrocirc-summary/1":
    sys.exit(f"{name}: summary format {s['format']}")
row_keys = ["volume_forward_m3", "volume_back_m3", "volume_net_m3", "open_fraction",
            "peak_dp_forward_Pa", "peak_dp_reverse_Pa"]
for e in s["tracked"]:
    if not e["cycles"]:
        sys.exit(f"{name}: tracked {e['id']} has no cycles")
    for c in e["cycles"]:
        if any(k not in c for k in row_keys):
            sys.exit(f"{name}: tracked {e['id']} cycle row lacks {[k for k in row_keys if k not in c]}")
tr = {e["id"]: e for e in s["tracked"]}
last = {e["id"]: e for e in s["last_cycle_elements"]}
def lc(i):
    return tr[i]["cycles"][-1]
checks = []
if name == "diaphragm-two-valves":
    # the valves' reverse cracking pressures (70 mmHg) are never reached: no reverse opening
    checks += [("no blowout", not any(e["blown"] for e in s["tracked"])),
               ("v_out RF < 0.01", lc("v_out").get("regurgitant_fraction", 1) < 0.01),
               ("pumps forward", lc("culture")["volume_net_m3"] > 0)]
if name.startswith("peristaltic"):
    # pump PI of a sine flow M + A sin: (max - min)/mean = 2 A/M = 2.8 [D]; extremes are taken at
    # the integrator's step ends, so 1e-2 relative
    pi_pump = last["pump"]["pulsatility_flow"]
    pi_cult = last["culture"]["pulsatility_flow"]
    checks += [(f"pump PI {pi_pump:.4f} = 2.8", abs(pi_pump - 2.8) <= 2.8e-2),
               # one RC stage passes 1/sqrt(1 + (w tau)^2) < 1 of the ripple (physics reference §2)
               (f"culture PI {pi_cult:.3f} < pump PI", pi_cult < pi_pump),
               ("no culture backflow", last["culture"]["volume_back_m3"] <= 1e-3 * last["culture"]["volume_forward_m3"])]
print(f"{name}: summary keys ok" + "".join(f"; {t}: {'ok' if ok else 'FAIL'}" for t, ok in checks))
sys.exit(0 if all(ok for _, ok in checks) else 1)
EOF
  then fail=1; fi
done

# The pairs, when both members ran: the trade-offs they are meant to show.
if [ -f "$T/diaphragm-one-magnet.json" ] && [ -f "$T/diaphragm-two-magnets.json" ]; then
  "$PY" - "$T" <<'EOF' || fail=1
import json, sys
T = sys.argv[1]
one = {e["id"]: e["cycles"][-1] for e in json.load(open(f"{T}/diaphragm-one-magnet.json"))["tracked"]}
two = {e["id"]: e["cycles"][-1] for e in json.load(open(f"{T}/diaphragm-two-magnets.json"))["tracked"]}
ok = [("two magnets crack higher", two["v_out"]["peak_dp_forward_Pa"] > 3 * one["v_out"]["peak_dp_forward_Pa"]),
      ("one magnet pumps more per beat", one["culture"]["volume_net_m3"] > 10 * two["culture"]["volume_net_m3"]),
      ("two magnets regurgitate more at the inlet",
       two["v_in"].get("regurgitant_fraction", 0) > one["v_in"].get("regurgitant_fraction", 0))]
print("one vs two magnets: " + "; ".join(f"{t}: {'ok' if g else 'FAIL'}" for t, g in ok))
sys.exit(0 if all(g for _, g in ok) else 1)
EOF
fi
if [ -f "$T/peristaltic-bubble-trap.json" ] && [ -f "$T/peristaltic-bubble-trap-valve.json" ]; then
  "$PY" - "$T" <<'EOF' || fail=1
import json, sys
T = sys.argv[1]
def pi(f):
    return {e["id"]: e for e in json.load(open(f"{T}/{f}.json"))["last_cycle_elements"]}["culture"]["pulsatility_flow"]
a, b = pi("peristaltic-bubble-trap"), pi("peristaltic-bubble-trap-valve")
print(f"peristaltic culture flow PI: no valve {a:.4f}, with outlet valve {b:.4f}")
sys.exit(0 if 0 < a < 2.8 and 0 < b < 2.8 else 1)
EOF
fi
echo "$ran example networks run"
[ "$ran" -gt 0 ] || fail=1
exit $fail
