#!/usr/bin/python3
"""Side-by-side benchmark of issue 7 (run by tests/bench/run_suite.sh): ferrocirc against
ngspice (electrical analogue, peer_spice.py) and SciPy solve_ivp BDF (peer_scipy.py) on the same
generated circuits, compared at matched accuracy.

Per circuit and size:
  1. the reference: ferrocirc at rel_tol 1e-10, abs_tol 1e-10 Pa, abs_tol_volume 1e-24 m^3
     (checked at the smallest size of (b) and (c) against SciPy Radau at rtol 1e-11);
  2. every tool at a ladder of settings, one run each (ferrocirc: rel_tol = tol, abs_tol =
     tol x 1 Pa, abs_tol_volume = tol x 1 nL; ngspice: reltol and the largest step); error =
     the largest of
       |d mean| / |peak_ref|, |d peak| / |peak_ref|    (probed node, last beat)
       max |d t_switch| / period                        (probed valves, last beat; each switch
                                                        matched to the nearest one of the same
                                                        valve to the same state within MATCH
                                                        periods, both ways; none counts 1)
       |d V| / |V_ref|                                  (net volume of the probed element, last beat)
  3. at each target error, the cheapest setting of each tool that meets it, re-timed (median of
     --repeat runs; fewer when one run exceeds 20 s / 60 s); ratios peer / ferrocirc.
Sizes beyond --ref-max run ferrocirc alone at the setting chosen at the largest referenced size
(for the cost exponent); no error is reported there.
"""
import argparse
import json
import math
import os
import statistics
import subprocess
import sys
import tempfile
import time

import report

HERE = os.path.dirname(os.path.abspath(__file__))
PY = "/usr/bin/python3"
TIME = "/usr/bin/time"
TARGETS = (1e-3, 1e-4)
MATCH = 0.05   # periods: how far apart two switches may be and still be the same one

CIRCUITS = {
    "a": {"desc": "pump loops with two check valves (K loops)", "size": "K",
          "gen": lambda n, beats, out, probe: [PY, os.path.join(HERE, "gen_loop.py"), str(n),
                                               str(beats), out, "--probe", probe],
          "sizes": [1, 4], "quick": [1], "beats": 1000, "quick_beats": 50,
          "scipy_max": 1, "spice_max": 4, "ref_max": 4,
          "ladder": {"scipy": [1e-4, 1e-5]}},
    "b": {"desc": "tree: pulsed supply -> check valve -> N chambers", "size": "N",
          "gen": lambda n, beats, out, probe: [PY, os.path.join(HERE, "gen_tree.py"), str(n),
                                               str(beats), out, "--si", "--valve", "--pump",
                                               "pressure", "--no-trap", "--wall-compliance",
                                               "2e-16", "--no-culture", "--short-ids", "--probe",
                                               probe],
          "sizes": [16, 128, 1024, 8192], "quick": [16], "beats": 20, "quick_beats": 5,
          "scipy_max": 1024, "spice_max": 1024, "ref_max": 1024},
    "c": {"desc": "M x M grid of channels, chamber at every node", "size": "N",
          "gen": lambda n, beats, out, probe: [PY, os.path.join(HERE, "gen_grid.py"),
                                               str(int(round(math.sqrt(n)))), str(beats), out,
                                               "--probe", probe],
          "sizes": [16, 256, 4096, 16384], "quick": [16], "beats": 10, "quick_beats": 3,
          "scipy_max": 4096, "spice_max": 4096, "ref_max": 4096},
}
# ngspice settings are (reltol, largest step as a fraction of the period): its switch instants
# and its output-point means are only as good as its steps, so both are tightened.
LADDER = {"ferrocirc": [1e-2, 1e-3, 1e-4, 1e-5, 1e-6, 1e-7, 1e-8], "scipy": [1e-4, 1e-6, 1e-8],
          "ngspice": [(1e-4, 0.02), (1e-5, 0.02), (1e-6, 0.02), (1e-6, 0.002), (1e-7, 0.002),
                      (1e-7, 0.0002)]}
QUICK_LADDER = {"ferrocirc": [1e-5, 1e-7], "scipy": [1e-6], "ngspice": [(1e-6, 0.02)]}


