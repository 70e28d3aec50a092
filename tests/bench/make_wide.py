#!/usr/bin/env python3
"""Writes the benchmark's wide case: a synthetic table of 12 numeric columns in which a loop
and a flare live in two columns and six columns are unstructured noise of unit spread (the
shape of a record from an instrument with many channels, few of them carrying the signal).

What it is for: a table whose topology is known because it was put there (one loop, one
flare leaving it), large enough to measure how the cost of clustering grows with the row
count under the automatic settings. What it is not: a measurement of anything.

Columns (all numbers, 4 decimals):
- `signal_x`, `signal_y`: 85 % of the rows on a circle of radius 4 (angle uniform), 15 % on a
  flare that leaves the circle at angle 0 and runs outward to radius 10, its width growing
  from 0.2 to 1.2; both with Gaussian jitter of spread 0.25;
- `mixed_1` .. `mixed_4`: the signal seen through other channels, each a fixed linear
  mix of `signal_x` and `signal_y` plus Gaussian noise of spread 1 (so they carry the shape
  only faintly);
- `noise_1` .. `noise_6`: independent standard normal values (spread 1), no structure.

Python 3 standard library only, seeded, deterministic: the same arguments give the same
bytes.

    python3 tests/bench/make_wide.py --rows 1500000 --out /tmp/wide.csv
"""

import argparse
import math
import random

SEED = 16
MIX = [(0.8, 0.3), (-0.4, 0.9), (0.6, -0.6), (0.2, 0.7)]


def row(rng):
    if rng.random() < 0.85:
        a = rng.random() * 2 * math.pi
        x, y = 4 * math.cos(a), 4 * math.sin(a)
    else:
        t = rng.random()
        x = 4 + 6 * t
        y = (0.2 + 1.0 * t) * (rng.random() - 0.5)
    x += rng.gauss(0, 0.25)
    y += rng.gauss(0, 0.25)
    vals = [x, y]
    vals += [p * x + q * y + rng.gauss(0, 1.0) for p, q in MIX]
    vals += [rng.gauss(0, 1) for _ in range(6)]
    return ",".join(f"{v:.4f}" for v in vals)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=1_500_000)
    ap.add_argument("--out", required=True)
    a = ap.parse_args()
    rng = random.Random(SEED)
    names = ["signal_x", "signal_y"] + [f"mixed_{i}" for i in range(1, 5)] + [f"noise_{i}" for i in range(1, 7)]
    with open(a.out, "w", newline="\n") as f:
        f.write(",".join(names) + "\n")
        chunk = []
        for _ in range(a.rows):
            chunk.append(row(rng))
            if len(chunk) == 10000:
                f.write("\n".join(chunk) + "\n")
                chunk = []
        if chunk:
            f.write("\n".join(chunk) + "\n")


if __name__ == "__main__":
    main()
