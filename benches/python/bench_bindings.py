#!/usr/bin/env python3
"""Python bindings against vectorised numpy (and numba loops, when numba is installed) doing
the same work, with a memory floor measured in the same run.

Usage: python benches/python/bench_bindings.py [--sizes 1000 100000 1000000] [--repeat 7]

For each N it prints ns per sample for rotaframe, numpy and numba, the ratios, and the memory
floor: the time numpy needs to read every input byte and write every output byte once (fresh
output arrays, all alive at the end, as the functions return them). All timings are the best
of --repeat runs; each contender runs in a fresh process so that none inherits another's heap
(large allocations are slower or faster depending on what was freed before them).
"""

import argparse
import os
import subprocess
import sys

# One BLAS thread: on a two-core machine idle BLAS worker threads spin and steal the core the
# measured code runs on (numpy links OpenBLAS even when no BLAS call is timed).
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402

import rotaframe as rf  # noqa: E402
from benchutil import best  # noqa: E402

try:
    import numba
except ImportError:  # numba is optional
    numba = None

A, F = 6378137.0, 1 / 298.257223563
E2 = F * (2 - F)
B = A * (1 - F)
EP2 = E2 / (1 - E2)


def floor(inputs, outputs_like, preallocated=None):
    """Reads every input byte once and writes every byte of fresh outputs of the given shapes
    once (or of the `preallocated` arrays, the floor of a call with `out=`): the outputs are
    filled by copying the inputs' values in order (cycling if the outputs are larger); inputs
    left over are read by a reduction."""
    flat_inputs = [a.reshape(-1) for a in inputs]

    def run():
        src, pos = 0, 0
        keep = []  # all outputs stay alive together, as a function's results do
        for k, shape in enumerate(outputs_like):
            out = (np.empty(shape) if preallocated is None else preallocated[k]).reshape(-1)
            keep.append(out)
            filled = 0
            while filled < out.size:
                take = min(out.size - filled, flat_inputs[src].size - pos)
                np.copyto(out[filled:filled + take], flat_inputs[src][pos:pos + take])
                filled += take
                pos += take
                if pos == flat_inputs[src].size:
                    src, pos = (src + 1) % len(flat_inputs), 0
        if src != 0 or pos != 0:
            flat_inputs[src][pos:].max() if pos < flat_inputs[src].size else None
            for extra in flat_inputs[src + 1:]:
                extra.max()
        return keep
    return run


# ---------------------------------------------------------------- numpy versions (written well)
def cross(a, b):
    return np.stack([a[:, 1] * b[:, 2] - a[:, 2] * b[:, 1], a[:, 2] * b[:, 0] - a[:, 0] * b[:, 2], a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0]], axis=1)


def np_apparent(w, r, v, al, a0):
    t = -a0
    c = -2.0 * cross(w, v)
    f = -cross(w, cross(w, r))
    e = -cross(al, r)
    return t, c, f, e, t + c + f + e


def np_quat_matrix(q):
    w, x, y, z = q[:, 0], q[:, 1], q[:, 2], q[:, 3]
    return np.stack(
        [1 - 2 * (y * y + z * z), 2 * (x * y - w * z), 2 * (x * z + w * y),
         2 * (x * y + w * z), 1 - 2 * (x * x + z * z), 2 * (y * z - w * x),
         2 * (x * z - w * y), 2 * (y * z + w * x), 1 - 2 * (x * x + y * y)], axis=1).reshape(-1, 3, 3)


def np_map_point(q, p0, v0, a0, w, al, r, v, a):
    m = np_quat_matrix(q)

    def rotate(x):
        return np.stack([m[:, i, 0] * x[:, 0] + m[:, i, 1] * x[:, 1] + m[:, i, 2] * x[:, 2] for i in range(3)], axis=1)

    rr, rv, ra = rotate(r), rotate(v), rotate(a)
    wr = cross(w, rr)
    return p0 + rr, v0 + rv + wr, a0 + ra + 2 * cross(w, rv) + cross(al, rr) + cross(w, wr)


