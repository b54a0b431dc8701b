#!/usr/bin/env python3
"""Covariance prediction of a strapdown run: rf.predict_covariance against the same recursion
written in numpy (F, G from Strapdown.error_model at the state before each step, Phi and Q_d
from scipy's expm of Van Loan's block matrix, P <- Phi P Phi^T + Q_d), in one process.

Usage: python benches/python/bench_covariance.py [--repeat 3]

rf.predict_covariance runs one hour at 100 Hz (360 000 steps, one covariance kept a minute);
the numpy recursion runs the first 2000 steps of the same run (it is about a thousand times
slower) and is quoted per step. Goal: the hour under 1 s on this machine class.
"""

import argparse
import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402
from scipy.linalg import expm  # noqa: E402

import rotaframe as rf  # noqa: E402
from benchutil import best  # noqa: E402

N_STEPS, DT, NUMPY_STEPS = 360_000, 0.01, 2000


def setup():
    heading = rf.quat_from_euler(0.8, 0.0, 0.0)
    ins = rf.Strapdown(0.82, 0.14, 420.0, [0, 0, 0], heading, vertical="aided", height_time_constant=100.0)
    parked = rf.earth_motion(0.0).then(rf.local_level_motion(0.82, 0.14, 420.0))
    rate, force = rf.ideal_imu(parked.then(rf.FrameMotion(rotation=heading)))
    rng = np.random.default_rng(1)
    dtheta = rate * DT + rng.normal(0, 1e-6, (N_STEPS, 3))
    dv = force * DT + rng.normal(0, 1e-4, (N_STEPS, 3))
    imu = rf.ImuErrors(gyro_arw_deg_per_sqrt_h=0.1, gyro_markov_sigma=5e-6, gyro_markov_time=1800.0,
                       accel_vrw_mps_per_sqrt_h=0.05, accel_markov_sigma=1e-3, accel_markov_time=1800.0)
    p0 = np.diag(np.r_[1e-14, 1e-14, 1.0, [1e-4] * 3, [1e-8] * 3, [1e-6] * 3, [2.5e-11] * 3])
    return ins, dtheta, dv, imu, p0


def numpy_recursion(ins, dtheta, dv, imu, p0, steps):
    na, ng = 0.05 / 60.0, np.radians(0.1) / 60.0
    q = np.r_[[na**2] * 3, [ng**2] * 3, [2 * 1e-3**2 / 1800.0] * 3, [2 * 5e-6**2 / 1800.0] * 3]
    stepper, p = ins.copy(), p0.copy()
    block = np.zeros((30, 30))
    for k in range(steps):
        f, g = stepper.error_model(dv[k] / DT, dtheta[k] / DT, imu_errors=imu)
        block[:15, :15], block[:15, 15:], block[15:, 15:] = -f, g @ np.diag(q) @ g.T, f.T
        e = expm(block * DT)
        phi = e[15:, 15:].T
        p = phi @ p @ phi.T + phi @ e[:15, 15:]
        stepper.step(dtheta[k], dv[k], DT)
    return p


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    ins, dtheta, dv, imu, p0 = setup()
    history = ins.copy().run(dtheta, dv, DT)
    hour = best(lambda: rf.predict_covariance(history, imu, p0, every=6000), args.repeat)
    short = ins.copy().run(dtheta[:NUMPY_STEPS], dv[:NUMPY_STEPS], DT)
    ours = rf.predict_covariance(short, imu, p0, every=NUMPY_STEPS)[1][-1]
    t_np = best(lambda: numpy_recursion(ins, dtheta, dv, imu, p0, NUMPY_STEPS), 1)
    theirs = numpy_recursion(ins, dtheta, dv, imu, p0, NUMPY_STEPS)
    scale = np.sqrt(np.outer(np.diag(theirs), np.diag(theirs)))
    print(f"rf.predict_covariance, 1 h at 100 Hz: {hour:.3f} s ({hour / N_STEPS * 1e6:.2f} us/step); goal < 1 s")
    print(f"numpy + scipy expm recursion: {t_np / NUMPY_STEPS * 1e6:.1f} us/step over {NUMPY_STEPS} steps")
    print(f"ratio (numpy per step / rotaframe per step): {t_np / NUMPY_STEPS / (hour / N_STEPS):.0f}x")
    print(f"largest difference after {NUMPY_STEPS} steps: {np.abs(ours - theirs).max() / 1:.2e} "
          f"({(np.abs(ours - theirs) / scale).max():.1e} of sqrt(P_ii P_jj))")


if __name__ == "__main__":
    main()
