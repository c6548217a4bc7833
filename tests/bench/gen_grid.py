#!/usr/bin/python3
"""Benchmark circuit (c): an M x M grid of channels (2 mm long, 100 um bore) with a compliant
chamber (1e-15 m^3/Pa) at every node, fed at corner (0,0) through a 5 mm inlet line from a
reservoir pulsing 0 -> 20 mbar (1 s period, 40 % duty, 50 ms raised-cosine edges) and drained at
corner (M-1,M-1) through a 5 mm line to an open waste reservoir. N = M^2 nodes, 2M(M-1) + 2
channels. Invented; plain SI numbers, short ids (the loader refuses files over 40 MiB).

Usage: gen_grid.py M BEATS OUT.json [--probe OUT.probe.json]
"""
import json
import sys


def build(m, beats):
    el = [{"id": "src", "type": "reservoir", "node": "src",
           "pressure": {"shape": "pulse", "low": 0.0, "high": 2000.0, "period": 1.0,
                        "duty": 0.4, "rise": 0.05}},
          {"id": "waste", "type": "reservoir", "node": "waste"},
          {"id": "inlet", "type": "channel", "from": "src", "to": "0_0", "length": 5e-3,
           "diameter": 100e-6},
          {"id": "outlet", "type": "channel", "from": "%d_%d" % (m - 1, m - 1), "to": "waste",
           "length": 5e-3, "diameter": 100e-6}]
    for i in range(m):
        for j in range(m):
            n = "%d_%d" % (i, j)
            el.append({"id": "c" + n, "type": "chamber", "node": n, "compliance": 1e-15})
            if j + 1 < m:
                el.append({"id": "h" + n, "type": "channel", "from": n, "to": "%d_%d" % (i, j + 1),
                           "length": 2e-3, "diameter": 100e-6})
            if i + 1 < m:
                el.append({"id": "v" + n, "type": "channel", "from": n, "to": "%d_%d" % (i + 1, j),
                           "length": 2e-3, "diameter": 100e-6})
    return {"format": "ferrocirc-network/1",
            "title": "benchmark (c): %d x %d grid of channels with a chamber at every node "
                     "(invented)" % (m, m),
            "fluid": {"viscosity": 0.78e-3, "density": 1007.0},
            "elements": el, "simulation": {"cycles": beats}}


def main(argv):
    probe = None
    if "--probe" in argv:
        i = argv.index("--probe")
        probe = argv[i + 1]
        argv = argv[:i] + argv[i + 2:]
    if len(argv) != 3:
        sys.stderr.write(__doc__)
        return 2
    m, beats, out = int(argv[0]), int(argv[1]), argv[2]
    if m < 2 or beats < 1:
        sys.stderr.write("gen_grid.py: M must be >= 2 and BEATS >= 1\n")
        return 2
    net = build(m, beats)
    with open(out, "w") as f:
        json.dump(net, f, separators=(",", ":"))
    if probe:
        with open(probe, "w") as f:
            k = min(2, m - 1)
            json.dump({"probe_node": "%d_%d" % (k, k), "volume_elem": "inlet", "valves": [],
                       "period": 1.0, "cycles": beats}, f)
    print(m * m + 2, len(net["elements"]))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
