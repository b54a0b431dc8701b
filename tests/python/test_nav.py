"""Navigation from Python: ideal IMU output, increments (from a callable, checked against
scipy's adaptive quadrature, and from a recorded log), stationary and dynamic strapdown runs in
both mechanizations, the sensor error model, lever arms, errors and pickling."""

import copy
import pathlib
import pickle
import sys

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate

import nav_helpers as nh
import rotaframe as rf

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parents[2] / "benches" / "python"))
import numpy_strapdown  # noqa: E402


def parked(lat, lon, h, attitude):
    """A body at rest on the Earth with a fixed attitude relative to NED, as a callable of time."""
    ned = rf.local_level_motion(lat, lon, h)
    body = rf.FrameMotion(rotation=attitude)

    def motion(t):
        return rf.earth_motion(t, angle_at_epoch=0.25).then(ned).then(body)

    return motion


SITE = (np.radians(45.0), np.radians(11.0), 120.0)
TILT = rf.quat_from_euler(30.0, 2.0, -1.0, degrees=True)


def test_stationary_imu_at_45_degrees_reads_earth_rate_and_minus_plumb_line_gravity():
    # Reference: a stationary IMU senses Ω (cos φ, 0, −sin φ) and −g in NED (Groves 2013,
    # §5.5; common practice); a tilted one the same rotated into its axes. Tolerances as in
    # the Rust test: rounding of the chain (1e-15 rad/s, 1e-13 m/s²).
    t = np.linspace(0.0, 86400.0, 7)
    omega = rf.WGS84.omega
    lat = SITE[0]
    rate, force = rf.ideal_imu(parked(*SITE, [1, 0, 0, 0])(t))
    assert rate.shape == force.shape == (7, 3)
    np.testing.assert_allclose(rate, np.broadcast_to([omega * np.cos(lat), 0, -omega * np.sin(lat)], (7, 3)), rtol=0, atol=1e-15)
    np.testing.assert_allclose(force, -np.broadcast_to(rf.gravity_ned(lat, SITE[2]), (7, 3)), rtol=0, atol=1e-13)
    rate, force = rf.ideal_imu(parked(*SITE, TILT)(t))
    inverse = rf.quat_inverse(TILT)
    np.testing.assert_allclose(rate, rf.quat_rotate(inverse, rf.earth_rate_ned(lat)) * np.ones((7, 1)), rtol=0, atol=1e-15)
    np.testing.assert_allclose(force, -rf.quat_rotate(inverse, rf.gravity_ned(lat, SITE[2])) * np.ones((7, 1)), rtol=0, atol=1e-13)


@pytest.mark.parametrize("frame", ["ned", "ecef"])
def test_one_hour_of_stationary_data_at_100_hz_leaves_the_solution_in_place(frame):
    # Requirement: fed ideal stationary data for one hour at 100 Hz the mechanization stays put:
    # position drift ≤ 1 mm, velocity ≤ 1 µm/s (the Rust tests measured 2e-5 m and 4e-8 m/s).
    # A stationary body's outputs are constant in body axes, so the increment of one interval
    # (computed from the chain through the frame machinery) serves for all 360 000.
    dtheta, dv, dt = rf.imu_increments(parked(*SITE, TILT), [0.0, 0.01])
    n = 360_000
    ins = rf.Strapdown(*SITE, [0, 0, 0], TILT, frame=frame)
    history = ins.run(np.repeat(dtheta, n, axis=0), np.repeat(dv, n, axis=0), 0.01)
    p, v, a = nh.state_errors(history.lat, history.lon, history.h, history.v_ned, history.attitude, (*SITE, np.zeros(3), TILT))
    assert len(history) == n and history.t[-1] == pytest.approx(3600.0)
    assert p.max() <= 1e-3 and v.max() <= 1e-6, (p.max(), v.max())
    assert a.max() <= 1e-9
    assert ins.elapsed == pytest.approx(3600.0)


@pytest.fixture(scope="module")
def manoeuvre_log():
    """Two minutes of the manoeuvre at 100 Hz: times and ideal increments."""
    t = np.arange(12_001) / 100.0
    return t, rf.imu_increments(nh.relative_to_inertial, t)


