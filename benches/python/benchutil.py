"""Timing helper shared by the Python benchmark scripts."""

import time


def best(fn, repeat):
    """The shortest wall time (s) of ``repeat`` calls of ``fn``, after one warm-up call (which
    also triggers any just-in-time compilation)."""
    fn()
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)
