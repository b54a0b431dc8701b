#!/usr/bin/env python3
"""A 60 s free fall with drag at rtol 1e-10, three ways in one process: rf.propagate with the
drag as a Python callable, the same integration by scipy's solve_ivp (DOP853) with a Python
right-hand side, and rf.propagate with the built-in rf.Drag (no Python called in the run).

Usage: python benches/python/bench_propagate.py [--repeat 5]

The body starts 4 km above a site at 45 deg N (its NED frame, from a FrameGraph) moving 40 m/s
north; ballistic coefficient 50 kg/m^2, exponential atmosphere (1.225 kg/m^3 at the site,
scale height 8.5 km), point-mass gravitation, all apparent terms. Figures are the best of
--repeat calls (ms), with steps and time per step. Goals: Python force callable at most 3x the
scipy baseline; built-in drag at least 20x faster than it.
"""

import argparse
import math
import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402
from scipy.integrate import solve_ivp  # noqa: E402

import rotaframe as rf  # noqa: E402
from benchutil import best  # noqa: E402

LAT = math.radians(45.0)
BETA, RHO0, SCALE = 50.0, 1.225, 8500.0
OMEGA, GM = 7.292115e-5, 3.986004418e14
R0, V0 = np.array([0.0, 0.0, -4000.0]), np.array([40.0, 0.0, 0.0])
RTOL, ATOL = 1e-10, 1e-9


def graph():
    g = rf.FrameGraph("inertial")
    g.add_earth("ecef", "inertial")
    g.add_site("pad", "ecef", LAT, 0.0, 0.0)
    return g


def python_drag(_t, r, v):
    rho = RHO0 * math.exp(r[2] / SCALE)  # up = −z in NED
    return v * (-rho * math.sqrt(v @ v) / (2.0 * BETA))


def scipy_rhs():
    """The rotating-frame equations written out in numpy: a = Cᵀ g(R₀ + C r) − Cᵀ Ω×(Ω×R₀)
    − 2 ω×v − ω×(ω×r) + drag, with ω = Cᵀ Ω (NED axes)."""
    site = np.asarray(rf.geodetic_to_ecef(LAT, 0.0, 0.0))
    c = np.asarray(rf.local_level_motion(LAT, 0.0, 0.0).rotation_matrix)
    omega = np.array([0.0, 0.0, OMEGA])
    w = c.T @ omega
    a_origin = c.T @ np.cross(omega, np.cross(omega, site))

    def rhs(t, y):
        r, v = y[:3], y[3:]
        x = site + c @ r
        grav = c.T @ (-GM * x / np.linalg.norm(x) ** 3)
        a = grav - a_origin - 2.0 * np.cross(w, v) - np.cross(w, np.cross(w, r)) + python_drag(t, r, v)
        return np.concatenate([v, a])

    return rhs


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    g = graph()
    drag = rf.Drag(BETA, density=RHO0, scale_height=SCALE, up=[0.0, 0.0, -1.0])
    rhs = scipy_rhs()
    y0 = np.concatenate([R0, V0])

    callable_run = lambda: rf.propagate((g, "pad"), (0.0, 60.0), R0, V0, force=python_drag, rtol=RTOL, atol=ATOL)  # noqa: E731
    builtin_run = lambda: rf.propagate((g, "pad"), (0.0, 60.0), R0, V0, force=drag, rtol=RTOL, atol=ATOL)  # noqa: E731
    scipy_run = lambda: solve_ivp(rhs, (0.0, 60.0), y0, method="DOP853", rtol=RTOL, atol=ATOL)  # noqa: E731

    a, b, ref = callable_run(), builtin_run(), scipy_run()
    assert ref.success
    # The three solve the same problem: end states agree to the tolerances (1e-5 m).
    assert np.allclose(a.position[-1], ref.y[:3, -1], atol=1e-5), (a.position[-1], ref.y[:3, -1])
    assert np.allclose(b.position[-1], a.position[-1], atol=1e-7)

    t_callable = best(callable_run, args.repeat)
    t_builtin = best(builtin_run, args.repeat)
    t_scipy = best(scipy_run, args.repeat)
    scipy_steps = ref.t.size - 1
    print(f"60 s fall with drag at rtol {RTOL:g} (best of {args.repeat}; end {a.position[-1].round(3)} m):")
    print(f"  scipy solve_ivp DOP853, Python rhs  {t_scipy * 1e3:8.2f} ms  {scipy_steps:5d} steps  {t_scipy / scipy_steps * 1e6:7.2f} us/step")
    print(f"  rf.propagate, Python force          {t_callable * 1e3:8.2f} ms  {a.steps:5d} steps  {t_callable / a.steps * 1e6:7.2f} us/step"
          f"   callable / scipy = {t_callable / t_scipy:.2f}  (goal <= 3)")
    print(f"  rf.propagate, built-in Drag         {t_builtin * 1e3:8.2f} ms  {b.steps:5d} steps  {t_builtin / b.steps * 1e6:7.2f} us/step"
          f"   scipy / built-in = {t_scipy / t_builtin:.1f}  (goal >= 20)")


if __name__ == "__main__":
    main()
