"""FrameGraph from Python: the pinned API, agreement with hand-built chains and with the
analytic motions of its edges (numpy references), sampled edges against an analytic
manoeuvre, function edges, TOML and pickle round trips, and the errors."""

import pickle

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import rotaframe as rf

SITE = (np.radians(-31.5), np.radians(115.9), 40.0)


def assert_motions_close(a, b, rtol, atol):
    """Every part of two batched motions agrees (rotations up to the quaternion's sign)."""
    qa, qb = a.rotation, b.rotation
    sign = np.where(np.sum(qa * qb, axis=-1, keepdims=True) < 0, -1.0, 1.0)
    np.testing.assert_allclose(qa, sign * qb, rtol=rtol, atol=atol)
    for part in ("position", "velocity", "acceleration", "angular_velocity", "angular_acceleration"):
        np.testing.assert_allclose(getattr(a, part), getattr(b, part), rtol=rtol, atol=atol, err_msg=part)


def launch_site_graph():
    """inertial → ecef → pad (NED) → table (spin) → accel (fixed mount); a camera on the pad."""
    g = rf.FrameGraph("inertial")
    g.add_earth("ecef", "inertial", angle_at_epoch=1.25)
    g.add_site("pad", "ecef", *SITE)
    g.add_spin("table", "pad", axis=[0.1, 0.0, 1.0], rate=3.0, angle_at_zero=0.4, angular_acceleration=0.2)
    g.add_fixed("accel", "table", rotation=rf.quat_from_euler(1.5, -0.02, 0.01), position=[0.3, -0.1, 0.05])
    g.add_fixed("camera", "pad", rotation=[0.5, 0.5, 0.5, 0.5], position=[10.0, 2.0, -1.5])
    return g


def test_a_chain_query_equals_the_hand_built_then_chain():
    g = launch_site_graph()
    t = np.linspace(-5.0, 50.0, 101)
    axis = np.array([0.1, 0.0, 1.0]) / np.linalg.norm([0.1, 0.0, 1.0])
    angle = 0.4 + 3.0 * t + 0.5 * 0.2 * t * t
    rate = 3.0 + 0.2 * t
    half = 0.5 * angle
    spin = rf.FrameMotion(
        rotation=np.column_stack([np.cos(half), np.sin(half)[:, None] * axis]),
        angular_velocity=rate[:, None] * axis,
        angular_acceleration=np.tile(0.2 * axis, (t.size, 1)),
    )
    by_hand = (
        rf.earth_motion(t, angle_at_epoch=1.25)
        .then(rf.local_level_motion(*SITE))
        .then(spin)
        .then(rf.FrameMotion(rotation=rf.quat_from_euler(1.5, -0.02, 0.01), position=[0.3, -0.1, 0.05]))
    )
    m = g.motion("inertial", "accel", t)
    assert (m.parent, m.child, m.shape) == ("inertial", "accel", (101,))
    # Tolerance: the spin built here from numpy's sin/cos differs from the core's by an ulp or
    # two per component; propagated through the chain that stays below 1e-9 m at 6.4e6 m.
    assert_motions_close(m, by_hand, rtol=1e-12, atol=1e-9)


def test_camera_relative_to_accelerometer_is_the_composition_through_the_pad():
    g = launch_site_graph()
    t = np.array([0.0, 1.0, 2.5])
    direct = g.motion("accel", "camera", t)
    via = g.motion("accel", "pad", t).then(g.motion("pad", "camera", t))
    assert_motions_close(direct, via, rtol=1e-12, atol=1e-12)
    assert g.path("accel", "camera") == ["accel", "table", "pad", "camera"]
    assert g.parent_of("table") == "pad" and g.parent_of("inertial") is None
    assert g.frames == ["inertial", "ecef", "pad", "table", "accel", "camera"]


