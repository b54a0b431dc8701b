"""The bad-input cases of the hardening review, through the Python interface: numbers only,
finite out or a named error, physically valid models and states, errors that name the
user's argument and step, concurrent use, and the memory of Strapdown.run."""

import datetime
import math
import pickle
import threading
import tracemalloc

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import rotaframe as rf

# Any finite float, weighted so that every regime is drawn: physical magnitudes (the accepting
# paths), the whole exponent range, and the edges (the supported limits and just beyond them).
FINITE = st.one_of(
    st.floats(-1e7, 1e7),
    st.floats(allow_nan=False, allow_infinity=False),
    st.sampled_from([0.0, -0.0, 5e-324, 2.2250738585072014e-308, 1.7976931348623157e308, -1e300, 1e155, 1e15, 1.0000001e15, 1e10, 1e9, 1e6]),
)
VEC = st.lists(FINITE, min_size=3, max_size=3)
QUAT = st.one_of(st.lists(FINITE, min_size=4, max_size=4), st.just([0.5, 0.5, 0.5, 0.5]), st.just([1.0, 0.0, 0.0, 0.0]))


def finite_or_named(call, *args, **kwargs):
    """Calls `call`; returns its result if every number in it is finite, else fails. An
    exception must be a RotaframeError whose message names an argument in backticks."""
    try:
        result = call(*args, **kwargs)
    except rf.RotaframeError as e:
        assert "`" in str(e), f"{call.__name__}: the message {e} names no argument"
        assert "00000000000000000000" not in str(e), f"long decimal in {e}"
        return None
    values = result if isinstance(result, tuple) else (result,)
    for v in values:
        if v is None or isinstance(v, (rf.ImuErrors, rf.Strapdown, rf.StrapdownHistory, rf.Propagation, rf.Drag, rf.Calibration, rf.NoiseTerms)):
            continue
        if isinstance(v, rf.ApparentAcceleration):
            v = np.stack([v.translational, v.coriolis, v.centrifugal, v.euler, v.total])
        if isinstance(v, rf.FrameMotion):
            v = np.concatenate([v.rotation.ravel(), v.position.ravel(), v.velocity.ravel(), v.acceleration.ravel(), v.angular_velocity.ravel(), v.angular_acceleration.ravel()])
        assert np.all(np.isfinite(v)), f"{call.__name__}{args}: finite input gave {v}"
    return result


@settings(max_examples=400, deadline=None)
@given(lat=FINITE, lon=FINITE, h=FINITE, xyz=VEC, v=VEC)
def test_geodesy_and_gravity_are_finite_or_refused(lat, lon, h, xyz, v):
    finite_or_named(rf.geodetic_to_ecef, lat, lon, h)
    finite_or_named(rf.ecef_to_geodetic, xyz)
    finite_or_named(rf.ned_from_ecef, lat, lon)
    finite_or_named(rf.radii_of_curvature, lat)
    finite_or_named(rf.normal_gravity, lat, h)
    finite_or_named(rf.schuler_period, lat, h)
    finite_or_named(rf.gravity_ned, lat, h)
    finite_or_named(rf.gravitation_ecef, xyz)
    finite_or_named(rf.gravity_ecef, xyz)
    finite_or_named(rf.centripetal_acceleration_ecef, xyz)
    finite_or_named(rf.earth_rate_ned, lat)
    finite_or_named(rf.transport_rate_ned, lat, h, v)
    finite_or_named(rf.coriolis_ned, lat, h, v)
    finite_or_named(rf.eotvos_correction, lat, v, h)
    finite_or_named(rf.coriolis_parameter, lat)
    finite_or_named(rf.earth_rotation_angle, lat, lon)
    finite_or_named(rf.earth_motion, h)
    finite_or_named(rf.local_level_motion, lat, lon, h, v, xyz)


