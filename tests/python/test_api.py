"""The API's shapes, broadcasting, scalars, conversions, pickling, repr, equality and thread
safety."""

import pickle
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pytest

import rotaframe as rf


def test_scalars_in_scalars_or_1d_arrays_out():
    assert isinstance(rf.normal_gravity(0.5), float)
    assert isinstance(rf.coriolis_parameter(0.5), float)
    assert isinstance(rf.earth_rotation_angle(2460000.5), float)
    lat, lon, h = rf.ecef_to_geodetic([4e6, 3e6, 3.5e6])
    assert all(isinstance(v, float) for v in (lat, lon, h))
    assert rf.geodetic_to_ecef(0.1, 0.2, 3.0).shape == (3,)
    assert rf.ned_from_ecef(0.1, 0.2).shape == (3, 3)
    assert rf.quat_from_euler(0.1, 0.2, 0.3).shape == (4,)


def test_broadcasting_over_leading_axes():
    lat = np.linspace(-1, 1, 6).reshape(2, 3)
    assert rf.geodetic_to_ecef(lat, 0.3, np.array([0.0, 10.0, 20.0])).shape == (2, 3, 3)
    assert rf.normal_gravity(lat, 100.0).shape == (2, 3)
    t = rf.apparent_acceleration(np.zeros((4, 1, 3)), np.ones((5, 3)))
    assert t.coriolis.shape == (4, 5, 3)
    m = rf.earth_motion(np.arange(4.0))
    assert m.map_point(np.ones(3))[0].shape == (4, 3)
    assert m.map_point(np.ones((4, 3)))[1].shape == (4, 3)
    assert rf.earth_motion(np.zeros((2, 3))).shape == (2, 3)


def test_array_likes_dtypes_and_strided_inputs():
    x = np.arange(30, dtype=np.float32).reshape(10, 3) + 1
    a = rf.apparent_acceleration([0, 0, 1], x)
    b = rf.apparent_acceleration(np.array([0.0, 0, 1]), x.astype(np.float64))
    np.testing.assert_array_equal(a.total, b.total)
    strided = np.arange(60.0).reshape(10, 6)[:, ::2]
    np.testing.assert_array_equal(rf.apparent_acceleration([0, 0, 1], strided).total, rf.apparent_acceleration([0, 0, 1], strided.copy()).total)
    assert rf.apparent_acceleration([0, 0, 1], [[1, 2, 3]]).total.dtype == np.float64
    assert rf.geodetic_to_ecef([0.1, 0.2], [0, 0], [0, 0]).dtype == np.float64


def test_frame_motion_parts_labels_repr_and_indexing():
    m = rf.FrameMotion(rotation=np.eye(3), position=[1, 2, 3], parent="ecef", child="ned")
    np.testing.assert_array_equal(m.rotation, [1, 0, 0, 0])
    assert m.shape == () and m.parent == "ecef" and m.child == "ned"
    assert "FrameMotion(parent=\"ecef\", child=\"ned\"" in repr(m)
    b = rf.earth_motion(np.arange(5.0))
    assert len(b) == 5 and b[2].shape == () and b[1:4].shape == (3,) and b[::-2].shape == (3,)
    assert b[-1] == b[4]
    with pytest.raises(IndexError):
        b[5]
    assert "shape=(5,)" in repr(b)


def test_equality_is_within_tolerance_and_sign_blind_for_rotations():
    q = np.array([0.5, 0.5, 0.5, 0.5])
    a = rf.FrameMotion(rotation=q, position=[1.0, 0, 0])
    assert a == rf.FrameMotion(rotation=-q, position=[1.0 + 1e-13, 0, 0])
    assert a != rf.FrameMotion(rotation=q, position=[1.0 + 1e-6, 0, 0])
    assert a.isclose(rf.FrameMotion(rotation=q, position=[1.0 + 1e-6, 0, 0]), atol=1e-5)


def test_pickling_round_trips():
    m = rf.local_level_motion(np.radians([10.0, 20.0]), 0.5, 100.0, [1.0, 2.0, 3.0])
    again = pickle.loads(pickle.dumps(m))
    assert again == m and again.parent == "ecef" and again.shape == (2,)
    model = rf.EarthModel(a=6378137.0, f=1 / 298.257223563, gm=3.986004418e14, omega=7.292115e-5)
    assert pickle.loads(pickle.dumps(model)) == model
    assert pickle.loads(pickle.dumps(rf.WGS84)) == rf.WGS84
    t = rf.apparent_acceleration([0, 0, 1.0], [1.0, 0, 0])
    assert "ApparentAcceleration" in repr(t)


def test_models_are_selectable():
    g84 = rf.geodetic_to_ecef(0.7, 0.1, 0.0)
    g80 = rf.geodetic_to_ecef(0.7, 0.1, 0.0, model=rf.GRS80)
    assert 0 < np.abs(g84 - g80).max() < 1e-3  # the two ellipsoids differ by about 0.1 mm
    assert rf.normal_gravity(0.0, model=rf.GRS80) == rf.GRS80.gamma_equator


def test_threads_get_the_same_results_as_one():
    rng = np.random.default_rng(7)
    xyz = rf.geodetic_to_ecef(rng.uniform(-1.5, 1.5, 100_000), rng.uniform(-3, 3, 100_000), rng.uniform(0, 1e4, 100_000))
    expected = rf.ecef_to_geodetic(xyz)
    with ThreadPoolExecutor(max_workers=4) as pool:
        results = list(pool.map(lambda _: rf.ecef_to_geodetic(xyz), range(8)))
    for r in results:
        for got, want in zip(r, expected):
            np.testing.assert_array_equal(got, want)
    w = rng.normal(size=(50_000, 3))
    expected_t = rf.apparent_acceleration(w, xyz[:50_000]).total
    with ThreadPoolExecutor(max_workers=4) as pool:
        for total in pool.map(lambda _: rf.apparent_acceleration(w, xyz[:50_000]).total, range(8)):
            np.testing.assert_array_equal(total, expected_t)
