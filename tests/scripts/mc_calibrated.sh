#!/usr/bin/env bash
# Monte Carlo over a calibrated valve design, from the command line: the fitted values of both
# valves of tests/data/mc-calibrated-pump.json (one calibrated design file) are one joint draw
# per point, their sample mean and covariance (NumPy 1.24, numpy.cov) match the calibration
# block's fitted values and covariance within 4 standard errors, the gap tolerances stay
# independent, and the output bytes do not depend on --jobs or --shard.
# Standard errors (large-sample, Kendall & Stuart vol. 1 [from memory]): mean sigma/sqrt(n),
# standard deviation sigma/sqrt(2(n-1)), correlation (1 - rho^2)/sqrt(n - 1).
set -euo pipefail
cli=$1 src=$2
PY=/usr/bin/python3
$PY -c 'import numpy' 2>/dev/null || { echo "SKIP: numpy missing for $PY"; exit 77; }
command -v parallel >/dev/null || { echo "SKIP: GNU parallel missing"; exit 77; }
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
net=$src/tests/data/mc-calibrated-pump.json
n=300
"$cli" sweep "$net" --monte-carlo $n --seed 17 -o "$tmp/j2.csv" --jobs 2 --quiet
"$cli" sweep "$net" --monte-carlo $n --seed 17 -o "$tmp/j1.csv" --jobs 1 --quiet
cmp "$tmp/j1.csv" "$tmp/j2.csv"
parallel --will-cite -j 2 "$cli" sweep "$net" --monte-carlo $n --seed 17 -o "$tmp/s{}.csv" \
  --shard {}/3 --jobs 1 --quiet ::: 0 1 2
"$cli" merge "$tmp"/s*.csv -o "$tmp/merged.csv"
cmp "$tmp/j2.csv" "$tmp/merged.csv"
$PY - "$tmp/j2.csv" "$src/tests/data/valves/calibrated-gap.json" "$n" <<'PY'
import csv, json, sys
import numpy as np
rows = list(csv.DictReader(open(sys.argv[1])))
cal = json.load(open(sys.argv[2]))["calibration"]
n = int(sys.argv[3])
assert len(rows) == n and all(r["status"] == "ok" for r in rows)
col = lambda e, k: np.array([float(r["$.elements[%d].design.%s" % (e, k)]) for r in rows])
ms_i, ms_o = col(2, "ferrofluid.saturation_magnetization [kA/m]"), col(4, "ferrofluid.saturation_magnetization [kA/m]")
v_i, v_o = col(2, "ferrofluid.volume [uL]"), col(4, "ferrofluid.volume [uL]")
g_i, g_o = col(2, "magnets[0].gap [mm]"), col(4, "magnets[0].gap [mm]")
assert (ms_i == ms_o).all() and (v_i == v_o).all(), "valves of one calibration must share the draw"
assert (g_i != g_o).all(), "gap tolerances must be drawn per valve"
x = np.vstack([ms_i * 1e3, v_i * 1e-9])              # SI, as in the calibration block
mu = np.array([p["value"] for p in cal["parameters"]])
C = np.array(cal["covariance"])
sig = np.sqrt(np.diag(C)); rho = C[0, 1] / (sig[0] * sig[1])
S = np.cov(x)
sd = np.sqrt(np.diag(S)); r = S[0, 1] / (sd[0] * sd[1])
print("mean", x.mean(axis=1), "expected", mu)
print("sd", sd, "expected", sig, "; r %.4f expected %.4f" % (r, rho))
assert (abs(x.mean(axis=1) - mu) < 4 * sig / np.sqrt(n)).all()
assert (abs(sd - sig) < 4 * sig / np.sqrt(2 * (n - 1))).all()
assert abs(r - rho) < 4 * (1 - rho**2) / np.sqrt(n - 1)
rg = np.corrcoef(g_i, g_o)[0, 1]
print("gap correlation between the valves %.4f" % rg)
assert abs(rg) < 4 / np.sqrt(n - 1)
PY
echo "mc_calibrated: ok"
