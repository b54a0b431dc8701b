#!/usr/bin/env python3
"""A delivery van's test drive through a tunnel: from an IMU rate log and a GNSS log to the
smoothed trajectory with its 1σ.

Invented scenario: a parcel van leaves a depot at 51.05° N, 3.72° E and drives six minutes
through town (turns, stops and starts) with an industrial MEMS IMU logging angular rate and
specific force at about 100 Hz on its own clock (the time tags jitter by up to 0.4 ms) and a
GNSS receiver giving 1 Hz position and velocity fixes. From 150 s to 210 s the van is in a
tunnel: no fixes. The analyst converts the rate log to increments (``increments_from_rates``),
runs the aided navigator over both logs with ``smooth=True``, and compares the filtered and the
smoothed solution with the truth of the simulation through the outage; ``result.at`` gives the
smoothed solution at the GNSS times, which are not IMU times. The plot of both errors and their
σ envelopes is saved (``--plot``). ``result.budget`` then splits the horizontal position's
variance by source: which sensor error limits the van in the tunnel, filtered and smoothed
(table, and the plot ``--budget-plot``).

Run: python examples/python/van_test_smoothing.py [--plot van_test_smoothing.png] [--budget-plot van_budget.png]

Not certified for safety-of-life navigation: validate against your own requirements.
"""

import argparse
import math

import numpy as np

import rotaframe as rf
import rotaframe.plot

LAT0, LON0, H0 = math.radians(51.05), math.radians(3.72), 9.0
DURATION, TUNNEL = 360.0, (150.0, 210.0)
TRUTH_RATE, IMU_RATE = 1000.0, 100.0

# The IMU the filter assumes (datasheet-style figures, invented): gyro 0.3 deg/√h, bias
# instability 10 deg/h over 5 minutes; accelerometer 0.1 m/s/√h, bias instability 2 mg.
IMU_MODEL = dict(
    gyro_arw_deg_per_sqrt_h=0.3, gyro_markov_sigma=np.radians(10.0) / 3600, gyro_markov_time=300.0,
    accel_vrw_mps_per_sqrt_h=0.1, accel_markov_sigma=2e-2, accel_markov_time=300.0,
)


def drive(t):
    """The invented drive: speed (m/s) and heading (rad) against time; a stop at the depot
    gate, then town driving with four turns."""
    speed = np.clip(np.minimum(t - 5.0, 330.0 - t) * 1.5, 0.0, 12.0) * (1.0 - 0.6 * np.exp(-((t - 100.0) / 8.0) ** 2))
    turns = [(40.0, 1.2), (95.0, -1.4), (180.0, 0.6), (260.0, 1.5)]
    heading = 0.3 + sum(a / (1.0 + np.exp(-(t - c) / 3.0)) for c, a in turns)
    return speed, heading


def truth(rate):
    t = np.arange(0.0, DURATION + 0.5 / rate, 1.0 / rate)
    speed, heading = drive(t)
    vn, ve = speed * np.cos(heading), speed * np.sin(heading)
    north = np.concatenate([[0.0], np.cumsum(0.5 * (vn[1:] + vn[:-1]) / rate)])
    east = np.concatenate([[0.0], np.cumsum(0.5 * (ve[1:] + ve[:-1]) / rate)])
    m, n = rf.radii_of_curvature(LAT0)
    lat, lon = LAT0 + north / (m + H0), LON0 + east / ((n + H0) * math.cos(LAT0))
    h = np.full_like(t, H0)
    attitude = rf.quat_from_euler(heading, np.zeros_like(t), np.zeros_like(t))
    return t, lat, lon, h, attitude, np.stack([vn, ve, np.zeros_like(t)], axis=1)


def rate_log(rng):
    """The IMU's log: rate and specific force at jittered ~100 Hz tags, with constant biases
    within the model's σ and white noise of the model's densities."""
    t, lat, lon, h, attitude, _ = truth(TRUTH_RATE)
    dtheta, dv, dt = rf.imu_increments_from_samples(t, lat, lon, h, attitude)
    middle = 0.5 * (t[1:] + t[:-1])
    tags = np.arange(0.0, DURATION + 1e-9, 1.0 / IMU_RATE) + rng.uniform(-4e-4, 4e-4, int(DURATION * IMU_RATE) + 1)
    tags[0], tags[-1] = 0.0, DURATION
    rate = np.stack([np.interp(tags, middle, dtheta[:, i] / dt) for i in range(3)], axis=1)
    force = np.stack([np.interp(tags, middle, dv[:, i] / dt) for i in range(3)], axis=1)
    gyro_bias = rng.normal(0.0, np.radians(10.0) / 3600, 3)
    accel_bias = rng.normal(0.0, 2e-2, 3)
    arw, vrw = np.radians(0.3) / 60.0, 0.1 / 60.0  # rad/√s, m/s/√s
    spacing = 1.0 / IMU_RATE
    rate += gyro_bias + rng.normal(0.0, arw / math.sqrt(spacing), rate.shape)
    force += accel_bias + rng.normal(0.0, vrw / math.sqrt(spacing), force.shape)
    return tags, rate, force


def gnss_log(rng):
    """1 Hz fixes 0.25 s after each whole second (not IMU times), none in the tunnel."""
    t, lat, lon, h, _, v_ned = truth(TRUTH_RATE)
    times = np.arange(1.0, DURATION - 1.0) + 0.25
    times = times[(times < TUNNEL[0]) | (times > TUNNEL[1])]
    m, n = rf.radii_of_curvature(LAT0)
    noise = rng.normal(0.0, [1.5, 1.5, 3.0], (len(times), 3))
    positions = rf.PositionFixes(
        times,
        np.interp(times, t, lat) + noise[:, 0] / (m + H0),
        np.interp(times, t, lon) + noise[:, 1] / ((n + H0) * math.cos(LAT0)),
        np.interp(times, t, h) - noise[:, 2],
        [1.5, 1.5, 3.0],
    )
    velocity = np.stack([np.interp(times, t, v_ned[:, i]) for i in range(3)], axis=1)
    velocities = rf.VelocityFixes(times, velocity + rng.normal(0.0, 0.1, velocity.shape), [0.1, 0.1, 0.1])
    return [positions, velocities]