def test_map_point_and_apparent_acceleration_follow_the_motions():
    g = launch_site_graph()
    t = np.array([3.0, 4.0])
    p, v, a = g.map_point("accel", "pad", t, [[0.0, 0.0, 0.0], [0.01, 0.0, 0.0]])
    q, w, b = g.motion("pad", "accel", t).map_point([[0.0, 0.0, 0.0], [0.01, 0.0, 0.0]])
    np.testing.assert_array_equal(p, q)
    terms = g.apparent_acceleration("table", t, [[0.2, 0.0, 0.0]] * 2, [[0.0, 0.5, 0.0]] * 2)
    m = g.motion("inertial", "table", t)
    ref = rf.apparent_acceleration(m.angular_velocity_in_child, [0.2, 0.0, 0.0], [0.0, 0.5, 0.0],
                                   angular_acceleration=m.angular_acceleration_in_child,
                                   origin_acceleration=np.einsum("...ji,...j->...i", m.rotation_matrix, m.acceleration))
    np.testing.assert_allclose(terms.total, ref.total, rtol=1e-12, atol=1e-15)
    lab = rf.FrameGraph("lab", inertial=False)
    lab.add_spin("table", "lab", axis=[0, 0, 1], rate=1.0)
    with pytest.raises(rf.FrameGraphError, match="not declared inertial"):
        lab.apparent_acceleration("table", 0.0, [1.0, 0, 0], [0, 0, 0])


def analytic(t):
    """A body on a 20 m circle at 0.3 rad/s, rising at 1 m/s, turning about a tilted axis."""
    t = np.asarray(t, dtype=float)
    w, rho = 0.3, 20.0
    pos = np.column_stack([rho * np.cos(w * t), rho * np.sin(w * t), t])
    vel = np.column_stack([-rho * w * np.sin(w * t), rho * w * np.cos(w * t), np.ones_like(t)])
    axis = np.array([1.0, 2.0, 2.0]) / 3.0
    angle = 0.5 * t + 0.2 * np.sin(t)
    rate = 0.5 + 0.2 * np.cos(t)
    q = np.column_stack([np.cos(angle / 2), np.sin(angle / 2)[:, None] * axis])
    return pos, vel, q, rate[:, None] * axis


def test_a_sampled_edge_reproduces_an_analytic_manoeuvre_and_refuses_extrapolation():
    t = np.arange(0.0, 20.0001, 0.1)
    pos, _, q, _ = analytic(t)
    g = rf.FrameGraph("site", inertial=False)
    g.add_samples("vehicle", "site", t, pos, q, position_kind="cartesian")
    mid = t[3:-4] + 0.05
    m = g.motion("site", "vehicle", mid)
    p_ref, v_ref, _, w_ref = analytic(mid)
    # Bounds about twice the measured interpolation errors at 10 Hz (tests/tests/graph_properties.rs).
    assert np.max(np.abs(m.position - p_ref)) < 1e-8
    assert np.max(np.abs(m.velocity - v_ref)) < 1e-7
    assert np.max(np.abs(m.angular_velocity - w_ref)) < 1e-6
    with pytest.raises(rf.OutOfRangeError, match=r"`time` = 20.5 is outside \[0, 20\] \(frame \"vehicle\", at index 1 of `t`\)"):
        g.motion("site", "vehicle", [1.0, 20.5])


def test_geodetic_samples_hang_from_the_earth_fixed_frame():
    t = np.arange(0.0, 10.0, 0.5)
    lat = np.full(t.size, 45.0)
    lon = 7.0 + 1e-5 * t
    h = np.full(t.size, 300.0)
    g = rf.FrameGraph("inertial")
    g.add_earth("ecef", "inertial")
    g.add_samples("boat", "ecef", t, np.column_stack([lat, lon, h]), np.tile([1.0, 0, 0, 0], (t.size, 1)), degrees=True)
    m = g.motion("ecef", "boat", 4.25)
    np.testing.assert_allclose(m.position, rf.geodetic_to_ecef(45.0, 7.0 + 4.25e-5, 300.0, degrees=True), atol=1e-6)
    with pytest.raises(rf.FrameGraphError, match="Earth-fixed"):
        g.add_samples("buoy", "inertial", t, np.column_stack([lat, lon, h]), np.tile([1.0, 0, 0, 0], (t.size, 1)), degrees=True)


def test_function_edges_are_called_once_per_query_with_all_times():
    calls = []

    def gimbal(t):
        calls.append(t.shape)
        return rf.FrameMotion(rotation=np.column_stack([np.cos(t / 2), np.zeros((t.size, 2)), np.sin(t / 2)]),
                              angular_velocity=np.tile([0.0, 0.0, 1.0], (t.size, 1)))

    g = launch_site_graph()
    g.add_function("gimbal", "pad", gimbal)
    g.add_fixed("lidar", "gimbal", position=[0.0, 0.0, -0.3])
    m = g.motion("camera", "lidar", np.linspace(0, 1, 7))
    assert calls == [(7,)] and m.shape == (7,)
    with pytest.raises(rf.FrameGraphError, match="function edges"):
        pickle.dumps(g)
    g.add_function("broken", "pad", lambda t: 5)
    with pytest.raises(rf.InputTypeError, match="must return a FrameMotion"):
        g.motion("pad", "broken", 0.0)


