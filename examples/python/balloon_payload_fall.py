#!/usr/bin/env python3
"""Where does a weather balloon's instrument package land after the balloon bursts, and how
much of that is Earth's rotation? (An invented scenario; every number below is made up.)

The package (0.45 kg under a small parachute: ballistic coefficient 0.9 kg/m²) is released at
burst, 30 km above an inland launch site at 52.4° N, 150 m above the ellipsoid, drifting 18 m/s
east with the upper winds. It falls through an exponential atmosphere (1.2 kg/m³ at the site,
scale height 7.6 km) in a steady 9 m/s westerly. rotaframe propagates it in the site's NED frame
(from a frame graph: Earth rotation, then the site), stops it at the ground, and splits the
landing point's displacement by apparent term.

Usage: python examples/python/balloon_payload_fall.py

Not for safety-of-life, range-safety or weapons use: validate against your own requirements,
the applicable standards and licensed practice.
"""

import numpy as np

import rotaframe as rf

SITE = (52.4, -1.9, 150.0)  # degrees, degrees, metres (invented)
BURST = np.array([0.0, 0.0, -30_000.0])  # 30 km above the site origin, NED (m)
DRIFT = np.array([0.0, 18.0, 0.0])  # moving east at burst (m/s)


def main():
    g = rf.FrameGraph("inertial")
    g.add_earth("ecef", "inertial")
    g.add_site("launch", "ecef", *SITE, degrees=True)
    package = rf.Drag(0.9, density=1.2, scale_height=7600.0, up=[0.0, 0.0, -1.0], wind=[0.0, 9.0, 0.0])
    run = dict(gravity="j2", force=package, stop_height=SITE[2], rtol=1e-10)

    full = rf.propagate((g, "launch"), (0.0, 7200.0), BURST, DRIFT, budget=True, **run)
    landing = full.position[-1]
    print(f"lands after {full.event_time / 60:.1f} min, {landing[0]:.1f} m north and {landing[1]:.1f} m east of the site "
          f"({full.steps} steps)")

    # The budget, north/east/down, checked against runs without each term.
    ned = full.budget.north_east_down
    names = ["translational", "coriolis", "centrifugal", "euler"]
    print(f"\n{'term':<14}{'north (m)':>12}{'east (m)':>12}{'down (m)':>12}{'full − without, N/E (m)':>26}")
    for name, row in zip(names, ned):
        kept = [n for n in names if n != name]
        without = rf.propagate((g, "launch"), (0.0, 7200.0), BURST, DRIFT, apparent=kept, **run)
        # Each run stops at the ground: the difference of landing points, north and east.
        difference = landing - without.position[-1]
        print(f"{name:<14}{row[0]:12.3f}{row[1]:12.3f}{row[2]:12.3f}   {np.round(difference[:2], 3)!s:>22}")
    print(f"{'sum':<14}{ned.sum(axis=0)[0]:12.3f}{ned.sum(axis=0)[1]:12.3f}{ned.sum(axis=0)[2]:12.3f}")
    print("\nThe budget is the first-order shift of the landing point (the event-time shift included); the")
    print("translational term is the site's own centripetal acceleration, the part of effective gravity that")
    print("tilts the plumb line away from the ellipsoid's normal (J2 gravitation is pure attraction).")


if __name__ == "__main__":
    main()
