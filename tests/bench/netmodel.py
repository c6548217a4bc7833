#!/usr/bin/python3
"""Read a benchmark network (ferrocirc-network/1 with plain SI numbers, as the generators write
with --si) into a lumped linear model, independently of the engine, for the peers.

Supported subset (what the benchmark generators emit; anything else is refused):
  reservoir      constant pressure (number) or a "pulse" waveform; liquid_height adds rho g h
  channel        diameter (Hagen-Poiseuille, R = 8 mu L/(pi r^4), Bruus 2008 Ch. 2) or width +
                 height (R = 12 mu L/(w h^3 F(h/w)), F from the Fourier series, Bruus 2008 Ch. 2);
                 no inertance
  resistor       resistance
  chamber        compliance (constant), optional backing_pressure "beat" waveform
                 (C d(p - p_back)/dt = sum q_in)
  flow_source    "beat" or constant flow
  check_valve    crack/reseat forward and reverse, open_resistance, leak_conductance (default
                 1e-18 m^3/(Pa s)); no blowout key. Law (docs/network-format.md): sealed
                 q = G_leak dp; open forward q = (dp - reseat_f)/R_open, opening when dp rises
                 through crack_f, resealing when q falls to 0; open reverse likewise.

Waveforms as in src/waveform.c's contract comment (docs/network-format.md):
  beat  v = B + P sin(pi tau/(S T)) for tau < S T, else B
  pulse raised-cosine rise L->H over [0, R], high until D T, raised-cosine fall over [D T, D T + R]
"""
import json
import math

G_N = 9.80665           # standard gravity [m/s^2] (CGPM 1901)
LEAK_DEFAULT = 1e-18    # ferrocirc's documented default leak conductance (docs/network-format.md)


class BadNet(Exception):
    pass


def rect_F(alpha):
    """Bruus 2008 Ch. 2: F(a) = 1 - (192 a/pi^5) sum_{n odd} tanh(n pi/(2a))/n^5, a = h/w <= 1."""
    if alpha > 1:
        alpha = 1 / alpha
    s = 0.0
    for n in range(20001, 0, -2):      # tail < 0.08 a/N^4 ~ 1e-18
        s += math.tanh(n * math.pi / (2 * alpha)) / n ** 5
    return 1 - 192 * alpha / math.pi ** 5 * s


_F_CACHE = {}


def rect_R(mu, L, w, h):
    if h > w:
        w, h = h, w
    a = h / w
    if a not in _F_CACHE:
        _F_CACHE[a] = rect_F(a)
    return 12 * mu * L / (w * h ** 3 * _F_CACHE[a])


class Wave:
    """const, beat or pulse; value(t), slope(t), corners(t0, t1) (times where the value or slope
    has a kink, so integrators can stop there)."""

    def __init__(self, spec, where):
        if isinstance(spec, (int, float)):
            self.kind, self.v = "const", float(spec)
            return
        if not isinstance(spec, dict):
            raise BadNet("%s: expected a number or a waveform object (SI numbers only)" % where)
        for k, v in spec.items():
            if k != "shape" and not isinstance(v, (int, float)):
                raise BadNet("%s.%s: expected a plain SI number" % (where, k))
        self.kind = spec.get("shape")
        if self.kind == "beat":
            self.T = spec["period"]
            self.P = spec["peak"]
            self.B = spec.get("base", 0.0)
            self.ST = spec.get("systolic_fraction", 1 / 3) * self.T
            self.offs = [0.0, self.ST]
        elif self.kind == "pulse":
            self.T = spec["period"]
            self.L, self.H = spec.get("low", 0.0), spec["high"]
            self.DT = spec.get("duty", 0.5) * self.T
            self.R = spec["rise"]
            self.t0 = spec.get("delay", 0.0)
            if self.t0 != 0:
                raise BadNet("%s.delay: not supported by the peers" % where)
            self.offs = [0.0, self.R, self.DT, self.DT + self.R]
        else:
            raise BadNet("%s.shape: the peers support beat and pulse, got %r" % (where, self.kind))

    def value(self, t):
        if self.kind == "const":
            return self.v
        tau = t - self.T * math.floor(t / self.T)
        if self.kind == "beat":
            return self.B + self.P * math.sin(math.pi * tau / self.ST) if tau < self.ST else self.B
        return self._pulse(tau, 0)

    def slope(self, t):
        if self.kind == "const":
            return 0.0
        tau = t - self.T * math.floor(t / self.T)
        if self.kind == "beat":
            return self.P * math.pi / self.ST * math.cos(math.pi * tau / self.ST) \
                if tau < self.ST else 0.0
        return self._pulse(tau, 1)

    def _pulse(self, tau, slope):
        L, H, R = self.L, self.H, self.R
        if tau >= self.DT + R:
            return 0.0 if slope else L
        if R <= tau < self.DT:
            return 0.0 if slope else H
        if tau < R:
            s, a, b = tau / R, L, H
        else:
            s, a, b = (tau - self.DT) / R, H, L
        if slope:
            return (b - a) * math.pi / (2 * R) * math.sin(math.pi * s)
        return a + (b - a) * 0.5 * (1 - math.cos(math.pi * s))

    def corners(self, t0, t1):
        if self.kind == "const":
            return []
        out = []
        k = math.floor(t0 / self.T)
        while k * self.T <= t1:
            for o in self.offs:
                c = k * self.T + o
                if t0 < c < t1:
                    out.append(c)
            k += 1
        return out

    def spice(self, scale):
        """ngspice B-source expression of scale * value(time)."""
        if self.kind == "const":
            return "%.12g" % (scale * self.v)
        tau = "(time-%.12g*floor(time/%.12g))" % (self.T, self.T)
        if self.kind == "beat":
            return "(%s < %.12g ? %.12g + %.12g*sin(%.15g*%s) : %.12g)" % (
                tau, self.ST, scale * self.B, scale * self.P, math.pi / self.ST, tau,
                scale * self.B)
        L, H, R, D = scale * self.L, scale * self.H, self.R, self.DT
        return ("(%s < %.12g ? %.12g + %.12g*(1-cos(%.15g*%s)) : (%s < %.12g ? %.12g : "
                "(%s < %.12g ? %.12g + %.12g*(1-cos(%.15g*(%s-%.12g))) : %.12g)))") % (
            tau, R, L, 0.5 * (H - L), math.pi / R, tau, tau, D, H,
            tau, D + R, H, 0.5 * (L - H), math.pi / R, tau, D, L)