def test_toml_and_pickle_round_trips_are_lossless():
    g = launch_site_graph()
    t = np.arange(0.0, 3.0, 0.1)
    pos, _, q, _ = analytic(t)
    g.add_samples("rover", "pad", t, pos, q, position_kind="cartesian")
    text = g.to_toml()
    back = rf.FrameGraph.from_toml(text)
    assert back.to_toml() == text and back.kind_of("rover") == "samples"
    with pytest.raises(rf.FrameGraphError, match="attach its samples"):
        back.motion("pad", "rover", 1.0)
    back.add_samples("rover", "pad", t, pos, q, position_kind="cartesian")
    times = np.array([0.0, 1.05, 2.5])
    assert back.motion("inertial", "rover", times) == g.motion("inertial", "rover", times)
    clone = pickle.loads(pickle.dumps(g))
    assert clone.motion("accel", "rover", times) == g.motion("accel", "rover", times)


def test_malformed_graph_files_name_their_line():
    with pytest.raises(rf.FrameGraphError, match="line 3: unknown field `rat`"):
        rf.FrameGraph.from_toml('root = "lab"\n[[frame]]\nrat = 1\n')
    with pytest.raises(rf.FrameGraphError, match='line 2: frame "a" names an unknown parent: no frame named "lba" \\(did you mean "lab"\\?\\)'):
        rf.FrameGraph.from_toml('root = "lab"\n[[frame]]\nname = "a"\nparent = "lba"\nkind = "fixed"\n')


def test_names_and_arguments_are_checked():
    g = launch_site_graph()
    with pytest.raises(rf.FrameGraphError, match='no frame named "accl" \\(did you mean "accel"\\?\\)'):
        g.motion("pad", "accl", 0.0)
    with pytest.raises(rf.FrameGraphError, match="already in the graph"):
        g.add_fixed("camera", "pad")
    with pytest.raises(rf.ZeroNormError, match="`axis`"):
        g.add_spin("rotor", "pad", axis=[0, 0, 0], rate=1.0)
    with pytest.raises(rf.RotaframeError, match='`axes` must be one of "ned" or "enu"'):
        g.add_site("other", "ecef", 0.1, 0.2, 0.0, axes="nwu")
    with pytest.raises(rf.InputTypeError, match="`t`"):
        g.motion("pad", "accel", "now")
    with pytest.raises(rf.RotaframeError, match="strictly increasing.*index 2 of `t`"):
        g.add_samples("cart", "pad", [0.0, 1.0, 1.0, 2.0], np.zeros((4, 3)), np.tile([1.0, 0, 0, 0], (4, 1)), position_kind="cartesian")
    with pytest.raises(rf.NotUnitQuaternionError, match="index 1 of `attitude`"):
        g.add_samples("cart", "pad", [0.0, 1.0, 2.0], np.zeros((3, 3)), [[1, 0, 0, 0], [2, 0, 0, 0], [1, 0, 0, 0]], position_kind="cartesian")


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 10), st.floats(-3, 3), st.floats(-2, 2)), min_size=1, max_size=6),
       st.integers(0, 100), st.integers(0, 100), st.floats(-10, 10))
def test_queries_invert_and_compose_in_random_trees(spec, a, b, t):
    g = rf.FrameGraph("f0")
    for k, (parent, rate, offset) in enumerate(spec, start=1):
        p = f"f{parent % k}"
        if k % 2:
            g.add_spin(f"f{k}", p, axis=[np.sin(k), np.cos(k), 0.5], rate=rate, angle_at_zero=offset)
        else:
            g.add_fixed(f"f{k}", p, rotation=rf.quat_from_rotvec([offset, rate, 0.1]), position=[offset, 1.0, rate])
    n = len(spec) + 1
    fa, fb = f"f{a % n}", f"f{b % n}"
    ab, ba = g.motion(fa, fb, t), g.motion(fb, fa, t)
    assert_motions_close(ab, ba.inverse(), rtol=1e-11, atol=1e-11)
    assert_motions_close(ab, g.motion(fa, "f0", t).then(g.motion("f0", fb, t)), rtol=1e-11, atol=1e-11)
