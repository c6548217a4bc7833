#!/usr/bin/python3
"""SciPy peer: integrate a benchmark network as an ODE with scipy.integrate.solve_ivp.

States: the pressures of the compliant nodes, then two quadratures (integral of the probed node's
pressure and of the probed element's flow). Node equation (Kirchhoff, constant compliance):
  C_i (dp_i/dt - dp_back,i/dt) = sum_j G_ij (p_j - p_i) + s_i(t)
Nodes without compliance are eliminated exactly (z = Lzz^-1 (...), a sparse LU per valve mode).
The Jacobian is analytic and sparse (constant within a valve mode; dense only where algebraic
nodes are eliminated, which the benchmark has only in circuit (a)). Valve switching and waveform
corners stop the integration (terminal events / segment ends) and restart it, as ferrocirc does.
The peak of the probed pressure in the last beat is located by a non-terminal event on its
derivative.

Usage: peer_scipy.py NET.json PROBE.json OUT.json [--method BDF|Radau] [--rtol R]
Writes the probes (as tests/bench/suite.py reads them) and solver counters.
"""
import json
import math
import sys
import time

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spl
from scipy.integrate import solve_ivp

import netmodel

SEALED, FWD, REV = 0, 1, -1


class Ode:
    def __init__(self, m, probe):
        self.m = m
        n = m.n
        self.imp = sorted(m.imposed)
        self.xs = [i for i in range(n) if i not in m.imposed and m.C.get(i, 0) > 0]
        self.zs = [i for i in range(n) if i not in m.imposed and m.C.get(i, 0) <= 0]
        self.nx, self.nz = len(self.xs), len(self.zs)
        self.Cx = np.array([m.C[i] for i in self.xs])
        self.pos = {}
        for k, i in enumerate(self.xs):
            self.pos[i] = ("x", k)
        for k, i in enumerate(self.zs):
            self.pos[i] = ("z", k)
        for k, i in enumerate(self.imp):
            self.pos[i] = ("y", k)
        pn = m.nodes[probe["probe_node"]]
        if self.pos[pn][0] != "x":
            raise netmodel.BadNet("probe node %s has no compliance" % probe["probe_node"])
        self.kp = self.pos[pn][1]
        self.vid = probe["volume_elem"]
        self.back_x = [(self.pos[i][1], c / m.C[i], w) for i, lst in m.back.items()
                       for c, w in lst]
        self.modes = tuple(SEALED for _ in m.valves)
        self.cache = {}
        # the static part of the Laplacian (channels, resistors)
        rows, cols, vals = [], [], []
        for a, b, G, _ in m.cond:
            rows += [a, b, a, b]
            cols += [a, b, b, a]
            vals += [G, G, -G, -G]
        self.L0 = sp.coo_matrix((vals, (rows, cols)), shape=(n, n)).tocsr()
        self.nfull = n

    def valve_branch(self, v, mode):
        """(G, offset current q0) with q = G dp + q0."""
        if mode == SEALED:
            return v["G_leak"], 0.0
        G = 1.0 / v["R_open"]
        return G, (-G * v["reseat_f"] if mode == FWD else G * v["reseat_r"])

    def setup(self):
        if self.modes in self.cache:
            self.__dict__.update(self.cache[self.modes])
            return
        n, m = self.nfull, self.m
        rows, cols, vals = [], [], []
        s0 = np.zeros(n)
        for (a, b, v, _), mode in zip(m.valves, self.modes):
            G, q0 = self.valve_branch(v, mode)
            rows += [a, b, a, b]
            cols += [a, b, b, a]
            vals += [G, G, -G, -G]
            s0[a] -= q0
            s0[b] += q0
        L = (self.L0 + sp.coo_matrix((vals, (rows, cols)), shape=(n, n))).tocsr()
        X, Z, Y = self.xs, self.zs, self.imp
        d = {"s0": s0,
             "Lxx": L[X][:, X].tocsr(), "Lxz": L[X][:, Z].tocsr(), "Lxy": L[X][:, Y].tocsr(),
             "Lzx": L[Z][:, X].tocsr(), "Lzz": L[Z][:, Z].tocsc(), "Lzy": L[Z][:, Y].tocsr()}
        if self.nz:
            if self.nz * self.nx > 4e6:
                raise netmodel.BadNet("too many algebraic nodes for a dense elimination")
            lu = spl.splu(d["Lzz"])
            Zx = -lu.solve(d["Lzx"].toarray())          # dz/dx
            Jxx = -(d["Lxx"].toarray() + d["Lxz"] @ Zx) / self.Cx[:, None]
            d["lu"], d["Zx"] = lu, Zx
        else:
            d["lu"], d["Zx"] = None, np.zeros((0, self.nx))
            Jxx = -sp.diags(1.0 / self.Cx) @ d["Lxx"]
        # quadrature rows: d(int p)/dt = p_probe; d(int q)/dt = q_elem
        qrow = self.qrow_x(d)
        prow = np.zeros(self.nx)
        prow[self.kp] = 1.0
        J = sp.bmat([[sp.csr_matrix(Jxx), None],
                     [sp.csr_matrix(np.vstack([prow, qrow])), sp.csr_matrix((2, 2))]]).tocsc()
        d["J"] = J
        d["Jx"] = sp.csr_matrix(Jxx)
        self.cache[self.modes] = d
        self.__dict__.update(d)

    def elem_terminals(self):
        m = self.m
        for a, b, G, i in m.cond:
            if i == self.vid:
                return a, b, G, 0.0
        for (a, b, v, i), mode in zip(m.valves, self.modes):
            if i == self.vid:
                G, q0 = self.valve_branch(v, mode)
                return a, b, G, q0
        raise netmodel.BadNet("volume element %s: not a channel, resistor or valve" % self.vid)

    def dpdx(self, node, d):
        kind, k = self.pos[node]
        r = np.zeros(self.nx)
        if kind == "x":
            r[k] = 1.0
        elif kind == "z":
            r = d["Zx"][k].copy()
        return r

    def qrow_x(self, d):
        a, b, G, _ = self.elem_terminals()
        return G * (self.dpdx(a, d) - self.dpdx(b, d))

    def full_p(self, t, x):
        m = self.m
        y = np.array([m.imposed[i][0].value(t) + m.imposed[i][1] for i in self.imp])
        s = self.s0.copy()
        for a, b, w, _ in m.sources:
            q = w.value(t)
            s[a] -= q
            s[b] += q
        p = np.empty(self.nfull)
        p[self.xs] = x
        if len(self.imp):
            p[self.imp] = y
        if self.nz:
            rhs = s[self.zs] - self.Lzx @ x - (self.Lzy @ y if len(y) else 0)
            p[self.zs] = self.lu.solve(rhs)
        return p, y, s

    def rhs(self, t, u):
        x = u[:self.nx]
        p, y, s = self.full_p(t, x)
        infl = -(self.Lxx @ x) + s[self.xs]
        if self.nz:
            infl -= self.Lxz @ p[self.zs]
        if len(y):
            infl -= self.Lxy @ y
        dx = infl / self.Cx
        for k, f, w in self.back_x:
            dx[k] += f * w.slope(t)
        a, b, G, q0 = self.elem_terminals()
        return np.concatenate([dx, [x[self.kp], G * (p[a] - p[b]) + q0]])

    def dp_valve(self, t, x, j):
        a, b, _, _ = self.m.valves[j]
        pa, pb = self.pos[a], self.pos[b]
        if pa[0] == "x" and pb[0] in "xy" or pa[0] == "y" and pb[0] == "x":
            def val(node, kind):
                return x[kind[1]] if kind[0] == "x" else \
                    self.m.imposed[node][0].value(t) + self.m.imposed[node][1]
            return val(a, pa) - val(b, pb)
        p, _, _ = self.full_p(t, x)
        return p[a] - p[b]

    def events(self):
        evs = []
        for j, ((_, _, v, _), mode) in enumerate(zip(self.m.valves, self.modes)):
            def mk(sign, thr, direction, new, j=j):
                f = lambda t, u: sign * self.dp_valve(t, u[:self.nx], j) - thr
                f.terminal, f.direction, f.new, f.valve = True, direction, new, j
                return f
            if mode == SEALED:
                evs.append(mk(1, v["crack_f"], 1, FWD))
                evs.append(mk(-1, v["crack_r"], 1, REV))
            elif mode == FWD:
                evs.append(mk(1, v["reseat_f"], -1, SEALED))
            else:
                evs.append(mk(-1, v["reseat_r"], -1, SEALED))
        return evs


