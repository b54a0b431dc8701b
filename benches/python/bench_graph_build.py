#!/usr/bin/env python3
"""Frame-graph construction against its size: FrameGraph.from_toml and add_fixed for 10^3,
10^4 and 10^5 frames (a tree of depth at most 8, listed parents first and, for the file, also
children first), in one process. Linear construction keeps the time per frame flat across the
sizes; the goal is 10^5 frames well under a second.

Usage: python benches/python/bench_graph_build.py [--repeat 3]
"""

import argparse
import time

import rotaframe as rf


def tree_text(n, reverse=False):
    frames = []
    for k in range(1, n + 1):
        parent = "lab" if k <= 8 else f"f{k // 8}"
        frames.append(f'[[frame]]\nname = "f{k}"\nparent = "{parent}"\nkind = "fixed"\nposition = [0.0, 0.0, 1.0]\n')
    if reverse:
        frames.reverse()
    return 'root = "lab"\ninertial = true\n' + "".join(frames)


def best(repeat, f):
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        f()
        times.append(time.perf_counter() - start)
    return min(times)


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    print(f"{'frames':>8} {'from_toml':>12} {'children first':>15} {'add_fixed':>12}   (µs per frame)")
    for n in (1_000, 10_000, 100_000):
        text, backwards = tree_text(n), tree_text(n, reverse=True)

        def adds():
            g = rf.FrameGraph("lab")
            for k in range(1, n + 1):
                g.add_fixed(f"f{k}", "lab" if k <= 8 else f"f{k // 8}", position=[0.0, 0.0, 1.0])

        load = best(args.repeat, lambda: rf.FrameGraph.from_toml(text))
        load_back = best(args.repeat, lambda: rf.FrameGraph.from_toml(backwards))
        add = best(args.repeat, adds)
        print(f"{n:>8} {1e6 * load / n:>12.2f} {1e6 * load_back / n:>15.2f} {1e6 * add / n:>12.2f}")


if __name__ == "__main__":
    main()
