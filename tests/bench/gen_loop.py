#!/usr/bin/python3
"""Benchmark circuit (a): K copies of an invented pneumatic diaphragm pump loop between two
check valves (after networks/diaphragm-two-valves.json), sharing the supply and waste reservoirs.
Loop k's return line is (1 + 0.05 k) times longer, so the valves of different loops switch at
different instants. Plain SI numbers (the peers read them). K = 1 is the demo loop itself.

Usage: gen_loop.py K BEATS OUT.json [--probe OUT.probe.json]
"""
import json
import math
import sys

MMHG = 133.322387415  # Pa per mmHg (conventional, 13.5951 g/cm3 x 9.80665 m/s2 x 1 mm)


def build(k_loops, beats):
    el = [{"id": "supply", "type": "reservoir", "node": "supply"},
          {"id": "waste", "type": "reservoir", "node": "waste"}]
    for k in range(k_loops):
        s = "" if k == 0 else "_%d" % k
        valve = {"crack_forward": 4 * MMHG, "crack_reverse": 70 * MMHG,
                 "reseat_forward": 1.5 * MMHG, "reseat_reverse": 25 * MMHG,
                 "open_resistance": 2e11}
        el += [
            {"id": "inlet_line" + s, "type": "channel", "from": "supply", "to": "v_in_a" + s,
             "length": 10e-3, "width": 500e-6, "height": 200e-6},
            dict({"id": "v_in" + s, "type": "check_valve", "from": "v_in_a" + s,
                  "to": "pump" + s}, **valve),
            {"id": "diaphragm" + s, "type": "chamber", "node": "pump" + s, "compliance": 5e-13,
             "backing_pressure": {"shape": "beat", "peak": 6000.0, "period": 1.0,
                                  "systolic_fraction": 1 / 3}},
            dict({"id": "v_out" + s, "type": "check_valve", "from": "pump" + s,
                  "to": "v_out_b" + s}, **valve),
            {"id": "feed" + s, "type": "channel", "from": "v_out_b" + s, "to": "chamber_in" + s,
             "length": 15e-3, "width": 300e-6, "height": 100e-6},
            {"id": "chamber_wall" + s, "type": "chamber", "node": "chamber_in" + s,
             "compliance": 3e-14},
            {"id": "culture" + s, "type": "channel", "from": "chamber_in" + s,
             "to": "chamber_out" + s, "length": 8e-3, "width": 1.5e-3, "height": 120e-6},
            {"id": "return" + s, "type": "channel", "from": "chamber_out" + s, "to": "waste",
             "length": 100e-3 * (1 + 0.05 * k), "diameter": 500e-6}]
    return {"format": "ferrocirc-network/1",
            "title": "benchmark (a): %d diaphragm pump loop(s) with two check valves each "
                     "(invented)" % k_loops,
            "fluid": {"viscosity": 0.75e-3, "density": 1005.0},
            "elements": el, "simulation": {"cycles": beats},
            "report": {"pressure_unit": "mmHg", "flow_unit": "uL/min"}}


def main(argv):
    probe = None
    if "--probe" in argv:
        i = argv.index("--probe")
        probe = argv[i + 1]
        argv = argv[:i] + argv[i + 2:]
    if len(argv) != 3:
        sys.stderr.write(__doc__)
        return 2
    k, beats, out = int(argv[0]), int(argv[1]), argv[2]
    if k < 1 or beats < 1:
        sys.stderr.write("gen_loop.py: K and BEATS must be >= 1\n")
        return 2
    net = build(k, beats)
    with open(out, "w") as f:
        json.dump(net, f, separators=(",", ":"))
    if probe:
        with open(probe, "w") as f:
            json.dump({"probe_node": "chamber_in", "volume_elem": "v_out",
                       "valves": ["v_in", "v_out"], "period": 1.0, "cycles": beats}, f)
    nodes = {e[k] for e in net["elements"] for k in ("node", "from", "to") if k in e}
    print(len(nodes), len(net["elements"]))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
