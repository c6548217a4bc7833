#!/usr/bin/python3
"""ngspice peer: write the electrical analogue of a benchmark network, run ngspice in batch mode,
and reduce its output to the benchmark's probes.

Analogy (physics reference §2): pressure <-> voltage, flow <-> current, R <-> R, C <-> C.
Scaled units, so that SPICE's gmin (1e-12 S) and default abstol/vntol are negligible:
1 V = 1 Pa, 1 A = 1e-9 m^3/s (1 uL/s), hence 1 ohm = 1e9 Pa s/m^3 and 1 F = 1e-9 m^3/Pa (leaf
conductances ~1e-3 S, sealed-valve leak 1e-9 S: both far above gmin).
  chamber            C from the node to ground, or to a B-source node carrying the backing
                     pressure (C d(p - p_back)/dt = sum q)
  reservoir          ground, or a V/B voltage source (pulse with raised-cosine edges as a
                     B-source expression of `time`)
  flow source        B current source (beat as a B-source expression)
  check valve        a voltage-controlled switch with hysteresis (`sw` model: on above
                     vt + vh = crack_forward, off below vt - vh = reseat_forward, controlled by
                     dp = v(from) - v(to)), ron = R_open, roff = 1/G_leak, in series with a DC
                     source of reseat_forward (the open law q = (dp - reseat)/R_open) and a 0 V
                     sense source. Reverse opening is not modelled (the suite checks that the
                     reference never opens a valve in reverse); the sealed leak becomes
                     G_leak (dp - reseat) instead of G_leak dp (1e-18 x 50..200 Pa, < 1e-15 m^3/s).
Only the probed vectors are saved, and only from the start of the last beat (.tran TSTART).

Usage: peer_spice.py NET.json PROBE.json OUT.json [--reltol R] [--tmax F] [--keep DIR]
"""
import json
import math
import os
import subprocess
import sys
import tempfile
import time

import numpy as np

import netmodel

SC = 1e-9   # m^3/s per ampere
TAU_CTRL = 1e-6  # lag of the switch control, in periods (delays each switch by about this)


def netlist(m, probe, reltol, data_path, tmax=0.02):
    name = {}
    for nm, i in m.nodes.items():
        if i in m.imposed:
            w, off = m.imposed[i]
            if w.kind == "const" and w.v + off == 0:
                name[i] = "0"
                continue
        name[i] = "n%d" % i
    L = ["* ferrocirc benchmark analogue: %s" % m.title.replace("\n", " ")]
    for i, (w, off) in m.imposed.items():
        if name[i] != "0":
            if w.kind == "const":
                L.append("VR%d %s 0 DC %.12g" % (i, name[i], w.v + off))
            else:
                L.append("BR%d %s 0 V = %.12g + %s" % (i, name[i], off, w.spice(1.0)))
    k = 0
    sense = {}
    for a, b, G, eid in m.cond:
        k += 1
        if eid == probe["volume_elem"]:
            L.append("VS%d %s s%d DC 0" % (k, name[a], k))
            L.append("R%d s%d %s %.15g" % (k, k, name[b], SC / G))
            sense[eid] = "VS%d" % k
        else:
            L.append("R%d %s %s %.15g" % (k, name[a], name[b], SC / G))
    for i, c in m.C.items():
        backed = sum(cc for cc, _ in m.back.get(i, []))
        if c - backed > 0:
            L.append("C%d %s 0 %.15g" % (i, name[i], (c - backed) / SC))
        for j, (cc, w) in enumerate(m.back.get(i, [])):
            L.append("BB%d_%d b%d_%d 0 V = %s" % (i, j, i, j, w.spice(1.0)))
            L.append("CB%d_%d %s b%d_%d %.15g" % (i, j, name[i], i, j, cc / SC))
    for a, b, w, eid in m.sources:
        k += 1
        L.append("BI%d %s %s I = %s" % (k, name[a], name[b], w.spice(1.0 / SC)))
    models = []
    for j, (a, b, v, eid) in enumerate(m.valves):
        c, r = v["crack_f"], v["reseat_f"]
        L.append("VD%d %s d%d DC %.15g" % (j, name[a], j, r))
        # The switch is driven through a unit-gain copy of dp and a first-order lag of
        # TAU_CTRL x period: controlled directly by its own terminal voltage, ngspice's sw stops
        # with "timestep too small" at the first opening behind an algebraic node.
        L.append("EC%d c%d 0 %s %s 1" % (j, j, name[a], name[b]))
        L.append("RC%d c%d f%d 1" % (j, j, j))
        L.append("CC%d f%d 0 %.6g" % (j, j, TAU_CTRL * probe["period"]))
        L.append("SW%d d%d e%d f%d 0 SWV%d" % (j, j, j, j, j))
        L.append("VV%d e%d %s DC 0" % (j, j, name[b]))
        gl = max(v["G_leak"], 1e-30)
        models.append(".model SWV%d sw vt=%.15g vh=%.15g ron=%.15g roff=%.15g"
                      % (j, (c + r) / 2, (c - r) / 2, v["R_open"] * SC, SC / gl))
        sense[eid] = "VV%d" % j
    L += models
    P, T = probe["period"], probe["period"] * probe["cycles"]
    pn = name[m.nodes[probe["probe_node"]]]
    vecs = ["v(%s)" % pn, "i(%s)" % sense[probe["volume_elem"]]]
    for j, (a, b, v, eid) in enumerate(m.valves):
        if eid in probe["valves"]:
            vecs += ["v(f%d)" % j, "v(c%d)" % j, "i(VV%d)" % j]
    vecs = list(dict.fromkeys(vecs))
    L.append(".options reltol=%g abstol=1e-12 vntol=1e-9 chgtol=1e-16 method=gear" % reltol)
    L.append(".save " + " ".join(vecs))
    L.append(".tran %g %g %g %g" % (min(P / 100, tmax * P), T, T - 1.06 * P, tmax * P))
    L += [".control", "run", "wrdata %s %s" % (data_path, " ".join(vecs)), "quit", ".endc",
          ".end"]
    return "\n".join(L) + "\n", vecs, name