class Model:
    """nodes: name -> index. Branches: cond (a, b, G) for channels/resistors; valves
    (a, b, dict, id); flow sources (a, b, Wave, id); imposed nodes {idx: (Wave, offset)};
    compliance per node C[idx]; backing waveforms per node back[idx] (list of (C_k, Wave))."""

    def __init__(self, path):
        with open(path) as f:
            net = json.load(f)
        self.title = net.get("title", "")
        fl = net.get("fluid", {})
        self.mu = fl.get("viscosity", 0.78e-3)
        self.rho = fl.get("density", 1000.0)
        for k in ("viscosity", "density"):
            if k in fl and not isinstance(fl[k], (int, float)):
                raise BadNet("%s: fluid.%s: peers need plain SI numbers (generate with --si)"
                             % (path, k))
        self.nodes = {}
        self.cond, self.valves, self.sources = [], [], []
        self.imposed, self.C, self.back = {}, {}, {}
        self.elem_of = {}
        sim = net.get("simulation", {})
        self.cycles = sim.get("cycles")
        for i, e in enumerate(net["elements"]):
            self._element(e, "%s: elements[%d]" % (path, i))
        self.n = len(self.nodes)

    def node(self, name):
        if name not in self.nodes:
            self.nodes[name] = len(self.nodes)
        return self.nodes[name]

    def _num(self, e, k, where, default=None):
        v = e.get(k, default)
        if not isinstance(v, (int, float)):
            raise BadNet("%s.%s: expected a plain SI number, got %r" % (where, k, v))
        return float(v)

    def _element(self, e, where):
        t = e["type"]
        self.elem_of[e["id"]] = len(self.elem_of)
        if t == "reservoir":
            i = self.node(e["node"])
            w = Wave(e.get("pressure", 0.0), where + ".pressure")
            off = self.rho * G_N * self._num(e, "liquid_height", where, 0.0)
            self.imposed[i] = (w, off)
        elif t in ("channel", "resistor"):
            a, b = self.node(e["from"]), self.node(e["to"])
            if t == "resistor":
                R = self._num(e, "resistance", where)
            else:
                if e.get("inertance"):
                    raise BadNet(where + ".inertance: not supported by the peers")
                mu = self._num(e, "viscosity", where, self.mu)
                L = self._num(e, "length", where)
                if "diameter" in e:
                    r = self._num(e, "diameter", where) / 2
                    R = 8 * mu * L / (math.pi * r ** 4)
                else:
                    R = rect_R(mu, L, self._num(e, "width", where), self._num(e, "height", where))
            self.cond.append((a, b, 1.0 / R, e["id"]))
        elif t == "chamber":
            i = self.node(e["node"])
            if "compliance" not in e:
                raise BadNet(where + ": the peers support chambers with a constant compliance")
            c = self._num(e, "compliance", where)
            self.C[i] = self.C.get(i, 0.0) + c
            if "backing_pressure" in e:
                self.back.setdefault(i, []).append(
                    (c, Wave(e["backing_pressure"], where + ".backing_pressure")))
        elif t == "flow_source":
            a, b = self.node(e["from"]), self.node(e["to"])
            self.sources.append((a, b, Wave(e["flow"], where + ".flow"), e["id"]))
        elif t == "check_valve":
            a, b = self.node(e["from"]), self.node(e["to"])
            for k in ("blowout", "blowout_forward", "blowout_reverse"):
                if k in e:
                    raise BadNet("%s.%s: not supported by the peers" % (where, k))
            v = {"crack_f": self._num(e, "crack_forward", where),
                 "crack_r": self._num(e, "crack_reverse", where),
                 "reseat_f": self._num(e, "reseat_forward", where, 0.0),
                 "reseat_r": self._num(e, "reseat_reverse", where, 0.0),
                 "R_open": self._num(e, "open_resistance", where),
                 "G_leak": self._num(e, "leak_conductance", where, LEAK_DEFAULT)}
            self.valves.append((a, b, v, e["id"]))
        else:
            raise BadNet("%s.type: %r is not supported by the peers" % (where, t))

    def corners(self, t0, t1):
        cs = set()
        for w, _ in self.imposed.values():
            cs.update(w.corners(t0, t1))
        for _, _, w, _ in self.sources:
            cs.update(w.corners(t0, t1))
        for lst in self.back.values():
            for _, w in lst:
                cs.update(w.corners(t0, t1))
        return sorted(cs)
