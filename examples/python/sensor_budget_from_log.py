#!/usr/bin/env python3
"""Apparent-acceleration budget of an accelerometer on a survey boat, from a logged track.

Invented scenario: an autonomous survey boat on a lake at 46.5° N, 6.6° E, running a
lawn-mower pattern at about 3 m/s, rolling in a short swell. Its navigation log
(examples/python/data/survey_boat_log.csv) holds, every 0.5 s: time, geodetic position,
NED velocity and acceleration relative to the Earth, and yaw-pitch-roll attitude with
their rates. A vibration accelerometer is bolted to the mast, 0.4 m forward, 0.1 m to
starboard and 2.5 m above the navigation reference point.

The script chains inertial → Earth-fixed → local level → body with rotaframe's frame motions
and prints the apparent accelerations (resolved in body axes) the mast sensor feels: the
budget an analyst removes before looking at vibration. With matplotlib installed it also
plots them (--plot FILE.png).

Run: python examples/python/sensor_budget_from_log.py [--plot budget.png] [--regenerate]
"""

import argparse
import pathlib

import numpy as np

import rotaframe as rf

LOG = pathlib.Path(__file__).resolve().parent / "data" / "survey_boat_log.csv"
COLUMNS = "t lat_deg lon_deg h vn ve vd an ae ad yaw pitch roll yaw_rate pitch_rate roll_rate".split()
MAST_SENSOR = np.array([0.4, 0.1, -2.5])  # body axes: x forward, y starboard, z down (m)


def regenerate(path):
    """Writes the invented log: legs north and south joined by turns, with swell."""
    t = np.arange(0.0, 300.0, 0.5)
    # Legs of 50 s joined by smooth 180° turns of 10 s (heading continuous and differentiable).
    ramp = np.clip((t % 60 - 50) / 10, 0, 1)
    heading = np.pi * (t // 60) + np.pi * ramp * ramp * (3 - 2 * ramp)
    yaw_rate = np.gradient(heading, t)
    speed = 3.0 + 0.3 * np.sin(2 * np.pi * t / 45)
    vn, ve = speed * np.cos(heading), speed * np.sin(heading)
    vd = 0.05 * np.sin(2 * np.pi * t / 6.0)
    an, ae, ad = np.gradient(vn, t), np.gradient(ve, t), np.gradient(vd, t)
    lat0, lon0 = np.radians(46.5), np.radians(6.6)
    m, n = rf.radii_of_curvature(lat0)
    lat = np.degrees(lat0 + np.cumsum(vn) * 0.5 / m)
    lon = np.degrees(lon0 + np.cumsum(ve) * 0.5 / (n * np.cos(lat0)))
    h = 372.0 - np.cumsum(vd) * 0.5
    roll = np.radians(6.0) * np.sin(2 * np.pi * t / 6.0)
    pitch = np.radians(2.0) * np.sin(2 * np.pi * t / 4.5 + 0.7)
    roll_rate, pitch_rate = np.gradient(roll, t), np.gradient(pitch, t)
    data = np.stack([t, lat, lon, h, vn, ve, vd, an, ae, ad, heading, pitch, roll, yaw_rate, pitch_rate, roll_rate], axis=1)
    path.parent.mkdir(parents=True, exist_ok=True)
    np.savetxt(path, data, delimiter=",", header=",".join(COLUMNS) + "  (invented data for the rotaframe example)", fmt="%.9g")


def axis_motion(axis, angle, rate, acceleration):
    """A frame turned by `angle` about a coordinate axis, turning at `rate` and speeding up at
    `acceleration` (batched)."""
    zero = np.zeros_like(angle)
    ypr = {"z": (angle, zero, zero), "y": (zero, angle, zero), "x": (zero, zero, angle)}[axis]
    w, al = np.zeros(angle.shape + (3,)), np.zeros(angle.shape + (3,))
    w[..., "xyz".index(axis)] = rate
    al[..., "xyz".index(axis)] = acceleration
    return rf.FrameMotion(rotation=rf.quat_from_euler(*ypr), angular_velocity=w, angular_acceleration=al)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--plot", metavar="FILE.png", help="also plot the budget (needs matplotlib)")
    ap.add_argument("--regenerate", action="store_true", help="rewrite the invented log")
    args = ap.parse_args()
    if args.regenerate or not LOG.exists():
        regenerate(LOG)
    log = dict(zip(COLUMNS, np.loadtxt(LOG, delimiter=",").T))

    # The chain: ECI → ECEF (Earth rotation) → NED at the boat → body (yaw, then pitch, then roll).
    earth = rf.earth_motion(log["t"])
    ned = rf.local_level_motion(
        log["lat_deg"], log["lon_deg"], log["h"],
        np.stack([log["vn"], log["ve"], log["vd"]], -1), np.stack([log["an"], log["ae"], log["ad"]], -1), degrees=True,
    )
    # The log holds attitude rates; their rates of change come from differencing the log.
    axes = [("z", "yaw"), ("y", "pitch"), ("x", "roll")]
    yaw_m, pitch_m, roll_m = (axis_motion(a, log[k], log[k + "_rate"], np.gradient(log[k + "_rate"], log["t"])) for a, k in axes)
    attitude = yaw_m.then(pitch_m).then(roll_m)
    body = earth.then(ned).then(attitude)  # body relative to the inertial frame

    # The body frame's rotation and origin acceleration relative to inertial space, in body
    # axes, give the apparent accelerations at the mast sensor (fixed in the body: v = 0).
    # The translational term is the boat's own inertial acceleration (Earth rotation included).
    terms = rf.apparent_acceleration(
        body.angular_velocity_in_child, MAST_SENSOR,
        angular_acceleration=body.angular_acceleration_in_child,
        origin_acceleration=body.inverse().map_vector(body.acceleration),
    )
    print(f"survey boat log: {len(log['t'])} samples over {log['t'][-1]:.0f} s; mast sensor at {MAST_SENSOR} m (body axes)")
    print(f"{'term':<14} {'rms x':>10} {'rms y':>10} {'rms z':>10} {'max |a|':>10}   (m/s², body axes)")
    for name in ("translational", "coriolis", "centrifugal", "euler", "total"):
        a = getattr(terms, name)
        rms = np.sqrt(np.mean(a**2, axis=0))
        print(f"{name:<14} {rms[0]:10.2e} {rms[1]:10.2e} {rms[2]:10.2e} {np.linalg.norm(a, axis=1).max():10.2e}")
    print("(the Coriolis term is zero: the sensor does not move relative to the body)")

    if args.plot:
        try:
            import matplotlib

            matplotlib.use("Agg")
            import matplotlib.pyplot as plt
        except ImportError:
            print("matplotlib is not installed; skipping the plot")
            return
        fig, ax = plt.subplots(figsize=(9, 4))
        for name in ("translational", "centrifugal", "euler"):
            ax.plot(log["t"], np.linalg.norm(getattr(terms, name), axis=1), label=name)
        ax.set_xlabel("time (s)")
        ax.set_ylabel("|apparent acceleration| (m/s²)")
        ax.set_yscale("log")
        ax.legend()
        ax.set_title("Mast sensor on an invented survey boat")
        fig.tight_layout()
        fig.savefig(args.plot, dpi=120)
        print(f"plot written to {args.plot}")


if __name__ == "__main__":
    main()
