#!/usr/bin/env python3
"""Strapdown mechanization from Python: ``rotaframe.Strapdown.run`` (the batch runner) against
a per-step numpy loop doing the same algorithm (``numpy_strapdown.py``, checked by the tests to
agree with the library) and against ``Strapdown.step`` called once per sample from Python.

Usage: python benches/python/bench_strapdown.py [--steps 20000] [--repeat 5]

All three run in this process on the same increments (a dynamic sequence at 100 Hz); each
figure is the best of --repeat runs, in microseconds per step, with the ratios to the batch
runner. The goal is a batch runner at least 100 times faster than the numpy loop.
"""

import argparse
import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402

import numpy_strapdown  # noqa: E402
import rotaframe as rf  # noqa: E402
from benchutil import best  # noqa: E402

START = (0.785, 0.2, 1500.0, np.array([120.0, -35.0, 0.0]), np.array([1.0, 0.0, 0.0, 0.0]))


def increments(n):
    rng = np.random.default_rng(7)
    dtheta = rng.uniform(-1e-3, 1e-3, (n, 3))
    dv = rng.uniform(-0.02, 0.02, (n, 3)) + [0.0, 0.0, -0.098]
    return dtheta, dv, np.full(n, 0.01)


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--steps", type=int, default=20_000, help="steps for the numpy and per-step loops")
    parser.add_argument("--batch-steps", type=int, default=1_000_000, help="steps for the batch runner")
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    lat, lon, h, v, q = START
    small = increments(args.steps)
    large = increments(args.batch_steps)

    def batch():
        rf.Strapdown(lat, lon, h, v, q).run(*large)

    def numpy_loop():
        numpy_strapdown.run(lat, lon, h, v, q, *small)

    def per_step():
        ins = rf.Strapdown(lat, lon, h, v, q)
        dtheta, dv, dt = small
        for k in range(len(dt)):
            ins.step(dtheta[k], dv[k], dt[k])

    t_batch = best(batch, args.repeat) / args.batch_steps * 1e6
    t_numpy = best(numpy_loop, max(1, args.repeat // 2)) / args.steps * 1e6
    t_step = best(per_step, max(1, args.repeat // 2)) / args.steps * 1e6
    print(f"{'contender':38s} {'us/step':>10s} {'x batch':>9s}")
    print(f"{'rotaframe Strapdown.run (batch)':38s} {t_batch:10.3f} {1.0:9.1f}")
    print(f"{'rotaframe Strapdown.step per sample':38s} {t_step:10.3f} {t_step / t_batch:9.1f}")
    print(f"{'numpy per-step loop, same algorithm':38s} {t_numpy:10.3f} {t_numpy / t_batch:9.1f}")
    print(f"goal: batch >= 100x faster than the numpy loop: {'met' if t_numpy / t_batch >= 100 else 'NOT met'} ({t_numpy / t_batch:.0f}x)")


if __name__ == "__main__":
    main()
