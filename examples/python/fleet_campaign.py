#!/usr/bin/env python3
"""A fleet's test campaign on a Dask cluster: IMU increments, apparent-acceleration budgets and
free-inertial drift for every vehicle's log, in parallel worker processes.

Invented scenario: a yard-logistics operator runs 40 autonomous tugs around a container
terminal at 53.5° N for an hour each, logging a reference navigation solution at 100 Hz. For
the choice of IMU the analyst wants, per tug: the increments an ideal IMU would have given
(from the log), how large the Earth-rotation terms (Coriolis and centrifugal, seen in the
Earth-fixed frame) are beside the tug's own accelerations, and how far a free-inertial
solution with the candidate IMU (a seeded error model per unit) drifts in the hour.

Each log is synthesised on the worker from its tug number (a stand-in for reading the tug's
file, so that no gigabyte of logs is shipped to the workers); everything else that crosses a
process boundary is a rotaframe object (the IMU's error model, the strapdown stepper, the IMU
mount's FrameMotion) or numbers, and pickles. The Dask result equals a serial run bit for bit.

Run (local cluster of 2 worker processes):
    python examples/python/fleet_campaign.py --vehicles 40 --minutes 60 --workers 2
Against an existing cluster instead of a local one:
    python examples/python/fleet_campaign.py --scheduler tcp://scheduler.example:8786
Serial, without Dask:
    python examples/python/fleet_campaign.py --workers 0

Progress: with tqdm installed, a progress bar follows the vehicles as they finish; nothing
else is printed until the table.
"""

from __future__ import annotations

import argparse
import pathlib
import time
from typing import Any, Callable, Optional

import numpy as np

import rotaframe as rf

SITE = (np.radians(53.5), np.radians(9.95), 8.0)  # invented terminal
# The candidate IMU (invented data-sheet figures; every unit gets its own seed).
IMU = dict(
    gyro_bias=np.radians([3.0, -2.0, 4.0]) / 3600,
    gyro_arw_deg_per_sqrt_h=0.15,
    accel_bias=np.array([1.5e-3, -1.0e-3, 2.0e-3]) * 9.81,
    accel_vrw_mps_per_sqrt_h=0.05,
    gyro_markov_sigma=np.radians(1.0) / 3600,
    gyro_markov_time=600.0,
)
# The IMU sits 0.8 m ahead of the tug's reference point, yawed 90° (its x axis to the tug's
# right): increments are rotated into the tug's axes before navigating.
MOUNT = rf.FrameMotion(rotation=rf.quat_from_euler(np.pi / 2, 0.0, 0.0), position=[0.8, 0.0, 0.0], parent="tug", child="imu")


def tug_log(vehicle: int, minutes: float, rate: float) -> dict[str, np.ndarray]:
    """The reference log of one tug: laps of an oval yard circuit with its own size, speed and
    start, level, heading along the track (geodetic lat, lon in radians, h in m, attitude as
    body-to-NED quaternions), at `rate` Hz."""
    rng = np.random.default_rng(1000 + vehicle)
    t = np.arange(0.0, minutes * 60.0 + 0.5 / rate, 1.0 / rate)
    a, b = rng.uniform(150.0, 400.0), rng.uniform(60.0, 150.0)  # semi-axes, m
    speed = rng.uniform(4.0, 8.0)  # m/s along the track, on average
    w = speed / np.sqrt((a * a + b * b) / 2)  # lap rate, rad/s
    phase = rng.uniform(0, 2 * np.pi)
    s = w * t + 0.05 * np.sin(0.21 * t) + phase  # with gentle surging
    s_dot = w + 0.05 * 0.21 * np.cos(0.21 * t)
    north, east = a * np.sin(s), b * (1 - np.cos(s))
    vn, ve = a * np.cos(s) * s_dot, b * np.sin(s) * s_dot
    m, n = rf.radii_of_curvature(SITE[0])
    lat = SITE[0] + north / (m + SITE[2])
    lon = SITE[1] + east / ((n + SITE[2]) * np.cos(SITE[0]))
    h = np.full_like(t, SITE[2])
    yaw = np.unwrap(np.arctan2(ve, vn))
    attitude = rf.quat_from_euler(yaw, 0.0 * t, 0.0 * t)
    return {"t": t, "lat": lat, "lon": lon, "h": h, "attitude": attitude, "v_ned": np.stack([vn, ve, 0 * t], axis=1)}


