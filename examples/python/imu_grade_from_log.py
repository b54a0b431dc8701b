#!/usr/bin/env python3
"""How far would a free-inertial solution drift on this boat, for two grades of IMU?

Invented scenario (the same log as sensor_budget_from_log.py): an autonomous survey boat on a
lake at 46.5° N, logged every 0.5 s. Before buying an IMU for GNSS outages, the analyst turns
the logged track into the increments an ideal 100 Hz IMU would have reported, corrupts them
with the error models of two candidate IMUs (datasheet-style figures, invented here), runs
each through the NED strapdown mechanization with height held at the logged values, and
prints the horizontal position error after 30, 60, 120 and 290 s of outage.

Run: python examples/python/imu_grade_from_log.py
"""

import pathlib

import numpy as np

import rotaframe as rf

LOG = pathlib.Path(__file__).resolve().parent / "data" / "survey_boat_log.csv"
RATE = 100.0  # Hz, the IMU's output rate
CANDIDATES = {
    # name: error-model keywords (gyro rad/s, accelerometer m/s², noise in the trade's units)
    "tactical (0.1 deg/sqrt(h), 1 mg)": dict(
        gyro_bias=np.radians(1.0) / 3600, gyro_arw_deg_per_sqrt_h=0.1, accel_bias=[1e-3 * 9.81, -0.7e-3 * 9.81, 0.5e-3 * 9.81],
        accel_vrw_mps_per_sqrt_h=0.03, gyro_markov_sigma=np.radians(0.5) / 3600, gyro_markov_time=300.0,
    ),
    "MEMS (0.3 deg/sqrt(h), 5 mg)": dict(
        gyro_bias=np.radians(10.0) / 3600, gyro_arw_deg_per_sqrt_h=0.3, accel_bias=[5e-3 * 9.81, -3e-3 * 9.81, 2e-3 * 9.81],
        accel_vrw_mps_per_sqrt_h=0.1, gyro_scale_factor=300e-6, gyro_markov_sigma=np.radians(5.0) / 3600, gyro_markov_time=100.0,
    ),
}


def main():
    log = np.loadtxt(LOG, delimiter=",", comments="#")
    t, lat, lon, h = log[:, 0], np.radians(log[:, 1]), np.radians(log[:, 2]), log[:, 3]
    attitude = rf.quat_from_euler(log[:, 10], log[:, 11], log[:, 12])  # yaw, pitch, roll (rad)
    grid = np.arange(t[0], t[-1], 1.0 / RATE)
    dtheta, dv, dt = rf.imu_increments_from_samples(t, lat, lon, h, attitude, times=grid)
    truth = rf.motion_from_samples(t, lat, lon, h, attitude, grid[1:])
    true_lat, true_lon, true_h = rf.ecef_to_geodetic(truth.position)
    v0 = rf.ned_from_ecef(lat[0], lon[0]) @ rf.motion_from_samples(t, lat, lon, h, attitude, grid[:1]).velocity[0]

    print(f"log: {len(t)} samples over {t[-1] - t[0]:.0f} s; IMU increments at {RATE:.0f} Hz: {len(dt)}")
    checkpoints = [30.0, 60.0, 120.0, 290.0]
    print(f"{'IMU':36s}" + "".join(f"{f'{c:.0f} s':>10s}" for c in checkpoints) + "   (horizontal error, m)")
    for name, errors in CANDIDATES.items():
        measured = rf.ImuErrors(seed=1, **errors).apply(dtheta, dv, dt)
        ins = rf.Strapdown(lat[0], lon[0], h[0], v0, attitude[0], vertical="hold")
        history = ins.run(*measured, dt, height_reference=true_h)
        error = np.linalg.norm(
            rf.geodetic_to_ecef(history.lat, history.lon, true_h) - rf.geodetic_to_ecef(true_lat, true_lon, true_h), axis=1
        )
        row = [error[np.searchsorted(history.t, c)] for c in checkpoints]
        print(f"{name:36s}" + "".join(f"{e:10.2f}" for e in row))
    print("Not certified for safety-of-life navigation: validate against your own requirements.")


if __name__ == "__main__":
    main()