def reduce(m, probe, vecs, name, data):
    P, T = probe["period"], probe["period"] * probe["cycles"]
    t = data[:, 0]
    col = {v: data[:, 2 * k + 1] for k, v in enumerate(vecs)}
    # the window starts 6 % of a period early (switches are matched up to 5 % either side of
    # T - P, and each valve's state at T - P must be known): cut it for the means,
    # interpolating every vector at T - P
    k0 = int(np.searchsorted(t, T - P))
    tf, colf = t, dict(col)
    for v in vecs:
        col[v] = np.concatenate([[np.interp(T - P, t, col[v])], col[v][k0:]])
    t = np.concatenate([[T - P], t[k0:]])
    pn = name[m.nodes[probe["probe_node"]]]
    p = col["v(%s)" % pn]
    out = {"p_mean": float(np.trapz(p, t) / P), "p_peak": float(p.max())}
    sense = [v for v in vecs if v.startswith("i(")][0]
    out["volume"] = float(np.trapz(col[sense], t) * SC)
    sw = []
    for j, (a, b, v, eid) in enumerate(m.valves):
        if eid not in probe["valves"]:
            continue
        t = tf
        ctrl = colf["v(f%d)" % j]    # the lagged control the switch compares with vt +- vh
        i = colf["i(VV%d)" % j] * SC
        # The switch's state at every saved point, from its current: the open law
        # i = (dp - reseat)/R_open or the sealed one i = G_leak (dp - reseat), whichever fits.
        # (ngspice toggles a switch inside its Newton iterations; the saved control can stay a
        # hair below the threshold at the point where the switch is already on, so the state
        # is read from the current, and the instant refined from the control where it brackets
        # the threshold.)
        d = colf["v(c%d)" % j] - v["reseat_f"]
        is_open = np.abs(i * v["R_open"] - d) < np.abs(i / max(v["G_leak"], 1e-30) - d)
        for k in range(1, len(t)):
            if is_open[k] == is_open[k - 1]:
                continue
            state = int(is_open[k - 1])
            thr = v["reseat_f"] if state else v["crack_f"]
            tk = t[k]
            if (ctrl[k - 1] - thr) * (ctrl[k] - thr) < 0:
                tk = t[k - 1] + (thr - ctrl[k - 1]) / (ctrl[k] - ctrl[k - 1]) * (t[k] - t[k - 1])
            sw.append((float(tk), eid, state, 1 - state))
    out["switches"] = sorted(x for x in sw if x[0] >= T - 1.05 * P)
    return out


def main(argv):
    import argparse
    ap = argparse.ArgumentParser()
    ap.add_argument("net")
    ap.add_argument("probe")
    ap.add_argument("out")
    ap.add_argument("--reltol", type=float, default=1e-3)
    ap.add_argument("--tmax", type=float, default=0.02,
                    help="largest time step, as a fraction of the period (default 0.02); the "
                         "switch instants are only as good as the steps near them")
    ap.add_argument("--time-file", help="write ngspice's own wall time and peak RSS here")
    ap.add_argument("--keep", help="keep the netlist and data in this directory")
    a = ap.parse_args(argv)
    m = netmodel.Model(a.net)
    probe = json.load(open(a.probe))
    wd = a.keep or tempfile.mkdtemp(prefix="ferrocirc-spice-")
    os.makedirs(wd, exist_ok=True)
    data = os.path.join(wd, "data.txt")
    text, vecs, name = netlist(m, probe, a.reltol, data, a.tmax)
    cir = os.path.join(wd, "net.cir")
    open(cir, "w").write(text)
    tf = os.path.join(wd, "time.txt")
    t0 = time.perf_counter()
    pr = subprocess.run(["/usr/bin/time", "-f", "%M", "-o", tf, "ngspice", "-b", cir],
                        stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    wall = time.perf_counter() - t0
    if not os.path.exists(data):
        sys.stderr.write(pr.stdout[-3000:])
        return 1
    r = reduce(m, probe, vecs, name, np.loadtxt(data))
    r["wall"] = wall
    r["rss_kb"] = int(open(tf).read().split()[-1])
    r["points"] = int(np.loadtxt(data).shape[0])
    with open(a.out, "w") as f:
        json.dump(r, f)
    if not a.keep:
        for fn in (data, cir, tf):
            os.unlink(fn)
        os.rmdir(wd)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
