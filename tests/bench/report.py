#!/usr/bin/python3
"""Markdown tables from suite.py's measurements (also: report.py RESULTS.json)."""
import json
import math
import statistics
import sys

TOOLS = ("ferrocirc", "ngspice", "scipy")


def fit(points):
    pts = [(math.log(n), math.log(w)) for n, w in points if w > 0.05]
    if len(pts) < 2:
        return None
    mx = statistics.fmean(p[0] for p in pts)
    my = statistics.fmean(p[1] for p in pts)
    sxx = sum((p[0] - mx) ** 2 for p in pts)
    return sum((p[0] - mx) * (p[1] - my) for p in pts) / sxx


def fmt_tol(t):
    """A tool's setting: rel_tol / rtol, or ngspice's (reltol, tmax as a fraction of the period)."""
    return "%g" % t if isinstance(t, (int, float)) else "%g, tmax %gP" % tuple(t)


def fmt_t(x):
    return "-" if x is None else ("%.3g" % x)


def write(res, out):
    out.write("load average at start %s, at end %s\n" % (
        " ".join("%.2f" % x for x in res["load_start"]),
        " ".join("%.2f" % x for x in res["load_end"])))
    for cname, rows in res["circuits"].items():
        out.write("\n### circuit (%s)\n\n" % cname)
        out.write("Tolerance ladders (one run each; err = largest relative error of the probes "
                  "against the reference):\n\n")
        out.write("| size | elements | tool | tol | wall s | RSS MB | err mean | err peak | "
                  "err switch | err volume | err |\n|---:|---:|---|---:|---:|---:|---:|---:|---:|"
                  "---:|---:|\n")
        for r in rows:
            for tool in TOOLS:
                for x in r.get("ladder", {}).get(tool, []):
                    if "err" not in x:
                        out.write("| %d | %d | %s | %s | failed: %s |\n" % (
                            r["n"], r["elements"], tool, fmt_tol(x["tol"]),
                            x["failed"].replace("|", "/").replace("\n", " ")[:120]))
                        continue
                    e = x["err"]
                    out.write("| %d | %d | %s | %s | %.3f | %.1f | %.1e | %.1e | %s | %s | "
                              "%.1e |\n" % (
                                  r["n"], r["elements"], tool, fmt_tol(x["tol"]), x["wall"],
                                  x["rss_kb"] / 1024, e["mean"], e["peak"],
                                  "%.1e" % e["switch"] if "switch" in e else "-",
                                  "%.1e" % e["volume"] if "volume" in e else "-", e["max"]))
        for r in rows:
            if "validate" in r:
                v = r["validate"]
                out.write("\nreference check at size %d: ferrocirc rel_tol 1e-10 vs SciPy Radau "
                          "rtol 1e-11: %s\n" % (r["n"], v.get("failed") or ", ".join(
                              "%s %.1e" % kv for kv in v["err"].items())))
            if "warning" in r:
                out.write("\nsize %d: %s\n" % (r["n"], r["warning"]))
        for target in ("0.001", "0.0001"):
            out.write("\nAt matched error <= %s (median of the repeats shown):\n\n" % target)
            out.write("| size | elements | ferrocirc s (tol, runs) | MB | KB/elem | steps | rhs | "
                      "Jac setups | KLU facts | events | ngspice s (reltol) | MB | SciPy s "
                      "(rtol) | MB | ngspice/fc | SciPy/fc |\n")
            out.write("|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|"
                      "---:|---:|\n")
            for r in rows:
                m = r.get("matched", {}).get(target)
                if m is None:
                    if "fc_only" in r and target == "0.0001":
                        f = r["fc_only"]
                        s = f["run"]["solver"]
                        out.write("| %d | %d | %.3f (%g, %d) | %.1f | %.2f | %d | %d | %d | %d | "
                                  "%d | not run | | not run | | | |\n" % (
                                      r["n"], r["elements"], f["run"]["wall"], f["tol"],
                                      f["repeats"], f["run"]["rss_kb"] / 1024,
                                      f["run"]["rss_kb"] * 1.024 / r["elements"], s["steps"],
                                      s["rhs_evals"], s["prec_setups"],
                                      s.get("factorizations", -1), s["events"]))
                    continue
                f = m.get("ferrocirc")
                cells = []
                if f:
                    s = f["stats"]
                    cells += ["%.3f (%g, %d)" % (f["wall"], f["tol"], f["repeats"]),
                              "%.1f" % (f["rss_kb"] / 1024),
                              "%.2f" % (f["rss_kb"] * 1.024 / r["elements"]),
                              str(s["steps"]), str(s["rhs_evals"]), str(s["prec_setups"]),
                              str(s.get("factorizations", "-")), str(s["events"])]
                else:
                    cells += ["not reached"] + [""] * 7
                for tool in ("ngspice", "scipy"):
                    if tool not in m:
                        cells += ["not run", ""]
                    elif m[tool] is None:
                        cells += ["not reached", ""]
                    else:
                        cells += ["%.3f (%s; %d)" % (m[tool]["wall"], fmt_tol(m[tool]["tol"]),
                                                     m[tool]["repeats"]),
                                  "%.1f" % (m[tool]["rss_kb"] / 1024)]
                for tool in ("ngspice", "scipy"):
                    cells.append("%.1f" % (m[tool]["wall"] / f["wall"])
                                 if f and m.get(tool) else "-")
                out.write("| %d | %d | %s |\n" % (r["n"], r["elements"], " | ".join(cells)))
        pts = []
        for r in rows:
            if "fc_only" in r:
                pts.append((r["n"], r["fc_only"]["run"]["wall"], r["fc_only"]["tol"]))
            else:
                m = r.get("matched", {}).get("0.0001", {}).get("ferrocirc")
                if m:
                    pts.append((r["n"], m["wall"], m["tol"]))
        if len(pts) >= 2:
            p = fit([(n, w) for n, w, _ in pts])
            out.write("\nferrocirc cost exponent (wall ~ size^p, least squares over sizes with "
                      "wall > 0.05 s, at the tolerances shown): p = %s\n"
                      % ("%.3f" % p if p is not None else "-"))
            for tool in ("ngspice", "scipy"):
                tp = [(r["n"], r["matched"]["0.0001"][tool]["wall"]) for r in rows
                      if r.get("matched", {}).get("0.0001", {}).get(tool)]
                q = fit(tp) if len(tp) >= 2 else None
                if q is not None:
                    out.write("%s cost exponent over its sizes: p = %.3f\n" % (tool, q))
    v = res.get("valve")
    if v:
        out.write("\n### circuit (d): valve model alone\n\n| run | wall s | RSS MB | runs |\n"
                  "|---|---:|---:|---:|\n")
        out.write("| one design (cracking, reseat, blowout) | %.3f | %.1f | %d |\n" % (
            v["one"]["wall"], v["one"]["rss_kb"] / 1024, v["one"]["repeats"]))
        out.write("| 100-point gap sweep (%d rows) | %.3f | %.1f | %d |\n" % (
            v["sweep"]["rows"], v["sweep"]["wall"], v["sweep"]["rss_kb"] / 1024,
            v["sweep"]["repeats"]))


if __name__ == "__main__":
    write(json.load(open(sys.argv[1])), sys.stdout)