@settings(max_examples=400, deadline=None)
@given(w=VEC, r=VEC, v=VEC, a=VEC, q=QUAT, euler=VEC)
def test_kinematics_and_rotations_are_finite_or_refused(w, r, v, a, q, euler):
    finite_or_named(rf.apparent_acceleration, w, r, v, angular_acceleration=a, origin_acceleration=a)
    motion = finite_or_named(rf.FrameMotion, rotation=q, position=r, velocity=v, angular_velocity=w, angular_acceleration=a)
    if motion is not None:
        finite_or_named(motion.map_point, r, v, a)
        finite_or_named(motion.map_vector, v)
        finite_or_named(motion.then(motion).map_point, r, v, a)
        finite_or_named(motion.inverse().map_point, r)
    finite_or_named(rf.quat_from_euler, *euler)
    finite_or_named(rf.euler_from_quat, q)
    finite_or_named(rf.quat_to_matrix, q)
    finite_or_named(rf.quat_rotate, q, v)
    finite_or_named(rf.quat_from_rotvec, v)
    finite_or_named(rf.quat_to_rotvec, q)
    finite_or_named(rf.quat_multiply, q, q)


@settings(max_examples=200, deadline=None)
@given(bias=FINITE, scale=FINITE, dtheta=VEC, dv=VEC, dt=FINITE, lat=FINITE, h=FINITE)
def test_navigation_is_finite_or_refused(bias, scale, dtheta, dv, dt, lat, h):
    errors = finite_or_named(rf.ImuErrors, gyro_bias=bias, gyro_scale_factor=scale * 1e-300, accel_bias=[bias, 0.0, 0.0])
    if errors is not None:
        finite_or_named(errors.apply, np.array([dtheta]), np.array([dv]), dt)
    ins = finite_or_named(rf.Strapdown, math.tanh(lat), 0.1, h % 1e4, [0.0, 0.0, 0.0], [1.0, 0.0, 0.0, 0.0])
    if ins is not None:
        history = finite_or_named(ins.run, np.array([dtheta, dtheta]), np.array([dv, dv]), dt)
        if history is not None:
            assert all(np.all(np.isfinite(getattr(history, f))) for f in ("lat", "lon", "h", "v_ned", "attitude", "t"))
        assert np.all(np.isfinite([ins.lat, ins.lon, ins.h])) and np.all(np.isfinite(ins.v_ned))


def test_far_ecef_point_is_refused_with_its_index():
    with pytest.raises(rf.OutOfRangeError, match=r"`xyz` magnitude 1e155 m is beyond the supported range .*index \(1,\)"):
        rf.ecef_to_geodetic([[6.4e6, 0, 0], [1e155, 0, 0]])


def test_apparent_and_map_point_refuse_components_near_1e200():
    with pytest.raises(rf.OutOfRangeError, match="`angular_velocity`"):
        rf.apparent_acceleration([1e200, 0, 0], [1e200, 1e200, 0], [0, 0, 0])
    with pytest.raises(rf.OutOfRangeError, match="`position`"):
        rf.FrameMotion(angular_velocity=[0, 0, 1.0]).map_point([1e200, 1e200, 0])


def test_huge_sensor_errors_and_heights_are_refused():
    with pytest.raises(rf.OutOfRangeError, match="`gyro_bias`"):
        rf.ImuErrors(gyro_bias=1e300, gyro_scale_factor=1e300)
    with pytest.raises(rf.OutOfRangeError, match="`h`"):
        rf.geodetic_to_ecef(0.5, 0.1, 1e160)


