"""Quaternions and Euler angles against scipy.spatial.transform.Rotation, a general-purpose
reference library (scipy stores quaternions scalar-last; rotaframe is scalar-first)."""

import numpy as np
from scipy.spatial.transform import Rotation

import rotaframe as rf
from conftest import random_quaternions


def to_scipy(q):
    return Rotation.from_quat(np.asarray(q)[..., [1, 2, 3, 0]])


def from_scipy(r):
    return r.as_quat()[..., [3, 0, 1, 2]]


def same_rotation(q1, q2, atol):
    # q and −q are the same rotation.
    d = np.minimum(np.abs(q1 - q2).max(axis=-1), np.abs(q1 + q2).max(axis=-1))
    assert np.all(d <= atol), d.max()


def test_quat_from_euler_matches_scipy_intrinsic_zyx(rng):
    # scipy's intrinsic "ZYX" sequence is R = Rz(yaw) Ry(pitch) Rx(roll), the aerospace
    # body-to-local-level rotation.
    ypr = rng.uniform([-np.pi, -np.pi / 2, -np.pi], [np.pi, np.pi / 2, np.pi], (2000, 3))
    q = rf.quat_from_euler(ypr[:, 0], ypr[:, 1], ypr[:, 2])
    same_rotation(q, from_scipy(Rotation.from_euler("ZYX", ypr)), 1e-15)
    qd = rf.quat_from_euler(*np.degrees(ypr).T, degrees=True)
    same_rotation(qd, q, 1e-15)


def test_euler_from_quat_matches_scipy_away_from_gimbal_lock(rng):
    q = random_quaternions(rng, 2000)
    yaw, pitch, roll = rf.euler_from_quat(q)
    ref = to_scipy(q).as_euler("ZYX")
    keep = np.abs(ref[:, 1]) < np.radians(89.0)
    # Angles to 1e-13 rad away from ±90° pitch (rounding of atan2 on matrix entries).
    np.testing.assert_allclose(np.stack([yaw, pitch, roll], -1)[keep], ref[keep], rtol=0, atol=1e-13)


def test_euler_at_gimbal_lock_reproduces_the_rotation():
    for pitch in (np.pi / 2, -np.pi / 2):
        q = rf.quat_from_euler(0.7, pitch, -0.4)
        yaw, p, roll = rf.euler_from_quat(q)
        assert roll == 0.0 and abs(p - pitch) < 1e-15
        same_rotation(rf.quat_from_euler(yaw, p, roll), q, 1e-14)
        # scipy agrees that it is the same rotation.
        assert to_scipy(q).approx_equal(to_scipy(rf.quat_from_euler(yaw, p, roll)), atol=1e-12)


def test_matrices_products_rotvecs_and_rotation_of_vectors_match_scipy(rng):
    p, q = random_quaternions(rng, 1000), random_quaternions(rng, 1000)
    np.testing.assert_allclose(rf.quat_to_matrix(q), to_scipy(q).as_matrix(), rtol=0, atol=1e-15)
    same_rotation(rf.matrix_to_quat(to_scipy(q).as_matrix()), q, 1e-15)
    # Hamilton product p ⊗ q is "q then p": scipy's p * q.
    same_rotation(rf.quat_multiply(p, q), from_scipy(to_scipy(p) * to_scipy(q)), 1e-15)
    same_rotation(rf.quat_inverse(q), from_scipy(to_scipy(q).inv()), 1e-15)
    np.testing.assert_allclose(rf.quat_to_rotvec(q), to_scipy(q).as_rotvec(), rtol=0, atol=1e-14)
    v = rng.normal(size=(1000, 3)) * 2
    same_rotation(rf.quat_from_rotvec(v), from_scipy(Rotation.from_rotvec(v)), 1e-15)
    np.testing.assert_allclose(rf.quat_rotate(q, v), to_scipy(q).apply(v), rtol=0, atol=1e-14)