@pytest.mark.parametrize("frame", ["ned", "ecef"])
def test_dynamic_closure_over_two_minutes_at_100_hz_is_small(manoeuvre_log, frame):
    # Closure (common practice): ideal increments of a known manoeuvre, mechanized back from
    # the true initial state, stay close to the truth. The Rust tests measured 0.19 mm,
    # 2.8 µm/s and 5e-9 rad at 120 s on the same manoeuvre; bounds about 2× those.
    t, (dtheta, dv, dt) = manoeuvre_log
    lat, lon, h, v_ned, q = nh.truth(t[:1])
    ins = rf.Strapdown(lat[0], lon[0], h[0], v_ned[0], q[0], frame=frame)
    history = ins.run(dtheta, dv, dt)
    truth = nh.truth(t[1:])
    p, v, a = nh.state_errors(history.lat, history.lon, history.h, history.v_ned, history.attitude, truth)
    assert p.max() < 4e-4 and v.max() < 6e-6 and a.max() < 4e-8, (p.max(), v.max(), a.max())
    # and it really moved: kilometres, at tens of m/s
    assert np.linalg.norm(rf.geodetic_to_ecef(lat[0], lon[0], h[0]) - ins.position_ecef) > 5000.0
    assert np.linalg.norm(history.v_ned, axis=1).max() > 60.0


def test_ned_and_ecef_mechanizations_agree(manoeuvre_log):
    # One set of equations in two coordinate systems: far closer to each other than to the
    # truth (Rust measured 1e-7 m over ten minutes).
    t, (dtheta, dv, dt) = manoeuvre_log
    lat, lon, h, v_ned, q = nh.truth(t[:1])
    a = rf.Strapdown(lat[0], lon[0], h[0], v_ned[0], q[0]).run(dtheta, dv, dt)
    b = rf.Strapdown(lat[0], lon[0], h[0], v_ned[0], q[0], frame="ecef").run(dtheta, dv, dt)
    p, v, ang = nh.state_errors(a.lat, a.lon, a.h, a.v_ned, a.attitude, (b.lat, b.lon, b.h, b.v_ned, b.attitude))
    assert p.max() < 1e-5 and v.max() < 1e-7 and ang.max() < 1e-11


def test_increments_match_scipy_adaptive_quadrature_of_the_ideal_imu():
    # Reference: scipy.integrate.quad (QUADPACK's adaptive Gauss–Kronrod, a general-purpose
    # library) integrating the ideal IMU outputs of the manoeuvre over five intervals, each
    # component separately, to its default tolerance of 1.5e-8 relative. The library's six-node
    # Gauss–Legendre rule must agree to within quad's own error estimate (plus rounding).
    edges = np.array([0.0, 0.01, 13.37, 13.38, 60.0, 60.0025])
    dtheta, dv, dt = rf.imu_increments(nh.relative_to_inertial, edges)
    for k in (0, 2, 4):
        a, b = edges[k], edges[k + 1]
        for i in range(3):
            for outputs, index in ((dtheta, 0), (dv, 1)):
                value, error = integrate.quad(
                    lambda s: rf.ideal_imu(nh.relative_to_inertial(np.array([s])))[index][0, i], a, b, epsabs=1e-15, epsrel=1e-13
                )
                assert abs(outputs[k, i] - value) <= error + 1e-15 * max(1.0, abs(value)), (k, i, outputs[k, i], value, error)
    np.testing.assert_allclose(dt, np.diff(edges), rtol=0, atol=0)