def test_impossible_models_and_states_are_refused():
    with pytest.raises(rf.OutOfRangeError, match="`omega`"):
        rf.EarthModel(a=6.4e6, f=0.003, gm=3.9e14, omega=1.0)
    with pytest.raises(rf.OutOfRangeError, match="`a`"):
        rf.EarthModel(a=1.0, f=0.003, gm=3.9e14, omega=7e-5)
    with pytest.raises(rf.OutOfRangeError, match="`j2`"):  # inconsistent with the flattening
        rf.EarthModel(a=6378137.0, f=1 / 298.257223563, gm=3.986004418e14, omega=7.292115e-5, gamma_equator=9.7803253359, gamma_pole=9.8321849378, j2=0.05)
    with pytest.raises(rf.OutOfRangeError, match="`h`"):
        rf.normal_gravity(0.8, -7e6)
    with pytest.raises(rf.OutOfRangeError, match="`h`"):
        rf.Strapdown(0.8, 0.1, -7e6, [0, 0, 0], [1, 0, 0, 0])
    with pytest.raises(rf.OutOfRangeError, match=r"`height_time_constant` = 1e6 is outside \[0, 568.5\]"):
        rf.Strapdown(0.8, 0.1, 0.0, [0, 0, 0], [1, 0, 0, 0], vertical="aided", height_time_constant=1e6)


def test_tampered_pickles_are_refused():
    ins = rf.Strapdown(0.8, 0.1, 0.0, [0, 0, 0], [1, 0, 0, 0])
    rebuild, args = ins.__reduce__()
    args = list(args)
    args[9] = -5.0  # elapsed
    with pytest.raises(rf.OutOfRangeError, match="`elapsed`"):
        rebuild(*args)
    custom = rf.EarthModel(a=6378137.0, f=1 / 298.257223563, gm=3.986004418e14, omega=7.292115e-5)
    rebuild, args = custom.__reduce__()
    args = list(args)
    args[4] = 20.0  # gamma_equator, twice too strong for the body
    with pytest.raises(rf.OutOfRangeError, match="`gamma_equator`"):
        rebuild(*args)
    assert pickle.loads(pickle.dumps(ins)).lat == ins.lat


NOT_NUMBERS = [
    ("complex", np.array([1 + 2j, 0, 0])),
    ("complex scalar", 1 + 2j),
    ("string", "0.5"),
    ("bytes", b"0.5"),
    ("datetime64", np.datetime64("2026-01-01")),
    ("date", datetime.date(2026, 1, 1)),
    ("None", None),
    ("object array", np.array([object(), 1, 2], dtype=object)),
    ("boolean", True),
    ("list with a string", [1.0, "x", 3.0]),
]


@pytest.mark.parametrize("label,value", NOT_NUMBERS, ids=[n for n, _ in NOT_NUMBERS])
def test_inputs_that_are_not_numbers_raise_a_type_error_naming_the_argument(label, value):
    calls = [
        (lambda x: rf.geodetic_to_ecef(x, 0.1, 0.0), "lat"),
        (lambda x: rf.ecef_to_geodetic(x), "xyz"),
        (lambda x: rf.apparent_acceleration([0, 0, 1.0], x), "position"),
        (lambda x: rf.normal_gravity(0.5, x), "h"),
        (lambda x: rf.Strapdown(x, 0.1, 0.0, [0, 0, 0], [1, 0, 0, 0]), "lat"),
        (lambda x: rf.EarthModel(a=x, f=0.003, gm=3.9e14, omega=7e-5), "a"),
        (lambda x: rf.earth_motion(0.0, angle_at_epoch=x), "angle_at_epoch"),
    ]
    for call, name in calls:
        if value is None and name in ("position", "xyz", "h"):
            continue  # None means "omitted" for h; required arguments given None are covered below
        with pytest.raises(rf.InputTypeError, match=f"`{name}`") as info:
            call(value)
        assert isinstance(info.value, TypeError) and isinstance(info.value, rf.RotaframeError)
    with pytest.raises(rf.InputTypeError, match="`position`"):
        rf.apparent_acceleration([0, 0, 1.0], None)