def process_vehicle(vehicle: int, imu: rf.ImuErrors, mount: rf.FrameMotion, minutes: float, rate: float) -> dict[str, Any]:
    """Everything the campaign wants from one tug's log (runs on a worker)."""
    log = tug_log(vehicle, minutes, rate)
    t, lat, lon, h, q = log["t"], log["lat"], log["lon"], log["h"], log["attitude"]
    # 1. Ideal IMU increments over the log's own intervals, in the IMU's axes.
    dtheta, dv, dt = rf.imu_increments_from_samples(t, lat, lon, h, q)
    to_imu = mount.inverse()
    dtheta_imu, dv_imu = to_imu.map_vector(dtheta), to_imu.map_vector(dv)  # (lever arm ignored: level, slow turns)
    # 2. The Earth-rotation terms in the Earth-fixed frame, beside the tug's own acceleration.
    xyz = rf.geodetic_to_ecef(lat, lon, h)
    v_ecef = np.einsum("...ji,...j->...i", rf.ned_from_ecef(lat, lon), log["v_ned"])  # C_e^nᵀ v_ned
    earth = np.array([0.0, 0.0, rf.WGS84.omega])
    terms = rf.apparent_acceleration(earth, xyz, v_ecef)
    own = np.linalg.norm(np.gradient(log["v_ned"], t, axis=0), axis=1)
    budget = {
        "own_rms": float(np.sqrt(np.mean(own**2))),
        "coriolis_rms": float(np.sqrt(np.mean(np.sum(terms.coriolis**2, axis=1)))),
        "centrifugal_mean": float(np.mean(np.linalg.norm(terms.centrifugal, axis=1))),
    }
    # 3. Free-inertial drift with this unit's errors (applied in the IMU's axes), height held.
    measured_imu = imu.apply(dtheta_imu, dv_imu, dt)
    measured = (mount.map_vector(measured_imu[0]), mount.map_vector(measured_imu[1]))
    ins = rf.Strapdown(lat[0], lon[0], h[0], log["v_ned"][0], q[0], vertical="hold")
    history = ins.run(*measured, dt, height_reference=h[1:])
    m, n = rf.radii_of_curvature(lat[1:])
    north_error = (history.lat - lat[1:]) * (m + h[1:])
    east_error = (history.lon - lon[1:]) * (n + h[1:]) * np.cos(lat[1:])
    horizontal = np.hypot(north_error, east_error)
    every = max(1, int(rate * 10))  # a 0.1 Hz drift curve for plotting
    return {
        "vehicle": vehicle,
        "samples": int(t.size),
        "increment_checksum": float(np.sum(dtheta) + np.sum(dv)),
        **budget,
        "drift_end": float(horizontal[-1]),
        "drift_max": float(horizontal.max()),
        "drift_curve": (history.t[::every].copy(), horizontal[::every].copy()),
        "stepper": ins,  # the final state, pickled back to the client
    }


def units(vehicles: int) -> list[rf.ImuErrors]:
    """One error model per unit (seeded by the unit's serial number)."""
    return [rf.ImuErrors(seed=5000 + v, **IMU) for v in range(vehicles)]


def run_serial(vehicles: int, minutes: float, rate: float, progress: Optional[Callable[[int, int], None]] = None) -> list[dict[str, Any]]:
    out = []
    for v, imu in enumerate(units(vehicles)):
        out.append(process_vehicle(v, imu, MOUNT, minutes, rate))
        if progress is not None:
            progress(v + 1, vehicles)
    return out


