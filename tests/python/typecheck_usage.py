"""A script an analyst might write, type-checked with `mypy --strict` against the stubs."""

import numpy as np
from numpy.typing import NDArray

import rotaframe as rf


def budget(lat_deg: float, lon_deg: float, h: float) -> NDArray[np.float64]:
    xyz: NDArray[np.float64] = rf.geodetic_to_ecef(lat_deg, lon_deg, h, degrees=True)
    earth = rf.earth_motion(np.array([0.0, 60.0]))
    ned = rf.local_level_motion(lat_deg, lon_deg, h, [10.0, 0.0, 0.0], degrees=True)
    chain: rf.FrameMotion = earth.then(ned)
    terms: rf.ApparentAcceleration = rf.apparent_acceleration(chain.angular_velocity_in_child, np.zeros(3))
    lat, lon, height = rf.ecef_to_geodetic(xyz)
    _ = (lat, lon, height, rf.normal_gravity(0.3), rf.WGS84.gamma_equator)
    return terms.total
