#!/usr/bin/python3
"""ferrocirc benchmark driver (called by run_bench.sh; standard library only).

For each size N: generate the network with gen_tree.py, time `ferrocirc run NET --quiet
--summary S.json` (no -o, so no CSV is written and the solver is what is timed) `repeat` times,
and report the median wall time, the peak resident set size of that run (GNU time's %M), and
CVODE's counters from the summary's "solver" object. Then one more run with `-o DIR/out.csv`
measures what writing the CSV adds.

The fitted cost exponent is the least-squares slope of log(wall) against log(N) over the sizes
whose median wall time exceeds 0.05 s (below that, process start-up and unit-database loading,
not the network, set the time).

Circuits are a table (CASES) so that further ones (issue 7: valve loop, grid, peers) are added
as rows, not as new scripts.
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

HERE = os.path.dirname(os.path.abspath(__file__))
TIME = "/usr/bin/time"  # GNU time (Debian package "time")


def gen_tree(n, cycles, path, extra):
    """Write the distribution-tree network; returns (nodes, elements)."""
    out = subprocess.run([sys.executable, os.path.join(HERE, "gen_tree.py"), str(n), str(cycles),
                          path] + extra, check=True, stdout=subprocess.PIPE,
                         stderr=subprocess.DEVNULL, text=True).stdout.split()
    return int(out[0]), int(out[1])


CASES = {
    # name: (generator(n, cycles, path, extra) -> (nodes, elements), description)
    "tree": (gen_tree, "binary distribution tree from one pulsatile pump to N culture chambers"),
}


def timed(cmd):
    """Run cmd under /usr/bin/time; return (wall s, peak RSS KiB, user s, sys s).

    Peak RSS comes from /usr/bin/time (%M, KiB): a child forked from this Python process would
    carry Python's own high-water mark across exec into ru_maxrss. Wall time is measured here
    with a monotonic clock (time's %e has only 10 ms resolution). Raises on a non-zero exit."""
    with tempfile.NamedTemporaryFile("r", prefix="ferrocirc-time-") as tf:
        t0 = time.perf_counter()
        proc = subprocess.run([TIME, "-f", "%M %U %S", "-o", tf.name] + cmd,
                              stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
        wall = time.perf_counter() - t0
        if proc.returncode != 0:
            raise RuntimeError("%s exited with %d: %s" % (" ".join(cmd), proc.returncode,
                                                           proc.stderr.decode(errors="replace")
                                                           .strip()))
        rss, ut, st = tf.read().split()[-3:]
    return wall, int(rss), float(ut), float(st)


def measure(binary, case, n, cycles, repeat, csv, workdir, extra):
    gen, _ = CASES[case]
    net = os.path.join(workdir, "%s-%d.json" % (case, n))
    nodes, elems = gen(n, cycles, net, extra)
    runs = []
    for r in range(repeat):
        summ = os.path.join(workdir, "%s-%d-summary-%d.json" % (case, n, r))
        wall, rss, ut, st = timed([binary, "run", net, "--quiet", "--summary", summ])
        with open(summ) as f:
            solver = json.load(f)["solver"]
        os.unlink(summ)
        runs.append({"wall": wall, "rss_kb": rss, "user": ut, "sys": st, "solver": solver})
    runs.sort(key=lambda x: x["wall"])
    med = runs[len(runs) // 2]
    row = {"case": case, "n": n, "nodes": nodes, "elements": elems, "cycles": cycles,
           "wall": med["wall"], "walls": [x["wall"] for x in runs], "rss_kb": med["rss_kb"],
           "solver": med["solver"], "csv": None}
    if csv:
        out = os.path.join(workdir, "%s-%d.csv" % (case, n))
        wall, rss, _, _ = timed([binary, "run", net, "--quiet", "-o", out])
        row["csv"] = {"wall": wall, "rss_kb": rss, "bytes": os.path.getsize(out)}
        os.unlink(out)
    os.unlink(net)
    return row


def fit_exponent(rows, floor=0.05):
    pts = [(math.log(r["n"]), math.log(r["wall"])) for r in rows if r["wall"] > floor]
    if len(pts) < 2:
        return None, len(pts)
    mx = statistics.fmean(p[0] for p in pts)
    my = statistics.fmean(p[1] for p in pts)
    sxx = sum((p[0] - mx) ** 2 for p in pts)
    sxy = sum((p[0] - mx) * (p[1] - my) for p in pts)
    return sxy / sxx, len(pts)


def print_table(rows, out):
    hdr = ("N", "nodes", "elements", "wall s", "s/cycle", "RSS MB", "KB/elem", "steps",
           "rhs evals", "prec setups", "lin iters", "ms/step")
    fmt = "| %s |" % " | ".join(["%s"] * len(hdr))
    out.write(fmt % hdr + "\n")
    out.write("|%s|\n" % "|".join("---:" for _ in hdr))
    for r in rows:
        s = r["solver"]
        out.write(fmt % (r["n"], r["nodes"], r["elements"], "%.3f" % r["wall"],
                         "%.4f" % (r["wall"] / r["cycles"]), "%.1f" % (r["rss_kb"] / 1024.0),
                         "%.2f" % (r["rss_kb"] / r["elements"]), s["steps"], s["rhs_evals"],
                         s["prec_setups"], s["lin_iters"],
                         "%.3f" % (1e3 * r["wall"] / max(s["steps"], 1))) + "\n")


def print_csv_table(rows, out):
    rows = [r for r in rows if r["csv"]]
    if not rows:
        return
    out.write("\nCSV output cost (one run with -o into a temporary directory):\n\n")
    out.write("| N | CSV MB | wall with CSV s | wall without s | CSV adds s | MB/s | RSS MB |\n")
    out.write("|---:|---:|---:|---:|---:|---:|---:|\n")
    for r in rows:
        c = r["csv"]
        add = c["wall"] - r["wall"]
        mb = c["bytes"] / 1e6
        out.write("| %d | %.1f | %.3f | %.3f | %.3f | %s | %.1f |\n"
                  % (r["n"], mb, c["wall"], r["wall"], add,
                     "%.0f" % (mb / add) if add > 0.01 else "-", c["rss_kb"] / 1024.0))


def main(argv):
    ap = argparse.ArgumentParser(description="time ferrocirc on generated networks")
    ap.add_argument("--binary", default="build/ferrocirc")
    ap.add_argument("--case", default="tree", choices=sorted(CASES))
    ap.add_argument("--sizes", default="10,100,1000,10000")
    ap.add_argument("--cycles", type=float, default=20)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--csv-max", type=int, default=10000,
                    help="time a CSV-writing run for sizes up to this N (0: none)")
    ap.add_argument("--json", help="also write the measured rows to this file")
    ap.add_argument("--gen-arg", action="append", default=[],
                    help="extra argument passed to the generator (repeatable)")
    a = ap.parse_args(argv)
    binary = os.path.abspath(a.binary)
    if not os.access(binary, os.X_OK):
        sys.stderr.write("bench.py: %s: not an executable; build ferrocirc first or pass its "
                         "path\n" % a.binary)
        return 2
    cycles = int(a.cycles) if a.cycles == int(a.cycles) else a.cycles
    sizes = [int(s) for s in a.sizes.split(",") if s]
    rows, failed = [], []
    with tempfile.TemporaryDirectory(prefix="ferrocirc-bench-") as wd:
        for n in sizes:
            sys.stderr.write("bench.py: %s N=%d ...\n" % (a.case, n))
            sys.stderr.flush()
            try:
                rows.append(measure(binary, a.case, n, cycles, a.repeat, n <= a.csv_max, wd,
                                    a.gen_arg))
            except (RuntimeError, subprocess.CalledProcessError) as exc:
                failed.append((n, str(exc)))
    out = sys.stdout
    out.write("case %s (%s), %s pump cycles of 1 s, median of %d runs, no CSV\n\n"
              % (a.case, CASES[a.case][1], cycles, a.repeat))
    print_table(rows, out)
    for n, why in failed:
        out.write("| %d | failed: %s |\n" % (n, why.replace("|", "/")))
    p, k = fit_exponent(rows)
    if p is None:
        out.write("\nfitted cost exponent: too few sizes above 0.05 s (%d)\n" % k)
    else:
        out.write("\nfitted cost exponent (wall ~ N^p, least squares over the %d sizes with "
                  "wall > 0.05 s): p = %.3f; target p <= 1.1: %s\n"
                  % (k, p, "met" if p <= 1.1 else "MISSED"))
    for r0, r1 in zip(rows, rows[1:]):
        out.write("  local exponent N=%d..%d: wall %.3f, per step %.3f\n" % (
            r0["n"], r1["n"], math.log(r1["wall"] / r0["wall"]) / math.log(r1["n"] / r0["n"]),
            math.log((r1["wall"] / r1["solver"]["steps"]) / (r0["wall"] / r0["solver"]["steps"]))
            / math.log(r1["n"] / r0["n"])))
    print_csv_table(rows, out)
    if a.json:
        with open(a.json, "w") as f:
            json.dump({"rows": rows, "exponent": p, "failed": failed}, f, indent=1)
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
