#!/usr/bin/env python3
"""The aided navigator's cost from Python: one hour of 100 Hz IMU increments with 1 Hz GNSS
position and velocity fixes, filtered by ``AidedNavigator.run`` (goal: at most 1.5 s) and
filtered and smoothed by ``run(..., smooth=True)`` (goal: at most 3 s), against
the same closed-loop algorithm written per step with numpy on rotaframe's primitives (the
stepper's ``step``, ``set_state`` and ``error_model``; numpy for the second-order ``Φ``, ``Q_d``,
``P ← Φ P Φᵀ + Q_d``, the gate, the Joseph update and the feedback), the covariance propagated
every increment, and for the smoothed run a classical Rauch–Tung–Striebel pass in numpy over
the stored per-step covariances and transitions (the closed-loop form: the filter's error is
zero, so the smoothed error at step k is ``C_k (e_{k+1} + δx̂_{k+1})`` with the correction
``δx̂`` fed back at step k + 1, ``C_k = P⁺_k Φ_kᵀ (P⁻_{k+1})⁻¹``). The numpy loops run over
the first ``--reference-minutes`` (they take tens of microseconds a step); the ratios compare
both on that same span, in the same process (goal: at least 30× with smoothing). The runs'
peak memory (the growth of the peak resident set across the run, in a fresh child process, so
that Rust's allocations count too) is compared with the bytes of the arrays they return
(goals: at most 1.5× filtered, 2× filtered and smoothed). The error budget of the smoothed hour
(`AidedResult.budget`, latitude and longitude) is timed against the smoothed run.

Usage: python benches/python/bench_aided.py [--reference-minutes 2] [--repeat 3]
"""

import argparse
import math
import resource
import subprocess
import sys
import time

import numpy as np
import rotaframe as rf
from benchutil import best

LAT, LON, H = math.radians(48.14), math.radians(11.58), 520.0
RATE = 100.0


def scenario(seconds, seed=5):
    """A level vehicle at rest with small random rates and forces (invented), its increments,
    and 1 Hz fixes at the start point."""
    rng = np.random.default_rng(seed)
    n = int(seconds * RATE)
    t = np.arange(n + 1) / RATE
    w = np.asarray(rf.earth_rate_ned(LAT))
    g = np.asarray(rf.gravity_ned(LAT, H))
    dtheta = w / RATE + rng.normal(0.0, 1e-6, (n, 3))
    dv = -g / RATE + rng.normal(0.0, 1e-4, (n, 3))
    ft = t[int(RATE) :: int(RATE)]
    fixes = [
        rf.PositionFixes(ft, np.full(ft.size, LAT), np.full(ft.size, LON), np.full(ft.size, H), [1.5, 1.5, 3.0]),
        rf.VelocityFixes(ft, np.zeros((ft.size, 3)), [0.05, 0.05, 0.05]),
    ]
    return t, dtheta, dv, fixes


def imu():
    return rf.ImuErrors(gyro_arw_deg_per_sqrt_h=0.1, gyro_markov_sigma=np.radians(1.0) / 3600,
                        accel_vrw_mps_per_sqrt_h=0.05, accel_markov_sigma=5e-3, accel_markov_time=600.0)


def p0():
    sigma = [3 / 6.4e6, 3 / 4.3e6, 3, 0.1, 0.1, 0.1, 1e-3, 1e-3, 5e-3] + [5e-3] * 3 + [np.radians(1.0) / 3600] * 3
    return np.diag(np.square(sigma))


def rotaframe_run(t, dtheta, dv, fixes, smooth=False):
    nav = rf.AidedNavigator(rf.Strapdown(LAT, LON, H, [0, 0, 0], [1, 0, 0, 0]), imu(), p0())
    return nav.run(t, dtheta, dv, fixes, smooth=smooth)


