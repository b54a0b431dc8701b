"""rotaframe: kinematics in moving (non-inertial) reference frames on numpy arrays.

Frame motions and the transport theorem, apparent (Coriolis, centrifugal, Euler,
translational) accelerations, Earth models, geodetic conversions, local-level frames,
Earth rotation and gravity. The math is rotaframe's Rust core; this package converts,
validates and batches.

Conventions (the same in Rust, C and Python):

* SI units; angles in radians unless a function takes ``degrees=True``.
* ``FrameMotion`` describes a child frame *relative to* a parent frame; its rotation maps
  child coordinates to parent coordinates and its vectors are *resolved in* the parent.
* Quaternions are Hamilton, scalar first: ``(w, x, y, z)``.
* Every array function broadcasts over leading axes and returns float64 arrays.

Not certified for safety-of-life use: validate against your own requirements, the standards
that apply to you and licensed engineering practice.
"""

from ._native import (
    GRS80,
    WGS84,
    ApparentAcceleration,
    EarthModel,
    FrameMismatchError,
    FrameMotion,
    NearEarthCentreError,
    NearPoleError,
    NonFiniteError,
    NotPositiveError,
    NotRotationMatrixError,
    NotUnitQuaternionError,
    OutOfRangeError,
    RotaframeError,
    ShapeError,
    ZeroNormError,
    apparent_acceleration,
    centripetal_acceleration_ecef,
    coriolis_ned,
    coriolis_parameter,
    earth_motion,
    earth_rate_ned,
    earth_rotation_angle,
    ecef_to_geodetic,
    enu_from_ecef,
    eotvos_correction,
    euler_from_quat,
    geodetic_to_ecef,
    gravitation_ecef,
    gravity_ecef,
    gravity_ned,
    local_level_motion,
    matrix_to_quat,
    ned_from_ecef,
    normal_gravity,
    quat_from_euler,
    quat_from_rotvec,
    quat_inverse,
    quat_multiply,
    quat_rotate,
    quat_to_matrix,
    quat_to_rotvec,
    radii_of_curvature,
    transport_rate_ned,
)

__version__ = "0.1.0"

__all__ = [
    "GRS80",
    "WGS84",
    "ApparentAcceleration",
    "EarthModel",
    "FrameMismatchError",
    "FrameMotion",
    "NearEarthCentreError",
    "NearPoleError",
    "NonFiniteError",
    "NotPositiveError",
    "NotRotationMatrixError",
    "NotUnitQuaternionError",
    "OutOfRangeError",
    "RotaframeError",
    "ShapeError",
    "ZeroNormError",
    "apparent_acceleration",
    "centripetal_acceleration_ecef",
    "coriolis_ned",
    "coriolis_parameter",
    "earth_motion",
    "earth_rate_ned",
    "earth_rotation_angle",
    "ecef_to_geodetic",
    "enu_from_ecef",
    "eotvos_correction",
    "euler_from_quat",
    "geodetic_to_ecef",
    "gravitation_ecef",
    "gravity_ecef",
    "gravity_ned",
    "local_level_motion",
    "matrix_to_quat",
    "ned_from_ecef",
    "normal_gravity",
    "quat_from_euler",
    "quat_from_rotvec",
    "quat_inverse",
    "quat_multiply",
    "quat_rotate",
    "quat_to_matrix",
    "quat_to_rotvec",
    "radii_of_curvature",
    "transport_rate_ned",
]