def np_forward(lat, lon, h):
    sl, cl, so, co = np.sin(lat), np.cos(lat), np.sin(lon), np.cos(lon)
    n = A / np.sqrt(1 - E2 * sl * sl)
    return np.stack([(n + h) * cl * co, (n + h) * cl * so, (n * (1 - E2) + h) * sl], axis=1)


def np_inverse(xyz):
    x, y, z = xyz[:, 0], xyz[:, 1], xyz[:, 2]
    p = np.hypot(x, y)
    beta = np.arctan2(A * z, B * p)
    for _ in range(2):
        lat = np.arctan2(z + EP2 * B * np.sin(beta) ** 3, p - E2 * A * np.cos(beta) ** 3)
        beta = np.arctan((1 - F) * np.tan(lat))
    sl, cl = np.sin(lat), np.cos(lat)
    return lat, np.arctan2(y, x), p * cl + z * sl - A * np.sqrt(1 - E2 * sl * sl)


# ---------------------------------------------------------------- numba versions
if numba is not None:
    @numba.njit(cache=False, fastmath=False)
    def nb_apparent(w, r, v, al, a0, t, c, f, e, s):
        for i in range(w.shape[0]):
            wx, wy, wz = w[i, 0], w[i, 1], w[i, 2]
            rx, ry, rz = r[i, 0], r[i, 1], r[i, 2]
            vx, vy, vz = v[i, 0], v[i, 1], v[i, 2]
            ux, uy, uz = wy * rz - wz * ry, wz * rx - wx * rz, wx * ry - wy * rx
            t[i, 0], t[i, 1], t[i, 2] = -a0[i, 0], -a0[i, 1], -a0[i, 2]
            c[i, 0], c[i, 1], c[i, 2] = -2 * (wy * vz - wz * vy), -2 * (wz * vx - wx * vz), -2 * (wx * vy - wy * vx)
            f[i, 0], f[i, 1], f[i, 2] = -(wy * uz - wz * uy), -(wz * ux - wx * uz), -(wx * uy - wy * ux)
            e[i, 0] = -(al[i, 1] * rz - al[i, 2] * ry)
            e[i, 1] = -(al[i, 2] * rx - al[i, 0] * rz)
            e[i, 2] = -(al[i, 0] * ry - al[i, 1] * rx)
            for k in range(3):
                s[i, k] = t[i, k] + c[i, k] + f[i, k] + e[i, k]

    @numba.njit(cache=False)
    def nb_map_point(q, p0, v0, a0, w, al, r, v, a, orr, ov, oa):
        for i in range(q.shape[0]):
            qw, qx, qy, qz = q[i, 0], q[i, 1], q[i, 2], q[i, 3]
            m00, m01, m02 = 1 - 2 * (qy * qy + qz * qz), 2 * (qx * qy - qw * qz), 2 * (qx * qz + qw * qy)
            m10, m11, m12 = 2 * (qx * qy + qw * qz), 1 - 2 * (qx * qx + qz * qz), 2 * (qy * qz - qw * qx)
            m20, m21, m22 = 2 * (qx * qz - qw * qy), 2 * (qy * qz + qw * qx), 1 - 2 * (qx * qx + qy * qy)
            rx = m00 * r[i, 0] + m01 * r[i, 1] + m02 * r[i, 2]
            ry = m10 * r[i, 0] + m11 * r[i, 1] + m12 * r[i, 2]
            rz = m20 * r[i, 0] + m21 * r[i, 1] + m22 * r[i, 2]
            vx = m00 * v[i, 0] + m01 * v[i, 1] + m02 * v[i, 2]
            vy = m10 * v[i, 0] + m11 * v[i, 1] + m12 * v[i, 2]
            vz = m20 * v[i, 0] + m21 * v[i, 1] + m22 * v[i, 2]
            ax = m00 * a[i, 0] + m01 * a[i, 1] + m02 * a[i, 2]
            ay = m10 * a[i, 0] + m11 * a[i, 1] + m12 * a[i, 2]
            az = m20 * a[i, 0] + m21 * a[i, 1] + m22 * a[i, 2]
            wx, wy, wz = w[i, 0], w[i, 1], w[i, 2]
            bx, by, bz = al[i, 0], al[i, 1], al[i, 2]
            cx, cy, cz = wy * rz - wz * ry, wz * rx - wx * rz, wx * ry - wy * rx
            orr[i, 0], orr[i, 1], orr[i, 2] = p0[i, 0] + rx, p0[i, 1] + ry, p0[i, 2] + rz
            ov[i, 0], ov[i, 1], ov[i, 2] = v0[i, 0] + vx + cx, v0[i, 1] + vy + cy, v0[i, 2] + vz + cz
            oa[i, 0] = a0[i, 0] + ax + 2 * (wy * vz - wz * vy) + (by * rz - bz * ry) + (wy * cz - wz * cy)
            oa[i, 1] = a0[i, 1] + ay + 2 * (wz * vx - wx * vz) + (bz * rx - bx * rz) + (wz * cx - wx * cz)
            oa[i, 2] = a0[i, 2] + az + 2 * (wx * vy - wy * vx) + (bx * ry - by * rx) + (wx * cy - wy * cx)

    @numba.njit(cache=False)
    def nb_forward(lat, lon, h, out):
        for i in range(lat.shape[0]):
            sl, cl = np.sin(lat[i]), np.cos(lat[i])
            n = A / np.sqrt(1 - E2 * sl * sl)
            out[i, 0] = (n + h[i]) * cl * np.cos(lon[i])
            out[i, 1] = (n + h[i]) * cl * np.sin(lon[i])
            out[i, 2] = (n * (1 - E2) + h[i]) * sl

    @numba.njit(cache=False)
    def nb_inverse(xyz, lat, lon, h):
        for i in range(xyz.shape[0]):
            x, y, z = xyz[i, 0], xyz[i, 1], xyz[i, 2]
            p = np.hypot(x, y)
            beta = np.arctan2(A * z, B * p)
            phi = 0.0
            for _ in range(2):
                phi = np.arctan2(z + EP2 * B * np.sin(beta) ** 3, p - E2 * A * np.cos(beta) ** 3)
                beta = np.arctan((1 - F) * np.tan(phi))
            sl, cl = np.sin(phi), np.cos(phi)
            lat[i], lon[i] = phi, np.arctan2(y, x)
            h[i] = p * cl + z * sl - A * np.sqrt(1 - E2 * sl * sl)


