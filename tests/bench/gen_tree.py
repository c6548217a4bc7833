#!/usr/bin/python3
"""Generate a ferrocirc benchmark network: a distribution tree feeding N culture chambers.

An invented organ-on-chip plate, scaled to any N >= 1:

  supply (reservoir) --pump (flow_source, pulsatile, period 1 s)--> inlet
  inlet: bubble trap (chamber with trapped gas), optional
  --valve: inlet --check_valve--> root (crack 2 mbar, reseat 0.5 mbar, reverse crack 100 mbar,
           open resistance 2e11 Pa s/m^3 x 16/N so the drop stays the same as N grows)
  root (= inlet without --valve) of a binary distribution tree of rectangular channels
  each leaf k: node c<k> with a culture-chamber compliance (PDMS wall), the flat culture channel
               c<k> -> o<k> (culture: true, so its wall shear is reported), and drain tubing
               o<k> -> waste
  waste (reservoir, liquid 5 mm above the ports)

N need not be a power of two: a subtree with n leaves splits into ceil(n/2) and floor(n/2), so
the tree is as balanced as possible and leaf depths differ by at most one.

Dimensions (made up but typical of soft-lithography chips): every channel is 100 um deep; the
distribution channels narrow by 2^(-1/3) per level (Murray's cube law for the flow that halves
at each split, applied to the width only), from 600 um, never below 50 um; segment lengths fall
by 2^(-1/2) per level (an H-tree layout halves the pitch every two levels), from 8 mm, never below
1 mm. Culture channel 3 mm x 500 um x 100 um; drain 20 mm x 200 um x 100 um; chamber-wall
compliance 2e-14 m^3/Pa (of the order of a thin PDMS membrane over a few mm^2 [from memory]).
The pump gives each chamber a peak of 2 uL/min in heart-like beats (a third of the cycle
ejecting), or a sine of the same mean with --shape sine.

--pump pressure replaces the flow source by a pressure-controlled supply (a reservoir pulsing
0 -> 10 mbar, 40 % duty, 50 ms raised-cosine edges, through a 10 mm x 600 um supply line), the
source with which a check valve actually reseals every beat (behind a flow source and a trap it
opens once and never reseals, since the trap drains into the tree asymptotically).
--wall-compliance C gives every junction and outlet node a compliance C [m^3/Pa] (channel walls),
so that no node is algebraic and every peer integrates the same ODE with a sparse Jacobian.
--trap-linear makes the bubble trap a constant compliance V/p_amb (its isothermal value at
ambient pressure) instead of the gas law.
--short-ids shortens the element ids (the suite uses it so that N = 65536 fits the loader's
40 MiB limit).
--probe OUT.probe.json writes what the side-by-side benchmark probes (tests/bench/suite.py).

Usage: gen_tree.py N [cycles] OUT.json [--shape beat|sine] [--no-trap] [--inertance]
                   [--si] [--valve] [--pump flow|pressure] [--wall-compliance C]
                   [--trap-linear] [--short-ids] [--probe OUT.probe.json]
Standard library only; runs under /usr/bin/python3.
"""
import argparse
import json
import math
import sys

DEPTH = 100e-6            # channel depth [m]
W_ROOT, W_MIN = 600e-6, 50e-6
L_ROOT, L_MIN = 8e-3, 1e-3
PEAK_PER_CHAMBER = 2.0    # uL/min
PERIOD = "1 s"


def fmt_len(m):
    """A length in um as a unit string (the format's usual way), or SI if asked."""
    return "%.6g um" % (m * 1e6)