def test_increments_from_a_recorded_log_match_the_exact_ones(manoeuvre_log):
    # The analyst's path: a 100 Hz log of position and attitude → increments. The Rust tests
    # measured 1.3e-13 rad and 1.0e-6 m/s against the exact increments (Δv carries the log's
    # rounding noise); bounds about 2×, over the first 30 s here.
    t, (dtheta, dv, dt) = manoeuvre_log
    t = t[:3001]
    lat, lon, h, _, q = nh.truth(t)
    got = rf.imu_increments_from_samples(t, lat, lon, h, q)
    assert np.abs(got[0] - dtheta[:3000]).max() < 3e-13
    assert np.abs(got[1] - dv[:3000]).max() < 2.5e-6
    np.testing.assert_array_equal(got[2], dt[:3000])
    # degrees and an explicit time grid (the log resampled at 400 Hz over its middle)
    grid = np.linspace(10.0, 11.0, 401)
    g1 = rf.imu_increments_from_samples(t, np.degrees(lat), np.degrees(lon), h, q, times=grid, degrees=True)
    g2 = rf.imu_increments_from_samples(t, lat, lon, h, q, times=grid)
    # (degrees converted to radians differ from the radians by an ulp: 1e-14 rad covers that)
    np.testing.assert_allclose(g1[0], g2[0], rtol=0, atol=1e-14)
    assert g1[0].shape == (400, 3)
    m = rf.motion_from_samples(t, lat, lon, h, q, [10.005, 20.0])
    exact = nh.relative_to_earth(np.array([10.005, 20.0]))
    assert m.parent == "ecef" and m.child == "body"
    np.testing.assert_allclose(m.velocity, exact.velocity, rtol=0, atol=1e-6)


def test_numpy_per_step_baseline_implements_the_same_algorithm(manoeuvre_log):
    # The benchmark baseline (benches/python/numpy_strapdown.py) must be the same algorithm,
    # or the speed comparison is meaningless: over 500 dynamic steps it agrees with the library
    # to rounding (1e-9 m, 1e-11 m/s).
    t, (dtheta, dv, dt) = manoeuvre_log
    lat, lon, h, v_ned, q = nh.truth(t[:1])
    ref = numpy_strapdown.run(lat[0], lon[0], h[0], v_ned[0], q[0], dtheta[:500], dv[:500], dt[:500])
    got = rf.Strapdown(lat[0], lon[0], h[0], v_ned[0], q[0]).run(dtheta[:500], dv[:500], dt[:500])
    p, v, a = nh.state_errors(got.lat, got.lon, got.h, got.v_ned, got.attitude, ref)
    assert p.max() < 1e-9 and v.max() < 1e-11 and a.max() < 1e-14, (p.max(), v.max(), a.max())


def test_step_and_run_agree_and_degrees_mirror_radians(manoeuvre_log):
    t, (dtheta, dv, dt) = manoeuvre_log
    lat, lon, h, v_ned, q = nh.truth(t[:1])
    a = rf.Strapdown(lat[0], lon[0], h[0], v_ned[0], q[0])
    b = rf.Strapdown(np.degrees(lat[0]), np.degrees(lon[0]), h[0], v_ned[0], q[0], degrees=True)
    history = a.copy().run(dtheta[:50], dv[:50], dt[:50])
    for k in range(50):
        a.step(dtheta[k], dv[k], dt[k])
        b.step(dtheta[k], dv[k], dt[k])
    assert (a.lat, a.lon, a.h) == (history.lat[-1], history.lon[-1], history.h[-1])
    np.testing.assert_array_equal(a.v_ned, history.v_ned[-1])
    np.testing.assert_array_equal(a.attitude, history.attitude[-1])
    assert b.lat == pytest.approx(np.degrees(a.lat), abs=1e-12) and b.degrees
    assert b.h == a.h


def test_pickle_and_copy_continue_identically(manoeuvre_log):
    t, (dtheta, dv, dt) = manoeuvre_log
    lat, lon, h, v_ned, q = nh.truth(t[:1])
    for frame in ("ned", "ecef"):
        ins = rf.Strapdown(lat[0], lon[0], h[0], v_ned[0], q[0], frame=frame, vertical="aided", height_time_constant=50.0)
        ins.run(dtheta[:10], dv[:10], dt[:10], height_reference=400.0)
        clones = [pickle.loads(pickle.dumps(ins)), copy.copy(ins), copy.deepcopy(ins), ins.copy()]
        final = ins.run(dtheta[10:30], dv[10:30], dt[10:30])
        for c in clones:
            assert (c.frame, c.vertical, c.gravity) == (frame, "aided", "normal")
            other = c.run(dtheta[10:30], dv[10:30], dt[10:30])
            np.testing.assert_array_equal(other.lat, final.lat)
            np.testing.assert_array_equal(other.attitude, final.attitude)
            np.testing.assert_array_equal(other.t, final.t)