def numpy_run(t, dtheta, dv, fixes, smooth=False):
    """The filter per step in numpy on rotaframe's stepper and error model (position and
    velocity fixes without lever arm, the 0.999 gate for three rows); with ``smooth`` the
    per-step ``P⁺``, ``Φ``, ``P⁻``, corrections and states are kept and an RTS pass returns the
    smoothed σ and the smoothed position and velocity ``(lat, lon, h, vn, ve, vd)`` of every
    step (tests/python/test_smoothing.py checks them against ``run(smooth=True)``)."""
    sd = rf.Strapdown(LAT, LON, H, [0, 0, 0], [1, 0, 0, 0])
    vrw, arw = 0.05 / 60, math.radians(0.1) / 60
    psd = np.array([vrw**2] * 3 + [arw**2] * 3 + [2 * 5e-3**2 / 600.0] * 3 + [0.0] * 3)
    tau_a = 600.0
    p = p0()
    bias_a, bias_g = np.zeros(3), np.zeros(3)
    gate = 16.266  # chi-square, 3 degrees of freedom, 0.999 (scipy.stats.chi2.ppf)
    fix_index = {round(x * RATE): i for i, x in enumerate(fixes[0].t)}
    position_sigma, velocity_sigma = np.array([1.5, 1.5, 3.0]), np.full(3, 0.05)
    eye = np.eye(15)
    steps = dtheta.shape[0]
    if smooth:
        posterior, transition, prior = np.empty((steps + 1, 15, 15)), np.empty((steps, 15, 15)), np.empty((steps, 15, 15))
        correction = np.zeros((steps + 1, 15))
        states = np.empty((steps + 1, 6))
        states[0] = [sd.lat, sd.lon, sd.h, *sd.v_ned]
        posterior[0] = p
    for k in range(steps):
        dt = t[k + 1] - t[k]
        da, dw = dv[k] - bias_a * dt, dtheta[k] - bias_g * dt
        f_matrix, g_matrix = sd.error_model(da / dt, dw / dt, imu_errors=None)
        f_matrix[9:12, 9:12] -= np.eye(3) / tau_a
        sd.step(dw, da, dt)
        phi = eye + f_matrix * dt + f_matrix @ f_matrix * (dt * dt / 2)
        qc = (g_matrix * psd) @ g_matrix.T
        qd = qc * dt + (f_matrix @ qc + qc @ f_matrix.T) * (dt * dt / 2)
        p = phi @ p @ phi.T + qd
        bias_a *= math.exp(-dt / tau_a)
        if smooth:
            transition[k], prior[k] = phi, p
            posterior[k + 1] = p
            states[k + 1] = [sd.lat, sd.lon, sd.h, *sd.v_ned]
        i = fix_index.get(k + 1)
        if i is None:
            continue
        m, n = rf.radii_of_curvature(sd.lat)
        for rows, sigma in ((0, position_sigma), (3, velocity_sigma)):
            h_matrix = np.zeros((3, 15))
            if rows == 0:
                h_matrix[:, 0:3] = np.diag([m + sd.h, (n + sd.h) * math.cos(sd.lat), -1.0])
                y = np.array([(LAT - sd.lat) * (m + sd.h), (LON - sd.lon) * (n + sd.h) * math.cos(sd.lat), -(H - sd.h)])
            else:
                h_matrix[:, 3:6] = np.eye(3)
                y = -np.asarray(sd.v_ned)
            s = h_matrix @ p @ h_matrix.T + np.diag(sigma**2)
            s_inv = np.linalg.inv(s)
            if y @ s_inv @ y > gate:
                continue
            k_gain = p @ h_matrix.T @ s_inv
            x = -k_gain @ y
            a = eye - k_gain @ h_matrix
            p = a @ p @ a.T + k_gain @ np.diag(sigma**2) @ k_gain.T
            q = np.asarray(sd.attitude)
            undo = rf.quat_from_rotvec(-x[6:9])
            sd.set_state(sd.lat - x[0], sd.lon - x[1], sd.h - x[2], np.asarray(sd.v_ned) - x[3:6], rf.quat_multiply(undo, q))
            bias_a += x[9:12]
            bias_g += x[12:15]
            if smooth:
                posterior[k + 1] = p
                correction[k + 1] += x
                states[k + 1] = [sd.lat, sd.lon, sd.h, *sd.v_ned]
    if not smooth:
        return sd
    sigma, errors = np.empty((steps + 1, 15)), np.zeros((steps + 1, 15))
    error, p_smooth = np.zeros(15), posterior[steps]
    sigma[steps] = np.sqrt(np.diag(p_smooth))
    for k in range(steps - 1, -1, -1):
        gain = posterior[k] @ transition[k].T @ np.linalg.inv(prior[k])
        error = gain @ (error + correction[k + 1])
        p_smooth = posterior[k] + gain @ (p_smooth - prior[k]) @ gain.T
        sigma[k], errors[k] = np.sqrt(np.diag(p_smooth)), error
    return sd, sigma, states - errors[:, :6]


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--reference-minutes", type=float, default=2.0)
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--memory-child", action="store_true", help=argparse.SUPPRESS)
    args = parser.parse_args()
    t, dtheta, dv, fixes = scenario(3600.0)
    hour = best(lambda: rotaframe_run(t, dtheta, dv, fixes), args.repeat)
    print(f"rotaframe, one hour at 100 Hz with 1 Hz position and velocity fixes: {hour:.3f} s ({hour / dtheta.shape[0] * 1e6:.2f} µs per step)")
    span = int(args.reference_minutes * 60 * RATE)
    ts, dths, dvs, fx = scenario(args.reference_minutes * 60)
    ours = best(lambda: rotaframe_run(ts, dths, dvs, fx), args.repeat)
    start = time.perf_counter()
    numpy_run(ts, dths, dvs, fx)
    theirs = time.perf_counter() - start
    print(f"same {args.reference_minutes:g} minutes: rotaframe {ours:.3f} s, numpy per step {theirs:.2f} s: {theirs / ours:.0f}x")
    both = best(lambda: rotaframe_run(t, dtheta, dv, fixes, smooth=True), args.repeat)
    print(f"rotaframe, the same hour filtered and smoothed: {both:.3f} s ({both / hour:.2f}x the filter alone)")
    smoothed_hour = rotaframe_run(t, dtheta, dv, fixes, smooth=True)
    budget = best(lambda: smoothed_hour.budget(states=[0, 1]), 1)
    print(f"its error budget by source (latitude and longitude, filtered and smoothed): {budget:.2f} s "
          f"({budget / both:.1f}x the filtered and smoothed run)")
    ours_smoothed = best(lambda: rotaframe_run(ts, dths, dvs, fx, smooth=True), args.repeat)
    start = time.perf_counter()
    _, numpy_sigma, _ = numpy_run(ts, dths, dvs, fx, smooth=True)
    theirs_smoothed = time.perf_counter() - start
    ours_sigma = rotaframe_run(ts, dths, dvs, fx, smooth=True).smoothed.sigma
    agreement = np.max(np.abs(numpy_sigma / ours_sigma - 1))
    print(f"same {args.reference_minutes:g} minutes filtered and smoothed: rotaframe {ours_smoothed:.3f} s, numpy with RTS "
          f"{theirs_smoothed:.2f} s: {theirs_smoothed / ours_smoothed:.0f}x (smoothed σ agree to {agreement:.1e} relative)")
    for smooth in ("0", "1"):
        child = subprocess.run([sys.executable, __file__, "--memory-child", smooth], capture_output=True, text=True, check=True)
        print(child.stdout.strip())