def run_dask(client: Any, vehicles: int, minutes: float, rate: float, progress: Optional[Callable[[int, int], None]] = None) -> list[dict[str, Any]]:
    """The campaign as a dask.bag over vehicles (one partition per vehicle, so the scheduler
    balances them over the workers); the error models and the mount are pickled to the workers."""
    import dask.bag as db
    from distributed import as_completed

    jobs = db.from_sequence(list(zip(range(vehicles), units(vehicles))), npartitions=vehicles)
    results = jobs.map(lambda job: process_vehicle(job[0], job[1], MOUNT, minutes, rate))
    futures = client.compute(results.to_delayed())
    done = 0
    for _ in as_completed(futures):
        done += 1
        if progress is not None:
            progress(done, vehicles)
    return [item for part in client.gather(futures) for item in part]


def summary_table(results: list[dict[str, Any]]) -> str:
    lines = [f"{'tug':>4} {'own accel rms':>14} {'Coriolis rms':>13} {'centrifugal':>12} {'drift at end':>16} {'max':>9}",
             f"{'':>4} {'(m/s²)':>14} {'(m/s²)':>13} {'(m/s²)':>12} {'(m)':>16} {'(m)':>9}"]
    for r in results:
        lines.append(f"{r['vehicle']:4d} {r['own_rms']:14.4f} {r['coriolis_rms']:13.2e} {r['centrifugal_mean']:12.4f} "
                     f"{r['drift_end']:16.1f} {r['drift_max']:9.1f}")
    return "\n".join(lines)


def tqdm_progress(total: int) -> Optional[Callable[[int, int], None]]:
    try:
        from tqdm import tqdm
    except ImportError:
        return None
    bar = tqdm(total=total, unit="tug")
    return lambda done, _: (bar.update(done - bar.n), bar.close() if done == total else None) and None


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--vehicles", type=int, default=40)
    ap.add_argument("--minutes", type=float, default=60.0)
    ap.add_argument("--rate", type=float, default=100.0, help="log rate, Hz")
    ap.add_argument("--workers", type=int, default=2, help="local worker processes (0: serial, no Dask)")
    ap.add_argument("--scheduler", help="address of an existing Dask scheduler (instead of a local cluster)")
    ap.add_argument("--plot", type=pathlib.Path, help="save the drift curves of every tug to this PNG")
    args = ap.parse_args()
    start = time.perf_counter()
    progress = tqdm_progress(args.vehicles)
    if args.scheduler or args.workers > 0:
        from distributed import Client, LocalCluster

        if args.scheduler:
            client = Client(args.scheduler)  # the two-line change: point at the cluster you have
        else:
            cluster = LocalCluster(n_workers=args.workers, threads_per_worker=1, processes=True, dashboard_address=None)
            client = Client(cluster)
        with client:
            results = run_dask(client, args.vehicles, args.minutes, args.rate, progress)
    else:
        results = run_serial(args.vehicles, args.minutes, args.rate, progress)
    elapsed = time.perf_counter() - start
    print(summary_table(results))
    print(f"{len(results)} tugs × {args.minutes:g} min at {args.rate:g} Hz in {elapsed:.1f} s")
    if args.plot:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt

        fig, ax = plt.subplots(figsize=(8, 4))
        for r in results:
            ax.plot(r["drift_curve"][0] / 60.0, r["drift_curve"][1], linewidth=0.8)
        ax.set_xlabel("time (min)")
        ax.set_ylabel("horizontal free-inertial error (m)")
        ax.set_title("fleet drift, one line per tug")
        fig.savefig(args.plot, dpi=100)
        print(f"drift plot saved to {args.plot}")
    print("Not certified for safety-of-life navigation: validate against your own requirements.")


if __name__ == "__main__":
    main()