def test_vertical_channel_modes_hold_and_aid_the_height():
    # Stationary data with a 10 m initial height error for 10 minutes at 50 Hz: "hold" sits on
    # the reference, "aided" (τ = 30 s) converges to it, "free" drifts away (Titterton and
    # Weston 2004, §3.5: the free channel is unstable).
    dtheta, dv, dt = rf.imu_increments(parked(*SITE, TILT), [0.0, 0.02])
    n = 30_000
    results = {}
    for vertical, tau in (("free", None), ("hold", None), ("aided", 30.0)):
        ins = rf.Strapdown(SITE[0], SITE[1], SITE[2] + 10.0, [0, 0, 0], TILT, vertical=vertical, height_time_constant=tau)
        history = ins.run(np.repeat(dtheta, n, axis=0), np.repeat(dv, n, axis=0), 0.02, height_reference=SITE[2])
        results[vertical] = history.h[-1] - SITE[2]
    assert results["free"] > 10.5
    assert abs(results["hold"]) < 1e-6
    assert abs(results["aided"]) < 1e-3


def test_navigation_errors_name_the_argument_and_leave_the_state_unchanged():
    ins = rf.Strapdown(*SITE, [0, 0, 0], TILT)
    before = (ins.lat, ins.lon, ins.h, ins.elapsed)
    dtheta = np.zeros((20, 3))
    dv = np.tile([0.0, 0.0, -0.098], (20, 1))
    dtheta[7, 1] = np.nan
    with pytest.raises(rf.NonFiniteError, match=r"`dtheta`.*index \(7,\)"):
        ins.run(dtheta, dv, 0.01)
    assert (ins.lat, ins.lon, ins.h, ins.elapsed) == before
    with pytest.raises(rf.NotPositiveError, match="`dt`"):
        ins.step([0, 0, 0], [0, 0, -0.098], 0.0)
    with pytest.raises(rf.ShapeError, match="`dv`"):
        ins.step([0, 0, 0], [0, 0], 0.01)
    with pytest.raises(rf.NearPoleError, match="`lat`"):
        rf.Strapdown(90.0, 0.0, 0.0, [0, 0, 0], [1, 0, 0, 0], degrees=True)
    at_pole = rf.Strapdown(90.0, 0.0, 0.0, [0, 0, 0], [1, 0, 0, 0], degrees=True, frame="ecef")
    assert at_pole.lat == 90.0
    with pytest.raises(rf.OutOfRangeError, match="`lat`"):
        rf.Strapdown(91.0, 0.0, 0.0, [0, 0, 0], [1, 0, 0, 0], degrees=True)
    with pytest.raises(rf.NotUnitQuaternionError, match="`attitude`"):
        rf.Strapdown(*SITE, [0, 0, 0], [2, 0, 0, 0])
    with pytest.raises(rf.RotaframeError, match="`frame`"):
        rf.Strapdown(*SITE, [0, 0, 0], TILT, frame="enu")
    with pytest.raises(rf.RotaframeError, match="height_time_constant"):
        rf.Strapdown(*SITE, [0, 0, 0], TILT, vertical="aided")
    with pytest.raises(rf.NotPositiveError, match="`height_time_constant`"):
        rf.Strapdown(*SITE, [0, 0, 0], TILT, vertical="aided", height_time_constant=-1.0)
    with pytest.raises(rf.RotaframeError, match="`gravity`"):
        rf.ideal_imu(parked(*SITE, TILT)(0.0), gravity="egm2008")


