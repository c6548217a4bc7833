#!/bin/bash
# Cross-check against SciPy (ctest: $1 = ferrocirc CLI, $2 = source dir): a 5-node network with
# every kind of store is run by ferrocirc and, as a hand-written ODE, by scipy.integrate.solve_ivp
# (method "Radau", rtol 1e-10); node pressures are compared at the sample times.
#
#   supply --pump (sine flow)--> n1 [gas bubble] --R1--> n2 [C2] --tube (inertance)--> n3 [C3]
#          --R3--> n4 (no compliance) --R4--> n5 [elastic tube] --R5--> waste (liquid 5 mm)
# Reference laws, written here independently of the engine (physics reference):
#   gas bubble, isothermal Boyle (§2): V_liq(p) = V0 (1 - p0abs/(p + pamb)), C = V0 p0abs/(p+pamb)^2
#   tube channel (§1, §2): R = 8 mu l/(pi r^4), L = (4/3) rho l/(pi r^2), L q' = p2 - p3 - R q
#   elastic tube, thick wall, open ends (Lame, §2): C = (2 pi a^2 L/E) [(b^2 + a^2)/(b^2 - a^2) + nu]
#   n4 algebraic: (p3 - p4)/R3 = (p4 - p5)/R4
#   waste: p = rho gn h, gn = 9.80665 m/s^2
# Tolerance: 1e-6 of the peak pressure of each node. Both solvers are run 3-4 orders tighter;
# what remains is CVODE's global error at rel_tol 1e-9 (measured ~1e-8 when this was written).
set -euo pipefail
FC=$1
PY=/usr/bin/python3
W=$(mktemp -d)
trap 'rm -rf "$W"' EXIT
cd "$W"

"$PY" - <<'EOF'
import json
net = {"format": "ferrocirc-network/1",
       "fluid": {"density": 998.2, "viscosity": "1 mPa.s", "ambient_pressure": "101325 Pa"},
       "elements": [
         {"id": "supply", "type": "reservoir", "node": "supply"},
         {"id": "pump", "type": "flow_source", "from": "supply", "to": "n1",
          "flow": {"shape": "sine", "mean": "30 uL/min", "amplitude": "20 uL/min",
                   "frequency": "2 Hz", "phase": "30 deg"}},
         {"id": "bubble", "type": "chamber", "node": "n1", "gas_volume": "2 uL",
          "gas_pressure": "20 mbar"},
         {"id": "R1", "type": "resistor", "from": "n1", "to": "n2", "resistance": 2e12},
         {"id": "C2", "type": "chamber", "node": "n2", "compliance": 2e-14},
         {"id": "tube", "type": "channel", "from": "n2", "to": "n3", "length": "0.3 m",
          "diameter": "0.4 mm", "inertance": True},
         {"id": "C3", "type": "chamber", "node": "n3", "compliance": 5e-15},
         {"id": "R3", "type": "resistor", "from": "n3", "to": "n4", "resistance": 1e12},
         {"id": "R4", "type": "resistor", "from": "n4", "to": "n5", "resistance": 1.5e12},
         {"id": "wall", "type": "chamber", "node": "n5",
          "tube": {"diameter": "1 mm", "wall_thickness": "1 mm", "youngs_modulus": "1.5 MPa",
                   "length": "5 cm", "poisson_ratio": 0.5}},
         {"id": "R5", "type": "resistor", "from": "n5", "to": "waste", "resistance": 3e12},
         {"id": "waste", "type": "reservoir", "node": "waste", "liquid_height": "5 mm"}],
       "simulation": {"duration": "3 s", "sample_interval": "5 ms", "rel_tol": 1e-9,
                      "abs_tol": "1e-7 Pa", "abs_tol_flow": 1e-20},
       "report": {"pressure_unit": "Pa", "flow_unit": "m3/s"}}
json.dump(net, open("net.json", "w"), indent=1)
EOF

"$FC" run net.json -o fc.csv --quiet

"$PY" - <<'EOF'
import math, sys
import numpy as np
from scipy.integrate import solve_ivp

rho, mu, pamb, gn = 998.2, 1e-3, 101325.0, 9.80665
q0, q1, f, ph = 30e-9 / 60, 20e-9 / 60, 2.0, math.radians(30)
V0, p0abs = 2e-9, 2000.0 + pamb
R1, R3, R4, R5 = 2e12, 1e12, 1.5e12, 3e12
C2, C3 = 2e-14, 5e-15
r, l = 0.2e-3, 0.3
Rt = 8 * mu * l / (math.pi * r**4)
Lt = 4.0 / 3.0 * rho * l / (math.pi * r**2)
a, b, E, nu, Lw = 0.5e-3, 1.5e-3, 1.5e6, 0.5, 0.05
Cw = 2 * math.pi * a**2 * Lw / E * ((b**2 + a**2) / (b**2 - a**2) + nu)
pw = rho * gn * 5e-3

def rhs(t, y):
    p1, p2, q, p3, p5 = y
    p4 = (p3 / R3 + p5 / R4) / (1 / R3 + 1 / R4)
    Q = q0 + q1 * math.sin(2 * math.pi * f * t + ph)
    C1 = V0 * p0abs / (p1 + pamb) ** 2
    return [(Q - (p1 - p2) / R1) / C1,
            ((p1 - p2) / R1 - q) / C2,
            (p2 - p3 - Rt * q) / Lt,
            (q - (p3 - p4) / R3) / C3,
            ((p4 - p5) / R4 - (p5 - pw) / R5) / Cw]

fc = np.genfromtxt("fc.csv", delimiter=",", names=True)
names = fc.dtype.names
t = fc[names[0]]
sol = solve_ivp(rhs, (0, t[-1]), [0, 0, 0, 0, 0], method="Radau", t_eval=t,
                rtol=1e-10, atol=[1e-9, 1e-9, 1e-22, 1e-9, 1e-9], dense_output=False)
assert sol.success, sol.message
ref = {"n1": sol.y[0], "n2": sol.y[1], "n3": sol.y[3], "n5": sol.y[4]}
ref["n4"] = (sol.y[3] / R3 + sol.y[4] / R4) / (1 / R3 + 1 / R4)
def col(prefix):
    return fc[[n for n in names if n.startswith(prefix)][0]]
bad = 0
for node in ("n1", "n2", "n3", "n4", "n5"):
    got, want = col("p" + node), ref[node]
    e = np.max(np.abs(got - want)) / np.max(np.abs(want))
    print(f"{node}: max |p_ferrocirc - p_scipy| = {e:.2e} of its peak ({np.max(np.abs(want)):.1f} Pa)")
    bad += e > 1e-6
qt = col("qtube")
eq = np.max(np.abs(qt - sol.y[2])) / np.max(np.abs(sol.y[2]))
print(f"tube flow: max error {eq:.2e} of its peak")
bad += eq > 1e-6
print("FAIL" if bad else "OK")
sys.exit(1 if bad else 0)
EOF
