#!/usr/bin/env python3
"""Whole-process speed of `seamlife count` against the reference pipeline.

Writes a seeded random-walk CSV (header `stress_mpa`, 3 decimals, --rows rows,
2e6 unless told), then times, each as a child process from start to exit:

  reference: python3 -c "numpy.loadtxt(FILE, skiprows=1); rainflow.count_cycles(x)"
             (pip install rainflow==3.2.0 numpy)
  seamlife:  target/release/seamlife count FILE --column stress_mpa -o OUT.csv -q

best of --runs (3) each, and prints both wall times and their ratio. Build the
release binary first (cargo build --release). Run from the crate root:

  python3 tests/tools/whole_process_ratio.py [--rows 2e6] [--runs 3]
"""
import argparse
import os
import platform
import resource
import subprocess
import sys
import tempfile
import time

import numpy as np
import rainflow

REFERENCE_VERSION = "3.2.0"

REFERENCE = (
    "import sys, numpy, rainflow\n"
    "x = numpy.loadtxt(sys.argv[1], skiprows=1)\n"
    "c = rainflow.count_cycles(x)\n"
    "print(len(c))\n"
)


def best(cmd, runs):
    """Best wall time and best CPU time (user + system) of the child, seconds."""
    walls, cpus = [], []
    for _ in range(runs):
        r0 = resource.getrusage(resource.RUSAGE_CHILDREN)
        t = time.perf_counter()
        subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        walls.append(time.perf_counter() - t)
        r1 = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpus.append((r1.ru_utime - r0.ru_utime) + (r1.ru_stime - r0.ru_stime))
    return min(walls), min(cpus)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=float, default=2e6)
    ap.add_argument("--runs", type=int, default=3)
    ap.add_argument("--seed", type=int, default=20261202)
    args = ap.parse_args()
    if rainflow.__version__ != REFERENCE_VERSION:
        sys.exit(f"need rainflow {REFERENCE_VERSION}, found {rainflow.__version__}")
    exe = os.path.join("target", "release", "seamlife")
    if not os.path.exists(exe):
        sys.exit("build the release binary first: cargo build --release")
    n = int(args.rows)
    rng = np.random.default_rng(args.seed)
    walk = np.cumsum(rng.normal(0.0, 1.0, n))
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "walk.csv")
        np.savetxt(path, walk, fmt="%.3f", header="stress_mpa", comments="")
        out = os.path.join(d, "spectrum.csv")
        t_ref = best([sys.executable, "-c", REFERENCE, path], args.runs)
        t_sl = best([exe, "count", path, "--column", "stress_mpa", "-o", out, "-q"],
                    args.runs)
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()}, "
          f"numpy {np.__version__}, rainflow {rainflow.__version__}")
    (t_ref, c_ref), (t_sl, c_sl) = t_ref, t_sl
    print(f"{n} rows: reference (numpy.loadtxt + rainflow.count_cycles) {t_ref:.3f} s wall, "
          f"{c_ref:.3f} s CPU; seamlife count {t_sl:.3f} s wall, {c_sl:.3f} s CPU "
          f"(best of {args.runs}, whole process)")
    print(f"ratio {t_ref / t_sl:.1f}x wall, {c_ref / max(c_sl, 1e-3):.1f}x CPU (goal >= 30x)")
    print(f"RESULT reference_s={t_ref:.4f}")
    print(f"RESULT seamlife_s={t_sl:.4f}")
    print(f"RESULT ratio={t_ref / t_sl:.2f}")
    print(f"RESULT ratio_cpu={c_ref / max(c_sl, 1e-3):.2f}")


if __name__ == "__main__":
    main()