def test_imu_functions_check_frames_times_and_shapes():
    ecef_relative = rf.local_level_motion(*SITE)
    with pytest.raises(rf.FrameMismatchError, match="inertial"):
        rf.ideal_imu(ecef_relative)
    with pytest.raises(rf.FrameMismatchError):
        rf.imu_increments(lambda t: rf.local_level_motion(*SITE), [0.0, 1.0])
    with pytest.raises(rf.ShapeError, match=r"shape \(6,\) or \(\)"):
        rf.imu_increments(lambda t: nh.relative_to_inertial(t[:3]), [0.0, 1.0])
    with pytest.raises(TypeError, match="FrameMotion"):
        rf.imu_increments(lambda t: t, [0.0, 1.0])
    with pytest.raises(rf.RotaframeError, match="strictly increasing"):
        rf.imu_increments(nh.relative_to_inertial, [0.0, 1.0, 1.0])
    with pytest.raises(rf.ShapeError, match="`t`"):
        rf.imu_increments(nh.relative_to_inertial, [0.0])
    t = np.arange(5.0)
    lat = np.full(5, 0.5)
    q = np.tile([1.0, 0, 0, 0], (5, 1))
    q[3] = 0.0
    with pytest.raises(rf.ZeroNormError, match=r"`attitude`.*\(3,\)"):
        rf.imu_increments_from_samples(t, lat, 0.1, 10.0, q)
    with pytest.raises(rf.OutOfRangeError, match="`times`"):
        rf.imu_increments_from_samples(t, lat, 0.1, 10.0, np.tile([1.0, 0, 0, 0], (5, 1)), times=[0.0, 4.5])
    # A body in free fall far above the pole is a valid trajectory; one at the centre is not.
    with pytest.raises(rf.NearEarthCentreError):
        rf.ideal_imu(rf.FrameMotion(position=[0, 0, 10.0], parent="eci"))


def test_imu_error_model_is_seeded_exact_in_its_deterministic_part_and_checked():
    ideal_dtheta = np.tile([0.01, -0.02, 0.005], (4, 1))
    ideal_dv = np.tile([0.1, 0.2, -0.098], (4, 1))
    misalignment = np.array([[0, 1e-3, -2e-3], [5e-4, 0, 1e-4], [-3e-4, 2e-4, 0]])
    errors = rf.ImuErrors(gyro_bias=[1e-5, -2e-5, 3e-5], gyro_scale_factor=[1e-4, 0, -5e-4], gyro_misalignment=misalignment, accel_bias=0.01)
    dtheta, dv = errors.apply(ideal_dtheta, ideal_dv, 0.01)
    gain = np.eye(3) + np.diag([1e-4, 0, -5e-4]) + misalignment
    np.testing.assert_allclose(dtheta, ideal_dtheta @ gain.T + np.array([1e-5, -2e-5, 3e-5]) * 0.01, rtol=0, atol=1e-18)
    np.testing.assert_allclose(dv, ideal_dv + 0.01 * 0.01, rtol=0, atol=1e-17)

    def noisy(seed):
        e = rf.ImuErrors(gyro_arw_deg_per_sqrt_h=0.1, accel_vrw_mps_per_sqrt_h=0.05, gyro_markov_sigma=1e-5, gyro_markov_time=100.0, seed=seed)
        return e.apply(np.zeros((1000, 3)), np.zeros((1000, 3)), 0.01)

    np.testing.assert_array_equal(noisy(3)[0], noisy(3)[0])
    assert not np.array_equal(noisy(3)[0], noisy(4)[0])
    with pytest.raises(rf.RotaframeError, match="`gyro_misalignment`"):
        rf.ImuErrors(gyro_misalignment=np.eye(3) * 1e-3)
    with pytest.raises(rf.NotPositiveError, match="`accel_markov_time`"):
        rf.ImuErrors(accel_markov_time=[1.0, 0.0, 1.0])
    with pytest.raises(rf.RotaframeError, match="`gyro_arw_deg_per_sqrt_h`"):
        rf.ImuErrors(gyro_arw_deg_per_sqrt_h=-0.1)
    e = rf.ImuErrors(gyro_arw_deg_per_sqrt_h=0.1, seed=1)
    before = e.markov_states
    bad = np.zeros((3, 3))
    bad[2, 0] = np.inf
    with pytest.raises(rf.NonFiniteError, match="`dtheta`"):
        e.apply(bad, np.zeros((3, 3)), 0.01)
    np.testing.assert_array_equal(e.apply(np.zeros((2, 3)), np.zeros((2, 3)), 0.01)[0], rf.ImuErrors(gyro_arw_deg_per_sqrt_h=0.1, seed=1).apply(np.zeros((2, 3)), np.zeros((2, 3)), 0.01)[0])
    assert len(before) == 2