def test_flags_keywords_seeds_and_models_are_checked_with_rotaframe_errors():
    with pytest.raises(rf.InputTypeError, match="`degrees`"):
        rf.geodetic_to_ecef(45.0, 7.0, 0.0, degrees="yes")
    with pytest.raises(rf.RotaframeError, match='`frame` must be one of "ned" or "ecef", got "enu"'):
        rf.Strapdown(0.8, 0.1, 0.0, [0, 0, 0], [1, 0, 0, 0], frame="enu")
    with pytest.raises(rf.InputTypeError, match="`model`"):
        rf.geodetic_to_ecef(0.5, 0.1, 0.0, model="WGS84")
    with pytest.raises(rf.OutOfRangeError, match="`seed` = -1"):
        rf.ImuErrors(seed=-1)
    with pytest.raises(rf.InputTypeError, match="`seed`"):
        rf.ImuErrors(seed=1.5)


@pytest.mark.parametrize("value", [2.0, np.float64(2.0), np.array(2.0), [1.0, 2.0], np.zeros((4, 2))])
def test_a_vector_argument_needs_its_trailing_dimension(value):
    with pytest.raises(rf.ShapeError, match="`velocity`"):
        rf.apparent_acceleration([0, 0, 1.0], [1.0, 0, 0], value)
    with pytest.raises(rf.ShapeError, match="`v_ned`"):
        rf.transport_rate_ned(0.5, 0.0, value)


def test_strapdown_run_errors_name_the_argument_and_the_step():
    dtheta = np.zeros((10, 3))
    dv = np.tile([0.0, 0.0, -0.0981], (10, 1))
    dt = np.full(10, 0.01)
    dt[6] = 1e300
    for frame in ("ned", "ecef"):
        ins = rf.Strapdown(0.8, 0.1, 0.0, [0, 0, 0], [1, 0, 0, 0], frame=frame)
        with pytest.raises(rf.OutOfRangeError, match=r"`dt` = 1e300 is outside \[1e-9, 1e5\] .*index \(6,\) of `dt`"):
            ins.run(dtheta, dv, dt)
        assert ins.elapsed == 0.0  # unchanged
    # A solution driven out of range is reported as such, with its step.
    ins = rf.Strapdown(0.8, 0.1, 0.0, [0, 0, 0], [1, 0, 0, 0])
    push = np.tile([0.0, 0.0, 1e8], (5, 1))
    with pytest.raises(rf.OutOfRangeError, match=r"navigation solution at step 0"):
        ins.run(dtheta[:5], push, 100.0)


def test_concurrent_use_of_one_strapdown_raises_a_rotaframe_error():
    ins = rf.Strapdown(0.8, 0.1, 0.0, [0, 0, 0], [1, 0, 0, 0], vertical="hold")
    n = 2_000_000
    dtheta, dv = np.zeros((n, 3)), np.tile([0.0, 0.0, -0.0981], (n, 1))
    started, errors = threading.Event(), []

    def run():
        started.set()
        ins.run(dtheta, dv, 0.01)

    worker = threading.Thread(target=run)
    worker.start()
    started.wait()
    seen = None
    while worker.is_alive() and seen is None:
        try:
            ins.h
        except rf.ConcurrentUseError as e:
            seen = e
    worker.join()
    assert seen is not None and "another thread" in str(seen)
    assert isinstance(seen, rf.RotaframeError)


def test_numbers_in_messages_print_in_shortest_form():
    with pytest.raises(rf.OutOfRangeError) as info:
        rf.EarthModel(a=6378137.0, f=2.2250738585072014e-308, gm=3.986004418e14, omega=7.292115e-5)
    assert "2.2250738585072014e-308" in str(info.value) and "0.0000000000" not in str(info.value)


