"""A manoeuvring test trajectory for the navigation tests, built from FrameMotion chains.

Invented test data: a vehicle weaving, climbing and speeding up over a fixed local tangent
plane at 45.2° N, 9.6° E, with its attitude oscillating on three axes (the same manoeuvre as
the Rust tests' ``Manoeuvres``). Every derivative is in closed form, so the ideal IMU output
is exact to rounding.
"""

import numpy as np

import rotaframe as rf

ORIGIN = (np.radians(45.2), np.radians(9.6), 350.0)
ANGLE_AT_EPOCH = 0.7

# (amplitude, period, phase) sinusoids, as in tests/src/trajectories.rs.
NORTH = [(400.0, 150.0, 0.0), (35.0, 19.0, 0.4)]
NORTH_SPEED = 60.0
EAST = [(-1500.0, 240.0, np.pi / 2), (200.0, 47.0, 0.0), (6.0, 4.3, 1.0)]
DOWN = [(-300.0, 200.0, 0.0), (-20.0, 31.0, 2.0)]
YAW = [(0.8, 90.0, 0.0), (0.05, 7.0, 0.3)]
YAW_RATE = 0.01
PITCH = [(0.15, 37.0, 0.5), (0.01, 1.7, 0.0)]
ROLL = [(0.5, 23.0, 0.0), (0.05, 3.1, 1.2), (0.02, 0.5, 0.0)]


def waves(spec, t):
    """Value, first and second derivative of a sum of sinusoids at times ``t``."""
    t = np.asarray(t, float)
    value, rate, accel = np.zeros_like(t), np.zeros_like(t), np.zeros_like(t)
    for amplitude, period, phase in spec:
        w = 2 * np.pi / period
        s, c = np.sin(w * t + phase), np.cos(w * t + phase)
        value += amplitude * s
        rate += amplitude * w * c
        accel -= amplitude * w * w * s
    return value, rate, accel


def about_axis(axis, angle, rate, accel):
    """A batch of rotations about a fixed axis with their rates and angular accelerations."""
    axis = np.asarray(axis, float)
    q = np.concatenate([np.cos(angle / 2)[:, None], np.sin(angle / 2)[:, None] * axis], axis=1)
    return rf.FrameMotion(rotation=q, angular_velocity=rate[:, None] * axis, angular_acceleration=accel[:, None] * axis)


def relative_to_earth(t):
    """The body's motion relative to ECEF at times ``t`` (1-D array)."""
    t = np.atleast_1d(np.asarray(t, float))
    tangent = rf.local_level_motion(*ORIGIN)
    n, vn, an = waves(NORTH, t)
    e, ve, ae = waves(EAST, t)
    d, vd, ad = waves(DOWN, t)
    carried = rf.FrameMotion(
        position=np.stack([n + NORTH_SPEED * t, e + 1500.0, d], axis=1),
        velocity=np.stack([vn + NORTH_SPEED, ve, vd], axis=1),
        acceleration=np.stack([an, ae, ad], axis=1),
        parent="ned",
    )
    y, yr, ya = waves(YAW, t)
    p, pr, pa = waves(PITCH, t)
    r, rr, ra = waves(ROLL, t)
    yaw = about_axis([0, 0, 1], 0.2 + y + YAW_RATE * t, yr + YAW_RATE, ya)
    pitch = about_axis([0, 1, 0], p, pr, pa)
    roll = about_axis([1, 0, 0], r, rr, ra)
    return tangent.then(carried).then(yaw).then(pitch).then(roll)


def relative_to_inertial(t):
    """The body's motion relative to the inertial frame at times ``t`` (1-D array)."""
    return rf.earth_motion(t, angle_at_epoch=ANGLE_AT_EPOCH).then(relative_to_earth(t))


def truth(t):
    """True (lat, lon, h, v_ned, attitude) at times ``t``."""
    body = relative_to_earth(t)
    lat, lon, h = rf.ecef_to_geodetic(body.position)
    c_en = rf.ned_from_ecef(lat, lon)
    v_ned = np.einsum("...ij,...j->...i", c_en, body.velocity)
    attitude = rf.matrix_to_quat(c_en @ body.rotation_matrix)
    return lat, lon, h, v_ned, attitude


def state_errors(lat, lon, h, v_ned, attitude, truth_state):
    """Position (m), velocity (m/s) and attitude (rad) errors against a true state."""
    tl, to, th, tv, tq = truth_state
    p = np.linalg.norm(rf.geodetic_to_ecef(lat, lon, h) - rf.geodetic_to_ecef(tl, to, th), axis=-1)
    v = np.linalg.norm(np.asarray(v_ned) - tv, axis=-1)
    dq = rf.quat_multiply(rf.quat_inverse(attitude), tq)
    a = np.linalg.norm(rf.quat_to_rotvec(dq), axis=-1)
    return p, v, a