def make_case(function, n, rng):
    """Inputs for one function at size n, and the callables of each contender."""
    if function == "apparent":
        w, r, v, al, a0 = (rng.normal(size=(n, 3)) for _ in range(5))
        calls = {
            "rotaframe": lambda: rf.apparent_acceleration(w, r, v, angular_acceleration=al, origin_acceleration=a0),
            "numpy": lambda: np_apparent(w, r, v, al, a0),
            "floor": floor([w, r, v, al, a0], [(n, 3)] * 5),
        }
        outs = tuple(np.empty((n, 3)) for _ in range(5))
        calls["rotaframe out="] = lambda: rf.apparent_acceleration(w, r, v, angular_acceleration=al, origin_acceleration=a0, out=outs)
        calls["rotaframe out= threads=2"] = lambda: rf.apparent_acceleration(
            w, r, v, angular_acceleration=al, origin_acceleration=a0, out=outs, threads=2
        )
        calls["floor out="] = floor([w, r, v, al, a0], [(n, 3)] * 5, outs)
        if numba is not None:
            calls["numba"] = lambda: nb_apparent(w, r, v, al, a0, *[np.empty((n, 3)) for _ in range(5)])
            calls["numba out="] = lambda: nb_apparent(w, r, v, al, a0, *outs)
        return calls
    if function == "map_point":
        q = rng.normal(size=(n, 4))
        q /= np.linalg.norm(q, axis=1, keepdims=True)
        parts = [rng.normal(size=(n, 3)) for _ in range(5)]
        pr, pv, pa = (rng.normal(size=(n, 3)) for _ in range(3))
        motion = rf.FrameMotion(rotation=q, position=parts[0], velocity=parts[1], acceleration=parts[2], angular_velocity=parts[3], angular_acceleration=parts[4])
        motion_bytes = np.concatenate([q] + parts, axis=1)  # the motion's 19 numbers per sample
        calls = {
            "rotaframe": lambda: motion.map_point(pr, pv, pa),
            "numpy": lambda: np_map_point(q, *parts, pr, pv, pa),
            "floor": floor([pr, pv, pa, motion_bytes], [(n, 3)] * 3),
        }
        outs = tuple(np.empty((n, 3)) for _ in range(3))
        calls["rotaframe out="] = lambda: motion.map_point(pr, pv, pa, out=outs)
        calls["rotaframe out= threads=2"] = lambda: motion.map_point(pr, pv, pa, out=outs, threads=2)
        calls["floor out="] = floor([pr, pv, pa, motion_bytes], [(n, 3)] * 3, outs)
        if numba is not None:
            calls["numba"] = lambda: nb_map_point(q, *parts, pr, pv, pa, *[np.empty((n, 3)) for _ in range(3)])
            calls["numba out="] = lambda: nb_map_point(q, *parts, pr, pv, pa, *outs)
        return calls
    lat, lon, h = rng.uniform(-1.5, 1.5, n), rng.uniform(-3.1, 3.1, n), rng.uniform(-1e4, 1e4, n)
    if function == "geodetic_to_ecef":
        out = np.empty((n, 3))
        calls = {
            "rotaframe": lambda: rf.geodetic_to_ecef(lat, lon, h),
            "numpy": lambda: np_forward(lat, lon, h),
            "floor": floor([lat, lon, h], [(n, 3)]),
            "rotaframe out=": lambda: rf.geodetic_to_ecef(lat, lon, h, out=out),
            "rotaframe out= threads=2": lambda: rf.geodetic_to_ecef(lat, lon, h, out=out, threads=2),
            "floor out=": floor([lat, lon, h], [(n, 3)], (out,)),
        }
        if numba is not None:
            calls["numba"] = lambda: nb_forward(lat, lon, h, np.empty((n, 3)))
            calls["numba out="] = lambda: nb_forward(lat, lon, h, out)
        return calls
    xyz = rf.geodetic_to_ecef(lat, lon, h)
    outs = (np.empty(n), np.empty(n), np.empty(n))
    calls = {
        "rotaframe": lambda: rf.ecef_to_geodetic(xyz),
        "numpy": lambda: np_inverse(xyz),
        "floor": floor([xyz], [(n,)] * 3),
        "rotaframe out=": lambda: rf.ecef_to_geodetic(xyz, out=outs),
        "rotaframe out= threads=2": lambda: rf.ecef_to_geodetic(xyz, out=outs, threads=2),
        "floor out=": floor([xyz], [(n,)] * 3, outs),
    }
    if numba is not None:
        calls["numba"] = lambda: nb_inverse(xyz, np.empty(n), np.empty(n), np.empty(n))
        calls["numba out="] = lambda: nb_inverse(xyz, *outs)
    return calls


