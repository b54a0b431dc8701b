#!/usr/bin/env python3
"""Scale benchmarks, each ratio measured in the same run: threads on this machine and the fleet
campaign on a Dask LocalCluster of 1 and 2 worker processes.

Usage: python benches/python/bench_scale.py [--runs 16] [--steps 360000] [--vehicles 8] [--minutes 10]

1. `rf.run_strapdowns` over many independent runs (each `--steps` 100 Hz increments) with
   threads=1 and threads=2, and the same runs one `Strapdown.run` call at a time;
2. `ecef_to_geodetic` at N = 10⁶ with threads=1 and 2 (preallocated outputs);
3. examples/python/fleet_campaign.py: serial in this process, then on a LocalCluster of 1
   and of 2 worker processes (cluster start-up not timed; a first, smaller campaign warms the
   workers' imports). One timed call each: Dask returns a repeated graph's results from memory.
Other times are the best of --repeat runs.
"""

import argparse
import importlib.util
import os
import pathlib
import sys
import time

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402

import rotaframe as rf  # noqa: E402

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent))
from benchutil import best  # noqa: E402

EXAMPLE = pathlib.Path(__file__).resolve().parents[2] / "examples" / "python" / "fleet_campaign.py"


def fleet(runs, steps):
    lat = np.linspace(-0.9, 1.1, runs)
    dtheta = np.empty((runs, steps, 3))
    dv = np.empty((runs, steps, 3))
    for r in range(runs):
        dtheta[r] = rf.earth_rate_ned(lat[r]) * 0.01 + 1e-7 * r
        dv[r] = np.array([1e-3, -2e-3, -rf.normal_gravity(lat[r], 100.0)]) * 0.01
    def steppers():
        return [rf.Strapdown(la, 0.2, 100.0, [0.0, 0.0, 0.0], [1.0, 0.0, 0.0, 0.0]) for la in lat]
    return steppers, dtheta, dv


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--runs", type=int, default=16)
    ap.add_argument("--steps", type=int, default=360_000)
    ap.add_argument("--vehicles", type=int, default=8)
    ap.add_argument("--minutes", type=float, default=10.0)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()

    steppers, dtheta, dv = fleet(args.runs, args.steps)
    one_by_one = best(lambda: [s.run(dtheta[r], dv[r], 0.01) for r, s in enumerate(steppers())], args.repeat)
    t1 = best(lambda: rf.run_strapdowns(steppers(), dtheta, dv, 0.01, threads=1), args.repeat)
    t2 = best(lambda: rf.run_strapdowns(steppers(), dtheta, dv, 0.01, threads=2), args.repeat)
    total = args.runs * args.steps
    print(f"strapdown, {args.runs} runs × {args.steps} steps: Strapdown.run one by one {one_by_one:.3f} s "
          f"({one_by_one / total * 1e9:.0f} ns/step), run_strapdowns threads=1 {t1:.3f} s, threads=2 {t2:.3f} s: "
          f"threads speed-up {t1 / t2:.2f}x")

    n = 1_000_000
    rng = np.random.default_rng(3)
    xyz = rf.geodetic_to_ecef(rng.uniform(-1.5, 1.5, n), rng.uniform(-3, 3, n), rng.uniform(-100, 1e4, n))
    outs = (np.empty(n), np.empty(n), np.empty(n))
    g1 = best(lambda: rf.ecef_to_geodetic(xyz, out=outs, threads=1), 7)
    g2 = best(lambda: rf.ecef_to_geodetic(xyz, out=outs, threads=2), 7)
    print(f"ecef_to_geodetic N=1e6 out=: threads=1 {g1 / n * 1e9:.1f} ns/sample, threads=2 {g2 / n * 1e9:.1f}: speed-up {g1 / g2:.2f}x")

    spec = importlib.util.spec_from_file_location("fleet_campaign", EXAMPLE)
    example = importlib.util.module_from_spec(spec)
    sys.modules["fleet_campaign"] = example
    spec.loader.exec_module(example)
    import cloudpickle
    from distributed import Client, LocalCluster

    cloudpickle.register_pickle_by_value(example)
    v, m = args.vehicles, args.minutes
    def once(fn):
        # One timed call: Dask would return a repeated graph's results from memory.
        t0 = time.perf_counter()
        fn()
        return time.perf_counter() - t0

    serial = once(lambda: example.run_serial(v, m, 100.0))
    times = {}
    for workers in (1, 2):
        with LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, dashboard_address=None) as cluster, Client(cluster) as client:
            example.run_dask(client, min(v, workers * 2), 0.5, 100.0)  # warm the workers
            times[workers] = once(lambda: example.run_dask(client, v, m, 100.0))
    print(f"fleet campaign, {v} vehicles × {m:g} min at 100 Hz: serial {serial:.2f} s, Dask 1 worker {times[1]:.2f} s, "
          f"2 workers {times[2]:.2f} s: 2 workers / 1 worker speed-up {times[1] / times[2]:.2f}x")


if __name__ == "__main__":
    main()
