"""`out=` and `threads=` on every batched function, and many strapdown runs at once.

What is checked (the references are the library's own one-thread, fresh-output results, which
the other tests check against published values, numpy and scipy; here the property is that
the keywords change *where* and *on how many cores* results are computed, never their bits):

* `out=` returns the caller's arrays, filled with exactly the values a call without it
  returns; every wrong `out` (shape, dtype, non-contiguous, read-only, an alias of an input,
  two outputs sharing memory, a wrong count) raises before a single value is written;
* an element that fails after the checks leaves the caller's outputs all NaN, never a mix of
  new and stale values;
* `threads=2` and `threads=0` give bit-identical results to `threads=1` on batches large
  enough to be split (the split size is 4096 elements per chunk);
* `run_strapdowns` equals one `Strapdown.run` per stepper, bit for bit, on any thread count,
  and moves no stepper when one run fails; `progress=` callbacks are called and can stop a run.
"""

import pickle

import numpy as np
import pytest

import rotaframe as rf

N = 20_000  # above 2 × 4096, so that threads=2 really splits the batch
RNG = np.random.default_rng(20261202)


def _unit(q):
    return q / np.linalg.norm(q, axis=-1, keepdims=True)


LAT = RNG.uniform(-1.4, 1.4, N)
LON = RNG.uniform(-3.1, 3.1, N)
H = RNG.uniform(-300.0, 9000.0, N)
XYZ = rf.geodetic_to_ecef(LAT, LON, H)
V = RNG.normal(0.0, 50.0, (N, 3))
Q = _unit(RNG.normal(size=(N, 4)))
Q2 = _unit(RNG.normal(size=(N, 4)))
ROTVEC = RNG.normal(0.0, 0.8, (N, 3))
W = RNG.normal(0.0, 0.3, (N, 3))
R = RNG.normal(0.0, 20.0, (N, 3))

# name → (function, positional args, keyword args)
CASES = {
    "geodetic_to_ecef": (rf.geodetic_to_ecef, (LAT, LON, H), {}),
    "ecef_to_geodetic": (rf.ecef_to_geodetic, (XYZ,), {}),
    "ned_from_ecef": (rf.ned_from_ecef, (LAT, LON), {}),
    "enu_from_ecef": (rf.enu_from_ecef, (LAT, LON), {}),
    "radii_of_curvature": (rf.radii_of_curvature, (LAT,), {}),
    "normal_gravity": (rf.normal_gravity, (LAT, H), {}),
    "gravity_ned": (rf.gravity_ned, (LAT, H), {}),
    "gravitation_ecef": (rf.gravitation_ecef, (XYZ,), {}),
    "gravity_ecef": (rf.gravity_ecef, (XYZ,), {}),
    "centripetal_acceleration_ecef": (rf.centripetal_acceleration_ecef, (XYZ,), {}),
    "earth_rate_ned": (rf.earth_rate_ned, (LAT,), {}),
    "transport_rate_ned": (rf.transport_rate_ned, (LAT, H, V), {}),
    "coriolis_ned": (rf.coriolis_ned, (LAT, H, V), {}),
    "eotvos_correction": (rf.eotvos_correction, (LAT, V), {"h": H}),
    "coriolis_parameter": (rf.coriolis_parameter, (LAT,), {}),
    "earth_rotation_angle": (rf.earth_rotation_angle, (2461000.5 + np.arange(N) * 0.01,), {}),
    "quat_from_euler": (rf.quat_from_euler, (LON, LAT, LON / 2), {}),
    "euler_from_quat": (rf.euler_from_quat, (Q,), {}),
    "quat_to_matrix": (rf.quat_to_matrix, (Q,), {}),
    "matrix_to_quat": (rf.matrix_to_quat, (rf.quat_to_matrix(Q),), {}),
    "quat_multiply": (rf.quat_multiply, (Q, Q2), {}),
    "quat_inverse": (rf.quat_inverse, (Q,), {}),
    "quat_rotate": (rf.quat_rotate, (Q, V), {}),
    "quat_from_rotvec": (rf.quat_from_rotvec, (ROTVEC,), {}),
    "quat_to_rotvec": (rf.quat_to_rotvec, (Q,), {}),
    "lever_arm_state": (rf.lever_arm_state, (LAT, LON, H, V, Q, W, np.array([0.4, -0.2, 1.1])), {}),
}