def test_angle_random_walk_reaches_its_quoted_size_after_one_hour():
    # Definition (IEEE Std 952-1997, annex C; common practice): N deg/√h of angle random walk
    # is an angle error of N degrees (1σ) after one hour. 200 one-hour runs at 10 Hz; tolerance
    # 15% (about five standard errors of a σ estimated from 600 samples).
    e = rf.ImuErrors(gyro_arw_deg_per_sqrt_h=0.2, seed=11)
    dtheta, _ = e.apply(np.zeros((200 * 36_000, 3)), np.zeros((200 * 36_000, 3)), 0.1)
    hourly = dtheta.reshape(200, 36_000, 3).sum(axis=1)
    assert np.degrees(hourly.std()) == pytest.approx(0.2, rel=0.15)


def test_antenna_velocity_matches_finite_differences_of_its_true_position():
    # Lever arm: an antenna 1.2 m forward, 0.3 m right, 1.8 m up. Reference for its velocity:
    # a central difference (h = 1 ms) of its true ECEF position, error ~1e-6 m/s.
    lever = np.array([1.2, 0.3, -1.8])
    times = np.array([3.0, 47.5, 100.25])
    lat, lon, h, v_ned, q = nh.truth(times)
    rate, _ = rf.ideal_imu(nh.relative_to_inertial(times))
    alat, alon, ah, av = rf.lever_arm_state(lat, lon, h, v_ned, q, rate, lever)
    antenna = lambda s: nh.relative_to_earth(s).map_point(lever)[0]  # noqa: E731
    fd = (antenna(times + 1e-3) - antenna(times - 1e-3)) / 2e-3
    fd_ned = np.einsum("...ij,...j->...i", rf.ned_from_ecef(alat, alon), fd)
    np.testing.assert_allclose(av, fd_ned, rtol=0, atol=2e-5)
    np.testing.assert_allclose(rf.geodetic_to_ecef(alat, alon, ah), antenna(times), rtol=0, atol=1e-8)
    one = rf.lever_arm_state(np.degrees(lat[0]), np.degrees(lon[0]), h[0], v_ned[0], q[0], rate[0], lever, degrees=True)
    assert isinstance(one[0], float) and one[0] == pytest.approx(np.degrees(alat[0]), abs=1e-12)


@settings(max_examples=60, deadline=None)
@given(
    lat=st.floats(-70, 70), lon=st.floats(-180, 180), speed=st.floats(0, 300),
    seed=st.integers(0, 2**32 - 1), frame=st.sampled_from(["ned", "ecef"]),
)
def test_relabelling_the_imu_axes_changes_only_the_reported_attitude(lat, lon, speed, seed, frame):
    # Covariance under a change of body axes: a triad rotated by R reports R^T Δθ, R^T Δv and
    # starts from attitude q R; position and velocity must not change and the attitude must
    # differ by exactly R. Tolerance: rounding over 20 steps (1e-9 m, 1e-11 m/s, 1e-13 rad).
    rng = np.random.default_rng(seed)
    q = rng.normal(size=4)
    q /= np.linalg.norm(q)
    relabel = rng.normal(size=4)
    relabel /= np.linalg.norm(relabel)
    dtheta = rng.uniform(-0.02, 0.02, (20, 3))
    dv = rng.uniform(-0.3, 0.3, (20, 3)) + rf.quat_rotate(rf.quat_inverse(q), [0, 0, -0.098])
    v = [speed, 0.0, 0.0]
    a = rf.Strapdown(lat, lon, 100.0, v, q, frame=frame, degrees=True).run(dtheta, dv, 0.01)
    inverse = rf.quat_inverse(relabel)
    b = rf.Strapdown(lat, lon, 100.0, v, rf.quat_multiply(q, relabel), frame=frame, degrees=True).run(
        rf.quat_rotate(inverse, dtheta), rf.quat_rotate(inverse, dv), 0.01
    )
    p, vel, ang = nh.state_errors(
        np.radians(a.lat), np.radians(a.lon), a.h, a.v_ned, rf.quat_multiply(a.attitude, relabel),
        (np.radians(b.lat), np.radians(b.lon), b.h, b.v_ned, b.attitude),
    )
    assert p.max() < 1e-9 and vel.max() < 1e-11 and ang.max() < 1e-13
