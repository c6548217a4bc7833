#!/bin/bash
# Electrical-analogue cross-check against ngspice (ctest: $1 = ferrocirc CLI, $2 = source dir).
#
# One network, written twice: as ferrocirc JSON and as a SPICE netlist, with pressure <-> voltage,
# flow <-> current, resistance <-> R, compliance <-> C, inertance <-> L (physics reference §2,
# toolchain notes). A piecewise-linear pressure pulse (ferrocirc "table" = SPICE PWL, the same
# function) drives a 3-node RC ladder whose middle branch is an inertial tube:
#   in --R1-- n1 [C1] --R2-- n2 [C2] --tube (R_t + L_t)-- n3 [C3] --R4-- ground
# The tube's R_t = 8 mu l/(pi r^4) (Hagen-Poiseuille, §1) and L_t = (4/3) rho l/(pi r^2) (§2,
# beta = 4/3) are computed here, independently of the engine, and given to SPICE as R and L.
# Units for SPICE: 1 V = 1 mbar, 1 A = 1 uL/s, so 1 ohm = 1e11 Pa s/m^3, 1 F = 1e-11 m^3/Pa,
# 1 H = 1e11 Pa s^2/m^3; the circuit's conductances are then ~1e-2 S, far above SPICE's gmin
# (1e-12 S), which therefore does not disturb the comparison.
# Tolerance: 2e-5 of the pulse height (50 mbar) on n1..n3 and 2e-5 of the peak tube flow. SPICE's
# own accuracy (reltol 1e-7, max step 20 us) and the linear interpolation of its output onto our
# sample times (error <= h^2/8 |p''| ~ 1e-7 of the height here) are well below that.
set -euo pipefail
FC=$1
PY=/usr/bin/python3
command -v ngspice >/dev/null || { echo "ngspice not found (installed by .ci/deps)"; exit 1; }
W=$(mktemp -d)
trap 'rm -rf "$W"' EXIT
cd "$W"

"$PY" - <<'EOF'
import json, math
rho, mu, r, l = 998.2, 1.0e-3, 0.25e-3, 0.5
Rt = 8 * mu * l / (math.pi * r**4)              # Hagen-Poiseuille
Lt = 4.0 / 3.0 * rho * l / (math.pi * r**2)     # beta = 4/3, circular bore
R1, R2, R4 = 1e12, 2e12, 1e12                   # Pa s/m^3
C1, C2, C3 = 2e-14, 1e-14, 3e-15                # m^3/Pa
# pulse in mbar: up over 5 ms, hold, down over 5 ms (points [s, mbar])
pts = [(0, 0), (0.01, 0), (0.015, 50), (0.115, 50), (0.12, 0), (0.3, 0)]
net = {"format": "ferrocirc-network/1",
       "fluid": {"density": rho, "viscosity": mu},
       "elements": [
         {"id": "in", "type": "reservoir", "node": "in",
          "pressure": {"shape": "table", "period": "1 s",
                       "points": [["%g s" % t, "%g mbar" % v] for t, v in pts]}},
         {"id": "R1", "type": "resistor", "from": "in", "to": "n1", "resistance": R1},
         {"id": "C1", "type": "chamber", "node": "n1", "compliance": C1},
         {"id": "R2", "type": "resistor", "from": "n1", "to": "n2", "resistance": R2},
         {"id": "C2", "type": "chamber", "node": "n2", "compliance": C2},
         {"id": "tube", "type": "channel", "from": "n2", "to": "n3", "length": "%g m" % l,
          "diameter": "%g m" % (2 * r), "inertance": True},
         {"id": "C3", "type": "chamber", "node": "n3", "compliance": C3},
         {"id": "R4", "type": "resistor", "from": "n3", "to": "g", "resistance": R4},
         {"id": "g", "type": "reservoir", "node": "g"}],
       "simulation": {"duration": "0.3 s", "sample_interval": "0.5 ms",
                      "rel_tol": 1e-9, "abs_tol": "1e-7 Pa"},
       "report": {"pressure_unit": "mbar", "flow_unit": "uL/s"}}
json.dump(net, open("net.json", "w"), indent=1)
S = 1e11   # SI per SPICE unit for R and L; C: SPICE = SI * 1e11
pwl = " ".join("%g %g" % (t, v) for t, v in pts)
open("net.cir", "w").write(f"""ferrocirc analogue: RC ladder with an inertial tube
Vin in 0 PWL({pwl})
R1 in n1 {R1 / S:.12g}
C1 n1 0 {C1 * S:.12g}
R2 n1 n2 {R2 / S:.12g}
C2 n2 0 {C2 * S:.12g}
Rt n2 m {Rt / S:.12g}
Lt m n3 {Lt / S:.12g}
C3 n3 0 {C3 * S:.12g}
R4 n3 0 {R4 / S:.12g}
.options reltol=1e-7 abstol=1e-12 vntol=1e-9 method=gear maxord=2
.tran 20u 0.3 0 20u
.control
run
wrdata spice.txt v(n1) v(n2) v(n3) i(Lt)
quit
.endc
.end
""")
EOF

"$FC" run net.json -o fc.csv --quiet
ngspice -b net.cir > spice.log 2>&1 || { cat spice.log; exit 1; }

"$PY" - <<'EOF'
import numpy as np, sys
fc = np.genfromtxt("fc.csv", delimiter=",", names=True)
sp = np.loadtxt("spice.txt")
t_sp = sp[:, 0]
cols = {"n1": sp[:, 1], "n2": sp[:, 3], "n3": sp[:, 5]}
names = fc.dtype.names
def col(prefix):
    return fc[[n for n in names if n.startswith(prefix)][0]]
t = fc[names[0]]
H = 50.0
worst = 0.0
for node, v in cols.items():
    e = np.max(np.abs(col("pn" + node[1:]) - np.interp(t, t_sp, v))) / H
    print(f"{node}: max |p_ferrocirc - v_spice| = {e:.2e} of the pulse height")
    worst = max(worst, e)
q_sp = np.interp(t, t_sp, sp[:, 7])
q_fc = col("qtube")
eq = np.max(np.abs(q_fc - q_sp)) / np.max(np.abs(q_sp))
print(f"tube flow: max |q_ferrocirc - i_spice| = {eq:.2e} of its peak")
if worst > 2e-5 or eq > 2e-5:
    print("FAIL: exceeds 2e-5"); sys.exit(1)
print("OK")
EOF