def _motion():
    return rf.FrameMotion(
        rotation=Q,
        position=R,
        velocity=V,
        acceleration=RNG.normal(size=(N, 3)),
        angular_velocity=W,
        angular_acceleration=RNG.normal(0.0, 0.01, (N, 3)),
    )


MOTION = _motion()
METHODS = {
    "apparent_acceleration": (
        lambda **k: rf.apparent_acceleration(W, R, V, angular_acceleration=W / 7, origin_acceleration=V / 3, **k),
    ),
    "FrameMotion.map_point": (lambda **k: MOTION.map_point(R, V, V / 5, **k),),
    "FrameMotion.map_vector": (lambda **k: MOTION.map_vector(V, **k),),
}


def _outputs(result):
    """The output arrays of a result: one array, a tuple, or an ApparentAcceleration."""
    if isinstance(result, np.ndarray):
        return (result,)
    if isinstance(result, rf.ApparentAcceleration):
        return (result.translational, result.coriolis, result.centrifugal, result.euler, result.total)
    return tuple(result)


def _call(name, **kwargs):
    if name in CASES:
        f, args, kw = CASES[name]
        return f(*args, **kw, **kwargs)
    return METHODS[name][0](**kwargs)


ALL = list(CASES) + list(METHODS)
WITH_OUT = [n for n in ALL if n != "FrameMotion.then"]


def _out_arg(arrays):
    """`out` for a list of arrays: the array itself for one output, else a tuple."""
    return arrays[0] if len(arrays) == 1 else tuple(arrays)


@pytest.mark.parametrize("name", WITH_OUT)
def test_out_is_written_in_place_with_the_values_of_a_fresh_call(name):
    expected = _outputs(_call(name))
    out = tuple(np.full(e.shape, -7.0) for e in expected)
    result = _outputs(_call(name, out=_out_arg(out)))
    for got, mine, want in zip(result, out, expected):
        assert got is mine
        np.testing.assert_array_equal(mine, want)  # exact: the same kernel


@pytest.mark.parametrize("name", ALL)
@pytest.mark.parametrize("threads", [2, 0])
def test_threads_give_the_same_bits_as_one_thread(name, threads):
    one = _outputs(_call(name))
    many = _outputs(_call(name, threads=threads))
    for a, b in zip(one, many):
        assert a.tobytes() == b.tobytes()


def test_then_with_threads_composes_the_same_motions():
    other = _motion()
    a, b = MOTION.then(other), MOTION.then(other, threads=2)
    assert a.isclose(b, rtol=0.0, atol=0.0)
    p1, p2 = a.map_point(R), b.map_point(R)
    assert all(x.tobytes() == y.tobytes() for x, y in zip(p1, p2))


def _bad_outs(expected):
    """(description, out, exception) for every kind of wrong `out`."""
    shapes = [e.shape for e in expected]
    good = [np.zeros(s) for s in shapes]

    def replace(k, value):
        arrays = list(np.zeros(s) for s in shapes)
        arrays[k] = value
        return arrays

    cases = [
        ("wrong shape", replace(0, np.zeros((shapes[0][0] + 1,) + shapes[0][1:])), rf.ShapeError),
        ("wrong dtype", replace(0, np.zeros(shapes[0], dtype=np.float32)), rf.InputTypeError),
        ("not contiguous", replace(0, np.zeros((shapes[0][0] * 2,) + shapes[0][1:])[::2]), rf.ShapeError),
        ("a list", replace(0, [0.0] * shapes[0][0]), rf.InputTypeError),
    ]
    read_only = np.zeros(shapes[0])
    read_only.flags.writeable = False
    cases.append(("read-only", replace(0, read_only), rf.RotaframeError))
    if len(shapes) > 1:
        cases.append(("too few", (tuple(good[:-1]),), rf.ShapeError))
        if shapes[0] == shapes[1]:
            shared = np.zeros(shapes[0])
            cases.append(("two outputs share memory", [shared, shared] + good[2:], rf.RotaframeError))
    return cases


