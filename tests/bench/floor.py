"""Where the time of a small run goes: the fixed costs every ferrocirc run pays, timed the way
suite.py times a tool (a process under /usr/bin/time, started from Python), and, with
--callgrind, the instructions per integration step that are CVODES's own. Not run by CI.

Usage: /usr/bin/python3 tests/bench/floor.py FERROCIRC [--n 16] [--tol 1e-3] [--repeat 21]
                                             [--spice RELTOL,TMAX] [--callgrind]
  --spice   also time ngspice on the same network at this setting of suite.py's ladder (TMAX
            as a fraction of the period), interleaved with the rows below; a fifth of its
            median is the budget of issue 7's target (5x), and the script prints what is left
            of it for the integration once ferrocirc's fixed costs are paid, per step

Rows (medians of --repeat runs, interleaved so that a drift of the machine's speed spreads
over all of them):
  /bin/true            the harness and a process start: paid by every tool alike
  empty + libraries    an empty C program that needs ferrocirc's own shared libraries (its
                       DT_NEEDED list): the dynamic loading alone
  --version            ferrocirc started and stopped
  check                the network read, checked and listed
  run                  as suite.py runs it (summary and events written)
"""
import argparse
import json
import os
import re
import shutil
import statistics
import subprocess
import sys
import tempfile

import suite


def needed_libs(binary):
    out = subprocess.run(["readelf", "-d", binary], check=True, capture_output=True,
                         text=True).stdout
    return re.findall(r"\(NEEDED\)\s+Shared library: \[(.+?)\]", out)


def empty_with_libs(binary, wd):
    src, exe = os.path.join(wd, "empty.c"), os.path.join(wd, "empty")
    with open(src, "w") as f:
        f.write("int main(void) { return 0; }\n")
    libs = ["-l:" + x for x in needed_libs(binary) if not x.startswith("libc.so")]
    subprocess.run(["cc", "-O2", src, "-o", exe, "-Wl,--no-as-needed"] + libs, check=True)
    return exe


def callgrind_split(cmd, wd):
    """Instructions of the whole run, split into CVODES (every libsundials object), the vector
    kernels CVODES calls (ours, src/nvec_fast.c), the C library and libm, and the rest
    (ferrocirc's own code, cJSON, KLU, AMD, the loader)."""
    out = os.path.join(wd, "cg.out")
    # GLIBC_TUNABLES set, even empty, keeps ferrocirc from re-executing itself with glibc's
    # huge-page tunable (src/main.c, files of 1 MiB or more), which valgrind cannot follow
    env = dict(os.environ, GLIBC_TUNABLES=os.environ.get("GLIBC_TUNABLES", ""))
    subprocess.run(["valgrind", "--tool=callgrind", "--callgrind-out-file=" + out] + cmd,
                   check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, env=env)
    ann = subprocess.run(["callgrind_annotate", "--threshold=100", "--auto=no", out], check=True,
                         capture_output=True, text=True).stdout
    total, parts = 0, {"cvodes": 0, "kernels": 0, "libc+libm": 0}
    for line in ann.splitlines():
        m = re.match(r"\s*([\d,]+)\s+\([\s\d.]+%\)\s+(.*)", line)
        if not m:
            continue
        n, where = int(m.group(1).replace(",", "")), m.group(2)
        if "PROGRAM TOTALS" in where:
            total = n
        elif "libsundials" in where:
            parts["cvodes"] += n
        elif "nvec_fast.c:" in where:
            parts["kernels"] += n
        elif re.search(r"/lib(c|m)\.so", where):
            parts["libc+libm"] += n
    parts["rest"] = total - sum(parts.values())
    return total, parts


def main(argv):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("binary")
    ap.add_argument("--n", type=int, default=16)
    ap.add_argument("--tol", type=float, default=1e-3)
    ap.add_argument("--repeat", type=int, default=21)
    ap.add_argument("--spice")
    ap.add_argument("--callgrind", action="store_true")
    a = ap.parse_args(argv)
    binary = os.path.abspath(a.binary)
    if not os.access(binary, os.X_OK):
        sys.stderr.write("floor.py: %s: no such executable (build first)\n" % a.binary)
        return 2
    if a.callgrind and not shutil.which("valgrind"):
        sys.stderr.write("floor.py: --callgrind needs valgrind (package valgrind)\n")
        return 2
    with tempfile.TemporaryDirectory(prefix="fc-floor-") as wd:
        net, probe = os.path.join(wd, "net.json"), os.path.join(wd, "probe.json")
        subprocess.run(suite.CIRCUITS["b"]["gen"](a.n, suite.CIRCUITS["b"]["beats"], net, probe),
                       check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        # the file suite.run_fc writes for this setting, run once to write it
        r0 = suite.run_fc(binary, net, probe, a.tol, wd)
        fnet = os.path.join(wd, "fc-net.json")
        summ, ev = os.path.join(wd, "fc-s.json"), os.path.join(wd, "fc-e.csv")
        rows = [("/bin/true", ["/bin/true"]),
                ("empty + libraries", [empty_with_libs(binary, wd)]),
                ("ferrocirc --version", [binary, "--version"]),
                ("ferrocirc check", [binary, "check", fnet]),
                ("ferrocirc run", [binary, "run", fnet, "--quiet", "--summary", summ,
                                   "--events", ev])]
        walls = {name: [] for name, _ in rows}
        integ, spice = [], []
        setting = tuple(float(x) for x in a.spice.split(",")) if a.spice else None
        for _ in range(a.repeat):
            for name, cmd in rows:
                walls[name].append(suite.timed(cmd)[0])
            integ.append(json.load(open(summ))["solver"]["wall_seconds"])
            if setting:
                spice.append(suite.run_spice(net, probe, setting, wd)["wall"])
        med = {k: statistics.median(v) for k, v in walls.items()}
        steps = r0["solver"]["steps"]
        print("(b) N = %d, 20 beats, rel_tol %g: %d steps; medians of %d, interleaved\n"
              % (a.n, a.tol, steps, a.repeat))
        print("| row | ms | above the row before |")
        print("|---|---:|---:|")
        prev = None
        for name, _ in rows:
            print("| %s | %.2f | %s |" % (name, 1e3 * med[name],
                                         "" if prev is None else "%.2f" % (1e3 * (med[name] - prev))))
            prev = med[name]
        mi = statistics.median(integ)
        print("| integration (the summary's solver.wall_seconds) | %.2f | %.2f us a step |"
              % (1e3 * mi, 1e6 * mi / steps))
        fixed = med["ferrocirc run"] - mi
        print("\nfixed costs of a run (run less its integration): %.2f ms" % (1e3 * fixed))
        if spice:
            budget = statistics.median(spice) / 5
            left = budget - fixed
            print("ngspice (reltol %g, tmax %g P), same harness: %.2f ms; a fifth: %.2f ms; "
                  "ferrocirc now %.1fx" % (setting[0], setting[1], 1e3 * 5 * budget,
                                           1e3 * budget, 5 * budget / med["ferrocirc run"]))
            print("left for the integration under the fifth: %.2f ms, %.3f us a step"
                  % (1e3 * left, 1e6 * left / steps))
        if a.callgrind:
            total, parts = callgrind_split(rows[-1][1], wd)
            print("\ncallgrind, the run: %.1f M instructions, %.0f a step" % (total / 1e6, total / steps))
            for k, v in parts.items():
                print("  %-10s %6.1f M  %6.0f a step" % (k, v / 1e6, v / steps))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
