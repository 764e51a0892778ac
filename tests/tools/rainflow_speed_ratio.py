#!/usr/bin/env python3
"""Speed of the Rust rainflow counter against PyPI rainflow 3.2.0, same data.

Writes a seeded random walk as raw little-endian f64, times the reference
(`pip install rainflow==3.2.0 numpy`) counting it with extract_cycles, runs
`cargo bench --bench rainflow` on the same file (SEAMLIFE_BENCH_INPUT), and
prints both throughputs and their ratio. Run from the crate root:

  python3 tests/tools/rainflow_speed_ratio.py [--samples 1e8] [--python-samples N]

By default the reference counts the whole series once (about half a minute
per 1e8 samples on a recent core and a few GB of memory for the Python list);
--python-samples times it on a prefix instead, and the figures are then
rates (samples per second) measured on different lengths, as printed.
"""
import argparse
import os
import platform
import re
import subprocess
import sys
import tempfile
import time

import numpy as np
import rainflow

REFERENCE_VERSION = "3.2.0"


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--samples", type=float, default=1e8)
    ap.add_argument("--python-samples", type=float, default=None,
                    help="time the reference on this prefix only")
    ap.add_argument("--seed", type=int, default=20240611)
    ap.add_argument("--keep", action="store_true", help="keep the raw file")
    args = ap.parse_args()
    if rainflow.__version__ != REFERENCE_VERSION:
        sys.exit(f"need rainflow {REFERENCE_VERSION}, found {rainflow.__version__}")

    n = int(args.samples)
    rng = np.random.default_rng(args.seed)
    walk = np.cumsum(rng.uniform(-1.0, 1.0, n))
    fd, path = tempfile.mkstemp(prefix="seamlife-walk-", suffix=".f64")
    os.close(fd)
    walk.astype("<f8").tofile(path)
    try:
        m = n if args.python_samples is None else min(n, int(args.python_samples))
        series = walk[:m].tolist()  # a list of floats: the reference's fastest input
        del walk
        t0 = time.perf_counter()
        cycles = 0
        for _ in rainflow.extract_cycles(series):
            cycles += 1
        t_py = time.perf_counter() - t0
        del series
        py_rate = m / t_py
        print(f"PyPI rainflow {rainflow.__version__} extract_cycles: {m} samples in {t_py:.2f} s "
              f"= {py_rate / 1e6:.2f} M samples/s ({cycles} cycles; one run, Python "
              f"{platform.python_version()})")

        env = dict(os.environ, SEAMLIFE_BENCH_INPUT=path)
        out = subprocess.run(["cargo", "bench", "--bench", "rainflow"], env=env,
                             capture_output=True, text=True, check=True).stdout
        results = dict(re.findall(r"^RESULT (\w+)=([0-9.e+]+)$", out, re.M))
        for line in out.splitlines():
            if not line.startswith("RESULT"):
                print("  " + line)
        print()
        print(f"machine: {os.cpu_count()} cores, {platform.processor() or platform.machine()}")
        for key, label in (("count_only_samples_per_s", "count only"),
                           ("count_damage_samples_per_s", "count + damage"),
                           ("count_binning_samples_per_s", "count + binning"),
                           ("parallel_count_only_samples_per_s", "count only, all cores"),
                           ("parallel_count_binning_samples_per_s", "count + binning, all cores")):
            if key in results:
                rate = float(results[key])
                print(f"{label:<26} Rust {rate / 1e6:8.1f} M samples/s   "
                      f"reference {py_rate / 1e6:6.2f} M samples/s   ratio {rate / py_rate:7.1f}x")
    finally:
        if args.keep:
            print(f"raw series kept in {path}")
        else:
            os.remove(path)


if __name__ == "__main__":
    main()
