#!/usr/bin/env python3
"""FrameGraph.motion along a five-edge chain (Earth rotation, a site, a spin, two fixed mounts)
for many times, against the same chain built by hand from batched motions with ``then``, and
against a Python loop of single-time queries.

Usage: python benches/python/bench_graph.py [--times 1000000] [--loop-times 20000] [--repeat 5]

All three run in this process on the same times; each figure is the best of --repeat runs in
nanoseconds per time, with the ratios. Goals: the graph within 1.5x of the hand-built chain,
and at least 10x faster than the per-time loop.
"""

import argparse
import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402

import rotaframe as rf  # noqa: E402
from benchutil import best  # noqa: E402

SITE = (np.radians(47.4), np.radians(8.5), 420.0)
ARM = dict(rotation=rf.quat_from_euler(0.3, 0.0, 0.0), position=[0.8, 0.0, 0.0])
SENSOR = dict(rotation=rf.quat_from_euler(-1.2, 0.02, 0.01), position=[0.0, 0.05, -0.02])


def graph():
    g = rf.FrameGraph("inertial")
    g.add_earth("ecef", "inertial", angle_at_epoch=0.3)
    g.add_site("site", "ecef", *SITE)
    g.add_spin("table", "site", axis=[0.0, 0.0, 1.0], rate=2.5, angle_at_zero=0.1)
    g.add_fixed("arm", "table", **ARM)
    g.add_fixed("sensor", "arm", **SENSOR)
    return g


def by_hand(t):
    angle = 0.1 + 2.5 * t
    spin = rf.FrameMotion(
        rotation=np.column_stack([np.cos(angle / 2), np.zeros((t.size, 2)), np.sin(angle / 2)]),
        angular_velocity=np.broadcast_to([0.0, 0.0, 2.5], (t.size, 3)),
    )
    return (rf.earth_motion(t, angle_at_epoch=0.3).then(rf.local_level_motion(*SITE)).then(spin)
            .then(rf.FrameMotion(**ARM)).then(rf.FrameMotion(**SENSOR)))


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--times", type=int, default=1_000_000)
    parser.add_argument("--loop-times", type=int, default=20_000)
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    g = graph()
    t = np.linspace(0.0, 100.0, args.times)
    a, b = g.motion("inertial", "sensor", t), by_hand(t)
    assert np.allclose(a.position, b.position, atol=1e-6) and np.allclose(np.abs(np.sum(a.rotation * b.rotation, axis=1)), 1.0)
    t_graph = best(lambda: g.motion("inertial", "sensor", t), args.repeat) / args.times * 1e9
    t_hand = best(lambda: by_hand(t), args.repeat) / args.times * 1e9
    few = t[: args.loop_times]
    t_loop = best(lambda: [g.motion("inertial", "sensor", float(x)) for x in few], max(1, args.repeat // 2)) / few.size * 1e9
    print(f"five-edge chain at {args.times:,} times (ns/time, best of {args.repeat}):")
    print(f"  FrameGraph.motion        {t_graph:9.1f}")
    print(f"  hand-built then chain    {t_hand:9.1f}   graph / hand = {t_graph / t_hand:.2f}  (goal <= 1.5)")
    print(f"  loop of single queries   {t_loop:9.1f}   loop / graph = {t_loop / t_graph:.1f}  (goal >= 10)")


if __name__ == "__main__":
    main()
