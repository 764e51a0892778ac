#!/usr/bin/env python3
"""Golden cycle lists for tests/rainflow_reference.rs.

Counts a few seeded signals with the reference ASTM E1049-85 implementation
PyPI `rainflow` 3.2.0 (`pip install rainflow==3.2.0`) and writes, for each
signal NAME:

  tests/data/rainflow/NAME.signal.csv   one column `stress_mpa`
  tests/data/rainflow/NAME.cycles.csv   range,mean,count,i_start,i_end as
                                        yielded by rainflow.extract_cycles

Floats are written with repr(), which round-trips exactly, so the Rust side
reads back the very same doubles. Run from the crate root:

  python3 tests/tools/rainflow_golden.py
"""
import csv
import math
import os
import random
import sys

import rainflow

REFERENCE_VERSION = "3.2.0"
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "data", "rainflow")


def random_walk(rng, n):
    x, out = 0.0, []
    for _ in range(n):
        x += rng.gauss(0.0, 5.0)
        out.append(x)
    return out


def sine_noise(rng, n):
    return [
        80.0 * math.sin(2.0 * math.pi * i / 37.0) + 15.0 * rng.gauss(0.0, 1.0) + 20.0
        for i in range(n)
    ]


def plateaus(rng, n):
    # integer steps with many zeros: plateaus, repeated values and equal ranges
    x, out = 0, []
    for _ in range(n):
        x += rng.choice((-3, -1, 0, 0, 0, 1, 2))
        x = max(-40, min(40, x))
        out.append(float(x))
    # a plateau at each end as well
    return [out[0]] * 3 + out + [out[-1]] * 4


def amplitude_sweep(rng, n):
    # amplitude rising then falling: a long diverging-converging residue
    out = []
    for i in range(n):
        a = 200.0 * math.sin(math.pi * i / n)
        out.append(a * math.sin(2.0 * math.pi * i / 23.0) + rng.uniform(-2.0, 2.0))
    return out


def block_loading(rng, n):
    # blocks of constant-amplitude cycles at different means, quantised to 0.5 MPa
    out = []
    while len(out) < n:
        mean = rng.choice((-30.0, 0.0, 45.0))
        amp = rng.choice((10.0, 25.0, 60.0, 120.0))
        period = rng.choice((8, 12, 20))
        for i in range(period * rng.randint(2, 6)):
            v = mean + amp * math.sin(2.0 * math.pi * i / period)
            out.append(round(v * 2.0) / 2.0)
    return out[:n]


def signals():
    rng = random.Random(20240611)
    return {
        "random_walk": random_walk(rng, 20000),
        "sine_noise": sine_noise(rng, 10000),
        "plateaus": plateaus(rng, 10000),
        "amplitude_sweep": amplitude_sweep(rng, 6000),
        "block_loading": block_loading(rng, 12000),
        # ASTM E1049-85 rainflow example reversals (from memory)
        "astm_example": [-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0],
        "short_2": [1.5, -2.25],
        "short_3": [0.0, 5.0, 1.0],
        "short_4": [3.0, 3.0, -1.0, 4.0],
        "constant": [7.0] * 5,
    }


def main():
    if rainflow.__version__ != REFERENCE_VERSION:
        sys.exit(f"need rainflow {REFERENCE_VERSION}, found {rainflow.__version__}")
    os.makedirs(OUT, exist_ok=True)
    for name, xs in signals().items():
        with open(os.path.join(OUT, f"{name}.signal.csv"), "w", newline="") as f:
            w = csv.writer(f, lineterminator="\n")
            w.writerow(["stress_mpa"])
            for x in xs:
                w.writerow([repr(x)])
        cycles = list(rainflow.extract_cycles(xs))
        with open(os.path.join(OUT, f"{name}.cycles.csv"), "w", newline="") as f:
            w = csv.writer(f, lineterminator="\n")
            w.writerow(["range", "mean", "count", "i_start", "i_end"])
            for rng_, mean, count, i0, i1 in cycles:
                w.writerow([repr(float(rng_)), repr(float(mean)), repr(count), i0, i1])
        print(f"{name}: {len(xs)} samples, {len(cycles)} cycles")


if __name__ == "__main__":
    main()