@pytest.mark.parametrize("name", WITH_OUT)
def test_a_wrong_out_is_refused_before_anything_is_written(name):
    expected = _outputs(_call(name))
    for what, arrays, error in _bad_outs(expected):
        sentinels = [np.array(a, copy=True) if isinstance(a, np.ndarray) else None for a in arrays]
        with pytest.raises(error):
            _call(name, out=_out_arg(arrays))
        for a, before in zip(arrays, sentinels):
            if before is not None:
                assert np.array_equal(a, before), f"{name}: `out` changed after a refused call ({what})"


def test_an_out_that_aliases_an_input_is_refused_and_the_input_kept():
    q = Q.copy()
    before = q.copy()
    with pytest.raises(rf.RotaframeError, match="overlaps an input"):
        rf.quat_inverse(q, out=q)
    np.testing.assert_array_equal(q, before)
    xyz = XYZ.copy()
    with pytest.raises(rf.RotaframeError, match="overlaps"):
        rf.gravity_ecef(xyz, out=xyz)
    # Two views of one buffer: disjoint ones are fine, overlapping ones are refused.
    buffer = np.zeros((2, N, 3))
    buffer[0] = V
    rf.quat_rotate(Q, buffer[0], out=buffer[1])
    np.testing.assert_array_equal(buffer[1], rf.quat_rotate(Q, V))
    flat = np.zeros(3 * N + 3)
    flat[: 3 * N] = V.ravel()
    with pytest.raises(rf.RotaframeError, match="overlaps"):
        rf.quat_rotate(Q, flat[: 3 * N].reshape(N, 3), out=flat[3:].reshape(N, 3))


