#!/usr/bin/env python3
"""``increments_from_rates`` on 10⁷ samples of an IMU rate log (jittered 100 Hz tags, invented
signals) beside one memory pass over its inputs and outputs in numpy, in the same run: reading
the tags and both (N, 3) sample arrays and writing two fresh (N − 1, 3) arrays (goal: at most
2× that pass).

Usage: python benches/python/bench_rates.py [--samples 10000000] [--repeat 3]
"""

import argparse

import numpy as np
import rotaframe as rf
from benchutil import best


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--samples", type=int, default=10_000_000)
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    n = args.samples
    rng = np.random.default_rng(3)
    t = np.arange(n) / 100.0 + rng.uniform(-2e-4, 2e-4, n)
    w = rng.normal(0.0, 0.1, (n, 3))
    f = rng.normal(0.0, 1.0, (n, 3)) + [0.0, 0.0, -9.81]

    def memory_pass():
        t.sum()
        return w[1:] * 1.0, f[1:] * 1.0

    ours = best(lambda: rf.increments_from_rates(t, w, f), args.repeat)
    baseline = best(memory_pass, args.repeat)
    print(f"increments_from_rates on {n:.0e} samples: {ours:.3f} s; one memory pass over inputs and outputs "
          f"{baseline:.3f} s: {ours / baseline:.2f}x")


if __name__ == "__main__":
    main()
