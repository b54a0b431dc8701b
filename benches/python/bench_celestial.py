#!/usr/bin/env python3
"""The GCRS → ITRS matrix for 10⁵ dates from Python (``rf.celestial_to_terrestrial``) against the
reference library's equivalent in the same run: pyerfa's CIO-based chain (the X, Y series
``xy06``, ``s06``, ``c2ixys``, ``era00``, ``sp00``, ``pom00``, ``c2tcio``), single-threaded
(goal: at least 2× faster), and rotaframe with ``threads=2`` against one thread (goal: at least
1.7×).

Usage: python benches/python/bench_celestial.py [--dates 100000] [--repeat 3]
"""

import argparse

import erfa
import numpy as np
import rotaframe as rf
from benchutil import best


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--dates", type=int, default=100_000)
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    rng = np.random.default_rng(4)
    n = args.dates
    day = np.floor(rng.uniform(2415020.5, 2488070.5, n)) + 0.5
    fraction = rng.uniform(0.0, 1.0, n)
    ut1 = fraction - 69.0 / 86400.0
    xp, yp = rng.uniform(-1e-6, 1e-6, (2, n))
    dx, dy = rng.uniform(-1e-9, 1e-9, (2, n))

    def reference():
        x, y = erfa.xy06(day, fraction)
        s = erfa.s06(day, fraction, x, y)
        return erfa.c2tcio(erfa.c2ixys(x + dx, y + dy, s), erfa.era00(day, ut1), erfa.pom00(xp, yp, erfa.sp00(day, fraction)))

    ours = best(lambda: rf.celestial_to_terrestrial(day, fraction, day, ut1, xp, yp, dx=dx, dy=dy), args.repeat)
    two = best(lambda: rf.celestial_to_terrestrial(day, fraction, day, ut1, xp, yp, dx=dx, dy=dy, threads=2), args.repeat)
    ref = best(reference, args.repeat)
    worst = np.max(np.abs(rf.celestial_to_terrestrial(day, fraction, day, ut1, xp, yp, dx=dx, dy=dy) - reference()))
    print(f"GCRS → ITRS matrix for {n:.0e} dates: rotaframe {ours:.3f} s, pyerfa chain {ref:.3f} s: "
          f"{ref / ours:.2f}x faster; threads=2 {two:.3f} s: {ours / two:.2f}x one thread; largest difference {worst:.1e}")


if __name__ == "__main__":
    main()