FUNCTIONS = ["apparent", "map_point", "geodetic_to_ecef", "ecef_to_geodetic"]
CONTENDERS = ["rotaframe", "numpy", "numba", "floor"]
# With preallocated outputs (each call writes the same arrays; the first, untimed warm-up call
# of `best` faults their pages in).
OUT_CONTENDERS = ["rotaframe out=", "rotaframe out= threads=2", "numba out=", "floor out="]


def measure_one(function, n, contender, repeat):
    """ns per sample of one contender, measured in this (fresh) process."""
    calls = make_case(function, n, np.random.default_rng(1))
    if contender not in calls:
        return None
    return best(calls[contender], repeat) / n * 1e9


def measure_fresh(function, n, contenders, repeat, rounds=1):
    """ns per sample of each contender (None: not available), each run in a fresh process;
    with several `rounds`, the contenders take turns in every round and each keeps its best,
    so that a slow spell of the machine does not fall on one contender only."""
    t = {}
    for _ in range(rounds):
        for contender in contenders:
            out = subprocess.run([sys.executable, __file__, "--repeat", str(repeat), "--one", function, str(n), contender],
                                 capture_output=True, text=True, check=True).stdout.strip().splitlines()[-1]
            value = None if out == "none" else float(out)
            best_so_far = t.get(contender)
            t[contender] = value if best_so_far is None else best_so_far if value is None else min(best_so_far, value)
    return t


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", type=int, nargs="+", default=[1000, 100_000, 1_000_000])
    ap.add_argument("--repeat", type=int, default=7)
    ap.add_argument("--rounds", type=int, default=3, help="turns taken by the out= contenders (best kept)")
    ap.add_argument("--functions", nargs="+", default=FUNCTIONS, choices=FUNCTIONS)
    ap.add_argument("--one", nargs=3, metavar=("FUNCTION", "N", "CONTENDER"), help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.one:
        result = measure_one(args.one[0], int(args.one[1]), args.one[2], args.repeat)
        print("none" if result is None else repr(result))
        return
    print(f"ns per sample, best of {args.repeat} runs, each contender in a fresh process (same heap state for all);")
    print("speed-ups are numpy/rotaframe and numba/rotaframe; 'vs floor' is rotaframe over the memory floor")
    print(f"{'function':<18} {'N':>9} {'rotaframe':>9} {'numpy':>9} {'numba':>9} {'floor':>9} {'vs numpy':>9} {'vs numba':>8} {'vs floor':>8}")
    for function in args.functions:
        for n in args.sizes:
            t = measure_fresh(function, n, CONTENDERS, args.repeat)
            nb = f"{t['numba']:9.1f}" if t["numba"] is not None else "      n/a"
            nb_ratio = f"{t['numba'] / t['rotaframe']:7.1f}x" if t["numba"] is not None else "     n/a"
            print(f"{function:<18} {n:>9} {t['rotaframe']:9.1f} {t['numpy']:9.1f} {nb} {t['floor']:9.1f} "
                  f"{t['numpy'] / t['rotaframe']:8.1f}x {nb_ratio} {t['rotaframe'] / t['floor']:8.2f}")

    print(f"\nwith preallocated outputs (out=): ns per sample, best over {args.rounds} rounds in which the contenders take turns;")
    print("'vs floor' rotaframe over the out= memory floor (read the inputs, write the preallocated outputs), 'nb/fl'")
    print("numba's preallocated loop over the same floor, 'vs numba' numba's time over rotaframe's, 'threads' 1-thread/2-thread")
    print(f"{'function':<18} {'N':>9} {'out=':>9} {'2 thr':>9} {'numba':>9} {'floor':>9} {'vs floor':>8} {'2thr/fl':>8} {'nb/fl':>7} {'vs numba':>8} {'threads':>8}")
    for function in args.functions:
        for n in args.sizes:
            t = measure_fresh(function, n, OUT_CONTENDERS, args.repeat, args.rounds)
            one, two, fl = t["rotaframe out="], t["rotaframe out= threads=2"], t["floor out="]
            nb = f"{t['numba out=']:9.1f}" if t["numba out="] is not None else "      n/a"
            nb_fl = f"{t['numba out='] / fl:7.2f}" if t["numba out="] is not None else "    n/a"
            nb_ratio = f"{t['numba out='] / one:7.2f}x" if t["numba out="] is not None else "     n/a"
            print(f"{function:<18} {n:>9} {one:9.1f} {two:9.1f} {nb} {fl:9.1f} {one / fl:8.2f} {two / fl:8.2f} {nb_fl} {nb_ratio} {one / two:7.2f}x")

    w1, r1 = np.array([0.0, 0.0, 1.0]), np.array([1.0, 2.0, 3.0])
    k = 20000

    def single_rf():
        for _ in range(k):
            rf.apparent_acceleration(w1, r1)

    def single_np():
        for _ in range(k):
            np_apparent(w1[None], r1[None], np.zeros((1, 3)), np.zeros((1, 3)), np.zeros((1, 3)))

    print(f"\nsingle sample apparent_acceleration: rotaframe {best(single_rf, 3) / k * 1e6:.2f} µs, numpy {best(single_np, 3) / k * 1e6:.2f} µs per call")


if __name__ == "__main__":
    main()
