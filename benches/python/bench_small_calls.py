#!/usr/bin/env python3
"""Per-call cost of the Python bindings on single samples and small arrays: the fixed part of
every call (argument conversion, broadcasting, the overlap and alignment checks, output
allocation), which large batches amortise. Best of --repeat timeit runs, ns per call.

Usage: python benches/python/bench_small_calls.py [--repeat 7]

To compare two builds in one run, point PYTHONPATH at each and run the script twice back to
back (the README quotes such pairs).
"""

import argparse
import timeit

import numpy as np

import rotaframe as rf


def cases():
    lat, lon, h = 0.82, 0.14, 420.0
    lat16, lon16, h16 = np.full(16, lat), np.full(16, lon), np.full(16, h)
    xyz = rf.geodetic_to_ecef(lat, lon, h)
    q = np.array([0.9, 0.1, 0.2, 0.3]) / np.linalg.norm([0.9, 0.1, 0.2, 0.3])
    out3 = np.empty(3)
    w, r, v = np.array([0.0, 0.0, 7.29e-5]), np.array([6.4e6, 0.0, 0.0]), np.array([0.0, 30.0, 0.0])
    return {
        "geodetic_to_ecef (floats)": lambda: rf.geodetic_to_ecef(lat, lon, h),
        "geodetic_to_ecef (16)": lambda: rf.geodetic_to_ecef(lat16, lon16, h16),
        "geodetic_to_ecef (floats, out=)": lambda: rf.geodetic_to_ecef(lat, lon, h, out=out3),
        "ecef_to_geodetic (3,)": lambda: rf.ecef_to_geodetic(xyz),
        "quat_multiply (4,)": lambda: rf.quat_multiply(q, q),
        "apparent_acceleration (3,)": lambda: rf.apparent_acceleration(w, r, v),
    }


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=7)
    args = ap.parse_args()
    for name, call in cases().items():
        number = 20_000
        t = min(timeit.repeat(call, number=number, repeat=args.repeat)) / number
        print(f"{name:<34} {t * 1e9:8.0f} ns")


if __name__ == "__main__":
    main()
