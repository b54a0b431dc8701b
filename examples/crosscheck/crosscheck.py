#!/usr/bin/env python3
"""The cross-language check of `bash scripts/demo`, Python side: the scenario of
crosscheck.rs (see there) through the rotaframe package, printed as `name value`. With
``--plot PATH`` it also saves the rate table's apparent-acceleration budget over its first
10 s of spin-up (rotaframe.plot, needs matplotlib)."""

import argparse
import math

import numpy as np

import rotaframe as rf

PI = math.pi


def put(name, value):
    print(f"{name} {float(value):.16e}")


def put3(name, v):
    for axis, x in zip("xyz", np.asarray(v, dtype=float)):
        put(f"{name}.{axis}", x)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--plot")
    args = ap.parse_args()
    # 1. The aircraft.
    lat, lon, h = 48.2 * PI / 180.0, 11.6 * PI / 180.0, 5000.0
    heading = 60.0 * PI / 180.0
    v_ned = np.array([130.0 * math.cos(heading), 130.0 * math.sin(heading), -2.0])
    put3("aircraft.ecef", rf.geodetic_to_ecef(lat, lon, h))
    put("aircraft.normal_gravity", rf.normal_gravity(lat, h))
    put3("aircraft.transport_rate_ned", rf.transport_rate_ned(lat, h, v_ned))
    put3("aircraft.coriolis_ned", rf.coriolis_ned(lat, h, v_ned))
    put("aircraft.eotvos_correction", rf.eotvos_correction(lat, v_ned, h))
    # 2. The rate table.
    w = np.array([0.0, 0.0, 200.0 * PI / 180.0])
    alpha = np.array([0.0, 0.0, 20.0 * PI / 180.0])
    terms = rf.apparent_acceleration(w, [0.12, 0.0, 0.03], [0.05, 0.0, 0.0], angular_acceleration=alpha)
    put3("table.coriolis", terms.coriolis)
    put3("table.centrifugal", terms.centrifugal)
    put3("table.euler", terms.euler)
    # 3. The stationary INS.
    dt, bias = 0.01, 1e-3 * 9.80665
    gamma = rf.normal_gravity(lat, 0.0)
    dtheta = np.tile(rf.earth_rate_ned(lat) * dt, (60_000, 1))
    dv = np.tile(np.array([bias, 0.0, -gamma]) * dt, (60_000, 1))
    ins = rf.Strapdown(lat, lon, 0.0, [0.0, 0.0, 0.0], [1.0, 0.0, 0.0, 0.0])
    ins.run(dtheta, dv, dt)
    put("ins.lat_deg", ins.lat * 180.0 / PI)
    put("ins.lon_deg", ins.lon * 180.0 / PI)
    put("ins.h", ins.h)
    put3("ins.v_ned", ins.v_ned)
    if args.plot:
        import matplotlib

        matplotlib.use("Agg")
        from rotaframe.plot import budget_plot

        t = np.linspace(0.0, 10.0, 501)
        spin = np.zeros((t.size, 3))
        spin[:, 2] = alpha[2] * t  # spinning up from rest
        radius = np.zeros((t.size, 3))
        radius[:, 0] = 0.12 + 0.05 * t
        radius[:, 2] = 0.03
        budget = rf.apparent_acceleration(spin, radius, [0.05, 0.0, 0.0], angular_acceleration=alpha)
        fig = budget_plot(t, budget, title="sensor on the rate table, spinning up at 20 °/s²")
        fig.savefig(args.plot, dpi=100)


if __name__ == "__main__":
    main()