def timed(cmd, timeout=None):
    with tempfile.NamedTemporaryFile("r", prefix="fc-time-") as tf:
        t0 = time.perf_counter()
        p = subprocess.run([TIME, "-f", "%M", "-o", tf.name] + cmd, stdout=subprocess.DEVNULL,
                           stderr=subprocess.PIPE, timeout=timeout)
        wall = time.perf_counter() - t0
        if p.returncode != 0:
            raise RuntimeError("%s: exit %d: %s" % (" ".join(cmd[:3]), p.returncode,
                                                     p.stderr.decode(errors="replace")[-500:]))
        return wall, int(tf.read().split()[-1])


def fc_probes(summ, events, probe):
    s = json.load(open(summ))
    P = probe["period"]
    T = s["t_end_s"]
    node = [n for n in s["last_cycle_nodes"] if n["name"] == probe["probe_node"]][0]
    el = [e for e in s["last_cycle_elements"] if e["id"] == probe["volume_elem"]]
    vol = el[0]["volume_net_m3"] if el else None
    sw = []
    with open(events) as f:
        next(f)
        for line in f:
            t, eid, a, b = line.split(",")[:4]
            t = float(t)
            if t >= T - (1 + MATCH) * P and eid in probe["valves"]:
                sw.append((t, eid, int(a), int(b)))
    return {"p_mean": node["p_mean_Pa"], "p_peak": node["p_max_Pa"], "volume": vol,
            "switches": sw, "t_last": T - P, "solver": s["solver"],
            "reverse": any(b == -1 for _, _, _, b in sw)}


def run_fc(binary, net, probe, tol, wd, ref=False):
    d = json.load(open(net))
    # abs_tol [Pa] = tol x 1 Pa; abs_tol_volume = tol x 1 nL (about one chamber's volume per
    # beat): the default 1 fL would hold the volumes to ~1e-7 whatever rel_tol says
    d["simulation"].update(rel_tol=tol, abs_tol=tol * 1.0, abs_tol_volume=tol * 1e-12)
    # statistics for the probed node and the tracked elements only, as ngspice .saves only the
    # probed vectors (node pressure extremes still cover every node)
    pr = json.load(open(probe))
    rep = d.setdefault("report", {})
    rep.update(statistics="tracked", nodes=[pr["probe_node"]])
    if pr["volume_elem"] not in pr["valves"]:
        rep["elements"] = sorted(set(rep.get("elements", [])) | {pr["volume_elem"]})
    if ref:
        d["simulation"]["abs_tol_volume"] = 1e-24
    path = os.path.join(wd, "fc-net.json")
    json.dump(d, open(path, "w"), separators=(",", ":"))
    summ, ev = os.path.join(wd, "fc-s.json"), os.path.join(wd, "fc-e.csv")
    wall, rss = timed([binary, "run", path, "--quiet", "--summary", summ, "--events", ev])
    r = fc_probes(summ, ev, json.load(open(probe)))
    r.update(wall=wall, rss_kb=rss)
    return r


def run_scipy(net, probe, tol, wd, method="BDF"):
    out = os.path.join(wd, "sc.json")
    wall, rss = timed([PY, os.path.join(HERE, "peer_scipy.py"), net, probe, out, "--method",
                       method, "--rtol", "%g" % tol])
    r = json.load(open(out))
    r.update(wall=wall, rss_kb=rss)
    return r