def integrate(ode, probe, method, rtol, pscale):
    period, T = probe["period"], probe["period"] * probe["cycles"]
    t_last = T - period
    stops = sorted(set(ode.m.corners(0, T) + [t_last, T]))
    x = np.zeros(ode.nx + 2)
    atol = np.concatenate([np.full(ode.nx, rtol * pscale), [rtol * pscale * period, 1e-300]])
    # volume quadrature: absolute tolerance ~ rtol x a typical volume per beat (set below)
    t, k = 0.0, 0
    stats = {"nfev": 0, "njev": 0, "nlu": 0, "segments": 0, "events": 0}
    switches, peak_vals = [], []
    at_last = None
    ode.setup()
    vq = None
    while t < T:
        while stops[k] <= t:
            k += 1
        t_b = stops[k]
        if vq is not None:
            atol[-1] = rtol * vq
        else:
            atol[-1] = rtol * 1e-12
        evs = ode.events()
        if t >= t_last - 1e-12:
            pk = lambda tt, u: ode.rhs(tt, u)[ode.kp]
            pk.terminal, pk.direction = False, -1
            evs = evs + [pk]
            peak_vals.append(x[ode.kp])
        sol = solve_ivp(ode.rhs, (t, t_b), x, method=method, rtol=rtol, atol=atol, jac=ode.J,
                        events=evs or None)
        if sol.status < 0:
            raise RuntimeError("solve_ivp failed at t = %g: %s" % (t, sol.message))
        for key in ("nfev", "njev", "nlu"):
            stats[key] += getattr(sol, key)
        stats["segments"] += 1
        hit = None
        if evs:
            for e, te, ye in zip(evs, sol.t_events, sol.y_events):
                if len(te) and getattr(e, "terminal", False):
                    hit = (te[0], ye[0], e)
                elif len(te):
                    peak_vals.extend(ye[:, ode.kp])
        t, x = sol.t[-1], sol.y[:, -1].copy()
        if t >= t_last - 1e-12:
            peak_vals.append(x[ode.kp])
        if abs(t - t_last) < 1e-12 * T and at_last is None:
            at_last = x.copy()
            vq = None
        if hit is not None:
            j = hit[2].valve
            modes = list(ode.modes)
            old = modes[j]
            modes[j] = hit[2].new
            ode.modes = tuple(modes)
            ode.setup()
            stats["events"] += 1
            switches.append((t, ode.m.valves[j][3], old, modes[j]))
        if vq is None and t > period:
            vq = max(abs(x[-1]) / max(t / period, 1), 1e-30)
    if at_last is None:
        at_last = np.zeros_like(x)
    return {"p_mean": (x[-2] - at_last[-2]) / period, "p_peak": max(peak_vals),
            "volume": x[-1] - at_last[-1],
            "switches": [s for s in switches
                         if s[0] >= t_last - 0.05 * period and s[1] in probe["valves"]],
            "stats": stats}


def main(argv):
    import argparse
    ap = argparse.ArgumentParser()
    ap.add_argument("net")
    ap.add_argument("probe")
    ap.add_argument("out")
    ap.add_argument("--method", default="BDF", choices=("BDF", "Radau", "LSODA"))
    ap.add_argument("--rtol", type=float, default=1e-6)
    ap.add_argument("--pscale", type=float, default=1.0,
                    help="absolute pressure tolerance = rtol x this [Pa] (ferrocirc's default "
                         "1 mPa at rel_tol 1e-6 corresponds to 1)")
    a = ap.parse_args(argv)
    t0 = time.perf_counter()
    m = netmodel.Model(a.net)
    probe = json.load(open(a.probe))
    ode = Ode(m, probe)
    t1 = time.perf_counter()
    r = integrate(ode, probe, a.method, a.rtol, a.pscale)
    t2 = time.perf_counter()
    r["build_s"], r["solve_s"] = t1 - t0, t2 - t1
    r["states"] = ode.nx + 2
    with open(a.out, "w") as f:
        json.dump(r, f)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