def test_strapdown_run_needs_little_more_memory_than_its_result():
    # numpy reports its allocations to tracemalloc, so the traced peak covers the outputs and
    # any temporary copy. The result holds 11 float64 per step (88 B); allow 1.2x plus 8 MB
    # (the runner converts the increments in chunks of 65,536).
    n = 400_000
    dtheta, dv = np.zeros((n, 3)), np.tile([0.0, 0.0, -0.0981], (n, 1))
    ins = rf.Strapdown(0.8, 0.1, 0.0, [0, 0, 0], [1, 0, 0, 0], vertical="hold")
    tracemalloc.start()
    try:
        history = ins.run(dtheta, dv, 0.01)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    result = sum(getattr(history, f).nbytes for f in ("lat", "lon", "h", "v_ned", "attitude", "t"))
    assert result == 88 * n
    assert peak <= 1.2 * result + 8e6, f"peak {peak / 1e6:.1f} MB for a {result / 1e6:.1f} MB result"


@settings(max_examples=150, deadline=None)
@given(r=VEC, v=VEC, lat=FINITE, t1=FINITE, beta=FINITE, rho=FINITE, budget=st.booleans(), gravity=st.sampled_from(["point", "j2", None]))
def test_propagations_are_finite_or_refused(r, v, lat, t1, beta, rho, budget, gravity):
    # A graph site frame (no Python called inside the run), built-in drag of any finite
    # parameters, a short step budget (running out of it is a named error too).
    g = rf.FrameGraph("inertial")
    g.add_earth("ecef", "inertial")
    if finite_or_named(g.add_site, "pad", "ecef", lat, 0.3, 0.0) is None and "pad" not in g.frames:
        return
    drag = finite_or_named(rf.Drag, beta, density=rho)
    out = finite_or_named(rf.propagate, (g, "pad"), (0.0, min(abs(t1), 1e3) or 1.0), r, v, force=drag, gravity=gravity, budget=budget, max_steps=200)
    if out is not None:
        assert np.all(np.isfinite(out.position)) and np.all(np.isfinite(out.velocity)) and np.all(np.isfinite(out.t))
        if budget:
            assert np.all(np.isfinite(out.budget.total))


@settings(max_examples=80, deadline=None)
@given(
    quats=st.lists(QUAT, min_size=12, max_size=12),
    forces=st.lists(VEC, min_size=12, max_size=12),
    lat=FINITE,
    h=FINITE,
    noise=FINITE,
    physical=st.booleans(),
    samples=st.lists(FINITE, min_size=3, max_size=40),
    dt=FINITE,
    curve=st.lists(FINITE, min_size=6, max_size=6),
)
def test_calibration_and_allan_are_finite_or_refused(quats, forces, lat, h, noise, physical, samples, dt, curve):
    f = np.tanh(np.array(forces)) * 10.0 if physical else np.array(forces)
    q = np.array(quats)
    if physical:
        lat, h = math.tanh(lat), math.tanh(h) * 100.0
    for parameters in ("full", "bias"):
        cal = finite_or_named(rf.calibrate_accelerometers, q, f, lat=lat, h=h, parameters=parameters, noise=None if physical else abs(noise))
        if cal is not None:
            for value in (cal.parameters, cal.covariance, cal.residuals, cal.noise, cal.condition_number):
                assert np.all(np.isfinite(value))
    finite_or_named(rf.calibrate_gyros, q, f, lat=lat, h=h, table_rate=noise, duration=abs(dt) if physical else dt, parameters="bias")
    mag = finite_or_named(rf.calibrate_accelerometers_by_magnitude, f, lat=lat, h=h)
    if mag is not None:
        assert np.all(np.isfinite(mag.covariance)) and np.all(np.isfinite(mag.residuals))
        finite_or_named(mag.correct, f[:2], f[:2], 0.01)
    x = np.tanh(np.array(samples)) if physical else np.array(samples)
    finite_or_named(rf.allan_deviation, x, 0.01 if physical else dt)
    taus, devs = np.array(curve[:3]), np.array(curve[3:])
    terms = finite_or_named(rf.fit_noise_terms, np.abs(taus) + 1e-3 if physical else taus, np.abs(devs) + 1e-3 if physical else devs)
    if terms is not None:
        assert all(math.isfinite(v) for v in (terms.white_noise, terms.bias_instability, terms.rate_random_walk))