def test_an_element_that_fails_after_the_checks_leaves_out_all_nan():
    lat = LAT.copy()
    lat[N // 2] = 2.0  # beyond ±π/2
    out = np.zeros((N, 3))
    with pytest.raises(rf.OutOfRangeError, match="lat"):
        rf.geodetic_to_ecef(lat, LON, H, out=out, threads=2)
    assert np.isnan(out).all()
    outs = tuple(np.zeros(N) for _ in range(3))
    xyz = XYZ.copy()
    xyz[7] = np.nan
    with pytest.raises(rf.NonFiniteError):
        rf.ecef_to_geodetic(xyz, out=outs)
    assert all(np.isnan(o).all() for o in outs)


def test_the_first_bad_element_is_named_whatever_the_thread_count():
    lat = LAT.copy()
    lat[[3, N - 5]] = 2.0
    messages = []
    for threads in (1, 2, 0):
        with pytest.raises(rf.OutOfRangeError) as info:
            rf.normal_gravity(lat, H, threads=threads)
        messages.append(str(info.value))
    assert messages[0] == messages[1] == messages[2]
    assert "(3,)" in messages[0]


def test_scalar_calls_with_out_return_the_out_array():
    out = np.zeros(())
    got = rf.normal_gravity(0.5, 10.0, out=out)
    assert got is out and float(out) == rf.normal_gravity(0.5, 10.0)


@pytest.mark.parametrize("bad, error", [(-1, rf.OutOfRangeError), (True, rf.InputTypeError), (2.0, rf.InputTypeError), (5000, rf.OutOfRangeError)])
def test_a_bad_thread_count_is_refused(bad, error):
    with pytest.raises(error, match="threads"):
        rf.geodetic_to_ecef(LAT, LON, H, threads=bad)


def test_out_with_jacobian_is_refused():
    with pytest.raises(rf.RotaframeError, match="jacobian"):
        rf.geodetic_to_ecef(LAT, LON, H, jacobian=True, out=np.zeros((N, 3)))


def test_jacobians_with_threads_give_the_same_bits():
    a = rf.geodetic_to_ecef(LAT, LON, H, jacobian=True)
    b = rf.geodetic_to_ecef(LAT, LON, H, jacobian=True, threads=2)
    assert all(x.tobytes() == y.tobytes() for x, y in zip(a, b))
    a = MOTION.map_point(R, jacobian=True)
    b = MOTION.map_point(R, jacobian=True, threads=2)
    assert all(x.tobytes() == y.tobytes() for x, y in zip(a, b))


# ---- many strapdown runs --------------------------------------------------------------------

RUNS, STEPS, DT = 6, 3000, 0.01


def _fleet():
    """Six steppers at different invented sites, and biased stationary increments for each."""
    lat = np.radians([10.0, 25.0, 40.0, 52.0, -33.0, 61.0])
    steppers = [rf.Strapdown(lat=la, lon=0.3, h=120.0, v_ned=[0.0, 0.0, 0.0], attitude=[1.0, 0.0, 0.0, 0.0]) for la in lat]
    dtheta = np.empty((RUNS, STEPS, 3))
    dv = np.empty((RUNS, STEPS, 3))
    for r in range(RUNS):
        # Level and north-pointing at rest: the gyros see Earth rate, the accelerometers the
        # reaction to gravity; each run gets its own small biases so that the runs differ.
        rate = rf.earth_rate_ned(lat[r]) + 1e-6 * (r + 1)
        force = np.array([0.0, 0.0, -rf.normal_gravity(lat[r], 120.0)]) + 1e-3 * (r + 1)
        dtheta[r] = rate * DT
        dv[r] = force * DT
    return steppers, dtheta, dv


def test_run_strapdowns_equals_one_run_per_stepper_on_any_thread_count():
    steppers, dtheta, dv = _fleet()
    # Copies of the steppers come from pickling (a Strapdown pickles to its exact state).
    singles = [pickle.loads(pickle.dumps(s)).run(dtheta[r], dv[r], DT) for r, s in enumerate(steppers)]
    for threads in (1, 2):
        fleet = [pickle.loads(pickle.dumps(s)) for s in steppers]
        histories = rf.run_strapdowns(fleet, dtheta, dv, DT, threads=threads)
        assert len(histories) == RUNS
        for one, many, stepper in zip(singles, histories, fleet):
            for field in ("lat", "lon", "h", "v_ned", "attitude", "t"):
                assert getattr(one, field).tobytes() == getattr(many, field).tobytes()
            assert stepper.elapsed == pytest.approx(STEPS * DT, rel=1e-12)
        # The histories replay for covariance prediction like a single run's.
        assert len(histories[0]) == STEPS


def test_run_strapdowns_moves_no_stepper_when_one_run_fails():
    steppers, dtheta, dv = _fleet()
    before = [s.lat for s in steppers]
    dv[4, 100] = np.nan
    with pytest.raises(rf.NonFiniteError, match="run 4"):
        rf.run_strapdowns(steppers, dtheta, dv, DT, threads=2)
    assert [s.lat for s in steppers] == before
    assert all(s.elapsed == 0.0 for s in steppers)


def test_run_strapdowns_refuses_a_wrong_shape_naming_it():
    steppers, dtheta, dv = _fleet()
    with pytest.raises(rf.ShapeError, match="dtheta"):
        rf.run_strapdowns(steppers, dtheta[:-1], dv, DT)


def test_progress_callbacks_report_and_can_stop_a_run():
    steppers, dtheta, dv = _fleet()
    seen = []
    rf.run_strapdowns(steppers, dtheta, dv, DT, threads=2, progress=lambda done, total: seen.append((done, total)))
    assert seen[-1] == (RUNS, RUNS) and [d for d, _ in seen] == sorted(d for d, _ in seen)

    stepper = rf.Strapdown(lat=0.7, lon=0.1, h=50.0, v_ned=[0.0, 0.0, 0.0], attitude=[1.0, 0.0, 0.0, 0.0])
    n = 150_000  # three chunks of 65536 steps
    dth = np.tile(dtheta[0, :1], (n, 1))
    dvv = np.tile(dv[0, :1], (n, 1))
    steps = []
    stepper.run(dth, dvv, DT, progress=lambda done, total: steps.append((done, total)))
    assert steps == [(65536, n), (131072, n), (n, n)]

    class Stop(Exception):
        pass

    def stop(done, total):
        raise Stop

    fresh = rf.Strapdown(lat=0.7, lon=0.1, h=50.0, v_ned=[0.0, 0.0, 0.0], attitude=[1.0, 0.0, 0.0, 0.0])
    with pytest.raises(Stop):
        fresh.run(dth, dvv, DT, progress=stop)
    assert fresh.elapsed == 0.0