class Builder:
    def __init__(self, si):
        self.si = si
        self.elements = []
        self.nodes = set()
        self.next_j = 0
        self.next_leaf = 0
        self.wall_c = 0.0
        self.walled = set()
        self.short = False   # --short-ids: one-letter id prefixes (smaller files)

    def q(self, value_si, unit_text):
        return value_si if self.si else unit_text

    def length(self, m):
        # 6 significant digits in SI (as fmt_len): with --short-ids, N = 65536 fits the
        # loader's 40 MiB file limit
        return float("%.6g" % m) if self.si else fmt_len(m)

    def add(self, el):
        for key in ("node", "from", "to"):
            if key in el:
                self.nodes.add(el[key])
        self.elements.append(el)

    def channel(self, ident, a, b, length, width, culture=False, inertance=False):
        el = {"id": ident, "type": "channel", "from": a, "to": b,
              "length": self.length(length), "width": self.length(width),
              "height": self.length(DEPTH)}
        if culture:
            el["culture"] = True
        if inertance:
            el["inertance"] = True
        self.add(el)

    def leaf_name(self):
        self.next_leaf += 1
        return "c%d" % (self.next_leaf - 1)

    def junction(self):
        self.next_j += 1
        return "j%d" % (self.next_j - 1)

    def wall(self, node):
        if self.wall_c and node not in self.walled:
            self.walled.add(node)
            self.add({"id": ("w" if self.short else "w_") + node, "type": "chamber", "node": node,
                      "compliance": self.wall_c})

    def leaf_unit(self, node, inertance):
        """Chamber compliance at node c<k>, culture channel to outlet o<k>, drain to the waste."""
        k = int(node[1:])
        out = "o%d" % k
        ids = ("m%d", "u%d", "d%d") if self.short else ("wall%d", "culture%d", "drain%d")
        self.add({"id": ids[0] % k, "type": "chamber", "node": node,
                  "compliance": self.q(2e-14, "2e-14 m3/Pa")})
        self.channel(ids[1] % k, node, out, 3e-3, 500e-6, culture=True)
        self.channel(ids[2] % k, out, "waste", 20e-3, 200e-6, inertance=inertance)
        self.wall(out)

    def tree(self, root, n_leaves, inertance):
        """Split iteratively (no recursion limit): stack of (node, leaves below, level)."""
        stack = [(root, n_leaves, 0)]
        while stack:
            node, n, level = stack.pop()
            if n == 1:
                self.leaf_unit(node, inertance)
                continue
            self.wall(node)
            w = max(W_ROOT * 2.0 ** (-level / 3.0), W_MIN)
            length = max(L_ROOT * 2.0 ** (-level / 2.0), L_MIN)
            halves = ((n + 1) // 2, n // 2)
            children = []
            for side, m in zip("ab", halves):
                child = self.leaf_name() if m == 1 else self.junction()
                self.channel(("%s%s" if self.short else "t_%s_%s") % (node, side), node, child,
                             length, w)
                children.append((child, m, level + 1))
            stack.extend(reversed(children))



def build(n, cycles, shape, trap, inertance, si, valve=False, pump="flow", wall_c=0.0,
          trap_linear=False, short=False):
    b = Builder(si)
    b.short = short
    b.wall_c = wall_c
    peak = PEAK_PER_CHAMBER * n
    if pump == "pressure":
        b.add({"id": "supply", "type": "reservoir", "node": "supply",
               "pressure": {"shape": "pulse", "low": b.q(0.0, "0 mbar"),
                            "high": b.q(1000.0, "10 mbar"), "period": b.q(1.0, PERIOD),
                            "duty": 0.4, "rise": b.q(0.05, "50 ms")}})
    else:
        b.add({"id": "supply", "type": "reservoir", "node": "supply"})
    if pump == "pressure":
        flow = None
    elif shape == "beat":
        flow = {"shape": "beat", "peak": b.q(peak * 1e-9 / 60, "%.9g uL/min" % peak),
                "period": b.q(1.0, PERIOD), "systolic_fraction": 1.0 / 3.0}
    else:
        # Same mean as the beat: a half-sine lobe over a third of the cycle has mean
        # peak * (2/pi) / 3; the sine swings +-mean about it, so the pump never runs backwards.
        mean = peak * 2.0 / math.pi / 3.0
        flow = {"shape": "sine", "mean": b.q(mean * 1e-9 / 60, "%.9g uL/min" % mean),
                "amplitude": b.q(mean * 1e-9 / 60, "%.9g uL/min" % mean),
                "period": b.q(1.0, PERIOD)}
    root = b.leaf_name() if n == 1 else ("root" if valve else "inlet")
    inlet = "inlet" if valve else root
    if pump == "pressure":
        b.channel("supply_line", "supply", inlet, 10e-3, 600e-6)
    else:
        b.add({"id": "pump", "type": "flow_source", "from": "supply", "to": inlet, "flow": flow})
    if trap:
        # A bubble trap whose air pocket grows with the plate (5 uL per 16 chambers, >= 5 uL).
        vol = 5.0 * max(1.0, n / 16.0)
        if trap_linear:
            c = vol * 1e-9 / 101325.0
            b.add({"id": "bubble_trap", "type": "chamber", "node": inlet,
                   "compliance": b.q(c, "%.9g m3/Pa" % c)})
        else:
            b.add({"id": "bubble_trap", "type": "chamber", "node": inlet,
                   "gas_volume": b.q(vol * 1e-9, "%.6g uL" % vol)})
    elif valve:
        b.wall(inlet)
    if valve:
        r_open = 2e11 * 16.0 / n
        b.add({"id": "valve", "type": "check_valve", "from": inlet, "to": root,
               "crack_forward": b.q(200.0, "2 mbar"), "reseat_forward": b.q(50.0, "0.5 mbar"),
               "crack_reverse": b.q(1e4, "100 mbar"),
               "open_resistance": b.q(r_open, "%.9g Pa.s/m3" % r_open)})
    b.tree(root, n, inertance)
    b.add({"id": "waste", "type": "reservoir", "node": "waste",
           "liquid_height": b.q(5e-3, "5 mm")})
    net = {
        "format": "ferrocirc-network/1",
        "title": "benchmark: distribution tree feeding %d culture chambers (invented)" % n,
        "fluid": {"name": "culture medium (water-like)",
                  "viscosity": b.q(0.78e-3, "0.78 mPa.s"),
                  "density": b.q(1007.0, "1007 kg/m3")},
        "elements": b.elements,
        "simulation": {"cycles": cycles},
        "report": {"pressure_unit": "mbar", "flow_unit": "uL/min"},
    }
    return net, len(b.nodes), len(b.elements)


def main(argv):
    ap = argparse.ArgumentParser(description="ferrocirc benchmark: N-chamber distribution tree")
    ap.add_argument("n", type=int, help="number of culture chambers (>= 1)")
    ap.add_argument("rest", nargs="+", metavar="[cycles] OUT.json",
                    help="pump cycles to simulate (default 20), then the output path")
    ap.add_argument("--shape", choices=("beat", "sine"), default="beat")
    ap.add_argument("--no-trap", action="store_true", help="no bubble trap at the inlet")
    ap.add_argument("--inertance", action="store_true",
                    help="give each drain tubing its fluid inertance (one more state per chamber)")
    ap.add_argument("--si", action="store_true",
                    help="write plain SI numbers instead of unit strings")
    ap.add_argument("--valve", action="store_true",
                    help="a check valve between the inlet and the tree root")
    ap.add_argument("--pump", choices=("flow", "pressure"), default="flow",
                    help="flow source (default) or pulsed pressure supply")
    ap.add_argument("--wall-compliance", type=float, default=0.0, metavar="C",
                    help="compliance [m^3/Pa] at every junction and outlet node (default none)")
    ap.add_argument("--trap-linear", action="store_true",
                    help="bubble trap as a constant compliance (isothermal value at ambient)")
    ap.add_argument("--no-culture", action="store_true",
                    help="do not mark the culture channels culture: true (see docs/performance.md:"
                         " their flow-reversal roots stall the run when the flow dies out)")
    ap.add_argument("--short-ids", action="store_true",
                    help="one-letter element id prefixes (m, u, d for a leaf's wall, culture and "
                         "drain; w<node> for walls; <node>a/b for tree channels)")
    ap.add_argument("--probe", help="also write the benchmark's probe file here")
    a = ap.parse_args(argv)
    if len(a.rest) > 2:
        ap.error("expected [cycles] OUT.json, got %d arguments" % len(a.rest))
    cycles, out = (20, a.rest[0]) if len(a.rest) == 1 else (a.rest[0], a.rest[1])
    try:
        cycles = float(cycles)
    except ValueError:
        ap.error("cycles: expected a number, got %r" % cycles)
    if a.n < 1:
        ap.error("N: must be >= 1, got %d" % a.n)
    if not cycles > 0:
        ap.error("cycles: must be > 0, got %g" % cycles)
    if a.valve and a.n < 2:
        ap.error("--valve: needs N >= 2 (the valve feeds the root junction)")
    if a.valve and a.pump == "flow" and a.no_trap and not a.wall_compliance:
        ap.error("--valve with a flow source needs the bubble trap or --wall-compliance "
                 "(a flow source into a sealed valve with no compliance has no solution)")
    if a.wall_compliance < 0:
        ap.error("--wall-compliance: must be >= 0, got %g" % a.wall_compliance)
    net, nodes, elems = build(a.n, int(cycles) if cycles == int(cycles) else cycles,
                              a.shape, not a.no_trap, a.inertance, a.si, a.valve, a.pump,
                              a.wall_compliance, a.trap_linear, a.short_ids)
    if a.no_culture:
        for el in net["elements"]:
            el.pop("culture", None)
    if a.probe:
        with open(a.probe, "w") as f:
            json.dump({"probe_node": "c0", "volume_elem": "valve" if a.valve else
                       ("supply_line" if a.pump == "pressure" else "pump"),
                       "valves": ["valve"] if a.valve else [], "period": 1.0,
                       "cycles": cycles}, f)
    with open(out, "w") as f:
        json.dump(net, f, separators=(",", ":"))
        f.write("\n")
    sys.stderr.write("gen_tree.py: %s: %d chambers, %d nodes, %d elements\n"
                     % (out, a.n, nodes, elems))
    print("%d %d" % (nodes, elems))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