def horizontal(solution, t_truth, lat, lon):
    """Horizontal error and 1σ (m) of a solution at its own times."""
    m, n = rf.radii_of_curvature(LAT0)
    north = (solution.lat - np.interp(solution.t, t_truth, lat)) * (m + H0)
    east = (solution.lon - np.interp(solution.t, t_truth, lon)) * (n + H0) * math.cos(LAT0)
    sigma = np.hypot(solution.sigma[:, 0] * (m + H0), solution.sigma[:, 1] * (n + H0) * math.cos(LAT0))
    return np.hypot(north, east), sigma


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--plot", default="van_test_smoothing.png", help="where to save the plot")
    parser.add_argument("--budget-plot", default="van_budget.png", help="where to save the error budget's plot")
    args = parser.parse_args()
    rng = np.random.default_rng(2026)
    tags, rate, force = rate_log(rng)
    dtheta, dv = rf.increments_from_rates(tags, rate, force, max_gap=0.05)
    fixes = gnss_log(rng)
    t_truth, lat, lon, h, attitude, v_ned = truth(TRUTH_RATE)

    # The start: the depot's surveyed point, heading from the yard's layout (1 deg).
    start = rf.Strapdown(LAT0, LON0, H0, [0.0, 0.0, 0.0], rf.quat_from_euler(0.3 + np.radians(1.0), 0.0, 0.0))
    sigma0 = [2 / 6.37e6, 2 / 4.0e6, 3.0, 0.05, 0.05, 0.05, 2e-3, 2e-3, np.radians(2.0)]
    sigma0 += [2e-2] * 3 + [np.radians(10.0) / 3600] * 3
    nav = rf.AidedNavigator(start, rf.ImuErrors(**IMU_MODEL), np.diag(np.square(sigma0)))
    result = nav.run(tags, dtheta, dv, fixes, smooth=True)

    print(f"rate log: {len(tags)} samples over {DURATION:.0f} s; GNSS: {len(fixes[0])} fixes, tunnel {TUNNEL[0]:.0f}–{TUNNEL[1]:.0f} s")
    inside = (result.t > TUNNEL[0]) & (result.t < TUNNEL[1])
    mid = np.searchsorted(result.t, 0.5 * (TUNNEL[0] + TUNNEL[1]))
    end = np.searchsorted(result.t, TUNNEL[1]) - 1
    print(f"{'horizontal error (m)':28s}{'RMS in tunnel':>15s}{'max in tunnel':>15s}{'mid-tunnel':>12s}{'1σ there':>10s}{'tunnel exit':>13s}")
    rows = {}
    for name, solution in [("filtered", result), ("smoothed", result.smoothed)]:
        error, sigma = horizontal(solution, t_truth, lat, lon)
        rows[name] = (error, sigma)
        rms = math.sqrt(np.mean(error[inside] ** 2))
        print(f"{name:28s}{rms:15.2f}{error[inside].max():15.2f}{error[mid]:12.2f}{sigma[mid]:10.2f}{error[end]:13.2f}")
    at_fixes = result.at(fixes[0].t)
    error, sigma = horizontal(at_fixes, t_truth, lat, lon)
    print(f"smoothed at the GNSS times (result.at): RMS {math.sqrt(np.mean(error ** 2)):.2f} m, "
          f"within 3σ at {np.mean(error <= 3 * sigma) * 100:.0f} % of them")

    # Which source limits the horizontal position mid-tunnel: latitude and longitude variances
    # by source, in m² (the radii of curvature), filtered and smoothed.
    budget = result.budget(states=[0, 1])
    m, n = rf.radii_of_curvature(LAT0)
    scale = np.array([m + H0, (n + H0) * math.cos(LAT0)])
    shares = {}
    for name, parts in [("filtered", budget.filtered), ("smoothed", budget.smoothed)]:
        variance = parts[mid] @ scale**2
        shares[name] = (variance, variance.sum())
    print(f"{'mid-tunnel horizontal 1σ by source (m)':40s}{'filtered':>10s}{'smoothed':>10s}")
    order = np.argsort(-shares["filtered"][0])
    for i in order[:6]:
        print(f"{budget.sources[i]:40s}{math.sqrt(max(shares['filtered'][0][i], 0)):10.2f}{math.sqrt(max(shares['smoothed'][0][i], 0)):10.2f}")
    print(f"{'total (root sum of squares)':40s}{math.sqrt(shares['filtered'][1]):10.2f}{math.sqrt(shares['smoothed'][1]):10.2f}")

    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig = rf.plot.error_budget_plot(budget, scale=scale, unit="m", outages=[TUNNEL], top=5,
                                    title="Delivery van: smoothed horizontal 1σ by source")
    fig.savefig(args.budget_plot, dpi=120)
    plt.close(fig)

    fig = rf.plot.aided_plot(result, truth=(np.interp(result.t, t_truth, lat), np.interp(result.t, t_truth, lon),
                                            np.interp(result.t, t_truth, h)), outages=[TUNNEL],
                             title="Delivery van through a tunnel: filtered and smoothed error and 1σ")
    fig.savefig(args.plot, dpi=120)
    plt.close(fig)
    print(f"plot saved to {args.plot}")
    print("Not certified for safety-of-life navigation: validate against your own requirements.")


if __name__ == "__main__":
    main()
