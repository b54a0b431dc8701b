#!/usr/bin/env python3
"""Peak memory of ``rotaframe.Strapdown.run`` against the size of what it returns.

Usage: python benches/python/bench_strapdown_memory.py [--steps 20000000]

Runs in a fresh child process per measurement: the inputs are made and touched first, the
resident set size (RSS) is read, then one ``run`` over all steps; the peak RSS of the process
(``getrusage``) minus the RSS before the run is the memory the call needed. The result holds
11 float64 per step. The goal: at most 1.2 times the result plus a constant.
"""

import argparse
import json
import os
import subprocess
import sys

CHILD = r"""
import json, resource, sys
import numpy as np
import rotaframe as rf

def rss():
    with open("/proc/self/statm") as f:
        return int(f.read().split()[1]) * 4096

n = int(sys.argv[1])
dtheta = np.full((n, 3), 1e-7)
dv = np.tile([0.0, 0.0, -0.0981], (n, 1))
ins = rf.Strapdown(0.8, 0.1, 100.0, [0, 0, 0], [1, 0, 0, 0], vertical="hold")
before = rss()
history = ins.run(dtheta, dv, 0.01)
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
result = sum(getattr(history, f).nbytes for f in ("lat", "lon", "h", "v_ned", "attitude", "t"))
print(json.dumps({"before": before, "peak": peak, "result": result}))
"""


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--steps", type=int, default=20_000_000)
    args = parser.parse_args()
    out = subprocess.run([sys.executable, "-c", CHILD, str(args.steps)], capture_output=True, text=True, check=True,
                         env={**os.environ, "OPENBLAS_NUM_THREADS": "1"})
    m = json.loads(out.stdout)
    needed = m["peak"] - m["before"]
    print(f"Strapdown.run over {args.steps:,} steps: result {m['result'] / 1e9:.3f} GB, "
          f"peak memory of the call {needed / 1e9:.3f} GB = {needed / m['result']:.3f} x the result "
          f"(goal <= 1.2 x + a constant)")


if __name__ == "__main__":
    main()