def high_water_mark():
    """The process's peak resident set (bytes): VmHWM from /proc (Linux; `ru_maxrss` would
    carry the parent's peak across exec), else `ru_maxrss`."""
    try:
        with open("/proc/self/status") as status:
            for line in status:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024


def memory_child(smooth):
    t, dtheta, dv, fixes = scenario(3600.0)
    before = high_water_mark()
    result = rotaframe_run(t, dtheta, dv, fixes, smooth=smooth)
    peak = high_water_mark() - before
    fields = ("lat", "lon", "h", "v_ned", "attitude", "sigma", "imu_errors", "covariance")
    solutions = [result] + ([result.smoothed] if smooth else [])
    returned = result.t.nbytes + result.epochs.nbytes + sum(getattr(r, f).nbytes for r in solutions for f in fields)
    returned += sum(x.innovation.nbytes + x.std.nbytes + x.nis.nbytes + x.accepted.nbytes + x.t.nbytes for x in result.innovations)
    what = "filtered and smoothed" if smooth else "filtered"
    print(f"peak memory growth of the run ({what}) {peak / 1e6:.1f} MB, arrays returned {returned / 1e6:.1f} MB: {peak / returned:.2f}x")


if __name__ == "__main__":
    if "--memory-child" in sys.argv:
        memory_child(sys.argv[-1] == "1")
    else:
        main()