def run_spice(net, probe, tol, wd):
    out = os.path.join(wd, "sp.json")
    subprocess.run([PY, os.path.join(HERE, "peer_spice.py"), net, probe, out, "--reltol",
                    "%g" % tol[0], "--tmax", "%g" % tol[1]], check=True,
                   stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    return json.load(open(out))   # wall and rss_kb are ngspice's own (not Python's)


def error(r, ref, period):
    P = abs(ref["p_peak"]) or 1.0
    e = {"mean": abs(r["p_mean"] - ref["p_mean"]) / P,
         "peak": abs(r["p_peak"] - ref["p_peak"]) / P}
    if ref["volume"]:
        e["volume"] = abs(r["volume"] - ref["volume"]) / abs(ref["volume"])
    if ref["switches"] or r["switches"]:
        e["switch"] = switch_error(ref["switches"], r["switches"], period, ref["t_last"])
    e["max"] = max(e.values())
    return e


def switch_error(a, b, period, t_last):
    """Largest |dt| / period between each switch of the last beat in one list and the nearest
    switch of the same valve to the same state in the other (both ways); a switch with no such
    partner within MATCH periods counts 1. The lists reach MATCH periods before the beat, so a
    switch just at its start is matched whichever side of the boundary a tool puts it."""
    def one_way(x, y):
        worst = 0.0
        for t, eid, _, new in x:
            if t < t_last:
                continue
            d = [abs(t - u) for u, eid2, _, new2 in y if eid2 == eid and new2 == new]
            worst = max(worst, min(d) / period if d and min(d) <= MATCH * period else 1.0)
        return worst
    return max(one_way(a, b), one_way(b, a))


def median_time(fn, first, repeat):
    walls, runs = [first["wall"]], [first]
    n = repeat if first["wall"] < 20 else (3 if first["wall"] < 60 else 1)
    n = min(n, repeat)
    for _ in range(n - 1):
        r = fn()
        walls.append(r["wall"])
        runs.append(r)
    runs.sort(key=lambda x: x["wall"])
    return runs[len(runs) // 2], len(runs)


def main(argv):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--binary", required=True)
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--circuits", default="a,b,c,d")
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--json", help="write all measurements here")
    ap.add_argument("--sizes", help="override sizes, e.g. b=16,128")
    ap.add_argument("--beats", type=int, help="override every circuit's number of beats")
    ap.add_argument("--fc-only", type=float, metavar="TOL",
                    help="scaling run: ferrocirc alone at rel_tol TOL at every size (no "
                         "reference, no peers, no errors)")
    a = ap.parse_args(argv)
    binary = os.path.abspath(a.binary)
    ladder = QUICK_LADDER if a.quick else LADDER
    repeat = 1 if a.quick else a.repeat
    over = {}
    if a.sizes:
        for part in a.sizes.split(";"):
            k, v = part.split("=")
            over[k] = [int(x) for x in v.split(",")]
    results = {"load_start": os.getloadavg(), "circuits": {}}
    for cname in a.circuits.split(","):
        if cname == "d":
            continue
        c = CIRCUITS[cname]
        sizes = over.get(cname, c["quick"] if a.quick else c["sizes"])
        beats = a.beats or (c["quick_beats"] if a.quick else c["beats"])
        rows = []
        chosen_fc_tol = None
        for n in sizes:
            with tempfile.TemporaryDirectory(prefix="fc-suite-") as wd:
                net, probe = os.path.join(wd, "net.json"), os.path.join(wd, "net.probe.json")
                g = subprocess.run(c["gen"](n, beats, net, probe), check=True,
                                   stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True)
                nodes, elems = (int(x) for x in g.stdout.split())
                pr = json.load(open(probe))
                row = {"n": n, "nodes": nodes, "elements": elems, "beats": beats,
                       "file_bytes": os.path.getsize(net), "load": os.getloadavg()[0]}
                sys.stderr.write("suite: (%s) %s=%d, %d elements, load %.1f\n"
                                 % (cname, c["size"], n, elems, row["load"]))
                if n > c["ref_max"] or a.fc_only:
                    tol = a.fc_only or chosen_fc_tol or 1e-6
                    first = run_fc(binary, net, probe, tol, wd)
                    best, k = median_time(lambda: run_fc(binary, net, probe, tol, wd), first,
                                          repeat)
                    row["fc_only"] = {"tol": tol, "run": best, "repeats": k}
                    rows.append(row)
                    continue
                ref = run_fc(binary, net, probe, 1e-10, wd, ref=True)
                row["ref"] = ref
                if ref["reverse"]:
                    row["warning"] = "reference opens a valve in reverse: ngspice model invalid"
                if n == sizes[0] and not a.quick and cname != "a":
                    try:
                        rad = run_scipy(net, probe, 1e-11, wd, method="Radau")
                        row["validate"] = {"err": error(rad, ref, pr["period"]),
                                           "wall": rad["wall"]}
                    except (RuntimeError, subprocess.CalledProcessError) as exc:
                        row["validate"] = {"failed": str(exc)}
                row["ladder"] = {}
                tools = {"ferrocirc": lambda t: run_fc(binary, net, probe, t, wd)}
                if n <= c["scipy_max"]:
                    tools["scipy"] = lambda t: run_scipy(net, probe, t, wd)
                if n <= c["spice_max"]:
                    tools["ngspice"] = lambda t: run_spice(net, probe, t, wd)
                for tool, fn in tools.items():
                    lad = []
                    own = c.get("ladder", {}).get(tool) if not a.quick else None
                    for tol in own or ladder[tool]:
                        try:
                            r = fn(tol)
                            r["err"] = error(r, ref, pr["period"])
                        except (RuntimeError, subprocess.CalledProcessError) as exc:
                            r = {"failed": str(exc)[-300:], "wall": float("inf")}
                        r["tol"] = tol
                        lad.append(r)
                        sys.stderr.write("suite:   %s tol %s: wall %.3f s, err %s\n" % (
                            tool, report.fmt_tol(tol), r["wall"],
                            "%.2e" % r["err"]["max"] if "err" in r else r.get("failed")))
                    row["ladder"][tool] = lad
                row["matched"] = {}
                for target in TARGETS:
                    m = {}
                    for tool, lad in row["ladder"].items():
                        ok = [r for r in lad if "err" in r and r["err"]["max"] <= target]
                        if not ok:
                            m[tool] = None
                            continue
                        # Candidates: the cheapest single run, and the loosest setting that
                        # meets the target (the ladders run from loose to tight). One run of a
                        # few ms is noisy enough to rank a tighter setting first; each
                        # candidate is re-timed and the lower median wins, for every tool alike.
                        cands = [min(ok, key=lambda r: r["wall"])]
                        if ok[0] is not cands[0]:
                            cands.append(ok[0])
                        timed_c = []
                        for cheap in cands:
                            tol = cheap["tol"]
                            best, k = median_time(lambda: dict(tools[tool](tol),
                                                               err=cheap["err"]), cheap, repeat)
                            timed_c.append((best["wall"], tol, best, k, cheap))
                        _, tol, best, k, cheap = min(timed_c, key=lambda c: c[0])
                        m[tool] = {"tol": tol, "wall": best["wall"], "rss_kb": best["rss_kb"],
                                   "err": cheap["err"]["max"], "repeats": k,
                                   "candidates": [[c[1], c[0]] for c in timed_c],
                                   "stats": best.get("solver") or best.get("stats")}
                    row["matched"]["%g" % target] = m
                    if target == TARGETS[-1] and m.get("ferrocirc"):
                        chosen_fc_tol = m["ferrocirc"]["tol"]
                    elif target == TARGETS[0] and m.get("ferrocirc") and not chosen_fc_tol:
                        chosen_fc_tol = m["ferrocirc"]["tol"]
                rows.append(row)
        results["circuits"][cname] = rows
    if "d" in a.circuits.split(","):
        results["valve"] = bench_valve(binary, repeat)
    results["load_end"] = os.getloadavg()
    if a.json:
        json.dump(results, open(a.json, "w"), indent=1, default=str)
    report.write(results, sys.stdout)
    return 0


def bench_valve(binary, repeat):
    design = os.path.join(HERE, "..", "..", "networks", "valves", "one-magnet-step.json")
    out = {}
    runs = sorted(timed([binary, "valve", design]) for _ in range(max(repeat, 1)))
    out["one"] = {"wall": runs[len(runs) // 2][0], "rss_kb": runs[len(runs) // 2][1],
                  "repeats": len(runs)}
    with tempfile.TemporaryDirectory(prefix="fc-valve-") as wd:
        csv = os.path.join(wd, "sweep.csv")
        k = max(1, min(repeat, 3))
        runs = sorted(timed([binary, "valve", design, "--vary", "magnets[0].gap=0.5mm..3mm",
                             "--steps", "100", "-o", csv]) for _ in range(k))
        rows = sum(1 for _ in open(csv)) - 1
    out["sweep"] = {"wall": runs[len(runs) // 2][0], "rss_kb": runs[len(runs) // 2][1],
                    "repeats": k, "rows": rows}
    return out


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
